//! Summaries across replications: the metrics a user reads, each with a 95% Student t interval.
//!
//! Field names are the JSON keys: snake_case with the unit in the name.
//! Percentiles come from the histograms of every replication merged (counts
//! added exactly), so they describe the pooled lots, not a mean of percentiles.

use layflow_engine::{interval, Interval, Tally, TickHistogram};
use rayon::prelude::*;
use serde::Serialize;

use crate::analysis::StaticPicture;
use crate::plant::Plant;
use crate::sim::{simulate, Plan, RepStats, RunSpec, TICK_S};

/// Confidence level of every interval in a summary.
pub const CONFIDENCE: f64 = 0.95;

/// A mean over replications with its 95% half-width (`null` with one replication).
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct Estimate {
    /// Mean over replications.
    pub mean: f64,
    /// Half-width of the 95% Student t interval.
    pub half_width: Option<f64>,
    /// Replications.
    pub n: usize,
}

/// An [`Estimate`] of a duration, with percentiles of the pooled histogram.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct DurationEstimate {
    /// Mean over replications of each replication's mean.
    pub mean: f64,
    /// Half-width of the 95% Student t interval.
    pub half_width: Option<f64>,
    /// Replications.
    pub n: usize,
    /// Median of every observation pooled across replications.
    pub p50: f64,
    /// 90th percentile, pooled.
    pub p90: f64,
    /// 95th percentile, pooled.
    pub p95: f64,
    /// 99th percentile, pooled.
    pub p99: f64,
    /// Observations pooled.
    pub count: u64,
}

impl DurationEstimate {
    /// The mean and its interval without the percentiles.
    pub fn estimate(&self) -> Estimate {
        Estimate { mean: self.mean, half_width: self.half_width, n: self.n }
    }
}

impl From<Interval> for Estimate {
    fn from(iv: Interval) -> Self {
        Estimate { mean: iv.mean, half_width: iv.half_width, n: iv.n }
    }
}

/// Mean and interval over the replications that observed the metric: a
/// replication that shipped no lot has no flow time, which is not a flow
/// time of 0. `n` says how many replications counted.
fn est(xs: impl Iterator<Item = f64>) -> Estimate {
    let v: Vec<f64> = xs.filter(|x| x.is_finite()).collect();
    interval(&v, CONFIDENCE).into()
}

/// A tally's mean, or NaN (left out by [`est`]) when it saw nothing.
pub(crate) fn observed(t: &Tally) -> f64 {
    if t.count() == 0 {
        f64::NAN
    } else {
        t.mean()
    }
}

fn dur(means: impl Iterator<Item = f64>, hist: &TickHistogram) -> DurationEstimate {
    let e = est(means);
    DurationEstimate {
        mean: e.mean,
        half_width: e.half_width,
        n: e.n,
        p50: hist.quantile(0.50),
        p90: hist.quantile(0.90),
        p95: hist.quantile(0.95),
        p99: hist.quantile(0.99),
        count: hist.count(),
    }
}

/// Per-product results.
#[derive(Debug, Clone, Serialize)]
pub struct ProductSummary {
    /// Product id.
    pub product: String,
    /// Lots shipped per hour.
    pub throughput_per_h: Estimate,
    /// Mean flow time from receiving to shipping, s.
    pub flow_time_s: Estimate,
}

