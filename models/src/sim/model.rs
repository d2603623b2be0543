//! Event handlers of the plant: arrivals and trace orders, operations, and the state moves work on (see `movers.rs`).

use std::collections::VecDeque;

use layflow_engine::{run_until, stream, Calendar, Model, Stream, Tally, TickHistogram, TimeWeighted};
use rand::RngExt;
use rand_distr::Exp1;

use super::arrivals::next_thinned;
use super::buckets::Act;
use super::stats::{Deadlock, FleetStats, Overload, RepStats, TICK_S};
use super::{DutyCursor, FleetSet, Plan, PlanArrivals, RunSpec};
use crate::plant::DepartmentRole;

mod aisles;
mod alternatives;
pub(super) mod assembly;
mod batches;
mod breakdowns;
mod buckets;
mod calendars;
mod crews;
mod due;
mod lots;
mod movers;
mod queues;
mod staging;
pub(super) mod trace;

/// Stream keys: each source of randomness has its own stream (common random numbers).
/// `ARRIVALS, product` also draws the thinning uniforms of a profiled product
/// and the extra lot of a trace order scaled by the demand factor: all of
/// them belong to the product's demand, which no layout may change.
const ARRIVALS: u64 = 1;
pub(super) const LOT: u64 = 2;
/// `MACHINE, department, machine`: that machine's failures and repairs.
const MACHINE: u64 = 3;
/// `MOVER, fleet, mover`: that mover's failures and repairs.
const MOVER: u64 = 4;
/// `SETUP, department, machine`: that machine's setup times.
const SETUP: u64 = 5;
// Keys taken in other files, each once: 6 `LOAD` (lots.rs), 7 `CREW`
// (crews.rs), 8 `BATCH` (batches.rs). A new source takes the next number.

const NONE: u32 = u32::MAX;

#[derive(Debug, Clone, Copy)]
enum Event {
    /// The next lot of a product arrives at its receiving dock.
    Arrival { product: u32 },
    /// Order `index` of the trace (in its current play) releases its lots.
    Order { index: u32 },
    /// A lot finishes its current operation.
    EndOperation { lot: u32 },
    /// A mover reaches a lot's pick-up point and starts loading.
    Pickup { mover: u32 },
    /// A mover has set a load down at its destination.
    Deliver { mover: u32 },
    /// A train (capacity above one) has finished loading a lot.
    Loaded { mover: u32 },
    /// A mover driving home or to parking arrives.
    Home { mover: u32 },
    /// A mover driving to its fleet's reserve arrives.
    Reserve { mover: u32 },
    /// A fleet's operators go off duty or come back.
    Duty { fleet: u32 },
    /// Record the plant's WIP for a warm-up series (pilot runs only).
    Sample,
    /// A machine of a department with breakdowns finishes its operation,
    /// unless a failure has since interrupted it (the token no longer matches).
    MachineEnd { machine: u32, token: u32 },
    /// A machine fails. A busy-time failure carries the machine's token and
    /// is void once the operation it fell in has been paused; a clock-time
    /// failure carries NONE and always counts.
    MachineFail { machine: u32, token: u32 },
    /// A machine is repaired.
    MachineRepaired { machine: u32 },
    /// A mover that found its destination full has set the load down at the overflow area.
    OverflowDrop { mover: u32 },
    /// A mover fails (it goes for repair at the end of its current delivery).
    MoverFail { mover: u32 },
    /// A mover comes back from repair or charging.
    MoverBack { mover: u32 },
    /// A department's working window begins or ends.
    DeptShift { dept: u32 },
    /// A mover travelling the aisle network segment by segment reaches the
    /// end of a segment, or is ready to set off (see `aisles.rs`).
    Step { mover: u32 },
    /// A batch machine finishes its batch (see `batches.rs`).
    BatchEnd { dept: u32, machine: u32 },
    /// A waiting load of a batch department has waited `max_wait`.
    BatchDue { dept: u32 },
    /// A machine's loading by a crew member ends (void if the token no longer matches).
    CrewDone { machine: u32, token: u32 },
    /// A technician is back home from a repair.
    CrewBack { crew: u32 },
    /// A crew goes off duty or comes back.
    CrewDuty { crew: u32 },
}

/// A lot in the plant. Its own generator supplies its processing times and
/// routing choices in visit order, so a lot behaves the same under every layout.
#[derive(Debug, Clone)]
struct Lot {
    product: u32,
    /// The operation it is at, or the one it is being moved to.
    op: u32,
    /// Department where the lot sits (or was picked up from).
    department: u32,
    born: f64,
    requested: f64,
    /// Ticket of its waiting move request; 0 once a mover has taken it.
    /// 32 bits keep the lot in one 64-byte cache line.
    ticket: u32,
    rng: Stream,
}

/// A waiting move request as a fleet lists it. It is still waiting while the
/// lot holds the same ticket: under nearest-idle fleet choice one request is
/// listed by several fleets, and the first to take it clears the ticket.
#[derive(Debug, Clone, Copy)]
struct Request {
    lot: u32,
    ticket: u32,
}

