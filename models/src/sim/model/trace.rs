//! The tracer: what the event handlers' one-line hooks call when `--trace` is on; every trace row is decided here.
//!
//! Each hook in the handlers reads `if self.trace.is_some() { self.trace_…(…) }`:
//! one predictable branch when tracing is off. The methods are `#[cold]` so
//! their bodies stay out of the hot loop. They only read the model and write
//! rows: a traced replication gives exactly the statistics of an untraced one.
//!
//! Lanes: a machine lane per machine of every work department, a mover lane
//! per mover. A department that keeps only a busy count gets machine numbers
//! here (a starting lot takes the lowest-numbered free lane); the machines of
//! a department with breakdowns, a calendar or setups are the model's own,
//! and their state is read off the model after every event (`trace_poll`). Their state rows are filtered to the
//! window with one row per lane at the window's start (docs/traces.md).

use std::io::Write;

use super::{PlantModel, NONE};
use crate::plant::DepartmentRole;
use crate::sim::trace::{
    untraceable, TraceError, TraceOptions, TraceSink, LOTS, MACHINE_STATES, MOVER_STATES, MOVES, VISITS,
};
use crate::sim::{Plan, RepStats, RunSpec};

/// A lane's state, as written in the `state` column.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum State {
    Idle,
    Empty,
    Loaded,
    Handling,
    OffDuty,
    Busy,
    Setup,
    Down,
    OffShift,
    Charging,
    Blocked,
    Congestion,
}

impl State {
    fn name(self) -> &'static str {
        match self {
            State::Idle => "idle",
            State::Empty => "empty",
            State::Loaded => "loaded",
            State::Handling => "handling",
            State::OffDuty => "off_duty",
            State::Busy => "busy",
            State::Setup => "setup",
            State::Down => "down",
            State::OffShift => "off_shift",
            State::Charging => "charging",
            State::Blocked => "blocked",
            State::Congestion => "congestion",
        }
    }
}

/// One lane's state before the window opens (time, state), and whether a
/// row at exactly the window's start was written for it.
#[derive(Debug, Clone, Copy)]
struct Lane {
    before_t: f64,
    before: State,
    at_from: bool,
}

/// A move under way over a simulated aisle network: its row is written at
/// its delivery, when its time and its congestion delay are known.
#[derive(Debug, Clone, Copy)]
struct Trip {
    /// The lot (NONE: no move under way).
    lot: u32,
    /// NaN for a load taken on to an overflow area (no request, no assignment).
    requested: f64,
    assigned: f64,
    picked_up: f64,
    /// Departments (the plan's numbering: overflow areas after the departments).
    from: u32,
    to: u32,
    loaded_m: f64,
    empty_m: f64,
}

const NO_TRIP: Trip = Trip {
    lot: NONE,
    requested: f64::NAN,
    assigned: f64::NAN,
    picked_up: f64::NAN,
    from: NONE,
    to: NONE,
    loaded_m: 0.0,
    empty_m: 0.0,
};

/// What the hooks need between events: lot numbers, arrival times, which
/// machine lane holds which lot, each mover's move in progress.
pub(super) struct Tracer<'a> {
    sink: &'a mut TraceSink,
    opts: &'a TraceOptions,
    /// 1-based, as `run` numbers replications for people.
    replication: u64,
    /// Per slab entry: the lot's number (release order, from 1), 0 when free.
    lot_no: Vec<u64>,
    next_lot: u64,
    /// Per slab entry: when it reached its current department (NaN once its
    /// visit row is written, or while it is moved).
    arrival: Vec<f64>,
    /// Per slab entry: when a tracked machine took it (NaN: not on one).
    started: Vec<f64>,
    /// Per slab entry, plants with staging limits: when its operation ended
    /// (NaN: not yet); its visit row waits until it leaves the machine.
    ended: Vec<f64>,
    /// Per slab entry: (operation, department) of the visit whose machine
    /// holds it, finished, for room downstream (NONE: not held).
    held: Vec<(u32, u32)>,
    /// The plant has staging limits: visit rows are written when the lot
    /// leaves its machine, with the time it was held there.
    staging: bool,
    /// Per tracked machine (`PlantModel::machines`): the state last written,
    /// and the lot it held at the last look.
    machine_state: Vec<State>,
    machine_lot: Vec<u32>,
    /// Per department: the slab entry on each machine lane (NONE: free).
    on_machine: Vec<Vec<u32>>,
    /// First machine lane of each department in `lanes`.
    first_lane: Vec<usize>,
    /// Machine lanes, then mover lanes.
    lanes: Vec<Lane>,
    /// Machine lanes (the mover lanes follow them).
    machines: usize,
    /// Per lane: (department, machine index) or (fleet, mover index in the fleet).
    owner: Vec<(usize, u32)>,
    /// Per mover: the empty metres of its current drive to a pick-up.
    empty_m: Vec<f64>,
    /// Per mover, simulated aisles: seconds held up since it was given its
    /// current request, and the move it is making.
    congestion: Vec<f64>,
    trip: Vec<Trip>,
    /// Tow trains: per slab entry, the move of a load on a cart (its row is
    /// written at its drop); per mover, metres driven loaded so far.
    on_cart: Vec<Trip>,
    odometer: Vec<f64>,
    /// The aisle network is simulated: states are written as each segment is entered.
    aisles: bool,
    /// The rows at the window's start have been written.
    opened: bool,
    /// Reused for number formatting: no allocation per row.
    line: String,
}