/// Per-department results.
#[derive(Debug, Clone, Serialize)]
pub struct DepartmentSummary {
    /// Department id.
    pub department: String,
    /// Time-average lots at the department (queued, in process, waiting for a mover).
    pub wip_mean: Estimate,
    /// Time-average share of machines busy (0 for docks).
    pub utilization: Estimate,
    /// Time-average lots waiting for a machine.
    pub queue_mean: Estimate,
    /// Predicted utilisation λ·E[S]/c from the static picture.
    pub utilization_predicted: f64,
    /// Share of machine time holding a finished lot that cannot leave (blocking
    /// after service); present when the plant has finite staging.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub blocked_share: Option<Estimate>,
    /// Share of machine time up; present when the department has breakdowns.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub availability: Option<Estimate>,
    /// MTBF ÷ (MTBF + MTTR), with breakdowns.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub availability_predicted: Option<f64>,
    /// Busy machine time ÷ scheduled machine time (the calendar's working
    /// windows); present when the department has a calendar.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub utilization_scheduled: Option<Estimate>,
    /// Share of clock time the calendar schedules, with a calendar.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub scheduled_share: Option<f64>,
    /// Share of machine time spent setting up (counted in `utilization`); present with setups.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub setup_share: Option<Estimate>,
    /// The static estimate of the setup share (random mix of products), with setups.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub setup_share_predicted: Option<f64>,
}

/// Per-fleet results.
#[derive(Debug, Clone, Serialize)]
pub struct FleetSummary {
    /// Fleet id.
    pub fleet: String,
    /// Movers in the fleet.
    pub movers: u32,
    /// Share of mover time busy (loaded + empty + handling).
    pub utilization: Estimate,
    /// Share of mover time travelling loaded.
    pub loaded_travel_share: Estimate,
    /// Share of mover time travelling empty.
    pub empty_travel_share: Estimate,
    /// Share of mover time loading and unloading.
    pub handling_share: Estimate,
    /// Share of mover time idle.
    pub idle_share: Estimate,
    /// Loads moved per hour.
    pub moves_per_h: Estimate,
    /// Mean wait from move request to pick-up, s.
    pub move_wait_s: Estimate,
    /// Metres travelled loaded per hour (all movers of the fleet).
    pub distance_loaded_m_per_h: Estimate,
    /// Metres travelled empty per hour.
    pub distance_empty_m_per_h: Estimate,
    /// Mover hours × cost per hour + km × cost per km, per hour.
    pub handling_cost_per_h: Estimate,
    /// Static lower bound on utilisation (no empty travel).
    pub utilization_lower_bound: f64,
    /// Share of mover time waiting at a full inbound area holding a load
    /// (counted in `utilization`); present when the plant has finite staging.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub blocked_share: Option<Estimate>,
    /// Share of mover time in service (not under repair, not charging);
    /// present when the fleet has breakdowns or charging.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub availability: Option<Estimate>,
    /// Busy mover time ÷ on-duty mover time (the operators' shifts less
    /// breaks); present when the operators have working hours.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub utilization_scheduled: Option<Estimate>,
    /// Share of mover time lost waiting to enter full aisle segments or busy
    /// intersections (counted in `utilization`); present when the aisle
    /// network is simulated segment by segment.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub congestion_share: Option<Estimate>,
}

/// What one aisle segment saw, across replications.
#[derive(Debug, Clone, Serialize)]
pub struct SegmentSummary {
    /// Segment index in the scenario's `aisles.segments`.
    pub segment: usize,
    /// Node ids at its ends.
    pub from: String,
    /// Node id at its other end.
    pub to: String,
    /// Movers entering it per hour, both directions (traffic).
    pub traversals_per_h: Estimate,
    /// Time-average movers on it.
    pub occupancy_mean: Estimate,
    /// Mover-seconds of waiting to enter it, per hour (congestion delay).
    pub congestion_delay_s_per_h: Estimate,
    /// Congestion delay per traversal, s.
    pub congestion_delay_per_traversal_s: Estimate,
}