#[derive(Debug, Clone, Copy)]
struct Mover {
    fleet: u32,
    location: u32,
    /// Lot on board or being fetched; NONE when idle or going home. A train
    /// keeps its loads in `PlantModel::onboard` and here only the lot it is
    /// fetching or setting down.
    lot: u32,
    idle_since: f64,
    /// When it was given the request it is fetching (the end of that
    /// request's wait for a mover; the start of its drive to the pick-up).
    assigned: f64,
    /// First of this mover's `capacity` slots in `PlantModel::onboard`.
    slots: u32,
    /// Loads on board a train (always 0 for a single-load mover).
    loads: u32,
    /// Since when it has waited at a full inbound area, holding its load.
    blocked_since: f64,
    /// Breakdowns and charging (fleets with `PlanFleet::service` only):
    /// operating since `mark` (not idle, off duty or out of service).
    operating: bool,
    mark: f64,
    /// Operating time since the last charge, s.
    worked: f64,
    /// Busy-time failures: operating time left before the next failure, s.
    to_fail: f64,
    /// A failure has come due; it goes for repair when it is next free.
    fail_due: bool,
}

/// A finished lot held on its machine because the outbound area is full.
#[derive(Debug, Clone, Copy)]
struct Blocked {
    lot: u32,
    /// The machine (departments with breakdowns), or NONE.
    machine: u32,
    /// The operation it goes to next, and the fleets allowed to move it there.
    op: u32,
    set: FleetSet,
}

/// One machine of a department with breakdowns.
#[derive(Debug, Clone)]
struct Machine {
    dept: u32,
    /// Lot on the machine (in process, interrupted, or blocked); NONE when free.
    lot: u32,
    up: bool,
    /// Holding a finished lot (blocking after service).
    blocked: bool,
    /// Changes whenever an operation is interrupted, so its end event is ignored.
    token: u32,
    /// Processing time left of the current operation, s, as of `run_start`.
    work_left: f64,
    /// The current operation's whole processing time (for a restart).
    work_total: f64,
    run_start: f64,
    /// Busy-time failures: processing time left before the next failure.
    to_fail: f64,
    rng: Stream,
    /// An end (or busy-time failure) event is pending for the current phase.
    running: bool,
    /// The current phase is a setup, with this much of it left as of `run_start`.
    in_setup: bool,
    setup_left: f64,
    /// Product it is set up for (NONE: none yet, so the first lot needs no setup).
    product: u32,
    setup_rng: Stream,
}

struct Department {
    /// Machines holding a lot (processing it, interrupted, or blocked).
    busy: u32,
    queue: queues::LotQueue,
    wip: TimeWeighted,
    /// Machines processing (not blocked, not down).
    busy_level: TimeWeighted,
    queue_level: TimeWeighted,
    /// Finished lots waiting to leave (for a mover, or for room downstream).
    out_count: u32,
    /// Inbound places promised to lots on their way back from the overflow area.
    reserved: u32,
    /// Waiting for inbound room, oldest first: with instant moves (lot, 0),
    /// the lot held on its machine or in its outbound area upstream; with
    /// fleets (mover, NONE), or, with an overflow location, (lot at the
    /// overflow area, fleet that brought it).
    waiting: VecDeque<(u32, u32)>,
    /// Instant moves: lots in this department's outbound area, counted by
    /// the department they wait to enter, (department, lots); what deadlock
    /// detection reads instead of every waiting list (see `staging.rs`).
    out_to: Vec<(u32, u32)>,
    /// Machines holding a finished lot, oldest first.
    blocked: VecDeque<Blocked>,
    blocked_level: TimeWeighted,
    /// Machines up (departments with breakdowns).
    up_level: TimeWeighted,
    /// First of its machines in `PlantModel::machines` (departments with breakdowns).
    first_machine: u32,
    /// Inside a working window (always, without a calendar).
    on_shift: bool,
    /// The next change of the calendar.
    duty: DutyCursor,
    /// Machines setting up.
    setup_level: TimeWeighted,
    /// Seconds off shift in the observation window (recorded when each off spell begins).
    off_s: f64,
}

struct FleetState {
    idle: Vec<u32>,
    requests: VecDeque<Request>,
    wait: Tally,
    wait_hist: TickHistogram,
    /// The move wait in two parts: request → assignment, assignment → pick-up.
    wait_assign: Tally,
    wait_drive: Tally,
    assign_hist: TickHistogram,
    drive_hist: TickHistogram,
    acc: FleetStats,
    /// The operators are on duty now.
    on_duty: bool,
    /// Movers off duty where they stopped, until the operators come back.
    off: Vec<u32>,
    /// The next duty change.
    duty: DutyCursor,
    /// Movers driving to the reserve.
    to_reserve: u32,
}

