//! What `run` reports for one layout: every metric across replications, named as in the registry.
//!
//! Field names are the JSON keys, and each is a registry name (see
//! `registry.rs`); every value comes from [`value`], so `run`, `compare` and
//! `fleet` cannot disagree. Percentiles come from the histograms of every
//! replication merged (counts added exactly), so they describe the pooled
//! lots, not a mean of percentiles. Replications are folded into a
//! [`LayoutAccumulator`] one at a time, so memory does not grow with them.

use std::collections::HashMap;

use layflow_engine::TickHistogram;
use serde::Serialize;

use crate::analysis::StaticPicture;
use crate::plant::Plant;
use crate::sim::{RepStats, RunSpec, TICK_S};
use crate::study::deadlock::replication_deadlock;
use crate::timebuckets::Grid;

use super::by_bucket::{bucket_values, BucketAccumulator, BucketSummary};
use super::compute::value;
use super::estimate::{with_hist, DurationEstimate, Estimate, Moments};
use super::list::{product_has_due_dates, Features};
use super::registry::Id;

/// Per-product results.
#[derive(Debug, Clone, Serialize)]
pub struct ProductSummary {
    /// Product id.
    pub product: String,
    /// Lots shipped per hour.
    pub throughput_per_h: Estimate,
    /// Mean flow time from receiving to shipping, s.
    pub flow_time_s: Estimate,
    /// Lateness against due dates; present when the product's lots have due dates.
    #[serde(flatten, skip_serializing_if = "Option::is_none")]
    pub due: Option<DueSummary>,
    /// Kits made and the wait for them; present when the product assembles kits.
    #[serde(flatten, skip_serializing_if = "Option::is_none")]
    pub kits: Option<KitSummary>,
    /// A component's mean wait at the assembly department before it is consumed, s.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub part_wait_s: Option<Estimate>,
}

/// An assembling product's kits, under the registry's names (`kits_per_h`, `kit_wait_s`).
#[derive(Debug, Clone, Serialize)]
pub struct KitSummary {
    /// Kits made per hour.
    pub kits_per_h: Estimate,
    /// Mean wait from arriving at the assembly step to the kit being complete, s.
    pub kit_wait_s: Estimate,
}

/// Lateness against due dates, under the registry's names (`late_share`,
/// `tardiness_s`, `lateness_s`, `lateness_p95_s`), each across replications.
#[derive(Debug, Clone, Serialize)]
pub struct DueSummary {
    /// Share of lots shipped after their due date.
    pub late_share: Estimate,
    /// Mean tardiness, s (on-time lots count 0).
    pub tardiness_s: Estimate,
    /// Mean lateness, s (negative: early on average).
    pub lateness_s: Estimate,
    /// The replications' 95th-percentile lateness, s, averaged.
    pub lateness_p95_s: Estimate,
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
    /// Mean loads per batch; present for a batch department.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub batch_size_mean: Option<Estimate>,
    /// Mean loads per batch ÷ the most a batch holds; present for a batch department.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub batch_fill_share: Option<Estimate>,
    /// Mean wait of an operation for a person, s; present when its operations need one.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub person_wait_s: Option<Estimate>,
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
    /// Its first part: request → a mover assigned and setting off, s.
    pub move_wait_assign_s: Estimate,
    /// Its second part: the assigned mover's drive to the pick-up, s.
    pub move_wait_drive_s: Estimate,
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

/// Per-crew results.
#[derive(Debug, Clone, Serialize)]
pub struct CrewSummary {
    /// Crew id.
    pub crew: String,
    /// People in the crew.
    pub size: u32,
    /// Time-average people busy ÷ size.
    pub utilization: Estimate,
    /// The static prediction: people-hours of work per hour ÷ (size × on-duty share).
    pub utilization_predicted: f64,
    /// Busy person time ÷ on-duty person time; present when the crew has shifts.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub utilization_scheduled: Option<Estimate>,
    /// Mean wait of a request for one of its people, s.
    pub person_wait_s: Estimate,
    /// Size × cost per hour.
    pub people_cost_per_h: Estimate,
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
    /// The first part of that wait: request → a mover assigned and setting off, s.
    pub move_wait_assign_s: Estimate,
    /// The second part: the assigned mover's drive to the pick-up, s
    /// (assign + drive = `move_wait_s`).
    pub move_wait_drive_s: Estimate,
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
    /// Results by time bucket and the peak; present with `--by`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub by_bucket: Option<BucketSummary>,
    /// Lateness against due dates, every lot with one; present when some lot has a due date.
    #[serde(flatten, skip_serializing_if = "Option::is_none")]
    pub due: Option<DueSummary>,
    /// People cost per hour, every crew; present when the plant has crews.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub people_cost_per_h: Option<Estimate>,
    /// Mean wait for a person, every crew, s; present when the plant has crews.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub person_wait_s: Option<Estimate>,
    /// Per crew; present when the plant has crews.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub crews: Option<Vec<CrewSummary>>,
}

/// Summarise the replications of layout `spec.layout` (all held in memory;
/// studies fold them one at a time into a [`LayoutAccumulator`] instead).
pub fn summarize(plant: &Plant, spec: &RunSpec, picture: &StaticPicture, reps: &[RepStats]) -> LayoutSummary {
    let mut acc = LayoutAccumulator::new(plant);
    for r in reps {
        acc.add(r);
    }
    acc.finish(spec, picture)
}

/// What a layout's summary needs from its replications, in memory that does
/// not grow with their number: per reported metric a [`Moments`] (a running
/// sum and at most [`super::estimate::CHUNK`] values), the pooled flow-time
/// and move-wait histograms (merged as each replication comes), the events,
/// and the first deadlock. Replications are added in replication order, so
/// the summary does not depend on how many threads simulated them.
#[derive(Debug, Clone)]
pub struct LayoutAccumulator<'a> {
    plant: &'a Plant,
    /// Every (metric, subject) the summary reports.
    slots: Vec<(Id, usize)>,
    /// Position of each in `slots` and `moments`.
    index: HashMap<(Id, usize), usize>,
    moments: Vec<Moments>,
    flow_hist: TickHistogram,
    wait_hist: TickHistogram,
    events: u64,
    replications: u64,
    /// The message of the first replication (in order) that deadlocked.
    deadlock: Option<String>,
    /// Results by time bucket, with `--by`.
    by: Option<BucketAccumulator>,
}