/// Everything `run` reports for one layout.
#[derive(Debug, Clone, Serialize)]
pub struct LayoutSummary {
    /// Layout name.
    pub layout: String,
    /// Lots shipped per hour, all products.
    pub throughput_per_h: Estimate,
    /// Flow time, receiving to shipping, s.
    pub flow_time_s: DurationEstimate,
    /// Time-average lots in the plant.
    pub wip_mean: Estimate,
    /// Time-average lots on movers.
    pub wip_in_transit_mean: Estimate,
    /// Wait from move request to pick-up, every fleet, s (empty with instant moves).
    pub move_wait_s: DurationEstimate,
    /// Metres travelled loaded per hour, every fleet.
    pub distance_loaded_m_per_h: Estimate,
    /// Metres travelled empty per hour, every fleet.
    pub distance_empty_m_per_h: Estimate,
    /// Handling cost per hour, every fleet.
    pub handling_cost_per_h: Estimate,
    /// The static load-distance of this layout, load-metres per hour.
    pub load_distance_static_m_per_h: f64,
    /// The static handling cost (load-distance × cost per load-metre), per hour.
    pub handling_cost_static_per_h: f64,
    /// Little's law check: |WIP − throughput × flow time| ÷ WIP, from the means.
    pub little_relative_gap: f64,
    /// Per product.
    pub products: Vec<ProductSummary>,
    /// Per department.
    pub departments: Vec<DepartmentSummary>,
    /// Per fleet.
    pub fleets: Vec<FleetSummary>,
    /// Events handled, all replications.
    pub events: u64,
    /// Loads taken to overflow areas per hour; present when a department has an overflow location.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub overflow_moves_per_h: Option<Estimate>,
    /// Lots turned away at receiving docks per hour; present when a dock may turn lots away.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub turned_away_per_h: Option<Estimate>,
    /// Why replications stopped early, when the plant deadlocked through blocking or in the aisles.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub deadlock: Option<String>,
    /// Mover-seconds lost to congestion per hour, every segment; present when
    /// the network is simulated segment by segment.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub congestion_delay_s_per_h: Option<Estimate>,
    /// Per aisle segment, in scenario order; present when the network is simulated segment by segment.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub segments: Option<Vec<SegmentSummary>>,
}

/// Which of the optional figures a plant reports.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Features {
    /// Some department has finite staging.
    pub staging: bool,
    /// Some department has an overflow location.
    pub overflow: bool,
    /// Some receiving dock may turn lots away.
    pub turn_away: bool,
    /// The aisle network is simulated segment by segment (a capacity, a speed limit or a zone).
    pub aisles: bool,
}

impl Features {
    /// What `plant` has.
    pub fn of(plant: &Plant) -> Features {
        Features {
            staging: plant.departments.iter().any(|d| d.staging.is_limited()),
            overflow: plant.departments.iter().any(|d| d.staging.overflow.is_some()),
            turn_away: plant.departments.iter().any(|d| d.turn_away),
            aisles: plant.aisles.as_ref().is_some_and(|n| n.needs_simulation()),
        }
    }
}

/// Department `d`'s busy machine time ÷ its scheduled machine time in one replication.
pub fn department_scheduled_utilization(r: &RepStats, d: usize) -> f64 {
    let scheduled = r.window_s - r.off_shift_s[d];
    if scheduled > 0.0 {
        r.utilization[d] * r.window_s / scheduled
    } else {
        f64::NAN
    }
}

/// Fleet `f`'s busy mover time ÷ its on-duty mover time in one replication.
pub fn fleet_scheduled_utilization(plant: &Plant, r: &RepStats, f: usize) -> f64 {
    let s = &r.fleets[f];
    let on = f64::from(plant.fleets()[f].count) * r.window_s - s.off_s;
    if on > 0.0 {
        s.busy_s() / on
    } else {
        f64::NAN
    }
}

/// Share of fleet `f`'s mover time in service in one replication.
pub fn fleet_availability(plant: &Plant, r: &RepStats, f: usize) -> f64 {
    1.0 - r.fleets[f].down_s / (f64::from(plant.fleets()[f].count) * r.window_s)
}