struct PlantModel<'a> {
    plan: &'a Plan,
    seed: u64,
    replication: u64,
    /// Layout index (for the overload message).
    layout: usize,
    demand_factor: f64,
    window: (f64, f64),
    arrival_rng: Vec<Stream>,
    lots_made: Vec<u64>,
    lots: Vec<Lot>,
    free_lots: Vec<u32>,
    departments: Vec<Department>,
    movers: Vec<Mover>,
    fleets: Vec<FleetState>,
    /// Loads on board trains, `capacity` slots per mover.
    onboard: Vec<u32>,
    /// Last move-request ticket handed out. It wraps after 2³² requests; a
    /// stale list entry could only be mistaken for a live one if it waited
    /// in its list through all of them.
    next_ticket: u32,
    wip: TimeWeighted,
    transit: TimeWeighted,
    shipped: Vec<u64>,
    flow: Vec<Tally>,
    flow_all: Tally,
    flow_hist: TickHistogram,
    wait_all: Tally,
    wait_hist: TickHistogram,
    wait_assign_all: Tally,
    wait_drive_all: Tally,
    /// Interval and cumulative WIP areas of a warm-up series (pilot runs only).
    series_step: f64,
    series_area: Vec<f64>,
    /// Which play of the order trace is running (0: the first).
    order_play: u64,
    /// (time, product) of every lot released, when logging (tests of common random numbers).
    log_releases: bool,
    releases: Vec<(f64, u32)>,
    /// Machines of departments with breakdowns.
    machines: Vec<Machine>,
    /// Per mover, its breakdown stream (empty unless some fleet has breakdowns).
    mover_rng: Vec<Stream>,
    /// Loads taken to overflow areas, and lots turned away, in the window.
    overflow_moves: u64,
    turned_away: Vec<u64>,
    /// Set when the plant deadlocked: nothing more is handled.
    deadlock: Option<Deadlock>,
    /// Lots in the plant at which the overload rule fires (docs/formulas.md §22).
    wip_limit: f64,
    /// Set when the overload rule stopped the replication: nothing more is handled.
    overload: Option<Overload>,
    /// Lots turned away in the window by the WIP cap (`--allow-overload`).
    capped: u64,
    /// Deadlock detection's per-department scratch list, kept between calls.
    stuck_scratch: Vec<bool>,
    /// Entries looked at by the staging rules' searches (deadlock
    /// detection, letting a waiting lot in): a count of work that tests
    /// bound per event, so a search over every waiting lot cannot come back
    /// unnoticed (see [`simulate_scan_steps`]).
    scan_steps: u64,
    /// Per slab entry, how it is split into loads (empty unless `Plan::split`).
    aux: Vec<lots::LotAux>,
    /// Segment-by-segment travel (empty unless `Plan::aisles`).
    aisle: aisles::AisleState,
    /// Results per time bucket (`Plan::buckets`), and the time of the next
    /// bucket edge (infinite without buckets, so `handle` tests one compare).
    buckets: Option<Box<super::buckets::Collector>>,
    next_edge: f64,
    /// The tracer (`--trace`), or `None`: every hook is one branch on this.
    trace: Option<Box<trace::Tracer<'a>>>,
    /// First-free's shared queues and shortest-queue's lots on their way (empty unless `Plan::alternatives`).
    alt: alternatives::AltState,
    /// Per slab entry, when the lot is due (NaN: no due date); empty unless `Plan::due`.
    due: Vec<f64>,
    /// The due date of the lot being released (set by `release_lot`, read by `alloc_lot`).
    pending_due: f64,
    /// While an order of the trace releases its lots: their due date from the trace (else NaN).
    order_due: f64,
    /// Lateness of lots shipped in the window; `None` unless `Plan::due`.
    due_stats: Option<Box<super::stats::DueSet>>,
    /// Batch machines' queues and running batches (empty unless `Plan::batched`).
    batches: batches::BatchState,
    /// Lots waiting for kits and component stocks (empty unless `Plan::assembly`).
    kit: assembly::KitState,
    /// Crews' people, queues and figures (empty unless `Plan::has_crews`).
    crew: crews::CrewModel,
}

/// Run one replication of `plan` and return what it measured.
///
/// Replication `r` with seed `s` gives the same result on every platform and
/// whatever else runs beside it.
pub fn simulate(plan: &Plan, spec: &RunSpec, replication: u64) -> RepStats {
    let (stats, _, _, _) = simulate_inner(plan, spec, replication, None, false);
    stats
}

/// Run one replication and return (events handled, entries the staging
/// rules' searches looked at). The second grows with the plant (departments,
/// machines, routing fan-out), never with the number of lots waiting: tests
/// bound it per event.
pub fn simulate_scan_steps(plan: &Plan, spec: &RunSpec, replication: u64) -> (u64, u64) {
    let (stats, _, _, steps) = simulate_inner(plan, spec, replication, None, false);
    (stats.events, steps)
}

/// Run one replication and return every lot released into the plant as
/// (time, product index), in release order: what common random numbers must
/// keep the same under every layout and fleet.
pub fn simulate_releases(plan: &Plan, spec: &RunSpec, replication: u64) -> Vec<(f64, u32)> {
    let (_, _, releases, _) = simulate_inner(plan, spec, replication, None, true);
    releases
}

/// Run one replication and also return the plant's time-average WIP over each
/// successive interval of `step_s` from time 0 (a partial last interval is left
/// out): the series a warm-up rule such as MSER-5 reads. Pass `spec.warmup_s = 0`
/// so that the series covers the start-up transient.
///
/// # Panics
/// If `step_s` is not positive and finite (a programming error).
pub fn simulate_wip_series(plan: &Plan, spec: &RunSpec, replication: u64, step_s: f64) -> Vec<f64> {
    assert!(step_s > 0.0 && step_s.is_finite(), "the series step must be positive");
    let (_, areas, _, _) = simulate_inner(plan, spec, replication, Some(step_s), false);
    let mut prev = 0.0;
    areas
        .iter()
        .map(|&a| {
            let m = (a - prev) / step_s;
            prev = a;
            m
        })
        .collect()
}

/// One replication's statistics, WIP series areas and release log (these two
/// empty unless asked for), and the staging searches' scan steps.
type Run = (RepStats, Vec<f64>, Vec<(f64, u32)>, u64);