/// Run replication `replication` (0-based) of `plan` with the tracer on,
/// writing its rows to `sink`; the statistics are exactly those of
/// [`crate::sim::simulate`] (tracing reads the model, never changes it).
///
/// # Errors
/// The first trace file that could not be written; the replication stops
/// writing there (it still runs to its end).
///
/// # Panics
/// If the plan is one [`untraceable`] refuses (callers check first).
pub fn simulate_traced(
    plan: &Plan,
    spec: &RunSpec,
    replication: u64,
    sink: &mut TraceSink,
    opts: &TraceOptions,
) -> Result<RepStats, TraceError> {
    assert!(untraceable(plan).is_none(), "the caller checks that the plant can be traced");
    let stats = simulate_with_trace(plan, spec, replication, sink, opts);
    sink.check()?;
    Ok(stats)
}

/// Run one replication with the tracer on.
fn simulate_with_trace(
    plan: &Plan,
    spec: &RunSpec,
    replication: u64,
    sink: &mut TraceSink,
    opts: &TraceOptions,
) -> RepStats {
    let mut m = PlantModel::new(plan, spec, replication);
    let nd = plan.n_departments;
    let mut first_lane = Vec::with_capacity(nd);
    let mut on_machine = Vec::with_capacity(nd);
    let mut owner = Vec::new();
    for d in 0..nd {
        first_lane.push(owner.len());
        let c = if plan.dept_role[d] == DepartmentRole::Work { plan.machines[d] } else { 0 };
        on_machine.push(vec![NONE; c as usize]);
        owner.extend((0..c).map(|k| (d, k)));
    }
    let machines = owner.len();
    for (f, fleet) in plan.fleets.iter().enumerate() {
        owner.extend((0..fleet.count).map(|k| (f, k)));
    }
    let lane = Lane { before_t: f64::NEG_INFINITY, before: State::Idle, at_from: false };
    let lanes = vec![lane; owner.len()];
    m.trace = Some(Box::new(Tracer {
        sink,
        opts,
        replication: replication + 1,
        lot_no: Vec::new(),
        next_lot: 0,
        arrival: Vec::new(),
        started: Vec::new(),
        ended: Vec::new(),
        held: Vec::new(),
        staging: plan.staging,
        machine_state: vec![State::Idle; m.machines.len()],
        machine_lot: vec![NONE; m.machines.len()],
        on_machine,
        first_lane,
        lanes,
        empty_m: vec![0.0; m.movers.len()],
        congestion: vec![0.0; m.movers.len()],
        trip: vec![NO_TRIP; m.movers.len()],
        on_cart: Vec::new(),
        odometer: vec![0.0; m.movers.len()],
        aisles: plan.aisles.is_some(),
        machines,
        owner,
        opened: false,
        line: String::with_capacity(256),
    }));
    m.trace_begin();
    super::drive(m, spec, None).0
}

/// Appends `x` and a comma.
fn num(line: &mut String, x: f64) {
    use std::fmt::Write as _;
    let _ = write!(line, "{x},");
}