/// The message for movers stuck for good in the aisles (replication `i`, 0-based).
fn aisle_deadlock(plant: &Plant, d: &crate::sim::Deadlock, i: u64) -> String {
    let fleets = plant.fleets();
    let movers: Vec<String> = d.movers.iter().map(|&(f, k)| format!("{} #{}", fleets[f].id, k + 1)).collect();
    let (segments, zones) = match plant.aisles.as_ref() {
        Some(net) => (
            d.segments.iter().map(|&s| net.segment_name(s)).collect::<Vec<_>>(),
            d.zones.iter().map(|&n| format!("zone \"{}\"", net.nodes[n].id)).collect::<Vec<_>>(),
        ),
        None => (Vec::new(), Vec::new()),
    };
    let held = segments.into_iter().chain(zones).collect::<Vec<_>>().join(", ");
    format!(
        "the movers deadlocked in the aisles in replication {} at {}: {} hold or wait for {}, and each waits for \
         room that only another of them can free, so none can ever move again. Give one of those segments a \
         higher `capacity`, add a passing place (a node with a second route round), or make the aisle one-way",
        i + 1,
        crate::units::format_duration(d.time_s),
        movers.join(", "),
        held
    )
}

/// The message for the first replication that deadlocked, if any.
pub fn deadlock_message(plant: &Plant, reps: &[RepStats]) -> Option<String> {
    let (i, _) = reps.iter().enumerate().find(|(_, r)| r.deadlock.is_some())?;
    replication_deadlock(plant, &reps[i], i as u64)
}

/// The deadlock message of one replication (number `replication`, 0-based), if it deadlocked.
pub fn replication_deadlock(plant: &Plant, rep: &RepStats, replication: u64) -> Option<String> {
    let (i, d) = (replication, rep.deadlock.as_ref()?);
    if !d.movers.is_empty() {
        return Some(aisle_deadlock(plant, d, i));
    }
    let names: Vec<&str> = d.departments.iter().map(|&k| plant.departments[k].id.as_str()).collect();
    Some(format!(
        "the plant deadlocked in replication {} at {}: departments {} are full and every machine there holds a \
         finished lot that can only go to a full department of the same group (or wait for a mover that is \
         itself waiting there); no event can free them. Give one of them more inbound or outbound staging, an \
         overflow location, or more movers",
        i + 1,
        crate::units::format_duration(d.time_s),
        names.join(", ")
    ))
}

/// Run `replications` replications of one layout, in parallel on the current
/// rayon pool, calling `done` with each as it finishes (for progress);
/// results come back in replication order, so the summary is the same
/// whatever the thread count.
pub fn replicate(
    plan: &Plan,
    spec: &RunSpec,
    replications: u32,
    done: impl Fn(&RepStats) + Sync,
) -> Vec<RepStats> {
    replicate_range(plan, spec, 0..u64::from(replications), done)
}

/// As [`replicate`], for replications `range` (replication numbers pick the
/// streams, so replications 10..20 are the same whether run alone or after 0..10).
pub fn replicate_range(
    plan: &Plan,
    spec: &RunSpec,
    range: std::ops::Range<u64>,
    done: impl Fn(&RepStats) + Sync,
) -> Vec<RepStats> {
    range
        .into_par_iter()
        .map(|r| {
            let s = simulate(plan, spec, r);
            done(&s);
            s
        })
        .collect()
}

/// Handling cost per hour of fleet `f` in one replication: the movers' hourly
/// cost, busy or idle, plus the cost of every kilometre they travelled.
pub fn fleet_cost_per_h(plant: &Plant, r: &RepStats, f: usize) -> f64 {
    let fl = &plant.fleets()[f];
    let s = &r.fleets[f];
    f64::from(fl.count) * fl.cost_per_h
        + (s.distance_loaded_m + s.distance_empty_m) / 1000.0 * fl.cost_per_km / r.window_s * 3600.0
}