impl<'a> LayoutAccumulator<'a> {
    /// An empty accumulator for `plant`'s metrics.
    pub fn new(plant: &'a Plant) -> LayoutAccumulator<'a> {
        let slots = slots(plant);
        let index = slots.iter().enumerate().map(|(k, &s)| (s, k)).collect();
        LayoutAccumulator {
            plant,
            moments: vec![Moments::new(); slots.len()],
            slots,
            index,
            flow_hist: TickHistogram::new(TICK_S),
            wait_hist: TickHistogram::new(TICK_S),
            events: 0,
            replications: 0,
            deadlock: None,
            by: None,
        }
    }

    /// Also summarise each replication's time buckets (its `RepStats::by`, from a plan with `grid`).
    pub fn with_buckets(mut self, grid: Option<&Grid>) -> LayoutAccumulator<'a> {
        self.by = grid.map(|g| BucketAccumulator::new(self.plant, g));
        self
    }

    /// Fold in the next replication (replication number = replications added so far).
    pub fn add(&mut self, r: &RepStats) {
        let buckets = self.by.as_ref().map(|b| bucket_values(self.plant, b.metrics(), r));
        self.add_with_buckets(r, buckets.as_deref());
    }

    /// As [`Self::add`], with the replication's bucket values already
    /// computed (`bucket_values` over `bucket_metrics`), for a caller that keeps them too.
    pub fn add_with_buckets(&mut self, r: &RepStats, buckets: Option<&[Vec<f64>]>) {
        for (m, &(id, i)) in self.moments.iter_mut().zip(&self.slots) {
            m.add(value(id, self.plant, r, i));
        }
        self.flow_hist.merge(&r.flow_hist);
        self.wait_hist.merge(&r.move_wait_hist);
        if let (Some(b), Some(values)) = (self.by.as_mut(), buckets) {
            b.add_values(self.plant, values, r);
        }
        self.events += r.events;
        if self.deadlock.is_none() {
            self.deadlock = replication_deadlock(self.plant, r, self.replications);
        }
        self.replications += 1;
    }

    /// Replications folded in.
    pub fn replications(&self) -> u64 {
        self.replications
    }

    /// Events handled, every replication so far.
    pub fn events(&self) -> u64 {
        self.events
    }

    /// Why the first replication that deadlocked stopped, if one did.
    pub fn deadlock(&self) -> Option<&str> {
        self.deadlock.as_deref()
    }

