//! What one replication measured, over the window from the end of warm-up to the horizon.

use layflow_engine::{Tally, TickHistogram};

/// Histogram tick for flow times and move waits: one millisecond, integer ticks
/// so that histograms of separate replications (or machines) merge exactly.
pub const TICK_S: f64 = 0.001;

/// Time a fleet's movers spent in each activity, and the distance they covered.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct FleetStats {
    /// Mover-seconds travelling with a load.
    pub loaded_s: f64,
    /// Mover-seconds travelling empty (to a pick-up, or home).
    pub empty_s: f64,
    /// Mover-seconds loading and unloading.
    pub handling_s: f64,
    /// Metres travelled with a load.
    pub distance_loaded_m: f64,
    /// Metres travelled empty.
    pub distance_empty_m: f64,
    /// Loads picked up in the window.
    pub moves: u64,
    /// Mover-seconds off duty by the operators' shift calendar (every mover
    /// of the fleet, busy or not), clipped to the window: the window × movers
    /// less this is the scheduled working time. A mover that finishes a
    /// delivery after its shift has ended works into this time.
    pub off_s: f64,
    /// Mover-seconds waiting at a full inbound area, holding a load (busy time).
    pub blocked_s: f64,
    /// Mover-seconds out of service (breakdowns and charging), clipped to the window.
    pub down_s: f64,
    /// Mover-seconds of that on charge.
    pub charging_s: f64,
    /// Mover-seconds waiting to enter a full aisle segment or a busy
    /// intersection (congestion delay; busy time). 0 unless the aisle network
    /// is simulated segment by segment.
    pub congestion_s: f64,
}

impl FleetStats {
    /// Mover-seconds busy: travelling, handling, blocked at a full inbound area, or held up in the aisles.
    pub fn busy_s(&self) -> f64 {
        self.loaded_s + self.empty_s + self.handling_s + self.blocked_s + self.congestion_s
    }
}

/// What one aisle segment saw in the window (segment-by-segment travel only).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct SegmentStats {
    /// Movers that entered it in the window (both directions).
    pub traversals: u64,
    /// Time-average movers on it (travelling, or waiting at its far end).
    pub occupancy: f64,
    /// Mover-seconds spent waiting to enter it (congestion delay).
    pub delay_s: f64,
}

/// Lateness of shipped lots against their due dates: lateness = shipped − due
/// (negative: early), tardiness = max(lateness, 0).
///
/// Lateness can be negative and a [`TickHistogram`] holds non-negative ticks,
/// so it takes two: how late the lots at or after their due date were, and
/// how early the others were. Together they hold every lot once, so a
/// quantile of lateness is read from the one its rank falls in.
#[derive(Debug, Clone)]
pub struct DueStats {
    /// Lateness of each lot with a due date shipped in the window, s.
    pub lateness: Tally,
    /// Tardiness of the same lots, s.
    pub tardiness: Tally,
    /// Of them, lots shipped after their due date.
    pub late: u64,
    /// Lateness ≥ 0, s.
    pub late_hist: TickHistogram,
    /// −lateness of the lots shipped before their due date, s.
    pub early_hist: TickHistogram,
}

impl DueStats {
    /// Nothing recorded yet; histograms of `digits` significant digits.
    pub fn new(digits: u8) -> DueStats {
        DueStats {
            lateness: Tally::new(),
            tardiness: Tally::new(),
            late: 0,
            late_hist: TickHistogram::with_digits(TICK_S, digits),
            early_hist: TickHistogram::with_digits(TICK_S, digits),
        }
    }

    /// A lot `lateness` seconds late (negative: early).
    #[inline]
    pub fn record(&mut self, lateness: f64) {
        self.lateness.add(lateness);
        self.tardiness.add(lateness.max(0.0));
        if lateness > 0.0 {
            self.late += 1;
        }
        if lateness >= 0.0 {
            self.late_hist.record(lateness);
        } else {
            self.early_hist.record(-lateness);
        }
    }

    /// Forget everything (the end of warm-up).
    pub fn reset(&mut self) {
        self.lateness.reset();
        self.tardiness.reset();
        self.late = 0;
        self.late_hist.reset();
        self.early_hist.reset();
    }

    /// Share of the lots with a due date that shipped late; NaN when none shipped.
    pub fn late_share(&self) -> f64 {
        match self.lateness.count() {
            0 => f64::NAN,
            n => self.late as f64 / n as f64,
        }
    }