fn simulate_inner(plan: &Plan, spec: &RunSpec, replication: u64, step: Option<f64>, log: bool) -> Run {
    let mut m = PlantModel::new(plan, spec, replication);
    m.log_releases = log;
    drive(m, spec, step)
}

/// Run a model built by `PlantModel::new` (and set up by its caller) to the horizon.
fn drive(mut m: PlantModel<'_>, spec: &RunSpec, step: Option<f64>) -> Run {
    let plan = m.plan;
    m.buckets = m.new_collector();
    let mut cal = Calendar::with_capacity(256);
    if let Some(step) = step {
        m.series_step = step;
        m.series_area.reserve((spec.horizon_s / step) as usize + 1);
        if step <= spec.horizon_s {
            cal.schedule(step, Event::Sample);
        }
    }
    for p in 0..plan.products.len() {
        m.schedule_arrival(p, 0.0, &mut cal);
    }
    if let Some(first) = plan.orders.first() {
        if first.time_s <= spec.horizon_s {
            cal.schedule(first.time_s, Event::Order { index: 0 });
        }
    }
    for f in 0..plan.fleets.len() {
        m.start_duty(f, &mut cal);
    }
    m.start_calendars(&mut cal);
    m.start_breakdowns(&mut cal);
    if plan.has_crews {
        m.start_crews(&mut cal);
    }
    let mut events = run_until(&mut m, &mut cal, spec.warmup_s);
    m.reset_statistics(spec.warmup_s);
    events += run_until(&mut m, &mut cal, spec.horizon_s);
    let areas = std::mem::take(&mut m.series_area);
    let releases = std::mem::take(&mut m.releases);
    let steps = m.scan_steps;
    if m.trace.is_some() {
        m.trace_end(spec.horizon_s);
    }
    (m.finish(spec.horizon_s, events), areas, releases, steps)
}

impl<'a> PlantModel<'a> {
    fn new(plan: &'a Plan, spec: &RunSpec, replication: u64) -> Self {
        let n_products = plan.products.len();
        let nd = plan.n_departments;
        let mut machines = Vec::new();
        let departments = (0..if plan.overflow { 2 * nd } else { nd })
            .map(|d| {
                let first_machine = machines.len() as u32;
                let mut up_level = TimeWeighted::new(0.0);
                if d < nd && plan.tracked[d] {
                    let c = plan.machines[d];
                    up_level.add(0.0, f64::from(c));
                    for k in 0..c {
                        machines.push(Machine {
                            dept: d as u32,
                            lot: NONE,
                            up: true,
                            blocked: false,
                            token: 0,
                            work_left: 0.0,
                            work_total: 0.0,
                            run_start: 0.0,
                            to_fail: 0.0,
                            rng: stream(spec.seed, replication, &[MACHINE, d as u64, u64::from(k)]),
                            running: false,
                            in_setup: false,
                            setup_left: 0.0,
                            product: NONE,
                            setup_rng: stream(spec.seed, replication, &[SETUP, d as u64, u64::from(k)]),
                        });
                    }
                }
                Department {
                    busy: 0,
                    queue: queues::LotQueue::new(plan.queue_order[d] != crate::plant::QueueOrder::Fifo),
                    wip: TimeWeighted::new(0.0),
                    busy_level: TimeWeighted::new(0.0),
                    queue_level: TimeWeighted::new(0.0),
                    out_count: 0,
                    reserved: 0,
                    waiting: VecDeque::new(),
                    out_to: Vec::new(),
                    blocked: VecDeque::new(),
                    blocked_level: TimeWeighted::new(0.0),
                    up_level,
                    first_machine,
                    on_shift: true,
                    duty: DutyCursor::default(),
                    setup_level: TimeWeighted::new(0.0),
                    off_s: 0.0,
                }
            })
            .collect();
        let machine_dept: Vec<u32> =
            if plan.has_crews { machines.iter().map(|m: &Machine| m.dept).collect() } else { Vec::new() };
        let mut mover_rng = Vec::new();
        let any_mover_failures = plan.fleets.iter().any(|f| f.breakdowns.is_some());
        let mut movers = Vec::new();
        let mut fleets = Vec::new();
        let mut slots = 0;
        for (f, fleet) in plan.fleets.iter().enumerate() {
            let first_of_fleet = movers.len();
            let mut idle = Vec::with_capacity(fleet.count as usize);
            for _ in 0..fleet.count {
                idle.push(movers.len() as u32);
                movers.push(Mover {
                    fleet: f as u32,
                    location: fleet.home_location as u32,
                    lot: NONE,
                    idle_since: 0.0,
                    assigned: 0.0,
                    slots,
                    loads: 0,
                    blocked_since: f64::NAN,
                    operating: false,
                    mark: 0.0,
                    worked: 0.0,
                    to_fail: 0.0,
                    fail_due: false,
                });
                if any_mover_failures {
                    let k = (movers.len() - 1 - first_of_fleet) as u64;
                    mover_rng.push(stream(spec.seed, replication, &[MOVER, f as u64, k]));
                }
                slots += fleet.capacity;
            }
            fleets.push(FleetState {
                idle,
                requests: VecDeque::with_capacity(16),
                wait: Tally::new(),
                wait_hist: TickHistogram::new(TICK_S),
                wait_assign: Tally::new(),
                wait_drive: Tally::new(),
                assign_hist: TickHistogram::new(TICK_S),
                drive_hist: TickHistogram::new(TICK_S),
                acc: FleetStats::default(),
                on_duty: true,
                off: Vec::with_capacity(fleet.count as usize),
                duty: DutyCursor::default(),
                to_reserve: 0,
            });
        }
        let slots_movers = movers.len();
        PlantModel {
            plan,
            seed: spec.seed,
            replication,
            layout: spec.layout,
            demand_factor: spec.demand_factor,
            window: (spec.warmup_s, spec.horizon_s),
            arrival_rng: (0..n_products)
                .map(|p| stream(spec.seed, replication, &[ARRIVALS, p as u64]))
                .collect(),
            lots_made: vec![0; n_products],
            lots: Vec::with_capacity(256),
            free_lots: Vec::with_capacity(256),
            departments,
            movers,
            fleets,
            onboard: vec![NONE; slots as usize],
            next_ticket: 0,
            wip: TimeWeighted::new(0.0),
            transit: TimeWeighted::new(0.0),
            shipped: vec![0; n_products],
            flow: vec![Tally::new(); n_products],
            flow_all: Tally::new(),
            flow_hist: TickHistogram::new(TICK_S),
            wait_all: Tally::new(),
            wait_hist: TickHistogram::new(TICK_S),
            wait_assign_all: Tally::new(),
            wait_drive_all: Tally::new(),
            series_step: 0.0,
            series_area: Vec::new(),
            order_play: 0,
            log_releases: false,
            releases: Vec::new(),
            machines,
            mover_rng,
            overflow_moves: 0,
            turned_away: vec![0; n_products],
            deadlock: None,
            wip_limit: plan.overload.limit(spec.demand_factor),
            overload: None,
            capped: 0,
            stuck_scratch: Vec::new(),
            scan_steps: 0,
            aux: Vec::new(),
            aisle: aisles::AisleState::new(plan, slots_movers),
            buckets: None,
            next_edge: f64::INFINITY,
            trace: None,
            alt: alternatives::AltState::new(plan),
            due: Vec::new(),
            pending_due: f64::NAN,
            order_due: f64::NAN,
            due_stats: plan.due.then(|| Box::new(super::stats::DueSet::new(n_products, 3))),
            batches: batches::BatchState::new(plan, spec.seed, replication),
            kit: assembly::KitState::new(plan),
            crew: crews::CrewModel::new(plan, &machine_dept, spec.seed, replication),
        }
    }