    /// Values held in memory for the estimates, all metrics together: at most
    /// [`super::estimate::CHUNK`] per metric, whatever the replications (the
    /// regression test of memory bounded in replications reads this).
    pub fn retained_values(&self) -> usize {
        self.moments.iter().map(Moments::retained).sum()
    }

    /// Metrics (with their subjects) the summary estimates.
    pub fn metric_count(&self) -> usize {
        self.slots.len()
    }

    /// The estimate of metric `id` for subject `i`.
    fn of(&self, id: Id, i: usize) -> Estimate {
        let k = self.index.get(&(id, i)).expect("every metric the summary reports has a slot (see `slots`)");
        self.moments[*k].estimate()
    }

    /// The summary of layout `spec.layout` from the replications folded in.
    pub fn finish(&self, spec: &RunSpec, picture: &StaticPicture) -> LayoutSummary {
        let plant = self.plant;
        let of = |id: Id, i: usize| self.of(id, i);
        let lp = &picture.layouts[spec.layout];
        let features = Features::of(plant);
        let throughput = of(Id::Throughput, 0);
        let flow = with_hist(of(Id::FlowTime, 0), &self.flow_hist);
        let wip = of(Id::Wip, 0);
        let has_crews = !plant.crews.is_empty();
        let little_relative_gap = if wip.mean > 0.0 {
            (wip.mean - throughput.mean / 3600.0 * flow.mean).abs() / wip.mean
        } else {
            0.0
        };
        LayoutSummary {
            layout: plant.layouts[spec.layout].name.clone(),
            throughput_per_h: throughput,
            flow_time_s: flow,
            wip_mean: wip,
            wip_in_transit_mean: of(Id::WipInTransit, 0),
            move_wait_s: with_hist(of(Id::MoveWait, 0), &self.wait_hist),
            move_wait_assign_s: of(Id::MoveWaitAssign, 0),
            move_wait_drive_s: of(Id::MoveWaitDrive, 0),
            distance_loaded_m_per_h: of(Id::DistanceLoaded, 0),
            distance_empty_m_per_h: of(Id::DistanceEmpty, 0),
            handling_cost_per_h: of(Id::HandlingCost, 0),
            load_distance_static_m_per_h: lp.load_distance_m_per_h,
            handling_cost_static_per_h: lp.handling_cost_per_h,
            little_relative_gap,
            products: plant
                .products
                .iter()
                .enumerate()
                .map(|(p, prod)| ProductSummary {
                    product: prod.id.clone(),
                    throughput_per_h: of(Id::ProductThroughput, p),
                    flow_time_s: of(Id::ProductFlowTime, p),
                    due: product_has_due_dates(plant, p).then(|| DueSummary {
                        late_share: of(Id::ProductLateShare, p),
                        tardiness_s: of(Id::ProductTardiness, p),
                        lateness_s: of(Id::ProductLateness, p),
                        lateness_p95_s: of(Id::ProductLatenessP95, p),
                    }),
                    kits: (!prod.kits.is_empty()).then(|| KitSummary {
                        kits_per_h: of(Id::ProductKits, p),
                        kit_wait_s: of(Id::ProductKitWait, p),
                    }),
                    part_wait_s: prod.into.map(|_| of(Id::ProductPartWait, p)),
                })
                .collect(),
            departments: plant
                .departments
                .iter()
                .enumerate()
                .map(|(d, dep)| DepartmentSummary {
                    department: dep.id.clone(),
                    wip_mean: of(Id::DepartmentWip, d),
                    utilization: of(Id::DepartmentUtilization, d),
                    queue_mean: of(Id::DepartmentQueue, d),
                    utilization_predicted: picture.utilization[d],
                    blocked_share: features.staging.then(|| of(Id::DepartmentBlocked, d)),
                    availability: dep.breakdowns.as_ref().map(|_| of(Id::DepartmentAvailability, d)),
                    availability_predicted: dep.breakdowns.as_ref().map(|b| b.availability()),
                    utilization_scheduled: dep
                        .calendar
                        .as_ref()
                        .map(|_| of(Id::DepartmentScheduledUtilization, d)),
                    scheduled_share: dep.calendar.as_ref().map(|c| c.scheduled_share()),
                    setup_share: dep.setups.as_ref().map(|_| of(Id::DepartmentSetup, d)),
                    setup_share_predicted: dep.setups.as_ref().map(|_| picture.setup_share[d]),
                    batch_size_mean: dep.batch.as_ref().map(|_| of(Id::DepartmentBatchSize, d)),
                    batch_fill_share: dep.batch.as_ref().map(|_| of(Id::DepartmentBatchFill, d)),
                    person_wait_s: dep.people.as_ref().map(|_| of(Id::DepartmentPersonWait, d)),
                })
                .collect(),
            fleets: plant
                .fleets()
                .iter()
                .enumerate()
                .map(|(f, fl)| FleetSummary {
                    fleet: fl.id.clone(),
                    movers: fl.count,
                    utilization: of(Id::FleetUtilization, f),
                    loaded_travel_share: of(Id::FleetLoadedTravel, f),
                    empty_travel_share: of(Id::FleetEmptyTravel, f),
                    handling_share: of(Id::FleetHandling, f),
                    idle_share: of(Id::FleetIdle, f),
                    moves_per_h: of(Id::FleetMoves, f),
                    move_wait_s: of(Id::FleetMoveWait, f),
                    move_wait_assign_s: of(Id::FleetMoveWaitAssign, f),
                    move_wait_drive_s: of(Id::FleetMoveWaitDrive, f),
                    distance_loaded_m_per_h: of(Id::FleetDistanceLoaded, f),
                    distance_empty_m_per_h: of(Id::FleetDistanceEmpty, f),
                    handling_cost_per_h: of(Id::FleetHandlingCost, f),
                    utilization_lower_bound: lp.fleet_utilization_lower_bound[f],
                    blocked_share: features.staging.then(|| of(Id::FleetBlocked, f)),
                    availability: (fl.breakdowns.is_some() || fl.charging.is_some())
                        .then(|| of(Id::FleetAvailability, f)),
                    utilization_scheduled: fl
                        .operators
                        .duty
                        .as_ref()
                        .map(|_| of(Id::FleetScheduledUtilization, f)),
                    congestion_share: features.aisles.then(|| of(Id::FleetCongestion, f)),
                })
                .collect(),
            events: self.events,
            overflow_moves_per_h: features.overflow.then(|| of(Id::OverflowMoves, 0)),
            turned_away_per_h: features.turn_away.then(|| of(Id::TurnedAway, 0)),
            deadlock: self.deadlock.clone(),
            congestion_delay_s_per_h: features.aisles.then(|| of(Id::CongestionDelay, 0)),
            segments: self.segment_summaries(),
            by_bucket: self.by.as_ref().map(BucketAccumulator::finish),
            due: features.due.then(|| DueSummary {
                late_share: of(Id::LateShare, 0),
                tardiness_s: of(Id::Tardiness, 0),
                lateness_s: of(Id::Lateness, 0),
                lateness_p95_s: of(Id::LatenessP95, 0),
            }),
            people_cost_per_h: has_crews.then(|| of(Id::PeopleCost, 0)),
            person_wait_s: has_crews.then(|| of(Id::PersonWait, 0)),
            crews: has_crews.then(|| {
                let predicted = crate::crew_load::predicted_utilization(plant, picture);
                plant
                    .crews
                    .iter()
                    .enumerate()
                    .map(|(c, crew)| CrewSummary {
                        crew: crew.id.clone(),
                        size: crew.size,
                        utilization: of(Id::CrewUtilization, c),
                        utilization_predicted: predicted[c],
                        utilization_scheduled: crew
                            .duty
                            .as_ref()
                            .map(|_| of(Id::CrewScheduledUtilization, c)),
                        person_wait_s: of(Id::CrewPersonWait, c),
                        people_cost_per_h: of(Id::CrewCost, c),
                    })
                    .collect()
            }),
        }
    }

