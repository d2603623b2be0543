//! The metric registry: every metric's name, table label, unit, better direction, scope and meaning, once.
//!
//! A metric's name is what a user types (`--metric`, `--target`, experiment
//! plans) and reads (JSON keys, CSV `metric` column): snake_case with the
//! unit in the name, American spelling (`utilization`). Its label is the
//! human form printed in tables. `docs/metrics.md` lists both side by side,
//! and a test keeps that page and this table in step.

use serde::Serialize;

/// Which part of the plant a metric describes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Scope {
    /// The whole plant.
    Plant,
    /// One product.
    Product,
    /// One department.
    Department,
    /// One fleet.
    Fleet,
    /// One aisle segment (subject `segment-3`; with segment-by-segment travel only).
    Segment,
    /// One crew of people.
    Crew,
}

impl Scope {
    /// The lowercase word used in CSV and JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            Scope::Plant => "plant",
            Scope::Product => "product",
            Scope::Department => "department",
            Scope::Fleet => "fleet",
            Scope::Segment => "segment",
            Scope::Crew => "crew",
        }
    }
}

/// Which direction of a metric is better, for ranking, selection and targets.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Better {
    /// Smaller is better (flow time, WIP, waits, cost, distance).
    Lower,
    /// Larger is better (throughput, availability).
    Higher,
    /// Neither: a description of the plant, not a goal (utilisation, shares).
    Neither,
}

/// What a metric's number is, for formatting and for reading an indifference zone.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Kind {
    /// Seconds.
    Duration,
    /// Anything else: lots, lots per hour, metres per hour, money per hour, a share.
    Number,
}

/// The unit a metric's value is in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Unit {
    /// Seconds (written with a unit in targets: `5 min`).
    Seconds,
    /// A fraction of time, 0 to 1 (written `0.85` or `85%` in targets).
    Share,
    /// Lots or loads per hour.
    PerHour,
    /// A time-average number of lots or movers.
    Count,
    /// Loads per batch (a mean over batches).
    PerBatch,
    /// Metres per hour.
    MetresPerHour,
    /// Mover-seconds per hour.
    SecondsPerHour,
    /// Money (the scenario's currency) per hour.
    MoneyPerHour,
    /// Money per load moved.
    MoneyPerLoad,
}

impl Unit {
    /// Duration or plain number.
    pub fn kind(self) -> Kind {
        match self {
            Unit::Seconds => Kind::Duration,
            _ => Kind::Number,
        }
    }

    /// The unit in words, for the user guide and error messages.
    pub fn words(self) -> &'static str {
        match self {
            Unit::Seconds => "seconds",
            Unit::Share => "share (0–1)",
            Unit::PerHour => "per hour",
            Unit::Count => "lots (time-average)",
            Unit::PerBatch => "loads per batch",
            Unit::MetresPerHour => "m/h",
            Unit::SecondsPerHour => "mover-s/h",
            Unit::MoneyPerHour => "money/h",
            Unit::MoneyPerLoad => "money/load",
        }
    }
}

/// When a plant has a metric: always, or only with the feature it measures,
/// so that plants without the feature keep exactly their old list.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum When {
    /// Every plant (every subject of the scope).
    Always,
    /// Some department has finite staging.
    Staging,
    /// Some department has an overflow location.
    Overflow,
    /// Some receiving dock may turn lots away.
    TurnAway,
    /// The aisle network is simulated segment by segment.
    Aisles,
    /// The department has breakdowns; the fleet has breakdowns or charging.
    Breakdowns,
    /// The department has a calendar; the fleet's operators have working hours.
    Calendar,
    /// The department has setups.
    Setups,
    /// Some lot has a due date (the plant); the product's lots have one (a product).
    DueDates,
    /// The department is a batch machine (`batch`).
    Batches,
    /// The product assembles kits (`kits_per_h`, `kit_wait_s`), or is a
    /// component consumed into one (`part_wait_s`).
    Assembly,
    /// The plant has crews (the plant); the department's operations need a person (a department).
    Crews,
}