impl Tracer<'_> {
    fn in_window(&self, a: f64, b: f64) -> bool {
        a <= self.opts.window.1 && b >= self.opts.window.0
    }

    /// Ends the row in `self.line` and writes it to file `file`.
    fn emit(&mut self, file: usize) {
        if self.line.ends_with(',') {
            self.line.pop();
        }
        self.line.push('\n');
        if self.sink.error.is_none() {
            if let Err(e) = self.sink.files[file].write_all(self.line.as_bytes()) {
                self.sink.error = Some((file, e));
            }
        }
        self.line.clear();
    }

    /// A state row for lane `lane` (`fleet`/`mover` or `department`/`machine` in `who`).
    fn state(&mut self, lane: usize, t: f64, state: State) {
        let (from, to) = self.opts.window;
        if t < from {
            let l = &mut self.lanes[lane];
            if t >= l.before_t {
                l.before_t = t;
                l.before = state;
            }
            return;
        }
        if t > to {
            return;
        }
        if t == from {
            self.lanes[lane].at_from = true;
        }
        self.state_row(lane, t, state);
    }

    fn state_row(&mut self, lane: usize, t: f64, state: State) {
        use std::fmt::Write as _;
        let r = self.replication;
        let (owner, k) = self.owner[lane];
        let file = if lane < self.machines {
            let _ = write!(self.line, "{r},{},{},", self.opts.departments[owner], k + 1);
            MACHINE_STATES
        } else {
            let _ = write!(self.line, "{r},{},{},", self.opts.fleets[owner], k + 1);
            MOVER_STATES
        };
        num(&mut self.line, t);
        self.line.push_str(state.name());
        self.emit(file);
    }

    /// At the first event at or after the window's start: each lane's state then.
    fn open(&mut self, now: f64) {
        if self.opened || now < self.opts.window.0 {
            return;
        }
        self.opened = true;
        let from = self.opts.window.0;
        for lane in 0..self.lanes.len() {
            let l = self.lanes[lane];
            if !l.at_from {
                self.state_row(lane, from, l.before);
            }
        }
    }
}