    /// Per-segment traffic, occupancy and congestion; `None` unless the network is simulated.
    fn segment_summaries(&self) -> Option<Vec<SegmentSummary>> {
        let net = self.plant.aisles.as_ref().filter(|n| n.needs_simulation())?;
        Some(
            net.segments
                .iter()
                .enumerate()
                .map(|(s, g)| SegmentSummary {
                    segment: s,
                    from: net.nodes[g.from].id.clone(),
                    to: net.nodes[g.to].id.clone(),
                    traversals_per_h: self.of(Id::SegmentTraversals, s),
                    occupancy_mean: self.of(Id::SegmentOccupancy, s),
                    congestion_delay_s_per_h: self.of(Id::SegmentCongestionDelay, s),
                    congestion_delay_per_traversal_s: self.of(Id::SegmentDelayPerTraversal, s),
                })
                .collect(),
        )
    }
}

/// Every (metric, subject) a [`LayoutSummary`] of `plant` reports, under the
/// same conditions as [`LayoutAccumulator::finish`] reads them.
fn slots(plant: &Plant) -> Vec<(Id, usize)> {
    let features = Features::of(plant);
    let mut out: Vec<(Id, usize)> = [
        Id::Throughput,
        Id::FlowTime,
        Id::Wip,
        Id::WipInTransit,
        Id::MoveWait,
        Id::MoveWaitAssign,
        Id::MoveWaitDrive,
        Id::DistanceLoaded,
        Id::DistanceEmpty,
        Id::HandlingCost,
    ]
    .into_iter()
    .map(|id| (id, 0))
    .collect();
    let plant_extra = [
        (features.overflow, Id::OverflowMoves),
        (features.turn_away, Id::TurnedAway),
        (features.aisles, Id::CongestionDelay),
    ];
    out.extend(plant_extra.into_iter().filter(|(on, _)| *on).map(|(_, id)| (id, 0)));
    if features.due {
        out.extend([Id::LateShare, Id::Tardiness, Id::Lateness, Id::LatenessP95].map(|id| (id, 0)));
    }
    if !plant.crews.is_empty() {
        out.extend([(Id::PeopleCost, 0), (Id::PersonWait, 0)]);
    }
    for p in 0..plant.products.len() {
        out.extend([(Id::ProductThroughput, p), (Id::ProductFlowTime, p)]);
        if !plant.products[p].kits.is_empty() {
            out.extend([(Id::ProductKits, p), (Id::ProductKitWait, p)]);
        }
        if plant.products[p].into.is_some() {
            out.push((Id::ProductPartWait, p));
        }
        if product_has_due_dates(plant, p) {
            out.extend(
                [Id::ProductLateShare, Id::ProductTardiness, Id::ProductLateness, Id::ProductLatenessP95]
                    .map(|id| (id, p)),
            );
        }
    }
    for (d, dep) in plant.departments.iter().enumerate() {
        out.extend([(Id::DepartmentWip, d), (Id::DepartmentUtilization, d), (Id::DepartmentQueue, d)]);
        let extra = [
            (features.staging, Id::DepartmentBlocked),
            (dep.breakdowns.is_some(), Id::DepartmentAvailability),
            (dep.calendar.is_some(), Id::DepartmentScheduledUtilization),
            (dep.setups.is_some(), Id::DepartmentSetup),
            (dep.batch.is_some(), Id::DepartmentBatchSize),
            (dep.batch.is_some(), Id::DepartmentBatchFill),
            (dep.people.is_some(), Id::DepartmentPersonWait),
        ];
        out.extend(extra.into_iter().filter(|(on, _)| *on).map(|(_, id)| (id, d)));
    }
    for (f, fl) in plant.fleets().iter().enumerate() {
        out.extend(
            [
                Id::FleetUtilization,
                Id::FleetLoadedTravel,
                Id::FleetEmptyTravel,
                Id::FleetHandling,
                Id::FleetIdle,
                Id::FleetMoves,
                Id::FleetMoveWait,
                Id::FleetMoveWaitAssign,
                Id::FleetMoveWaitDrive,
                Id::FleetDistanceLoaded,
                Id::FleetDistanceEmpty,
                Id::FleetHandlingCost,
            ]
            .into_iter()
            .map(|id| (id, f)),
        );
        let extra = [
            (features.staging, Id::FleetBlocked),
            (fl.breakdowns.is_some() || fl.charging.is_some(), Id::FleetAvailability),
            (fl.operators.duty.is_some(), Id::FleetScheduledUtilization),
            (features.aisles, Id::FleetCongestion),
        ];
        out.extend(extra.into_iter().filter(|(on, _)| *on).map(|(_, id)| (id, f)));
    }
    for (c, crew) in plant.crews.iter().enumerate() {
        out.extend([(Id::CrewUtilization, c), (Id::CrewPersonWait, c), (Id::CrewCost, c)]);
        if crew.duty.is_some() {
            out.push((Id::CrewScheduledUtilization, c));
        }
    }
    if let Some(net) = plant.aisles.as_ref().filter(|n| n.needs_simulation()) {
        for s in 0..net.segments.len() {
            out.extend([
                (Id::SegmentTraversals, s),
                (Id::SegmentOccupancy, s),
                (Id::SegmentCongestionDelay, s),
                (Id::SegmentDelayPerTraversal, s),
            ]);
        }
    }
    out
}