    /// Seconds of the interval [a, b] that fall inside the observation window.
    #[inline]
    fn in_window(&self, a: f64, b: f64) -> f64 {
        (b.min(self.window.1) - a.max(self.window.0)).max(0.0)
    }

    fn reset_statistics(&mut self, t: f64) {
        self.wip.reset(t);
        self.transit.reset(t);
        for d in &mut self.departments {
            d.wip.reset(t);
            d.busy_level.reset(t);
            d.queue_level.reset(t);
            d.blocked_level.reset(t);
            d.up_level.reset(t);
            d.setup_level.reset(t);
        }
        self.aisle.reset(t);
        self.crew.reset(t);
        self.overflow_moves = 0;
        self.turned_away.iter_mut().for_each(|s| *s = 0);
        self.capped = 0;
        for f in &mut self.fleets {
            f.wait.reset();
            f.wait_hist.reset();
            f.wait_assign.reset();
            f.wait_drive.reset();
            f.assign_hist.reset();
            f.drive_hist.reset();
            // Fleet activity is clipped to the window when recorded, so it is not reset.
        }
        self.shipped.iter_mut().for_each(|s| *s = 0);
        self.flow.iter_mut().for_each(Tally::reset);
        self.flow_all.reset();
        self.flow_hist.reset();
        self.wait_all.reset();
        self.wait_hist.reset();
        self.wait_assign_all.reset();
        self.wait_drive_all.reset();
        if let Some(d) = self.due_stats.as_deref_mut() {
            d.all.reset();
            d.product.iter_mut().for_each(super::stats::DueStats::reset);
        }
        self.kit.reset();
        self.open_buckets(t);
    }

    /// Schedule the next arrival of product `p` after `now`, if it comes by the horizon.
    fn schedule_arrival(&mut self, p: usize, now: f64, cal: &mut Calendar<Event>) {
        let horizon = self.window.1;
        let at = match &self.plan.products[p].arrivals {
            PlanArrivals::Constant { rate_per_s } => {
                // Exactly the draws of a constant rate before profiles existed,
                // so seeded results of constant-rate plants do not change.
                let gap: f64 = self.arrival_rng[p].sample::<f64, _>(Exp1) / (rate_per_s * self.demand_factor);
                now + gap
            }
            PlanArrivals::Thinned { peak_per_s, every_s, accept } => {
                let rate = peak_per_s * self.demand_factor;
                match next_thinned(&mut self.arrival_rng[p], now, horizon, rate, *every_s, accept) {
                    Some(t) => t,
                    None => return,
                }
            }
            PlanArrivals::Orders => return,
        };
        // An arrival after the horizon can never matter; not scheduling it
        // also keeps an absurdly small rate (an infinite gap) harmless.
        if at <= horizon {
            cal.schedule(at, Event::Arrival { product: p as u32 });
        }
    }

    fn arrival(&mut self, product: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let p = product as usize;
        self.schedule_arrival(p, now, cal);
        self.release_lot(p, cal);
    }

