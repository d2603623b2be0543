//! A replication's value of each metric: the only place a metric is computed.
//!
//! Every command reads metrics through here: `run` and `compare` summaries,
//! compare's paired differences and CSV, fleet sizing and its targets,
//! selection, and experiment units. NaN means the replication observed
//! nothing to measure (no lot shipped, no move made), which is not a zero;
//! summaries leave such replications out and say how many counted.

use layflow_engine::Tally;

use crate::plant::Plant;
use crate::sim::{DueStats, RepStats};

use super::registry::Id;

/// A tally's mean, or NaN when it saw nothing.
pub fn observed(t: &Tally) -> f64 {
    if t.count() == 0 {
        f64::NAN
    } else {
        t.mean()
    }
}

/// The due-date figures of every lot (`None`) or of product `p`; `None`
/// when the replication kept none (a plant without due dates, or a
/// replication stopped early).
fn due(r: &RepStats, p: Option<usize>) -> Option<&DueStats> {
    let set = r.due.as_deref()?;
    match p {
        None => Some(&set.all),
        Some(p) => set.product.get(p),
    }
}

/// Loads in department `d`'s batches ÷ (its batches × `per`): NaN when no
/// batch started in the window (nothing observed, not a zero).
fn batch_share(r: &RepStats, d: usize, per: f64) -> f64 {
    match r.batch.get(d) {
        Some(&(batches, loads)) if batches > 0 => loads as f64 / (batches as f64 * per),
        _ => f64::NAN,
    }
}

/// `x` per hour of the replication's observation window.
fn per_h(x: f64, r: &RepStats) -> f64 {
    x / r.window_s * 3600.0
}

/// Handling cost per hour of fleet `f` in one replication: the movers' hourly
/// cost, busy or idle, plus the cost of every kilometre they travelled.
fn fleet_cost_per_h(plant: &Plant, r: &RepStats, f: usize) -> f64 {
    let fl = &plant.fleets()[f];
    let s = &r.fleets[f];
    f64::from(fl.count) * fl.cost_per_h
        + (s.distance_loaded_m + s.distance_empty_m) / 1000.0 * fl.cost_per_km / r.window_s * 3600.0
}

/// Mover-seconds fleet `f` could work in the window: movers × window.
fn fleet_capacity_s(plant: &Plant, r: &RepStats, f: usize) -> f64 {
    f64::from(plant.fleets()[f].count) * r.window_s
}

/// Crew `c`'s figures in replication `r`; `None` when it kept none (a time bucket).
fn crew(r: &RepStats, c: usize) -> Option<&crate::sim::CrewRep> {
    r.crews.get(c)
}

/// The mean wait for a person over every crew's requests; NaN when none was made (or none kept).
fn person_wait_all(r: &RepStats) -> f64 {
    let (n, sum) = r
        .crews
        .iter()
        .fold((0u64, 0.0), |(n, s), c| (n + c.wait.count(), s + c.wait.mean() * c.wait.count() as f64));
    if n == 0 {
        f64::NAN
    } else {
        sum / n as f64
    }
}