/// Every metric, one variant each: the key [`crate::metrics::value`] computes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
#[allow(missing_docs)] // each variant is documented by its row in DEFS
pub enum Id {
    Throughput,
    FlowTime,
    Wip,
    WipInTransit,
    MoveWait,
    MoveWaitAssign,
    MoveWaitDrive,
    DistanceLoaded,
    DistanceEmpty,
    HandlingCost,
    OverflowMoves,
    TurnedAway,
    CongestionDelay,
    FlowTimeQuantile(Percentile),
    MoveWaitQuantile(Percentile),
    LateShare,
    Tardiness,
    Lateness,
    LatenessP95,
    ProductThroughput,
    ProductFlowTime,
    ProductLateShare,
    ProductTardiness,
    ProductLateness,
    ProductLatenessP95,
    ProductKits,
    ProductKitWait,
    ProductPartWait,
    DepartmentWip,
    DepartmentUtilization,
    DepartmentQueue,
    DepartmentBlocked,
    DepartmentAvailability,
    DepartmentScheduledUtilization,
    DepartmentSetup,
    DepartmentBatchSize,
    DepartmentBatchFill,
    FleetUtilization,
    FleetLoadedTravel,
    FleetEmptyTravel,
    FleetHandling,
    FleetIdle,
    FleetMoves,
    FleetMoveWait,
    FleetMoveWaitAssign,
    FleetMoveWaitDrive,
    FleetDistanceLoaded,
    FleetDistanceEmpty,
    FleetHandlingCost,
    FleetBlocked,
    FleetAvailability,
    FleetScheduledUtilization,
    FleetCongestion,
    FleetMoveWaitQuantile(Percentile),
    FleetMoveWaitAssignQuantile(Percentile),
    FleetMoveWaitDriveQuantile(Percentile),
    FleetCostPerLoad,
    SegmentTraversals,
    SegmentOccupancy,
    SegmentCongestionDelay,
    SegmentDelayPerTraversal,
    PeopleCost,
    PersonWait,
    DepartmentPersonWait,
    CrewUtilization,
    CrewScheduledUtilization,
    CrewPersonWait,
    CrewCost,
}

/// A percentile of one replication's observations.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Percentile {
    /// Median.
    P50,
    /// 90th.
    P90,
    /// 95th.
    P95,
    /// 99th.
    P99,
}

impl Percentile {
    /// The quantile, 0 to 1.
    pub fn q(self) -> f64 {
        match self {
            Percentile::P50 => 0.50,
            Percentile::P90 => 0.90,
            Percentile::P95 => 0.95,
            Percentile::P99 => 0.99,
        }
    }
}

/// One metric's definition.
#[derive(Debug, Clone, Copy)]
pub struct Def {
    /// What computes it.
    pub id: Id,
    /// Where it applies.
    pub scope: Scope,
    /// The name users type and read in JSON and CSV, e.g. `flow_time_s`.
    pub name: &'static str,
    /// The human form printed in tables, e.g. "flow time".
    pub label: &'static str,
    /// Its unit.
    pub unit: Unit,
    /// Which direction is better.
    pub better: Better,
    /// When a plant has it.
    pub when: When,
    /// In every replication's list (compare's CSV and JSON, experiment
    /// results); the rest are per-replication figures that fleet sizing
    /// reports and targets may name.
    pub listed: bool,
    /// One sentence: how a replication's value is computed.
    pub what: &'static str,
}

impl Def {
    /// Duration or plain number.
    pub fn kind(&self) -> Kind {
        self.unit.kind()
    }
}

use Better::{Higher, Lower, Neither};
use Scope::{Crew, Department, Fleet, Plant, Product, Segment};
use Unit::{
    Count, MetresPerHour, MoneyPerHour, MoneyPerLoad, PerBatch, PerHour, Seconds, SecondsPerHour, Share,
};

#[allow(clippy::too_many_arguments)] // one row of the table, read as a row
const fn def(
    id: Id,
    scope: Scope,
    name: &'static str,
    label: &'static str,
    unit: Unit,
    better: Better,
    when: When,
    what: &'static str,
) -> Def {
    Def { id, scope, name, label, unit, better, when, listed: true, what }
}