/// Summarise the replications of layout `spec.layout`.
pub fn summarize(plant: &Plant, spec: &RunSpec, picture: &StaticPicture, reps: &[RepStats]) -> LayoutSummary {
    let per_h = |x: f64, r: &RepStats| x / r.window_s * 3600.0;
    let mut flow_hist = TickHistogram::new(TICK_S);
    let mut wait_hist = TickHistogram::new(TICK_S);
    for r in reps {
        flow_hist.merge(&r.flow_hist);
        wait_hist.merge(&r.move_wait_hist);
    }
    let lp = &picture.layouts[spec.layout];
    let fleets = plant.fleets();
    let features = Features::of(plant);
    let fleet_cost = |r: &RepStats, f: usize| fleet_cost_per_h(plant, r, f);
    let throughput = est(reps.iter().map(|r| per_h(r.shipped.iter().sum::<u64>() as f64, r)));
    let flow = dur(reps.iter().map(|r| observed(&r.flow_time_all)), &flow_hist);
    let wip = est(reps.iter().map(|r| r.wip_total));
    let little_relative_gap =
        if wip.mean > 0.0 { (wip.mean - throughput.mean / 3600.0 * flow.mean).abs() / wip.mean } else { 0.0 };
    LayoutSummary {
        layout: plant.layouts[spec.layout].name.clone(),
        throughput_per_h: throughput,
        flow_time_s: flow,
        wip_mean: wip,
        wip_in_transit_mean: est(reps.iter().map(|r| r.wip_transit)),
        move_wait_s: dur(reps.iter().map(|r| observed(&r.move_wait_all)), &wait_hist),
        distance_loaded_m_per_h: est(reps
            .iter()
            .map(|r| per_h(r.fleets.iter().map(|f| f.distance_loaded_m).sum(), r))),
        distance_empty_m_per_h: est(reps
            .iter()
            .map(|r| per_h(r.fleets.iter().map(|f| f.distance_empty_m).sum(), r))),
        handling_cost_per_h: est(reps.iter().map(|r| (0..fleets.len()).map(|f| fleet_cost(r, f)).sum())),
        load_distance_static_m_per_h: lp.load_distance_m_per_h,
        handling_cost_static_per_h: lp.handling_cost_per_h,
        little_relative_gap,
        products: plant
            .products
            .iter()
            .enumerate()
            .map(|(p, prod)| ProductSummary {
                product: prod.id.clone(),
                throughput_per_h: est(reps.iter().map(|r| per_h(r.shipped[p] as f64, r))),
                flow_time_s: est(reps.iter().map(|r| observed(&r.flow_time[p]))),
            })
            .collect(),
        departments: plant
            .departments
            .iter()
            .enumerate()
            .map(|(d, dep)| DepartmentSummary {
                department: dep.id.clone(),
                wip_mean: est(reps.iter().map(|r| r.wip_department[d])),
                utilization: est(reps.iter().map(|r| r.utilization[d])),
                queue_mean: est(reps.iter().map(|r| r.queue[d])),
                utilization_predicted: picture.utilization[d],
                blocked_share: features.staging.then(|| est(reps.iter().map(|r| r.blocked[d]))),
                availability: dep.breakdowns.as_ref().map(|_| est(reps.iter().map(|r| r.availability[d]))),
                availability_predicted: dep.breakdowns.as_ref().map(|b| b.availability()),
                utilization_scheduled: dep
                    .calendar
                    .as_ref()
                    .map(|_| est(reps.iter().map(|r| department_scheduled_utilization(r, d)))),
                scheduled_share: dep.calendar.as_ref().map(|c| c.scheduled_share()),
                setup_share: dep.setups.as_ref().map(|_| est(reps.iter().map(|r| r.setup[d]))),
                setup_share_predicted: dep.setups.as_ref().map(|_| picture.setup_share[d]),
            })
            .collect(),
        fleets: fleets
            .iter()
            .enumerate()
            .map(|(f, fl)| {
                let cap = |r: &RepStats| f64::from(fl.count) * r.window_s;
                let share = |g: fn(&crate::sim::FleetStats) -> f64| {
                    est(reps.iter().map(move |r| g(&r.fleets[f]) / cap(r)))
                };
                FleetSummary {
                    fleet: fl.id.clone(),
                    movers: fl.count,
                    utilization: share(|s| s.busy_s()),
                    loaded_travel_share: share(|s| s.loaded_s),
                    empty_travel_share: share(|s| s.empty_s),
                    handling_share: share(|s| s.handling_s),
                    idle_share: est(reps.iter().map(|r| {
                        let s = &r.fleets[f];
                        1.0 - (s.busy_s() + s.down_s) / cap(r)
                    })),
                    moves_per_h: est(reps.iter().map(|r| per_h(r.fleets[f].moves as f64, r))),
                    move_wait_s: est(reps.iter().map(|r| observed(&r.move_wait[f]))),
                    distance_loaded_m_per_h: est(reps
                        .iter()
                        .map(|r| per_h(r.fleets[f].distance_loaded_m, r))),
                    distance_empty_m_per_h: est(reps.iter().map(|r| per_h(r.fleets[f].distance_empty_m, r))),
                    handling_cost_per_h: est(reps.iter().map(|r| fleet_cost(r, f))),
                    utilization_lower_bound: lp.fleet_utilization_lower_bound[f],
                    blocked_share: features.staging.then(|| share(|s| s.blocked_s)),
                    availability: (fl.breakdowns.is_some() || fl.charging.is_some())
                        .then(|| est(reps.iter().map(|r| fleet_availability(plant, r, f)))),
                    utilization_scheduled: fl
                        .operators
                        .duty
                        .as_ref()
                        .map(|_| est(reps.iter().map(|r| fleet_scheduled_utilization(plant, r, f)))),
                    congestion_share: features.aisles.then(|| share(|s| s.congestion_s)),
                }
            })
            .collect(),
        events: reps.iter().map(|r| r.events).sum(),
        overflow_moves_per_h: features
            .overflow
            .then(|| est(reps.iter().map(|r| per_h(r.overflow_moves as f64, r)))),
        turned_away_per_h: features
            .turn_away
            .then(|| est(reps.iter().map(|r| per_h(r.turned_away.iter().sum::<u64>() as f64, r)))),
        deadlock: deadlock_message(plant, reps),
        congestion_delay_s_per_h: features
            .aisles
            .then(|| est(reps.iter().map(|r| per_h(r.segments.iter().map(|g| g.delay_s).sum(), r)))),
        segments: segment_summaries(plant, reps),
    }
}