    /// Order `index` of the current play of the trace: schedule the next
    /// order, then release this one's lots. With demand factor f an order of
    /// q lots releases ⌊q·f⌋ lots and one more with probability frac(q·f),
    /// so the expected volume is q·f; the uniform comes from the product's
    /// arrival stream (one per order, whatever f is).
    fn order(&mut self, index: u32, cal: &mut Calendar<Event>) {
        let orders = &self.plan.orders;
        let o = orders[index as usize];
        // This order's play starts here (read before the next play is counted below).
        let play_start = self.plan.order_repeat_s.map_or(0.0, |r| self.order_play as f64 * r);
        let mut next = index as usize + 1;
        if next == orders.len() {
            match self.plan.order_repeat_s {
                Some(_) => {
                    self.order_play += 1;
                    next = 0;
                }
                None => next = usize::MAX,
            }
        }
        if next != usize::MAX {
            let start = self.plan.order_repeat_s.map_or(0.0, |r| self.order_play as f64 * r);
            let at = start + orders[next].time_s;
            if at <= self.window.1 {
                cal.schedule(at, Event::Order { index: next as u32 });
            }
        }
        let p = o.product as usize;
        let x = f64::from(o.quantity) * self.demand_factor;
        let whole = x.floor();
        let u: f64 = self.arrival_rng[p].random();
        let lots = whole as u64 + u64::from(u < x - whole);
        self.order_due = play_start + o.due_s;
        for _ in 0..lots {
            self.release_lot(p, cal);
        }
        self.order_due = f64::NAN;
    }

    /// A new lot of product `p` enters at its receiving dock now. Lots are
    /// numbered per product in release order, whatever released them, and
    /// the number keys the lot's own stream.
    fn release_lot(&mut self, p: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let product = p as u32;
        let prod = &self.plan.products[p];
        if self.plan.staging && self.plan.turn_away[prod.enters_at] && !self.has_room(prod.ops[0].department)
        {
            // Turned away: the lot number is used up all the same, so the
            // lots after it keep their streams (common random numbers).
            self.lots_made[p] += 1;
            if now >= self.window.0 {
                self.turned_away[p] += 1;
            }
            return;
        }
        if self.wip.level() >= self.wip_limit {
            self.over_limit(p, cal);
            return;
        }
        if self.log_releases {
            self.releases.push((now, product));
        }
        if self.plan.due {
            // The trace's due date for the order, else the product's allowance (NaN without either).
            self.pending_due = if self.order_due.is_nan() { now + prod.due_within_s } else { self.order_due };
        }
        if prod.split.is_some() {
            self.release_split(p, cal);
            return;
        }
        let n = self.lots_made[p];
        self.lots_made[p] += 1;
        let lot = Lot {
            product,
            op: 0,
            department: prod.enters_at as u32,
            born: now,
            requested: now,
            ticket: 0,
            rng: stream(self.seed, self.replication, &[LOT, p as u64, n]),
        };
        let id = self.alloc_lot(lot);
        if self.trace.is_some() {
            self.trace_release(id, now);
        }
        self.wip.add(now, 1.0);
        self.departments[prod.enters_at].wip.add(now, 1.0);
        if self.plan.alternatives {
            self.enter_with_choice(id, p, cal);
            return;
        }
        self.route(id, 0, prod.entry, cal);
    }

    /// A lot of product `p` reaches its dock while the plant holds
    /// `wip_limit` lots: with `--allow-overload` it is turned away (its
    /// number used up, as for `when_full: turn-away`, so later lots keep their
    /// streams); otherwise the replication stops as overloaded. Either way the
    /// lot pool never grows past the limit.
    #[cold]
    fn over_limit(&mut self, p: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        if self.plan.overload.allow {
            self.lots_made[p] += 1;
            if now >= self.window.0 {
                self.turned_away[p] += 1;
                self.capped += 1;
            }
            return;
        }
        if self.overload.is_none() {
            self.overload = Some(Overload {
                time_s: now,
                wip: self.wip.level(),
                released: self.lots_made.iter().sum(),
                layout: self.layout,
                demand_factor: self.demand_factor,
            });
            cal.clear();
        }
    }

    /// Puts a lot (or a load) in the slab, reusing a freed slot.
    fn alloc_lot(&mut self, lot: Lot) -> u32 {
        let id = match self.free_lots.pop() {
            Some(id) => {
                self.lots[id as usize] = lot;
                id
            }
            None => {
                self.lots.push(lot);
                (self.lots.len() - 1) as u32
            }
        };
        if self.plan.split {
            self.aux.resize(self.lots.len(), lots::LotAux::WHOLE);
            self.aux[id as usize] = lots::LotAux::WHOLE;
        }
        if self.plan.due {
            self.due.resize(self.lots.len(), f64::NAN);
            self.due[id as usize] = self.pending_due;
        }
        id
    }

    /// Share of a lot that slab entry `id` stands for: 1, or a load's units ÷ the lot quantity.
    #[inline]
    fn weight(&self, id: u32) -> f64 {
        if self.plan.split {
            self.aux[id as usize].weight
        } else {
            1.0
        }
    }