const fn extra(
    id: Id,
    scope: Scope,
    name: &'static str,
    label: &'static str,
    unit: Unit,
    better: Better,
    what: &'static str,
) -> Def {
    Def { id, scope, name, label, unit, better, when: When::Always, listed: false, what }
}

/// Every metric, in report order: within a scope, a plant's list follows this order.
pub const DEFS: &[Def] = &[
    // The plant.
    def(Id::Throughput, Plant, "throughput_per_h", "throughput (lots/h)", PerHour, Higher, When::Always,
        "lots shipped in the window, every product, ÷ window hours"),
    def(Id::FlowTime, Plant, "flow_time_s", "flow time", Seconds, Lower, When::Always,
        "mean time from receiving to shipping of the lots shipped in the window"),
    def(Id::Wip, Plant, "wip_mean", "WIP (lots)", Count, Lower, When::Always,
        "time-average lots in the plant (queued, in process, waiting for or on a mover)"),
    def(Id::WipInTransit, Plant, "wip_in_transit_mean", "WIP on movers (lots)", Count, Lower, When::Always,
        "time-average lots on movers (loading, travelling, unloading)"),
    def(Id::MoveWait, Plant, "move_wait_s", "wait for a mover", Seconds, Lower, When::Always,
        "mean time from a move request to the mover picking the load up, every fleet"),
    def(Id::MoveWaitAssign, Plant, "move_wait_assign_s", "waiting to be assigned", Seconds, Lower, When::Always,
        "mean time from a move request to a mover being assigned to it and setting off, every fleet \
        (the part of the wait more movers shorten)"),
    def(Id::MoveWaitDrive, Plant, "move_wait_drive_s", "drive to pick-up", Seconds, Lower, When::Always,
        "mean time from a mover being assigned to a move to its reaching the pick-up, every fleet \
        (the part more movers do not remove; assigned + drive = wait for a mover)"),
    def(Id::DistanceLoaded, Plant, "distance_loaded_m_per_h", "distance loaded (m/h)", MetresPerHour, Lower,
        When::Always, "metres travelled with a load, every fleet, ÷ window hours"),
    def(Id::DistanceEmpty, Plant, "distance_empty_m_per_h", "distance empty (m/h)", MetresPerHour, Lower,
        When::Always, "metres travelled empty, every fleet, ÷ window hours"),
    def(Id::HandlingCost, Plant, "handling_cost_per_h", "fleet cost (/h)", MoneyPerHour, Lower, When::Always,
        "every fleet's movers × cost per hour, plus kilometres travelled × cost per km ÷ window hours"),
    def(Id::OverflowMoves, Plant, "overflow_moves_per_h", "loads taken to overflow areas (/h)", PerHour, Lower,
        When::Overflow, "loads taken to an overflow area because the inbound area was full, ÷ window hours"),
    def(Id::TurnedAway, Plant, "turned_away_per_h", "lots turned away at the dock (/h)", PerHour, Lower,
        When::TurnAway, "lots turned away at their receiving dock, ÷ window hours"),
    def(Id::CongestionDelay, Plant, "congestion_delay_s_per_h", "aisle congestion (mover-s/h)", SecondsPerHour,
        Lower, When::Aisles, "mover-seconds spent waiting to enter full aisle segments or busy intersections, \
        ÷ window hours"),
    extra(Id::FlowTimeQuantile(Percentile::P50), Plant, "flow_time_p50_s", "flow time p50", Seconds, Lower,
        "the replication's median flow time"),
    extra(Id::FlowTimeQuantile(Percentile::P90), Plant, "flow_time_p90_s", "flow time p90", Seconds, Lower,
        "the replication's 90th-percentile flow time"),
    extra(Id::FlowTimeQuantile(Percentile::P95), Plant, "flow_time_p95_s", "flow time p95", Seconds, Lower,
        "the replication's 95th-percentile flow time"),
    extra(Id::FlowTimeQuantile(Percentile::P99), Plant, "flow_time_p99_s", "flow time p99", Seconds, Lower,
        "the replication's 99th-percentile flow time"),
    extra(Id::MoveWaitQuantile(Percentile::P50), Plant, "move_wait_p50_s", "wait p50", Seconds, Lower,
        "the replication's median wait for a mover, every fleet"),
    extra(Id::MoveWaitQuantile(Percentile::P90), Plant, "move_wait_p90_s", "wait p90", Seconds, Lower,
        "the replication's 90th-percentile wait for a mover, every fleet"),
    extra(Id::MoveWaitQuantile(Percentile::P95), Plant, "move_wait_p95_s", "wait p95", Seconds, Lower,
        "the replication's 95th-percentile wait for a mover, every fleet"),
    extra(Id::MoveWaitQuantile(Percentile::P99), Plant, "move_wait_p99_s", "wait p99", Seconds, Lower,
        "the replication's 99th-percentile wait for a mover, every fleet"),
    def(Id::PeopleCost, Plant, "people_cost_per_h", "people cost (/h)", MoneyPerHour, Lower, When::Crews,
        "every crew's size × a person's cost per hour (paid for the whole window; not in handling_cost_per_h)"),
    def(Id::PersonWait, Plant, "person_wait_s", "wait for a person", Seconds, Lower, When::Crews,
        "mean time from a request for a person (an operation or a repair) to a crew member taking it, every crew"),
    def(Id::LateShare, Plant, "late_share", "late", Share, Lower, When::DueDates,
        "lots with a due date shipped in the window after it ÷ lots with a due date shipped in the window"),
    def(Id::Tardiness, Plant, "tardiness_s", "tardiness", Seconds, Lower, When::DueDates,
        "mean of max(shipped − due, 0) over the lots with a due date shipped in the window (on-time lots count 0)"),
    def(Id::Lateness, Plant, "lateness_s", "lateness", Seconds, Lower, When::DueDates,
        "mean of shipped − due over the lots with a due date shipped in the window (negative: early on average)"),
    def(Id::LatenessP95, Plant, "lateness_p95_s", "lateness p95", Seconds, Lower, When::DueDates,
        "the replication's 95th-percentile of shipped − due (negative: 95% of lots shipped that early or more)"),
    // Each product.
    def(Id::ProductThroughput, Product, "throughput_per_h", "throughput (lots/h)", PerHour, Higher, When::Always,
        "the product's lots shipped in the window ÷ window hours"),
    def(Id::ProductFlowTime, Product, "flow_time_s", "flow time", Seconds, Lower, When::Always,
        "mean flow time of the product's lots shipped in the window"),
    def(Id::ProductLateShare, Product, "late_share", "late", Share, Lower, When::DueDates,
        "the product's lots shipped in the window after their due date ÷ its lots with a due date shipped"),
    def(Id::ProductTardiness, Product, "tardiness_s", "tardiness", Seconds, Lower, When::DueDates,
        "mean of max(shipped − due, 0) over the product's lots with a due date shipped in the window"),
    def(Id::ProductLateness, Product, "lateness_s", "lateness", Seconds, Lower, When::DueDates,
        "mean of shipped − due over the product's lots with a due date shipped in the window"),
    def(Id::ProductLatenessP95, Product, "lateness_p95_s", "lateness p95", Seconds, Lower, When::DueDates,
        "the replication's 95th-percentile of shipped − due over the product's lots with a due date"),
    def(Id::ProductKits, Product, "kits_per_h", "kits/h", PerHour, Higher, When::Assembly,
        "the product's lots whose kit was complete in the window (parts consumed, on to the assembly \
        operation) ÷ window hours"),
    def(Id::ProductKitWait, Product, "kit_wait_s", "kit wait", Seconds, Lower, When::Assembly,
        "mean time from the product's lot arriving at its assembly step to its kit being complete, over the \
        kits made in the window"),
    def(Id::ProductPartWait, Product, "part_wait_s", "part wait", Seconds, Lower, When::Assembly,
        "mean time from a component lot arriving at the assembly department to its being consumed into a kit, \
        over the lots consumed in the window"),
    // Each department.
    def(Id::DepartmentWip, Department, "wip_mean", "WIP (lots)", Count, Lower, When::Always,
        "time-average lots at the department (queued, in process, or waiting for a mover)"),
    def(Id::DepartmentUtilization, Department, "utilization", "utilisation", Share, Neither, When::Always,
        "time-average busy machines ÷ machines, against clock time (setups count as busy; 0 for docks)"),
    def(Id::DepartmentQueue, Department, "queue_mean", "queue (lots)", Count, Lower, When::Always,
        "time-average lots waiting for a machine"),
    def(Id::DepartmentBlocked, Department, "blocked_share", "blocked", Share, Lower, When::Staging,
        "time-average share of machines holding a finished lot that cannot leave (blocking after service)"),
    def(Id::DepartmentAvailability, Department, "availability", "availability", Share, Higher, When::Breakdowns,
        "time-average share of machines up (not under repair)"),
    def(Id::DepartmentScheduledUtilization, Department, "utilization_scheduled", "of scheduled", Share, Neither,
        When::Calendar, "busy machine time ÷ the calendar's scheduled machine time"),
    def(Id::DepartmentSetup, Department, "setup_share", "setup", Share, Lower, When::Setups,
        "time-average share of machines setting up (counted in utilization)"),
    def(Id::DepartmentBatchSize, Department, "batch_size_mean", "batch size", PerBatch, Neither, When::Batches,
        "loads in the batches started in the window ÷ those batches"),
    def(Id::DepartmentBatchFill, Department, "batch_fill_share", "batch fill", Share, Higher, When::Batches,
        "loads in the batches started in the window ÷ (those batches × max, the most a batch holds)"),
    def(Id::DepartmentPersonWait, Department, "person_wait_s", "wait for a person", Seconds, Lower, When::Crews,
        "mean time an operation on a free machine waits for a person of its crew (0 when one is free)"),
    // Each fleet.
    def(Id::FleetUtilization, Fleet, "utilization", "busy", Share, Neither, When::Always,
        "mover time loaded, empty, loading/unloading, blocked at a full inbound area or held up in the aisles \
        ÷ (movers × window)"),
    def(Id::FleetLoadedTravel, Fleet, "loaded_travel_share", "loaded", Share, Neither, When::Always,
        "mover time travelling with a load ÷ (movers × window)"),
    def(Id::FleetEmptyTravel, Fleet, "empty_travel_share", "empty", Share, Lower, When::Always,
        "mover time travelling empty ÷ (movers × window)"),
    def(Id::FleetHandling, Fleet, "handling_share", "load/unload", Share, Neither, When::Always,
        "mover time loading and unloading ÷ (movers × window)"),
    def(Id::FleetIdle, Fleet, "idle_share", "idle", Share, Neither, When::Always,
        "1 − (busy + out of service) ÷ (movers × window)"),
    def(Id::FleetMoves, Fleet, "moves_per_h", "moves/h", PerHour, Neither, When::Always,
        "loads the fleet picked up in the window ÷ window hours"),
    def(Id::FleetMoveWait, Fleet, "move_wait_s", "wait", Seconds, Lower, When::Always,
        "mean time from a move request to this fleet's mover picking the load up"),
    def(Id::FleetMoveWaitAssign, Fleet, "move_wait_assign_s", "assign", Seconds, Lower, When::Always,
        "mean time from a move request to one of this fleet's movers being assigned to it and setting off"),
    def(Id::FleetMoveWaitDrive, Fleet, "move_wait_drive_s", "drive", Seconds, Lower, When::Always,
        "mean time from this fleet's mover being assigned to a move to its reaching the pick-up \
        (assign + drive = wait)"),
    def(Id::FleetDistanceLoaded, Fleet, "distance_loaded_m_per_h", "distance loaded (m/h)", MetresPerHour, Lower,
        When::Always, "metres the fleet travelled with a load ÷ window hours"),
    def(Id::FleetDistanceEmpty, Fleet, "distance_empty_m_per_h", "distance empty (m/h)", MetresPerHour, Lower,
        When::Always, "metres the fleet travelled empty ÷ window hours"),
    def(Id::FleetHandlingCost, Fleet, "handling_cost_per_h", "cost/h", MoneyPerHour, Lower, When::Always,
        "movers × cost per hour, plus kilometres travelled × cost per km ÷ window hours"),
    def(Id::FleetBlocked, Fleet, "blocked_share", "waiting full", Share, Lower, When::Staging,
        "mover time waiting at a full inbound area holding a load (counted in utilization) ÷ (movers × window)"),
    def(Id::FleetAvailability, Fleet, "availability", "availability", Share, Higher, When::Breakdowns,
        "1 − mover time under repair or on charge ÷ (movers × window)"),
    def(Id::FleetScheduledUtilization, Fleet, "utilization_scheduled", "busy on duty", Share, Neither,
        When::Calendar, "busy mover time ÷ on-duty mover time (the operators' shifts less breaks)"),
    def(Id::FleetCongestion, Fleet, "congestion_share", "held up in aisles", Share, Lower, When::Aisles,
        "mover time waiting to enter full aisle segments or busy intersections (counted in utilization) \
        ÷ (movers × window)"),
    extra(Id::FleetMoveWaitQuantile(Percentile::P50), Fleet, "move_wait_p50_s", "wait p50", Seconds, Lower,
        "the replication's median wait for this fleet"),
    extra(Id::FleetMoveWaitQuantile(Percentile::P90), Fleet, "move_wait_p90_s", "wait p90", Seconds, Lower,
        "the replication's 90th-percentile wait for this fleet"),
    extra(Id::FleetMoveWaitQuantile(Percentile::P95), Fleet, "move_wait_p95_s", "wait p95", Seconds, Lower,
        "the replication's 95th-percentile wait for this fleet"),
    extra(Id::FleetMoveWaitQuantile(Percentile::P99), Fleet, "move_wait_p99_s", "wait p99", Seconds, Lower,
        "the replication's 99th-percentile wait for this fleet"),
    extra(Id::FleetMoveWaitAssignQuantile(Percentile::P95), Fleet, "move_wait_assign_p95_s", "assign p95",
        Seconds, Lower, "the replication's 95th-percentile wait for one of this fleet's movers to be assigned"),
    extra(Id::FleetMoveWaitDriveQuantile(Percentile::P50), Fleet, "move_wait_drive_p50_s", "drive p50", Seconds,
        Lower, "the replication's median drive of this fleet's assigned mover to the pick-up"),
    extra(Id::FleetMoveWaitDriveQuantile(Percentile::P90), Fleet, "move_wait_drive_p90_s", "drive p90", Seconds,
        Lower, "the replication's 90th-percentile drive of this fleet's assigned mover to the pick-up"),
    extra(Id::FleetMoveWaitDriveQuantile(Percentile::P95), Fleet, "move_wait_drive_p95_s", "drive p95", Seconds,
        Lower, "the replication's 95th-percentile drive of this fleet's assigned mover to the pick-up"),
    extra(Id::FleetMoveWaitDriveQuantile(Percentile::P99), Fleet, "move_wait_drive_p99_s", "drive p99", Seconds,
        Lower, "the replication's 99th-percentile drive of this fleet's assigned mover to the pick-up"),
    extra(Id::FleetCostPerLoad, Fleet, "handling_cost_per_load", "cost/load", MoneyPerLoad, Lower,
        "the fleet's cost per hour ÷ its moves per hour"),
    // Each crew.
    def(Id::CrewUtilization, Crew, "utilization", "busy", Share, Neither, When::Always,
        "time-average people working (loading, setting up, processing, walking to and from or doing a repair) \
        ÷ crew size"),
    def(Id::CrewScheduledUtilization, Crew, "utilization_scheduled", "busy on duty", Share, Neither,
        When::Calendar, "busy person time ÷ on-duty person time (the crew's shifts less breaks)"),
    def(Id::CrewPersonWait, Crew, "person_wait_s", "wait", Seconds, Lower, When::Always,
        "mean time from a request for one of the crew's people to one taking it (operations and repairs)"),
    def(Id::CrewCost, Crew, "people_cost_per_h", "cost/h", MoneyPerHour, Lower, When::Always,
        "crew size × a person's cost per hour (paid for the whole window, on duty or not)"),
    // Each aisle segment.
    def(Id::SegmentTraversals, Segment, "traversals_per_h", "traffic (movers/h)", PerHour, Neither, When::Aisles,
        "movers entering the segment, both directions, ÷ window hours"),
    def(Id::SegmentOccupancy, Segment, "occupancy_mean", "mean occupancy", Count, Neither, When::Aisles,
        "time-average movers on the segment (travelling, or waiting at its far end)"),
    def(Id::SegmentCongestionDelay, Segment, "congestion_delay_s_per_h", "congestion (mover-s/h)", SecondsPerHour,
        Lower, When::Aisles, "mover-seconds spent waiting to enter the segment ÷ window hours"),
    def(Id::SegmentDelayPerTraversal, Segment, "congestion_delay_per_traversal_s", "per traversal", Seconds, Lower,
        When::Aisles, "mover-seconds waiting to enter the segment ÷ movers that entered it"),
];