    /// Lateness at quantile `q`, s (negative: early); NaN when no lot shipped.
    /// The lots ranked below `q·n` are the early ones first (most early
    /// first), then the late ones: the rank picks the histogram, and the
    /// quantile within it.
    pub fn lateness_quantile(&self, q: f64) -> f64 {
        let (early, late) = (self.early_hist.count() as f64, self.late_hist.count() as f64);
        let n = early + late;
        if n == 0.0 {
            return f64::NAN;
        }
        let rank = q * n;
        if rank <= early && early > 0.0 {
            // The most early lot has rank 0: early quantile 1 − rank/early.
            -self.early_hist.quantile(1.0 - rank / early)
        } else {
            self.late_hist.quantile(((rank - early) / late).clamp(0.0, 1.0))
        }
    }
}

/// Due-date results: every product together, and each product.
#[derive(Debug, Clone)]
pub struct DueSet {
    /// Every lot with a due date.
    pub all: DueStats,
    /// Per product (a product whose lots have no due date records nothing).
    pub product: Vec<DueStats>,
}

impl DueSet {
    /// Nothing recorded, for `products` products.
    pub fn new(products: usize, digits: u8) -> DueSet {
        DueSet { all: DueStats::new(digits), product: (0..products).map(|_| DueStats::new(digits)).collect() }
    }
}

/// Assembly results per product, in the observation window (docs/metrics.md, "Assembly").
#[derive(Debug, Clone)]
pub struct KitStats {
    /// Kits made of the product (a lot of it consumed its parts and went on to its operation).
    pub kits: Vec<u64>,
    /// The product's lots' wait from arriving at an assembly step to their kit being complete.
    pub kit_wait: Vec<Tally>,
    /// The product's (a component's) lots' wait from arriving at the assembly department to being consumed.
    pub part_wait: Vec<Tally>,
    /// Lots in the kitting area when the run ended (or stopped): an assembling
    /// product's lots waiting for kits, a component's lots in stock.
    pub held: Vec<u64>,
}

impl KitStats {
    /// Nothing recorded, for `products` products.
    pub fn new(products: usize) -> KitStats {
        KitStats {
            kits: vec![0; products],
            kit_wait: vec![Tally::new(); products],
            part_wait: vec![Tally::new(); products],
            held: vec![0; products],
        }
    }
}