/// Per-segment traffic, occupancy and congestion; `None` unless the network is simulated.
fn segment_summaries(plant: &Plant, reps: &[RepStats]) -> Option<Vec<SegmentSummary>> {
    let net = plant.aisles.as_ref().filter(|n| n.needs_simulation())?;
    let per_h = |x: f64, r: &RepStats| x / r.window_s * 3600.0;
    let ok = |r: &RepStats, s: usize| r.segments.len() > s;
    Some(
        net.segments
            .iter()
            .enumerate()
            .map(|(s, g)| SegmentSummary {
                segment: s,
                from: net.nodes[g.from].id.clone(),
                to: net.nodes[g.to].id.clone(),
                traversals_per_h: est(reps
                    .iter()
                    .filter(|r| ok(r, s))
                    .map(|r| per_h(r.segments[s].traversals as f64, r))),
                occupancy_mean: est(reps.iter().filter(|r| ok(r, s)).map(|r| r.segments[s].occupancy)),
                congestion_delay_s_per_h: est(reps
                    .iter()
                    .filter(|r| ok(r, s))
                    .map(|r| per_h(r.segments[s].delay_s, r))),
                congestion_delay_per_traversal_s: est(reps.iter().filter(|r| ok(r, s)).map(|r| {
                    let g = &r.segments[s];
                    if g.traversals > 0 {
                        g.delay_s / g.traversals as f64
                    } else {
                        0.0
                    }
                })),
            })
            .collect(),
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replications_without_observations_are_left_out_not_counted_as_zero() {
        let mut seen = Tally::new();
        seen.add(10.0);
        seen.add(14.0);
        let empty = Tally::new();
        let e = est([observed(&seen), observed(&empty), observed(&seen)].into_iter());
        // Two replications of mean 12, the empty one skipped: a zero would give 8.
        assert_eq!((e.mean, e.n), (12.0, 2));
        assert_eq!(e.half_width, Some(0.0));
    }
}