/// The value of metric `id` for `subject` (the product, department, fleet or
/// segment index; ignored for the plant) in replication `r` of `plant`.
pub fn value(id: Id, plant: &Plant, r: &RepStats, subject: usize) -> f64 {
    let (i, fleets) = (subject, plant.fleets());
    let quantile =
        |h: &layflow_engine::TickHistogram, q: f64| if h.count() == 0 { f64::NAN } else { h.quantile(q) };
    let share = |x: f64| x / fleet_capacity_s(plant, r, i);
    let segment = || r.segments.get(i);
    match id {
        Id::Throughput => per_h(r.shipped.iter().sum::<u64>() as f64, r),
        Id::FlowTime => observed(&r.flow_time_all),
        Id::Wip => r.wip_total,
        Id::WipInTransit => r.wip_transit,
        Id::MoveWait => observed(&r.move_wait_all),
        Id::MoveWaitAssign => observed(&r.move_wait_assign_all),
        Id::MoveWaitDrive => observed(&r.move_wait_drive_all),
        Id::DistanceLoaded => per_h(r.fleets.iter().map(|f| f.distance_loaded_m).sum(), r),
        Id::DistanceEmpty => per_h(r.fleets.iter().map(|f| f.distance_empty_m).sum(), r),
        Id::HandlingCost => (0..fleets.len()).map(|f| fleet_cost_per_h(plant, r, f)).sum(),
        Id::OverflowMoves => per_h(r.overflow_moves as f64, r),
        Id::TurnedAway => per_h(r.turned_away.iter().sum::<u64>() as f64, r),
        Id::CongestionDelay => per_h(r.segments.iter().map(|g| g.delay_s).sum(), r),
        Id::FlowTimeQuantile(p) => quantile(&r.flow_hist, p.q()),
        Id::MoveWaitQuantile(p) => quantile(&r.move_wait_hist, p.q()),
        Id::LateShare => due(r, None).map_or(f64::NAN, DueStats::late_share),
        Id::Tardiness => due(r, None).map_or(f64::NAN, |d| observed(&d.tardiness)),
        Id::Lateness => due(r, None).map_or(f64::NAN, |d| observed(&d.lateness)),
        Id::LatenessP95 => due(r, None).map_or(f64::NAN, |d| d.lateness_quantile(0.95)),
        Id::ProductLateShare => due(r, Some(i)).map_or(f64::NAN, DueStats::late_share),
        Id::ProductTardiness => due(r, Some(i)).map_or(f64::NAN, |d| observed(&d.tardiness)),
        Id::ProductLateness => due(r, Some(i)).map_or(f64::NAN, |d| observed(&d.lateness)),
        Id::ProductLatenessP95 => due(r, Some(i)).map_or(f64::NAN, |d| d.lateness_quantile(0.95)),
        Id::ProductKits => r.assembly.as_deref().map_or(f64::NAN, |a| per_h(a.kits[i] as f64, r)),
        Id::ProductKitWait => r.assembly.as_deref().map_or(f64::NAN, |a| observed(&a.kit_wait[i])),
        Id::ProductPartWait => r.assembly.as_deref().map_or(f64::NAN, |a| observed(&a.part_wait[i])),
        Id::ProductThroughput => per_h(r.shipped[i] as f64, r),
        Id::ProductFlowTime => observed(&r.flow_time[i]),
        Id::DepartmentWip => r.wip_department[i],
        Id::DepartmentUtilization => r.utilization[i],
        Id::DepartmentQueue => r.queue[i],
        Id::DepartmentBlocked => r.blocked[i],
        Id::DepartmentAvailability => r.availability[i],
        Id::DepartmentScheduledUtilization => {
            let scheduled = r.window_s - r.off_shift_s[i];
            if scheduled > 0.0 {
                r.utilization[i] * r.window_s / scheduled
            } else {
                f64::NAN
            }
        }
        Id::DepartmentSetup => r.setup[i],
        Id::DepartmentBatchSize => batch_share(r, i, 1.0),
        Id::DepartmentBatchFill => {
            plant.departments[i].batch.as_ref().map_or(f64::NAN, |b| batch_share(r, i, f64::from(b.max)))
        }
        Id::FleetUtilization => share(r.fleets[i].busy_s()),
        Id::FleetLoadedTravel => share(r.fleets[i].loaded_s),
        Id::FleetEmptyTravel => share(r.fleets[i].empty_s),
        Id::FleetHandling => share(r.fleets[i].handling_s),
        Id::FleetIdle => {
            let s = &r.fleets[i];
            1.0 - (s.busy_s() + s.down_s) / fleet_capacity_s(plant, r, i)
        }
        Id::FleetMoves => per_h(r.fleets[i].moves as f64, r),
        Id::FleetMoveWait => observed(&r.move_wait[i]),
        Id::FleetMoveWaitAssign => observed(&r.move_wait_assign[i]),
        Id::FleetMoveWaitDrive => observed(&r.move_wait_drive[i]),
        Id::FleetDistanceLoaded => per_h(r.fleets[i].distance_loaded_m, r),
        Id::FleetDistanceEmpty => per_h(r.fleets[i].distance_empty_m, r),
        Id::FleetHandlingCost => fleet_cost_per_h(plant, r, i),
        Id::FleetBlocked => share(r.fleets[i].blocked_s),
        Id::FleetAvailability => 1.0 - r.fleets[i].down_s / fleet_capacity_s(plant, r, i),
        Id::FleetScheduledUtilization => {
            let s = &r.fleets[i];
            let on = fleet_capacity_s(plant, r, i) - s.off_s;
            if on > 0.0 {
                s.busy_s() / on
            } else {
                f64::NAN
            }
        }
        Id::FleetCongestion => share(r.fleets[i].congestion_s),
        Id::FleetMoveWaitQuantile(p) => quantile(&r.move_wait_hist_fleet[i], p.q()),
        Id::FleetMoveWaitAssignQuantile(p) => quantile(&r.move_wait_assign_hist_fleet[i], p.q()),
        Id::FleetMoveWaitDriveQuantile(p) => quantile(&r.move_wait_drive_hist_fleet[i], p.q()),
        Id::FleetCostPerLoad => {
            let moves = r.fleets[i].moves;
            if moves == 0 {
                f64::NAN
            } else {
                fleet_cost_per_h(plant, r, i) / per_h(moves as f64, r)
            }
        }
        Id::PeopleCost => plant.crews.iter().map(|c| f64::from(c.size) * c.cost_per_h).sum(),
        Id::PersonWait => person_wait_all(r),
        Id::DepartmentPersonWait => r.person_wait.get(i).map_or(f64::NAN, observed),
        Id::CrewUtilization => crew(r, i).map_or(f64::NAN, |c| c.busy_mean / f64::from(plant.crews[i].size)),
        Id::CrewScheduledUtilization => crew(r, i).map_or(f64::NAN, |c| {
            let on = f64::from(plant.crews[i].size) * r.window_s - c.off_s;
            if on > 0.0 {
                c.busy_mean * r.window_s / on
            } else {
                f64::NAN
            }
        }),
        Id::CrewPersonWait => crew(r, i).map_or(f64::NAN, |c| observed(&c.wait)),
        Id::CrewCost => f64::from(plant.crews[i].size) * plant.crews[i].cost_per_h,
        // A replication that stopped before anything was recorded has no segment figures.
        Id::SegmentTraversals => segment().map_or(f64::NAN, |g| per_h(g.traversals as f64, r)),
        Id::SegmentOccupancy => segment().map_or(f64::NAN, |g| g.occupancy),
        Id::SegmentCongestionDelay => segment().map_or(f64::NAN, |g| per_h(g.delay_s, r)),
        Id::SegmentDelayPerTraversal => {
            segment().filter(|g| g.traversals > 0).map_or(f64::NAN, |g| g.delay_s / g.traversals as f64)
        }
    }
}