/// Old or other spellings a user may type, each with the canonical name.
/// Accepted everywhere a metric is typed, with a one-line note.
pub const ALIASES: &[(&str, &str)] = &[
    ("move_wait", "move_wait_s"),
    ("move_wait_p50", "move_wait_p50_s"),
    ("move_wait_p90", "move_wait_p90_s"),
    ("move_wait_p95", "move_wait_p95_s"),
    ("move_wait_p99", "move_wait_p99_s"),
    ("flow_time", "flow_time_s"),
    ("throughput", "throughput_per_h"),
    ("wip", "wip_mean"),
    ("empty_share", "empty_travel_share"),
    ("loaded_share", "loaded_travel_share"),
    ("cost_per_h", "handling_cost_per_h"),
    ("cost_per_load", "handling_cost_per_load"),
];

/// The canonical form of a metric name a user typed: British `utilisation`
/// spelt the American way, and an old name replaced by today's. The second
/// value is the note to show when the name was changed.
pub fn canonical(name: &str) -> (String, Option<String>) {
    let spelt = name.replace("utilisation", "utilization");
    let renamed = ALIASES.iter().find(|(old, _)| *old == spelt).map_or(spelt.as_str(), |(_, new)| new);
    if renamed == name {
        (name.to_string(), None)
    } else {
        let note = format!(
            "note: metric \"{name}\" is read as \"{renamed}\", its name in every table, JSON and CSV"
        );
        (renamed.to_string(), Some(note))
    }
}