impl<'a> PlantModel<'a> {
    fn tracer(&mut self) -> &mut Tracer<'a> {
        self.trace.as_mut().expect("only called when tracing")
    }

    /// Every lane idle at time 0 (movers start idle at home; an off-duty
    /// start is written by `go_off_duty` right after).
    #[cold]
    fn trace_begin(&mut self) {
        let t = self.trace.as_mut().expect("only called when tracing");
        for lane in 0..t.lanes.len() {
            t.state(lane, 0.0, State::Idle);
        }
        // A department whose calendar starts off shift (set when the run starts).
        for (k, m) in self.machines.iter().enumerate() {
            let d = m.dept as usize;
            if self.plan.calendars[d].as_ref().is_some_and(|c| !c.duty.on_at_start) {
                t.machine_state[k] = State::OffShift;
                let lane = t.first_lane[d] + (k - self.departments[d].first_machine as usize);
                t.state(lane, 0.0, State::OffShift);
            }
        }
        t.open(0.0);
    }

    /// After every event: the state of each tracked machine (breakdowns,
    /// calendars, setups), read off the model, with a row where it changed;
    /// a lot newly on a machine starts its visit now.
    #[cold]
    pub(super) fn trace_poll(&mut self, now: f64) {
        if self.machines.is_empty() {
            return;
        }
        let t = self.trace.as_mut().expect("only called when tracing");
        t.open(now);
        for (k, m) in self.machines.iter().enumerate() {
            let d = m.dept as usize;
            let on_shift = self.departments[d].on_shift;
            let state = if !m.up {
                State::Down
            } else if m.running && m.in_setup {
                State::Setup
            } else if m.running {
                State::Busy
            } else if m.blocked {
                // Holding its finished lot: the outbound area is full.
                State::Blocked
            } else if m.lot != NONE && on_shift {
                // Up, on shift, holding a lot it is not working on (not
                // reached: such a lot is running, blocked or paused).
                State::Busy
            } else if m.lot != NONE || !on_shift {
                State::OffShift
            } else {
                State::Idle
            };
            if m.lot != t.machine_lot[k] {
                t.machine_lot[k] = m.lot;
                if m.lot != NONE {
                    t.started[m.lot as usize] = now;
                }
            }
            if state != t.machine_state[k] {
                t.machine_state[k] = state;
                let lane = t.first_lane[d] + (k - self.departments[d].first_machine as usize);
                t.state(lane, now, state);
            }
        }
    }

    /// Lot `id` has just been released (it is in the slab).
    #[cold]
    pub(super) fn trace_release(&mut self, id: u32, now: f64) {
        let t = self.tracer();
        t.open(now);
        let i = id as usize;
        if t.lot_no.len() <= i {
            t.lot_no.resize(i + 1, 0);
            t.arrival.resize(i + 1, f64::NAN);
            t.started.resize(i + 1, f64::NAN);
            t.ended.resize(i + 1, f64::NAN);
            t.held.resize(i + 1, (NONE, NONE));
            t.on_cart.resize(i + 1, NO_TRIP);
        }
        t.next_lot += 1;
        t.lot_no[i] = t.next_lot;
        t.arrival[i] = f64::NAN;
        t.started[i] = f64::NAN;
        t.ended[i] = f64::NAN;
        t.held[i] = (NONE, NONE);
    }

    /// Lot `id` has reached the department of its current operation.
    #[cold]
    pub(super) fn trace_arrive(&mut self, id: u32, now: f64) {
        let t = self.tracer();
        t.open(now);
        t.arrival[id as usize] = now;
    }

    /// Lot `id` starts its operation now and ends it at `end`: its visit row, and its machine lane turns busy.
    #[cold]
    pub(super) fn trace_start(&mut self, id: u32, now: f64, end: f64) {
        let lot = &self.lots[id as usize];
        let (p, op, dept) = (lot.product as usize, lot.op as usize, lot.department as usize);
        let t = self.trace.as_mut().expect("only called when tracing");
        t.open(now);
        let k =
            t.on_machine[dept].iter().position(|&l| l == NONE).expect("a free machine for a starting lot");
        t.on_machine[dept][k] = id;
        let lane = t.first_lane[dept] + k;
        t.state(lane, now, State::Busy);
        if t.staging {
            // The row waits until the lot leaves the machine (`trace_leave`, `trace_unblocked`).
            t.started[id as usize] = now;
            return;
        }
        let arrival = std::mem::replace(&mut t.arrival[id as usize], f64::NAN);
        if t.in_window(arrival, end) {
            t.visit_row(id, p, op, dept, arrival, Some((now, end)), Some(0.0));
        }
    }

    /// Load `id` starts in a batch that ends at `end` (batch departments
    /// have no staging limits, breakdowns or calendar, so its end is known
    /// now): its visit row.
    #[cold]
    pub(super) fn trace_batch_member(&mut self, id: u32, now: f64, end: f64) {
        let lot = &self.lots[id as usize];
        let (p, op, dept) = (lot.product as usize, lot.op as usize, lot.department as usize);
        let t = self.trace.as_mut().expect("only called when tracing");
        t.open(now);
        let arrival = std::mem::replace(&mut t.arrival[id as usize], f64::NAN);
        if t.in_window(arrival, end) {
            t.visit_row(id, p, op, dept, arrival, Some((now, end)), Some(0.0));
        }
    }

    /// Machine `machine` of batch department `dept` starts (`busy`) or ends a batch: its lane.
    #[cold]
    pub(super) fn trace_batch_lane(&mut self, dept: usize, machine: usize, now: f64, busy: bool) {
        let t = self.trace.as_mut().expect("only called when tracing");
        t.open(now);
        let lane = t.first_lane[dept] + machine;
        t.state(lane, now, if busy { State::Busy } else { State::Idle });
    }

    /// Lot `id` has finished its operation: its machine lane turns idle (a waiting lot may take it at once).
    #[cold]
    pub(super) fn trace_end_operation(&mut self, id: u32, now: f64) {
        let lot = &self.lots[id as usize];
        let (p, op, dept) = (lot.product as usize, lot.op as usize, lot.department as usize);
        let tracked = self.plan.tracked[dept];
        let t = self.trace.as_mut().expect("only called when tracing");
        t.open(now);
        if t.staging {
            // It may be held on its machine: the row and the lane wait until it leaves.
            t.ended[id as usize] = now;
            if let Some(k) = t.machine_lot.iter().position(|&l| l == id) {
                t.machine_lot[k] = NONE;
            }
            return;
        }
        if tracked {
            // The visit's row now that its end is known (failures and pauses may have stretched it).
            let (arrival, start) = (t.arrival[id as usize], t.started[id as usize]);
            if t.in_window(arrival, now) {
                t.visit_row(id, p, op, dept, arrival, Some((start, now)), Some(0.0));
            }
            t.arrival[id as usize] = f64::NAN;
            t.started[id as usize] = f64::NAN;
            // Seen afresh by the next look, should it start again on this machine (rework).
            if let Some(k) = t.machine_lot.iter().position(|&l| l == id) {
                t.machine_lot[k] = NONE;
            }
            return;
        }
        if let Some(k) = t.on_machine[dept].iter().position(|&l| l == id) {
            t.on_machine[dept][k] = NONE;
            let lane = t.first_lane[dept] + k;
            t.state(lane, now, State::Idle);
        }
    }

    /// Plants with staging limits: lot `id` has finished at `dept` and leaves
    /// its machine now (blocked for no time): its visit row, and an
    /// untracked machine lane turns idle.
    #[cold]
    pub(super) fn trace_leave(&mut self, id: u32, dept: usize, now: f64) {
        let lot = &self.lots[id as usize];
        let (p, op) = (lot.product as usize, lot.op as usize);
        let tracked = self.plan.tracked[dept];
        let t = self.tracer();
        if !t.staging {
            return; // its row was written at the end of its operation
        }
        t.open(now);
        t.left_machine(id, p, op, dept, tracked, now);
    }

    /// Lot `id` has finished at `dept` and stays on its machine: the outbound area is full.
    #[cold]
    pub(super) fn trace_block(&mut self, id: u32, dept: usize, now: f64) {
        let op = self.lots[id as usize].op;
        let tracked = self.plan.tracked[dept];
        let t = self.tracer();
        t.open(now);
        t.held[id as usize] = (op, dept as u32);
        if !tracked {
            let k = t.on_machine[dept].iter().position(|&l| l == id).expect("a lane holds the lot");
            let lane = t.first_lane[dept] + k;
            t.state(lane, now, State::Blocked);
        }
    }

    /// Lot `id` may be leaving the machine that held it: if it was held, its
    /// visit row (with the time held) and an untracked machine lane turns idle.
    #[cold]
    pub(super) fn trace_unblocked(&mut self, id: u32, now: f64) {
        let p = self.lots[id as usize].product as usize;
        let t = self.tracer();
        let (op, dept) = t.held[id as usize];
        if op == NONE {
            return; // it waited in the outbound area, not on its machine
        }
        t.open(now);
        t.held[id as usize] = (NONE, NONE);
        let tracked = self.plan.tracked[dept as usize];
        let t = self.tracer();
        t.left_machine(id, p, op as usize, dept as usize, tracked, now);
    }

    /// Lot `id` leaves the plant now at the shipping dock.
    #[cold]
    pub(super) fn trace_ship(&mut self, id: u32, now: f64) {
        let p = self.lots[id as usize].product as usize;
        let born = self.lots[id as usize].born;
        let t = self.tracer();
        t.open(now);
        t.lot_row(id, p, born, Some(now));
        t.lot_no[id as usize] = 0;
    }

    /// `mover` sets off now, empty, for a pick-up `d` metres away, reached at `at`.
    #[cold]
    pub(super) fn trace_dispatch(&mut self, mover: u32, now: f64, d: f64) {
        let loaded = self.movers[mover as usize].loads > 0;
        let t = self.tracer();
        t.open(now);
        if loaded {
            // A train fetching another load drives with those on board.
            t.empty_m[mover as usize] = 0.0;
            t.odometer[mover as usize] += d;
        } else {
            t.empty_m[mover as usize] = d;
            t.congestion[mover as usize] = 0.0;
        }
        if !t.aisles {
            // Over simulated aisles the walk writes the states, segment by segment.
            let lane = t.machines + mover as usize;
            t.state(lane, now, if loaded { State::Loaded } else { State::Empty });
        }
    }

    /// A train puts lot `id` on a cart now; the load's row waits for its drop.
    #[cold]
    pub(super) fn trace_train_pickup(&mut self, mover: u32, id: u32, now: f64, from: usize) {
        let m = self.movers[mover as usize];
        let lot = &self.lots[id as usize];
        let (requested, to) =
            (lot.requested, self.plan.products[lot.product as usize].ops[lot.op as usize].department);
        let t = self.tracer();
        t.open(now);
        let lane = t.machines + mover as usize;
        t.state(lane, now, State::Handling);
        let empty_m = std::mem::replace(&mut t.empty_m[mover as usize], 0.0);
        t.on_cart[id as usize] = Trip {
            lot: id,
            requested,
            assigned: m.assigned,
            picked_up: now,
            from: from as u32,
            to: to as u32,
            // Metres on the odometer at the pick-up: the load's own are the difference at its drop.
            loaded_m: t.odometer[mover as usize],
            empty_m,
        };
    }

    /// A train drives `d` metres now to drop a load, arriving at `arrive`
    /// (`NaN` over simulated aisles, where the walk writes the states).
    #[cold]
    pub(super) fn trace_train_drive(&mut self, mover: u32, now: f64, arrive: f64, d: f64) {
        let t = self.tracer();
        t.open(now);
        t.odometer[mover as usize] += d;
        if !arrive.is_nan() {
            let lane = t.machines + mover as usize;
            t.state(lane, now, State::Loaded);
            t.state(lane, arrive, State::Handling);
        }
    }

    /// `mover` picks up its lot now: loading until `loaded`, driving `d`
    /// metres from department `from` to `to` until `arrive`, unloading until
    /// `end`. Writes the move row (its delivery is decided now).
    #[cold]
    #[allow(clippy::too_many_arguments)] // the trip's times as the handler computed them
    pub(super) fn trace_pickup(
        &mut self,
        mover: u32,
        now: f64,
        loaded: f64,
        arrive: f64,
        end: f64,
        from: usize,
        to: usize,
        d: f64,
    ) {
        use std::fmt::Write as _;
        let m = self.movers[mover as usize];
        let lot = &self.lots[m.lot as usize];
        let requested = lot.requested;
        let f = m.fleet as usize;
        let t = self.trace.as_mut().expect("only called when tracing");
        t.open(now);
        let lane = t.machines + mover as usize;
        t.state(lane, now, State::Handling);
        t.state(lane, loaded, State::Loaded);
        t.state(lane, arrive, State::Handling);
        if t.in_window(requested, end) {
            let r = t.replication;
            let no = t.lot_no[m.lot as usize];
            let k = t.owner[lane].1 + 1;
            let _ = write!(t.line, "{r},{no},{},{k},", t.opts.fleets[f]);
            for x in [requested, m.assigned, now, end] {
                num(&mut t.line, x);
            }
            let _ = write!(t.line, "{},{},", t.opts.departments[from], t.opts.departments[to]);
            num(&mut t.line, d);
            num(&mut t.line, t.empty_m[mover as usize]);
            t.line.push('0');
            t.emit(MOVES);
        }
        t.empty_m[mover as usize] = 0.0;
    }

    /// `mover` found department `to` full and takes its load on to the
    /// overflow area, `d` metres away: driving until `arrive`, unloading
    /// until `end`. A move row for that leg (its load was already on board:
    /// no request, no assignment).
    #[cold]
    pub(super) fn trace_overflow(&mut self, mover: u32, now: f64, arrive: f64, end: f64, to: usize, d: f64) {
        use std::fmt::Write as _;
        let lot = self.movers[mover as usize].lot;
        let f = self.movers[mover as usize].fleet as usize;
        let nd = self.plan.n_departments;
        let t = self.tracer();
        t.open(now);
        let lane = t.machines + mover as usize;
        t.state(lane, now, State::Loaded);
        t.state(lane, arrive, State::Handling);
        if t.in_window(now, end) {
            let r = t.replication;
            let no = t.lot_no[lot as usize];
            let k = t.owner[lane].1 + 1;
            let _ = write!(t.line, "{r},{no},{},{k},,,", t.opts.fleets[f]);
            num(&mut t.line, now);
            num(&mut t.line, end);
            let _ = write!(t.line, "{},{},", t.opts.departments[to], t.opts.departments[nd + to]);
            num(&mut t.line, d);
            t.line.push_str("0,0");
            t.emit(MOVES);
        }
    }

    /// Simulated aisles: `mover` picks up its lot now, to be driven from
    /// department `from` to `to` (`d` metres); its row waits for the delivery.
    #[cold]
    pub(super) fn trace_pickup_walk(&mut self, mover: u32, now: f64, from: usize, to: usize, d: f64) {
        let m = self.movers[mover as usize];
        let requested = self.lots[m.lot as usize].requested;
        let t = self.tracer();
        t.open(now);
        let empty_m = std::mem::replace(&mut t.empty_m[mover as usize], 0.0);
        t.trip[mover as usize] = Trip {
            lot: m.lot,
            requested,
            assigned: m.assigned,
            picked_up: now,
            from: from as u32,
            to: to as u32,
            loaded_m: d,
            empty_m,
        };
    }

    /// Simulated aisles: `mover` found department `to` full and drives its
    /// load on to the overflow area, `d` metres; its row waits for the drop.
    #[cold]
    pub(super) fn trace_overflow_walk(&mut self, mover: u32, now: f64, to: usize, d: f64) {
        let lot = self.movers[mover as usize].lot;
        let nd = self.plan.n_departments;
        let t = self.tracer();
        t.open(now);
        t.congestion[mover as usize] = 0.0;
        t.trip[mover as usize] =
            Trip { lot, picked_up: now, from: to as u32, to: (nd + to) as u32, loaded_m: d, ..NO_TRIP };
    }

    /// Simulated aisles: `mover` sets its load down now (or finds its
    /// department full): the move's row, with its congestion delay.
    #[cold]
    pub(super) fn trace_deliver(&mut self, mover: u32, now: f64) {
        let lot = self.movers[mover as usize].lot;
        let t = self.tracer();
        t.open(now);
        t.trip_row(mover, now);
        if lot != NONE && (lot as usize) < t.on_cart.len() && t.on_cart[lot as usize].lot == lot {
            let mut trip = std::mem::replace(&mut t.on_cart[lot as usize], NO_TRIP);
            trip.loaded_m = t.odometer[mover as usize] - trip.loaded_m;
            t.trip[mover as usize] = trip;
            t.trip_row(mover, now);
        }
    }

    /// Simulated aisles: `mover` starts a walk now, with `pre_s` of handling
    /// first; `post_s` of handling follows at once when the path is empty.
    #[cold]
    pub(super) fn trace_walk(&mut self, mover: u32, now: f64, pre_s: f64, post_s: f64, empty_path: bool) {
        if pre_s > 0.0 || (empty_path && post_s > 0.0) {
            self.trace_mover(mover, now, State::Handling);
        }
    }

    /// Simulated aisles: `mover` enters a segment now, loaded or not, after
    /// waiting since `since` (NaN: it did not wait).
    #[cold]
    pub(super) fn trace_enter(&mut self, mover: u32, now: f64, loaded: bool, since: f64) {
        let t = self.tracer();
        if !since.is_nan() {
            t.congestion[mover as usize] += now - since;
        }
        self.trace_mover(mover, now, if loaded { State::Loaded } else { State::Empty });
    }

    /// `mover` is in state `state` from now on.
    #[cold]
    pub(super) fn trace_mover(&mut self, mover: u32, now: f64, state: State) {
        let t = self.tracer();
        t.open(now);
        let lane = t.machines + mover as usize;
        t.state(lane, now, state);
    }

    /// Fleet `f`'s idle movers stop where they are: off duty from now.
    #[cold]
    pub(super) fn trace_off_duty(&mut self, f: usize, now: f64) {
        let idle = std::mem::take(&mut self.fleets[f].idle);
        for &m in &idle {
            self.trace_mover(m, now, State::OffDuty);
        }
        self.fleets[f].idle = idle;
    }

    /// The run has ended at `horizon`: rows for lots still in the plant and
    /// visits not started, the window's opening rows if no event came after
    /// its start, and the buffers flushed.
    #[cold]
    pub(super) fn trace_end(&mut self, horizon: f64) {
        let lots: Vec<(u32, usize, f64)> = {
            let t = self.trace.as_ref().expect("only called when tracing");
            let mut v: Vec<(u64, u32)> =
                t.lot_no.iter().enumerate().filter(|(_, &n)| n != 0).map(|(i, &n)| (n, i as u32)).collect();
            v.sort_unstable();
            v.iter()
                .map(|&(_, id)| (id, self.lots[id as usize].product as usize, self.lots[id as usize].born))
                .collect()
        };
        let queued: Vec<(u32, usize, usize, usize)> = {
            let t = self.trace.as_ref().expect("only called when tracing");
            lots.iter()
                .map(|&(id, _, _)| {
                    let l = &self.lots[id as usize];
                    match t.held[id as usize] {
                        // Held on its machine: the visit is the finished operation's.
                        (op, dept) if op != NONE => (id, l.product as usize, op as usize, dept as usize),
                        _ => (id, l.product as usize, l.op as usize, l.department as usize),
                    }
                })
                .collect()
        };
        let t = self.trace.as_mut().expect("only called when tracing");
        t.open(horizon);
        for &(id, p, op, dept) in &queued {
            let arrival = t.arrival[id as usize];
            if !arrival.is_nan() && t.in_window(arrival, f64::INFINITY) {
                let (start, end) = (t.started[id as usize], t.ended[id as usize]);
                if t.held[id as usize].0 != NONE {
                    // Still held at the end of the run: how long is not known.
                    t.visit_row(id, p, op, dept, arrival, Some((start, end)), None);
                } else {
                    let times = (!start.is_nan()).then_some((start, f64::NAN));
                    t.visit_row(id, p, op, dept, arrival, times, Some(0.0));
                }
            }
        }
        for &(id, p, born) in &lots {
            t.lot_row(id, p, born, None);
        }
        // Moves still under way over simulated aisles.
        for mover in 0..t.trip.len() {
            t.trip_row(mover as u32, f64::NAN);
        }
        // Loads still on a train's carts, or being dropped, at the end of the run.
        let mut carts: Vec<(u32, u32)> = Vec::new();
        for (k, m) in self.movers.iter().enumerate() {
            let (base, n) = (m.slots as usize, m.loads as usize);
            let on_board = if self.onboard.is_empty() { &[][..] } else { &self.onboard[base..base + n] };
            carts.extend(on_board.iter().chain((m.lot != NONE).then_some(&m.lot)).map(|&l| (k as u32, l)));
        }
        {
            for &(mover, lot) in &carts {
                let t = self.trace.as_mut().expect("only called when tracing");
                if (lot as usize) < t.on_cart.len() && t.on_cart[lot as usize].lot == lot {
                    let mut trip = std::mem::replace(&mut t.on_cart[lot as usize], NO_TRIP);
                    trip.loaded_m = t.odometer[mover as usize] - trip.loaded_m;
                    t.trip[mover as usize] = trip;
                    t.trip_row(mover, f64::NAN);
                }
            }
        }
        let t = self.trace.as_mut().expect("only called when tracing");
        // A failure stays in the sink, and `simulate_traced` reports it.
        let _ = t.sink.flush();
    }
}