    /// A lot reaches the department of its current operation.
    fn arrive(&mut self, id: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let lot = &mut self.lots[id as usize];
        let p = lot.product as usize;
        let dept = self.plan.products[p].ops[lot.op as usize].department;
        if self.plan.overflow && lot.department as usize == self.plan.n_departments + dept {
            // Back from the overflow area into the place kept for it.
            self.departments[dept].reserved -= 1;
        }
        let lot = &mut self.lots[id as usize];
        lot.department = dept as u32;
        if self.plan.dept_role[dept] == DepartmentRole::Shipping {
            if self.plan.split && self.aux[id as usize].parent != NONE {
                self.load_shipped(id, now);
                return;
            }
            let born = lot.born;
            if self.trace.is_some() {
                self.trace_ship(id, now);
            }
            self.ship(p, born, self.due_of(id), now);
            self.free_lots.push(id);
            return;
        }
        let w = self.weight(id);
        self.departments[dept].wip.add(now, w);
        if self.trace.is_some() {
            self.trace_arrive(id, now);
        }
        if self.plan.assembly && self.kit_arrive(id, cal) {
            return;
        }
        if self.plan.alternatives && self.arrive_chosen(id, dept, cal) {
            return;
        }
        self.start_or_queue(id, cal);
    }

    /// Start the lot's operation on a free machine, or queue it.
    /// A lot of product `p`, released at `born`, leaves the plant at `now`:
    /// it counts as shipped, with its flow time, if the window is open.
    pub(super) fn ship(&mut self, p: usize, born: f64, due: f64, now: f64) {
        let flow = now - born;
        self.wip.add(now, -1.0);
        if now >= self.window.0 {
            if self.plan.due && !due.is_nan() {
                self.record_lateness(p, now - due);
            }
            self.shipped[p] += 1;
            self.flow[p].add(flow);
            self.flow_all.add(flow);
            let ticks = self.flow_hist.ticks(flow);
            self.flow_hist.record_ticks(ticks);
            if let Some(c) = self.buckets.as_deref_mut() {
                c.shipped(p, flow, ticks);
            }
        }
    }

    fn start_or_queue(&mut self, id: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        if self.plan.split && self.aux[id as usize].gathers {
            self.gather(id, cal);
            return;
        }
        let dept = self.lots[id as usize].department as usize;
        if self.plan.tracked[dept] {
            self.start_or_queue_on_machines(id, dept, cal);
            return;
        }
        if self.plan.batched && self.plan.batch[dept].is_some() {
            self.batch_arrive(id, dept, cal);
            return;
        }
        let d = &mut self.departments[dept];
        if d.busy < self.plan.machines[dept] {
            d.busy += 1;
            d.busy_level.add(now, 1.0);
            self.start(id, cal);
        } else {
            self.enqueue(id, dept, now);
        }
    }

    fn start(&mut self, id: u32, cal: &mut Calendar<Event>) {
        let lot = &mut self.lots[id as usize];
        let op = &self.plan.products[lot.product as usize].ops[lot.op as usize];
        let t = op.time.as_ref().map_or(0.0, |d| d.sample(&mut lot.rng));
        // A load is worked for its share of the lot's time (× 1 exactly for a whole lot).
        let t = if self.plan.split { t * self.aux[id as usize].weight } else { t };
        cal.schedule(cal.now() + t, Event::EndOperation { lot: id });
        if self.trace.is_some() {
            self.trace_start(id, cal.now(), cal.now() + t);
        }
    }

    /// Lot `id` has finished its operation on `machine` (NONE in a department without breakdowns).
    fn end_operation(&mut self, id: u32, machine: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        if self.trace.is_some() {
            self.trace_end_operation(id, now);
        }
        let lot = &mut self.lots[id as usize];
        let dept = lot.department as usize;
        let op = &self.plan.products[lot.product as usize].ops[lot.op as usize];
        let branch = if op.next.len() == 1 {
            0
        } else {
            let u: f64 = lot.rng.random();
            op.next.iter().position(|&(_, cum, _)| u < cum).unwrap_or(op.next.len() - 1)
        };
        if self.plan.alternatives {
            self.end_with_choice(id, dept, machine, branch, cal);
            return;
        }
        let (next, _, fleets) = op.next[branch];
        if self.plan.staging || machine != NONE {
            self.leave_machine(id, dept, machine, next as u32, fleets, cal);
            return;
        }
        // Free the machine first: a rework loop back to this department queues behind others.
        let d = &mut self.departments[dept];
        if let Some(waiting) = d.queue.pop() {
            d.queue_level.add(now, -1.0);
            self.start(waiting, cal);
        } else {
            d.busy -= 1;
            d.busy_level.add(now, -1.0);
        }
        self.route(id, next as u32, fleets, cal);
    }