/// Results of one replication of one layout.
#[derive(Debug, Clone)]
pub struct RepStats {
    /// Length of the observation window (horizon − warm-up), s.
    pub window_s: f64,
    /// Events handled over the whole replication, warm-up included.
    pub events: u64,
    /// Lots shipped in the window, per product.
    pub shipped: Vec<u64>,
    /// Flow time (receiving to shipping) of lots shipped in the window, per product.
    pub flow_time: Vec<Tally>,
    /// Flow time of every lot shipped in the window.
    pub flow_time_all: Tally,
    /// Flow-time histogram (all products), for percentiles.
    pub flow_hist: TickHistogram,
    /// Time-average lots in the plant.
    pub wip_total: f64,
    /// Time-average lots at each department (queued, in process, or waiting for a mover).
    pub wip_department: Vec<f64>,
    /// Time-average lots on movers (loading, travelling, unloading).
    pub wip_transit: f64,
    /// Time-average busy machines ÷ machines, per department (0 for docks).
    pub utilization: Vec<f64>,
    /// Time-average lots waiting for a machine, per department.
    pub queue: Vec<f64>,
    /// Wait from move request to pick-up, per fleet.
    pub move_wait: Vec<Tally>,
    /// Wait from move request to pick-up, every fleet.
    pub move_wait_all: Tally,
    /// Move-wait histogram (every fleet), for percentiles.
    pub move_wait_hist: TickHistogram,
    /// Move-wait histogram per fleet, for a fleet's percentiles.
    pub move_wait_hist_fleet: Vec<TickHistogram>,
    /// The first part of each move wait, per fleet: from the request to the
    /// moment a mover is assigned and sets off towards the load. More movers
    /// shorten it.
    pub move_wait_assign: Vec<Tally>,
    /// The second part, per fleet: from the assignment to the mover reaching
    /// the pick-up (its drive there, empty or a train's loaded, with any
    /// aisle hold-ups). More movers do not remove it; where idle movers wait does.
    /// For every pick-up, assign + drive = the whole wait.
    pub move_wait_drive: Vec<Tally>,
    /// The assignment part, every fleet.
    pub move_wait_assign_all: Tally,
    /// The drive part, every fleet.
    pub move_wait_drive_all: Tally,
    /// Histogram of the assignment part per fleet, for its percentiles.
    pub move_wait_assign_hist_fleet: Vec<TickHistogram>,
    /// Histogram of the drive part per fleet: since wait ≥ drive for every
    /// pick-up, each percentile of it is a floor under the wait's.
    pub move_wait_drive_hist_fleet: Vec<TickHistogram>,
    /// Activity per fleet.
    pub fleets: Vec<FleetStats>,
    /// Time-average share of machines holding a finished lot they cannot pass
    /// on (blocking after service), per department.
    pub blocked: Vec<f64>,
    /// Seconds of the window each department is off shift by its calendar
    /// (0 without one): the window less this is its scheduled time.
    pub off_shift_s: Vec<f64>,
    /// Time-average share of machines setting up, per department (0 without setups).
    pub setup: Vec<f64>,
    /// Time-average share of machines up, per department (1 without breakdowns).
    pub availability: Vec<f64>,
    /// Loads taken to an overflow area because the inbound area was full.
    pub overflow_moves: u64,
    /// Lots turned away at their receiving dock, per product.
    pub turned_away: Vec<u64>,
    /// Set when the overload rule stopped the replication (then nothing after
    /// `time_s` was simulated, and the other numbers are not to be reported).
    pub overload: Option<Overload>,
    /// The overload limit this replication ran under, lots in the plant.
    pub wip_limit: f64,
    /// Lots turned away at the dock in the window because the plant held
    /// `wip_limit` lots (`--allow-overload` only; also counted in `turned_away`).
    pub capped: u64,
    /// Most lots in the plant at once in the window.
    pub wip_peak: f64,
    /// Set when the replication stopped because the plant deadlocked.
    pub deadlock: Option<Deadlock>,
    /// Lateness against due dates; `None` unless some lot has a due date.
    pub due: Option<Box<DueSet>>,
    /// Kits, kit waits and part waits; `None` unless the plant assembles (or per time bucket).
    pub assembly: Option<Box<KitStats>>,
    /// Per crew, what it measured (empty without crews, and per time bucket).
    pub crews: Vec<CrewRep>,
    /// Per department, its operations' waits for a person (empty without crews, and per time bucket).
    pub person_wait: Vec<Tally>,
    /// Per aisle segment, in scenario order; empty unless the network is
    /// simulated segment by segment (`AisleNetwork::needs_simulation`).
    pub segments: Vec<SegmentStats>,
    /// The same figures per time bucket, in the order of the plan's
    /// [`Grid`](crate::timebuckets::Grid) (empty without one): each bucket's
    /// `window_s` is its exposure, the seconds of the window that fell in it.
    /// Bucket histograms keep two significant digits, and the assignment and
    /// drive parts of the move wait have none (`events`, `wip_peak` are unset).
    pub by: Vec<RepStats>,
    /// Per department, (batches started, loads in them) in the window; empty
    /// unless the plant has a batch department, (0, 0) for other departments.
    pub batch: Vec<(u64, u64)>,
}

/// Why a replication stopped early: its WIP passed the overload limit
/// (docs/formulas.md §22), which a stable plant does not reach.
#[derive(Debug, Clone, PartialEq)]
pub struct Overload {
    /// Simulated time, s.
    pub time_s: f64,
    /// Lots in the plant when it stopped (the limit).
    pub wip: f64,
    /// Lots released so far (turned-away lots not counted).
    pub released: u64,
    /// The layout and demand factor it ran at (for the message's predicted utilisations).
    pub layout: usize,
    /// Demand factor of the replication.
    pub demand_factor: f64,
}

/// Why a replication stopped early: loads stuck in a cycle of full staging
/// areas, or movers stuck in the aisles, that no event can ever free.
#[derive(Debug, Clone, PartialEq)]
pub struct Deadlock {
    /// Simulated time, s.
    pub time_s: f64,
    /// The departments involved (indices), in department order (empty for an aisle deadlock).
    pub departments: Vec<usize>,
    /// Aisle deadlock: the movers that can never move on, as (fleet, number
    /// within the fleet from 0), in mover order; empty for a staging deadlock.
    pub movers: Vec<(usize, u32)>,
    /// Aisle deadlock: the segments those movers hold or wait for, in segment order.
    pub segments: Vec<usize>,
    /// Aisle deadlock: the zone-controlled nodes they hold or wait for, in node order.
    pub zones: Vec<usize>,
}

/// What one replication's crews measured.
#[derive(Debug, Clone)]
pub struct CrewRep {
    /// Time-average people busy.
    pub busy_mean: f64,
    /// Person-seconds off duty in the window.
    pub off_s: f64,
    /// Waits of requests for a person (operations and repairs).
    pub wait: Tally,
}