impl Tracer<'_> {
    /// Plants with staging limits: lot `id` leaves the machine of its visit
    /// (`op` at `dept`) now, having finished at `ended`: its visit row, with
    /// the time held; an untracked lane turns idle (tracked ones are polled).
    fn left_machine(&mut self, id: u32, p: usize, op: usize, dept: usize, tracked: bool, now: f64) {
        let i = id as usize;
        let (arrival, start, end) = (self.arrival[i], self.started[i], self.ended[i]);
        if self.in_window(arrival, now) {
            self.visit_row(id, p, op, dept, arrival, Some((start, end)), Some(now - end));
        }
        self.arrival[i] = f64::NAN;
        self.started[i] = f64::NAN;
        self.ended[i] = f64::NAN;
        if !tracked {
            if let Some(k) = self.on_machine[dept].iter().position(|&l| l == id) {
                self.on_machine[dept][k] = NONE;
                let lane = self.first_lane[dept] + k;
                self.state(lane, now, State::Idle);
            }
        }
    }

    /// The row of `mover`'s move under way over simulated aisles, if any,
    /// delivered at `delivered` (NaN: still under way at the end of the run).
    fn trip_row(&mut self, mover: u32, delivered: f64) {
        use std::fmt::Write as _;
        let trip = std::mem::replace(&mut self.trip[mover as usize], NO_TRIP);
        if trip.lot == NONE {
            return;
        }
        let first = if trip.requested.is_nan() { trip.picked_up } else { trip.requested };
        if !self.in_window(first, if delivered.is_nan() { f64::INFINITY } else { delivered }) {
            return;
        }
        let lane = self.machines + mover as usize;
        let (f, k) = self.owner[lane];
        let r = self.replication;
        let no = self.lot_no[trip.lot as usize];
        let _ = write!(self.line, "{r},{no},{},{},", self.opts.fleets[f], k + 1);
        for x in [trip.requested, trip.assigned, trip.picked_up, delivered] {
            if x.is_nan() {
                self.line.push(',');
            } else {
                num(&mut self.line, x);
            }
        }
        let o = self.opts;
        let _ =
            write!(self.line, "{},{},", o.departments[trip.from as usize], o.departments[trip.to as usize]);
        num(&mut self.line, trip.loaded_m);
        num(&mut self.line, trip.empty_m);
        num(&mut self.line, self.congestion[mover as usize]);
        self.emit(MOVES);
    }

    /// A visit row; `times` is (start, end), `None` for a lot still waiting
    /// at the end of the run; `blocked` is `None` for a lot still held on
    /// its machine at the end of the run.
    #[allow(clippy::too_many_arguments)] // one row's fields
    fn visit_row(
        &mut self,
        id: u32,
        p: usize,
        op: usize,
        dept: usize,
        arrival: f64,
        times: Option<(f64, f64)>,
        blocked: Option<f64>,
    ) {
        use std::fmt::Write as _;
        let r = self.replication;
        let no = self.lot_no[id as usize];
        let o = self.opts;
        let _ = write!(self.line, "{r},{no},{},{},{},", o.products[p], o.steps[p][op], o.departments[dept]);
        num(&mut self.line, arrival);
        match times {
            Some((start, end)) => {
                num(&mut self.line, start);
                if end.is_nan() {
                    // On a machine at the end of the run: its end is not known.
                    self.line.push(',');
                } else {
                    num(&mut self.line, end);
                }
                num(&mut self.line, start - arrival);
            }
            None => self.line.push_str(",,,"),
        }
        match blocked {
            Some(b) => num(&mut self.line, b),
            None => self.line.push(','),
        }
        self.emit(VISITS);
    }

    /// A lot row; `shipped` is `None` for a lot still in the plant at the end of the run.
    fn lot_row(&mut self, id: u32, p: usize, born: f64, shipped: Option<f64>) {
        use std::fmt::Write as _;
        if !self.in_window(born, shipped.unwrap_or(f64::INFINITY)) {
            return;
        }
        let r = self.replication;
        let no = self.lot_no[id as usize];
        let _ = write!(self.line, "{r},{no},{},", self.opts.products[p]);
        num(&mut self.line, born);
        match shipped {
            Some(s) => {
                num(&mut self.line, s);
                num(&mut self.line, s - born);
            }
            None => self.line.push_str(",,"),
        }
        self.emit(LOTS);
    }
}