    fn finish(mut self, t: f64, events: u64) -> RepStats {
        let window_s = self.window.1 - self.window.0;
        let nd = self.plan.n_departments;
        self.advance_buckets(t);
        // Movers still waiting at a full inbound area: their wait so far.
        for m in 0..self.movers.len() {
            let since = self.movers[m].blocked_since;
            if !since.is_nan() {
                let w = self.in_window(since, t);
                self.fleets[self.movers[m].fleet as usize].acc.blocked_s += w;
                self.by_fleet(self.movers[m].fleet as usize, Act::Blocked, since, t);
            }
        }
        let segments = self.segment_stats(t);
        self.close_buckets(t);
        let collector = self.buckets.take();
        let plan = self.plan;
        let overflow = self.plan.overflow;
        let machines = &self.plan.machines;
        let per_machine = |d: usize, x: f64| if machines[d] == 0 { 0.0 } else { x / f64::from(machines[d]) };
        let blocked = (0..nd).map(|d| per_machine(d, self.departments[d].blocked_level.mean(t))).collect();
        let availability = (0..nd)
            .map(|d| {
                if self.plan.tracked[d] {
                    per_machine(d, self.departments[d].up_level.mean(t))
                } else {
                    1.0
                }
            })
            .collect();
        let wip_department = (0..nd)
            .map(|d| {
                let w = self.departments[d].wip.mean(t);
                // Lots at a department's overflow area count as the department's.
                if overflow {
                    w + self.departments[nd + d].wip.mean(t)
                } else {
                    w
                }
            })
            .collect();
        let setup = (0..nd).map(|d| per_machine(d, self.departments[d].setup_level.mean(t))).collect();
        let (crews, person_wait) = self.crew.finish(t);
        let mut stats = RepStats {
            by: Vec::new(),
            segments,
            setup,
            off_shift_s: self.departments[..nd].iter().map(|d| d.off_s).collect(),
            blocked,
            availability,
            overflow_moves: self.overflow_moves,
            turned_away: self.turned_away,
            overload: self.overload,
            wip_limit: self.wip_limit,
            capped: self.capped,
            wip_peak: self.wip.max(),
            deadlock: self.deadlock,
            window_s,
            events,
            shipped: self.shipped,
            flow_time: self.flow,
            flow_time_all: self.flow_all,
            flow_hist: self.flow_hist,
            wip_total: self.wip.mean(t),
            wip_department,
            wip_transit: self.transit.mean(t),
            utilization: self
                .departments
                .iter()
                .zip(&self.plan.machines)
                .map(|(d, &c)| if c == 0 { 0.0 } else { d.busy_level.mean(t) / f64::from(c) })
                .collect(),
            queue: self.departments[..nd].iter().map(|d| d.queue_level.mean(t)).collect(),
            move_wait: self.fleets.iter().map(|f| f.wait).collect(),
            move_wait_hist_fleet: self.fleets.iter().map(|f| f.wait_hist.clone()).collect(),
            move_wait_all: self.wait_all,
            move_wait_hist: self.wait_hist,
            move_wait_assign: self.fleets.iter().map(|f| f.wait_assign).collect(),
            move_wait_drive: self.fleets.iter().map(|f| f.wait_drive).collect(),
            move_wait_assign_all: self.wait_assign_all,
            move_wait_drive_all: self.wait_drive_all,
            move_wait_assign_hist_fleet: self.fleets.iter().map(|f| f.assign_hist.clone()).collect(),
            move_wait_drive_hist_fleet: self.fleets.iter().map(|f| f.drive_hist.clone()).collect(),
            fleets: self.fleets.iter().map(|f| f.acc).collect(),
            due: self.due_stats.take(),
            batch: self
                .batches
                .depts
                .iter()
                .map(|b| b.as_ref().map_or((0, 0), |b| (b.batches, b.loads)))
                .collect(),
            assembly: self.kit.close(plan),
            crews,
            person_wait,
        };
        if let Some(c) = collector {
            stats.by = c.finish(plan, &stats);
        }
        stats
    }
}

impl Model for PlantModel<'_> {
    type Event = Event;

    #[inline]
    fn handle(&mut self, event: Event, cal: &mut Calendar<Event>) {
        if self.deadlock.is_some() || self.overload.is_some() {
            return; // the calendar was cleared; nothing more happens
        }
        let now = cal.now();
        if now >= self.next_edge {
            self.cross_edges(now);
        }
        match event {
            Event::Arrival { product } => self.arrival(product, cal),
            Event::Order { index } => self.order(index, cal),
            Event::EndOperation { lot } => self.end_operation(lot, NONE, cal),
            Event::Pickup { mover } => self.pickup(mover, cal),
            Event::Deliver { mover } => self.deliver(mover, cal),
            Event::Loaded { mover } => self.loaded(mover, cal),
            // The mover is at home (or parked) now, so mover_free will not send it there again.
            Event::Home { mover } => self.mover_free(mover, cal),
            Event::Reserve { mover } => self.reserve_reached(mover, cal),
            Event::Duty { fleet } => self.duty_change(fleet as usize, cal),
            Event::Sample => {
                let now = cal.now();
                self.series_area.push(self.wip.area(now));
                if now + self.series_step <= self.window.1 {
                    cal.schedule(now + self.series_step, Event::Sample);
                }
            }
            Event::MachineEnd { machine, token } => self.machine_end(machine, token, cal),
            Event::MachineFail { machine, token } => self.machine_fail(machine, token, cal),
            Event::MachineRepaired { machine } => self.machine_repaired(machine, cal),
            Event::OverflowDrop { mover } => self.overflow_drop(mover, cal),
            Event::MoverFail { mover } => self.mover_fail(mover, cal),
            Event::MoverBack { mover } => self.mover_back(mover, cal),
            Event::DeptShift { dept } => self.dept_shift(dept as usize, cal),
            Event::Step { mover } => self.step(mover, cal),
            Event::BatchEnd { dept, machine } => self.batch_end(dept as usize, machine, cal),
            Event::BatchDue { dept } => self.batch_try_start(dept as usize, cal),
            Event::CrewDone { machine, token } => self.loading_done(machine, token, cal),
            Event::CrewBack { crew } => self.crew_back(crew as usize, cal),
            Event::CrewDuty { crew } => self.crew_duty(crew as usize, cal),
        }
        if self.trace.is_some() {
            self.trace_poll(cal.now());
        }
    }
}