/// The definition of `name` in `scope`, if there is one.
pub fn find(scope: Scope, name: &str) -> Option<&'static Def> {
    DEFS.iter().find(|d| d.scope == scope && d.name == name)
}

/// The definition with id `id`.
pub fn def_of(id: Id) -> &'static Def {
    DEFS.iter().find(|d| d.id == id).expect("every Id has a row in DEFS")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_name_is_unique_within_its_scope_and_every_id_has_one_row() {
        for (i, a) in DEFS.iter().enumerate() {
            for b in &DEFS[i + 1..] {
                assert!(!(a.scope == b.scope && a.name == b.name), "{:?} {} twice", a.scope, a.name);
                assert_ne!(a.id, b.id, "{} and {} share an id", a.name, b.name);
            }
        }
    }

    #[test]
    fn old_names_and_british_spelling_are_read_as_today_s() {
        assert_eq!(canonical("move_wait_p95").0, "move_wait_p95_s");
        assert_eq!(canonical("utilisation_scheduled").0, "utilization_scheduled");
        assert!(canonical("cost_per_h").1.unwrap().contains("handling_cost_per_h"));
        assert_eq!(canonical("flow_time_s"), ("flow_time_s".to_string(), None));
        for (_, new) in ALIASES {
            assert!(DEFS.iter().any(|d| d.name == *new), "alias target {new} is not a metric");
        }
    }
}
