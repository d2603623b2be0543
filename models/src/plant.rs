//! The compiled plant: an immutable, index-based description built from a scenario file.
//!
//! Everything here has been validated: names are resolved to indices, times are
//! seconds, speeds are metres per second, rates are per second. The simulation
//! and the static analysis read only this; nothing in it is a string that the
//! hot loop needs to look at.

use std::fmt;

use crate::dist::Dist;

/// A whole plant as the scenario describes it, with every layout it names.
#[derive(Clone, PartialEq)]
pub struct Plant {
    /// Free-text name shown in reports.
    pub name: String,
    /// Slots on the floor where a department can sit.
    pub locations: Vec<Location>,
    /// How distances between locations were obtained (for reports).
    pub distance_rule: DistanceRule,
    /// Location-to-location distance in metres, row-major, `locations.len()` squared.
    pub distance: Vec<f64>,
    /// The aisle network and every pair's shortest path, with `distance: aisles`; `None` otherwise.
    pub aisles: Option<crate::network::AisleNetwork>,
    /// Departments, docks included.
    pub departments: Vec<Department>,
    /// Named candidate layouts; at least one.
    pub layouts: Vec<Layout>,
    /// Products with their demand and routing; at least one.
    pub products: Vec<Product>,
    /// How loads are carried between departments.
    pub handling: Handling,
    /// Run settings (horizon, warm-up, replications, seed).
    pub run: RunSettings,
    /// The order trace that feeds the products whose demand is [`Demand::Orders`].
    pub orders: Option<OrderTrace>,
    /// Scenario-level multiplier on every product's demand (rates and trace quantities alike).
    pub demand_factor: f64,
    /// Cost per load-metre for the static handling cost (currency per load per metre).
    pub cost_per_load_metre: f64,
    /// The currency every cost is in (`currency: EUR`), shown beside cost figures;
    /// `None`: unnamed, and cost labels read as before (`/h`).
    pub currency: Option<String>,
    /// Which of the fleets allowed to serve a move takes it.
    pub fleet_choice: FleetChoice,
    /// Rules for `layflow search` (pinned departments, empty locations, adjacency, floor costs).
    pub search: SearchRules,
    /// Named pools of people (`crews:`); empty when the scenario has none.
    pub crews: Vec<Crew>,
}

// Written out so that a plant without crews keeps the debug text (and the
// experiment content hash) it had before crews existed.
impl fmt::Debug for Plant {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut s = f.debug_struct("Plant");
        s.field("name", &self.name)
            .field("locations", &self.locations)
            .field("distance_rule", &self.distance_rule)
            .field("distance", &self.distance)
            .field("aisles", &self.aisles)
            .field("departments", &self.departments)
            .field("layouts", &self.layouts)
            .field("products", &self.products)
            .field("handling", &self.handling)
            .field("run", &self.run)
            .field("orders", &self.orders)
            .field("demand_factor", &self.demand_factor)
            .field("cost_per_load_metre", &self.cost_per_load_metre)
            .field("currency", &self.currency)
            .field("fleet_choice", &self.fleet_choice)
            .field("search", &self.search);
        if !self.crews.is_empty() {
            s.field("crews", &self.crews);
        }
        s.finish()
    }
}

/// A slot on the floor with its pick-up/drop-off point.
#[derive(Clone, PartialEq)]
pub struct Location {
    /// The scenario's name for it.
    pub id: String,
    /// Pick-up/drop-off point, metres.
    pub x: f64,
    /// Pick-up/drop-off point, metres.
    pub y: f64,
    /// The floor area the slot offers (`area`, `size`); `None` when not given.
    pub footprint: Option<Footprint>,
}

// Written out so that a location without a footprint prints as it did before
// footprints existed: an experiment's content hash covers the plant's debug
// text, and a plan's hash must not change for a scenario that gives no areas.
impl fmt::Debug for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut s = f.debug_struct("Location");
        s.field("id", &self.id).field("x", &self.x).field("y", &self.y);
        if let Some(fp) = &self.footprint {
            s.field("footprint", fp);
        }
        s.finish()
    }
}

impl Location {
    /// Half the width and half the depth of the slot's rectangle in metres, for
    /// drawing to scale: its `size`, or the square of its `area`; `None` without either.
    /// The rectangle is centred on the pick-up/drop-off point.
    pub fn half_extent_m(&self) -> Option<(f64, f64)> {
        self.footprint.map(|f| f.half_extent_m())
    }
}

/// A floor area in square metres, and the rectangle (width along x, depth
/// along y, metres) where one was given. When both were given they agree to
/// within 1% (the loader checks), and `area_m2` is the one written.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Footprint {
    /// Square metres.
    pub area_m2: f64,
    /// `[width, depth]` in metres, where given.
    pub size_m: Option<[f64; 2]>,
}

impl Footprint {
    /// Half the width and half the depth, metres: the size's, or a square's of the area.
    pub fn half_extent_m(&self) -> (f64, f64) {
        match self.size_m {
            Some([w, d]) => (w / 2.0, d / 2.0),
            None => {
                let side = self.area_m2.sqrt();
                (side / 2.0, side / 2.0)
            }
        }
    }

    /// Whether `need` fits in this footprint: its area is no larger and, when
    /// both have a rectangle, the rectangle fits as given or turned by 90°.
    pub fn holds(&self, need: &Footprint) -> bool {
        if need.area_m2 > self.area_m2 {
            return false;
        }
        match (need.size_m, self.size_m) {
            (Some([w, d]), Some([lw, ld])) => (w <= lw && d <= ld) || (d <= lw && w <= ld),
            _ => true,
        }
    }
}

/// Where the location-to-location distances came from.
#[derive(Debug, Clone, PartialEq)]
pub enum DistanceRule {
    /// |dx| + |dy|: travel along perpendicular aisles.
    Rectilinear,
    /// Straight line.
    Euclidean,
    /// Given explicitly (inline or from the named CSV file).
    Matrix {
        /// The CSV file it was read from, if any.
        file: Option<String>,
    },
    /// Shortest paths over the aisle network ([`Plant::aisles`]).
    Aisles,
}

impl DistanceRule {
    /// The rule in words, for reports.
    pub fn describe(&self) -> String {
        match self {
            DistanceRule::Rectilinear => "rectilinear (|dx| + |dy|)".into(),
            DistanceRule::Euclidean => "straight line".into(),
            DistanceRule::Matrix { file: Some(f) } => format!("the distance matrix in {f}"),
            DistanceRule::Matrix { file: None } => "the scenario's distance matrix".into(),
            DistanceRule::Aisles => "shortest paths over the aisle network".into(),
        }
    }
}

/// What a department does in the flow of lots.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DepartmentRole {
    /// Parallel identical machines with one unlimited first-in-first-out queue.
    Work,
    /// A receiving dock: lots enter the plant here.
    Receiving,
    /// A shipping dock: lots leave the plant when delivered here.
    Shipping,
}

/// A department (or dock).
#[derive(Clone, PartialEq)]
pub struct Department {
    /// The scenario's name for it.
    pub id: String,
    /// Work centre or dock.
    pub role: DepartmentRole,
    /// Parallel identical machines (1 or more for work departments; 0 for docks).
    pub machines: u32,
    /// Finite inbound and outbound staging space; unlimited by default.
    pub staging: Staging,
    /// Machine breakdowns (each machine fails on its own); `None`: machines never fail.
    pub breakdowns: Option<Breakdowns>,
    /// Receiving docks only: turn a new lot away when the first department of
    /// its routing has no room for it, instead of holding it at the dock.
    pub turn_away: bool,
    /// Working hours (shifts less breaks); `None`: works around the clock.
    pub calendar: Option<WorkCalendar>,
    /// Setup times when a machine changes product; `None`: no setups.
    pub setups: Option<Setups>,
    /// The floor area the department needs (`area`, `size`); `None` when not given.
    pub footprint: Option<Footprint>,
    /// Which waiting lot a free machine takes next (the plant's `queue_order`
    /// unless the department gives its own).
    pub queue_order: QueueOrder,
    /// A batch machine's rules (an oven, a wash tank); `None`: one lot at a time.
    pub batch: Option<Batching>,
    /// A person from a crew each operation needs (`people:`); `None`: machines run unattended.
    pub people: Option<People>,
    /// The crew (index into [`Plant::crews`]) whose member each repair needs; `None`: repairs start at once.
    pub technicians: Option<usize>,
}

/// How a batch department's machines work: each runs up to `max` loads
/// together, started by the rule of docs/scenario-format.md "Batch machines".
#[derive(Debug, Clone, PartialEq)]
pub struct Batching {
    /// K: the most loads one batch holds (at least 1).
    pub max: u32,
    /// A batch starts once this many compatible loads wait (1: as soon as one is there).
    pub min: u32,
    /// ... or at the latest once the oldest of them has waited this long, s; `None`: no limit.
    pub max_wait_s: Option<f64>,
    /// The batch's processing time, whatever its size.
    pub time: Dist,
    /// Added for each load beyond the first, s (0: the time does not depend on the size).
    pub per_load_s: f64,
    /// Per product (plant order): its compatibility group; all 0 when any mix may share a batch.
    pub group_of: Vec<u32>,
    /// Compatibility groups (1 when any mix may share a batch).
    pub groups: u32,
}

impl Batching {
    /// Mean time of a batch of `n` loads, s.
    pub fn mean_time_s(&self, n: u32) -> f64 {
        self.time.mean() + self.per_load_s * f64::from(n.saturating_sub(1))
    }
}

/// Which waiting lot is served next: at a department, the lot a free machine
/// takes; at a fleet, the move request a free mover takes. Non-preemptive:
/// a lot in process is never interrupted for a more urgent one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum QueueOrder {
    /// First in, first out (the default).
    #[default]
    Fifo,
    /// The product's `priority`, smallest number first (1 before 2); products
    /// without one after every product with one; first in first out among equals.
    Priority,
    /// The lot's due date, earliest first; lots without one last.
    EarliestDue,
    /// The operation's expected processing time, shortest first (departments only).
    ShortestTime,
}

impl QueueOrder {
    /// The word the scenario uses.
    pub fn word(self) -> &'static str {
        match self {
            QueueOrder::Fifo => "fifo",
            QueueOrder::Priority => "priority",
            QueueOrder::EarliestDue => "earliest-due",
            QueueOrder::ShortestTime => "shortest-time",
        }
    }
}

// Written out for the reason given at `Location`'s: no footprint, the debug text of before.
impl fmt::Debug for Department {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut s = f.debug_struct("Department");
        s.field("id", &self.id)
            .field("role", &self.role)
            .field("machines", &self.machines)
            .field("staging", &self.staging)
            .field("breakdowns", &self.breakdowns)
            .field("turn_away", &self.turn_away)
            .field("calendar", &self.calendar)
            .field("setups", &self.setups);
        if let Some(fp) = &self.footprint {
            s.field("footprint", fp);
        }
        if self.queue_order != QueueOrder::Fifo {
            s.field("queue_order", &self.queue_order);
        }
        if let Some(b) = &self.batch {
            s.field("batch", b);
        }
        if let Some(p) = &self.people {
            s.field("people", p);
        }
        if let Some(t) = &self.technicians {
            s.field("technicians", t);
        }
        s.finish()
    }
}

/// When a department works, and what becomes of an operation under way when a shift ends.
#[derive(Debug, Clone, PartialEq)]
pub struct WorkCalendar {
    /// The working windows, in the same form as a fleet's operators' hours.
    pub duty: DutyCalendar,
    /// Finish the operation under way, or pause it until the next shift.
    pub at_shift_end: ShiftEnd,
}

impl WorkCalendar {
    /// Share of clock time that is scheduled working time (on-duty seconds per period ÷ period).
    pub fn scheduled_share(&self) -> f64 {
        self.duty.on.iter().map(|&(a, b)| b - a).sum::<f64>() / self.duty.period_s
    }
}

/// What a machine does with an operation under way when its department's shift or break begins.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ShiftEnd {
    /// It works on until the operation is done, then stops.
    Finish,
    /// It stops at once and goes on with the time left at the start of the next working window.
    Pause,
}

/// Setup times of a department's machines. A machine starts set up for the
/// first lot it takes, so only a change from one product to another needs a setup.
#[derive(Debug, Clone, PartialEq)]
pub struct Setups {
    /// Setup on any change of product without a pair entry; `None`: only the pairs set up.
    pub on_change: Option<Dist>,
    /// (from product, to product, setup time) for particular changes.
    pub pairs: Vec<(usize, usize, Dist)>,
}

impl Setups {
    /// The setup distribution for a change from product `from` to `to` (`None`: no setup).
    pub fn for_change(&self, from: usize, to: usize) -> Option<&Dist> {
        if from == to {
            return None;
        }
        self.pairs.iter().find(|p| p.0 == from && p.1 == to).map(|p| &p.2).or(self.on_change.as_ref())
    }
}

/// How a product's lot is split into unit loads for moving.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LotSplit {
    /// Units in a lot (at least 1).
    pub quantity: u32,
    /// Units moved together as one unit load (1 to `quantity`); the last load
    /// of a lot may hold fewer.
    pub transfer_batch: u32,
    /// When the lot's operation at the next department may start.
    pub start: LoadStart,
}

impl LotSplit {
    /// Unit loads per lot: ⌈quantity ÷ transfer batch⌉.
    pub fn loads(&self) -> u32 {
        self.quantity.div_ceil(self.transfer_batch)
    }
}

/// When the operation of a lot that moves in several unit loads starts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LoadStart {
    /// When its first load arrives: the machine works the loads in the order
    /// they arrive, each for its share of the lot's time, and each load
    /// leaves as soon as it is done (overlapping operations).
    FirstLoad,
    /// When its last load arrives: the whole lot is worked at once and its
    /// loads leave together.
    LastLoad,
}

/// Staging space at a work department. `None` is unlimited (the default).
///
/// Inbound staging holds lots waiting for a machine (lots in process are on
/// the machines, not in staging); outbound staging holds finished lots
/// waiting to leave (for a mover, or for room downstream with instant moves).
/// The loader guarantees capacities of at least 1.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Staging {
    /// Most lots waiting for a machine.
    pub inbound: Option<u32>,
    /// Most finished lots waiting to leave; with it full, a machine that
    /// finishes holds its lot and stops (blocking after service).
    pub outbound: Option<u32>,
    /// Location index where a mover that finds the inbound area full drops
    /// its load; `None`: the mover waits, holding the load, until there is room.
    pub overflow: Option<usize>,
}

impl Staging {
    /// Whether any staging space is finite.
    pub fn is_limited(&self) -> bool {
        self.inbound.is_some() || self.outbound.is_some()
    }
}

/// What the time between failures is counted in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FailureClock {
    /// Wall-clock time: a machine (or mover) can fail while idle.
    ClockTime,
    /// Working time only: a machine fails only while processing, a mover only while operating.
    BusyTime,
}

/// What happens to an operation that a breakdown interrupts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Interrupted {
    /// After repair the operation goes on with the time it had left.
    Resume,
    /// After repair the operation starts again from the beginning (same processing time).
    Restart,
}

/// Failures and repairs of a machine or a mover. The loader guarantees that
/// neither distribution has an appreciable chance of a negative value.
#[derive(Debug, Clone, PartialEq)]
pub struct Breakdowns {
    /// Time between a repair and the next failure, counted by `clock`.
    pub between: Dist,
    /// Time to repair.
    pub repair: Dist,
    /// Clock time or busy time.
    pub clock: FailureClock,
    /// Resume or restart an interrupted operation (machines only; movers
    /// always finish the delivery they are on before going for repair).
    pub interrupted: Interrupted,
}

impl Breakdowns {
    /// MTBF ÷ (MTBF + MTTR): the long-run share of time up of an alternating
    /// up/down process (docs/formulas.md §14; Barlow and Proschan 1975). With
    /// failures counted in busy time it is the factor by which capacity
    /// shrinks when fully loaded: each busy hour brings MTTR/MTBF hours of repair.
    pub fn availability(&self) -> f64 {
        let (up, down) = (self.between.mean(), self.repair.mean());
        up / (up + down)
    }
}

/// A battery truck's charge cycle: after `every_s` of operating time it is
/// out of service for `for_s` (at the end of its current delivery).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Charging {
    /// Operating time between charges, s (> 0).
    pub every_s: f64,
    /// Time on charge, s (> 0).
    pub for_s: f64,
}

/// One candidate assignment of departments to locations.
#[derive(Debug, Clone, PartialEq)]
pub struct Layout {
    /// The scenario's name for it.
    pub name: String,
    /// `location_of[department]` is the index of that department's location.
    /// Every department has one and no two share one.
    pub location_of: Vec<usize>,
}

/// A product: its demand and its routing.
#[derive(Clone, PartialEq)]
pub struct Product {
    /// The scenario's name for it.
    pub id: String,
    /// Where its lots come from: a Poisson rate (maybe varying by a profile) or the order trace.
    pub demand: Demand,
    /// The receiving dock (department index) where lots of this product enter.
    pub enters_at: usize,
    /// Operations; `routing[0]` is the first one visited.
    pub routing: Vec<Operation>,
    /// Weight of one lot, kg; `None`: any fleet may lift it. With `lot`
    /// splitting it is the weight of one unit load.
    pub weight_kg: Option<f64>,
    /// Lot quantity and unit loads; `None`: the lot moves as one load.
    pub lot: Option<LotSplit>,
    /// The first operations (index into `routing`) with their probabilities,
    /// summing to 1: `[(0, 1.0)]` unless the routing branches from the
    /// receiving dock, or its first step has alternative departments.
    pub first: Vec<(usize, f64)>,
    /// Operations done at one of several departments: each alternative is an
    /// operation of `routing` of its own, reached by branches that carry the
    /// expected shares; empty when the routing names none.
    pub alternatives: Vec<Alternatives>,
    /// Rank under [`QueueOrder::Priority`]: 1 is served first; `None`: after every ranked product.
    pub priority: Option<u32>,
    /// Each lot is due this long after its release (`due: { within: 3 d }`), s;
    /// `None`: no allowance (a trace order may still give its own due date).
    pub due_within_s: Option<f64>,
    /// Assembly steps: operations that wait for a kit of component products
    /// before they start (`parts:`); empty for a product that assembles nothing.
    pub kits: Vec<Kit>,
    /// A component (`into:` on its last step): the product it is consumed
    /// into, at the department of that product's assembly step; `None` otherwise.
    pub into: Option<usize>,
}

/// One assembly step of a product: the operation waits until these
/// quantities of component lots are at its department, then consumes them
/// (first come, first served; docs/scenario-format.md, "Assembly").
#[derive(Debug, Clone, PartialEq)]
pub struct Kit {
    /// The assembly operation (index into the product's `routing`).
    pub op: usize,
    /// (component product index, lots per kit ≥ 1), in listed order.
    pub parts: Vec<(usize, u32)>,
}

// Written out so that a product without a random first operation,
// alternatives, a priority or a due date prints as before they existed (an
// experiment's content hash covers the plant's debug text; see `Location`'s).
impl fmt::Debug for Product {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut s = f.debug_struct("Product");
        s.field("id", &self.id)
            .field("demand", &self.demand)
            .field("enters_at", &self.enters_at)
            .field("routing", &self.routing)
            .field("weight_kg", &self.weight_kg)
            .field("lot", &self.lot);
        if self.first != [(0, 1.0)] {
            s.field("first", &self.first);
        }
        if !self.alternatives.is_empty() {
            s.field("alternatives", &self.alternatives);
        }
        if let Some(p) = &self.priority {
            s.field("priority", p);
        }
        if let Some(d) = &self.due_within_s {
            s.field("due_within_s", d);
        }
        if !self.kits.is_empty() {
            s.field("kits", &self.kits);
        }
        if let Some(p) = &self.into {
            s.field("into", p);
        }
        s.finish()
    }
}

/// How a lot picks one of an operation's alternative departments, at the
/// moment it is ready to move there (the end of its previous operation, or
/// its release at the receiving dock).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AltRule {
    /// At random in the stated shares.
    Shares,
    /// The first machine free in any of them: the lot waits for one in a
    /// queue shared by the group, in the outbound area it is leaving.
    FirstFree,
    /// The department with the fewest lots waiting, in process or on their way there.
    ShortestQueue,
    /// The department with the least expected work ahead: those lots × this
    /// operation's mean time there ÷ its machines.
    LeastWork,
}

impl AltRule {
    /// The rule as the scenario writes it.
    pub fn name(self) -> &'static str {
        match self {
            AltRule::Shares => "shares",
            AltRule::FirstFree => "first-free",
            AltRule::ShortestQueue => "shortest-queue",
            AltRule::LeastWork => "least-work",
        }
    }

    /// Every rule, in the order messages list them.
    pub const ALL: [AltRule; 4] =
        [AltRule::FirstFree, AltRule::ShortestQueue, AltRule::LeastWork, AltRule::Shares];

    /// Whether the choice depends on the plant's state (so the static
    /// picture's shares are estimates).
    pub fn is_dynamic(self) -> bool {
        self != AltRule::Shares
    }
}

/// One operation that may be done at any of several departments.
#[derive(Debug, Clone, PartialEq)]
pub struct Alternatives {
    /// The step's name.
    pub step: String,
    /// The operations (indices into the routing), one per department, in listed order.
    pub ops: Vec<usize>,
    /// How a lot picks one.
    pub rule: AltRule,
    /// The share of lots each takes, summing to 1: exact under
    /// [`AltRule::Shares`]; otherwise an estimate, in proportion to each
    /// department's capacity for this operation (machines ÷ mean time).
    pub shares: Vec<f64>,
}

/// Where a product's lots come from.
///
/// A shift in the product mix over the day or the week is written as
/// different profiles on different products: each product has its own.
#[derive(Debug, Clone, PartialEq)]
pub enum Demand {
    /// Poisson arrivals at `per_s` lots per second, times the profile's factor
    /// at that moment when there is a profile.
    Rate {
        /// Base rate, lots per second, before the demand factor.
        per_s: f64,
        /// A repeating pattern of multipliers on the base rate.
        profile: Option<Profile>,
    },
    /// Lots are released by the scenario's order trace ([`Plant::orders`]).
    Orders,
}

/// A repeating rate pattern: `factors[k]` applies from `k·every_s` to
/// `(k+1)·every_s` after the start of each period of `factors.len()·every_s`,
/// counted from the start of the run. A day in hours is `every: 1 h` with 24
/// factors; a week is `every: 1 d` with 7, or `every: 8 h` with 21 (shifts).
///
/// The loader guarantees `every_s > 0`, a non-empty list, every factor finite
/// and `>= 0`, and at least one `> 0`.
#[derive(Debug, Clone, PartialEq)]
pub struct Profile {
    /// How long each factor lasts, s.
    pub every_s: f64,
    /// Multipliers on the base rate, in time order.
    pub factors: Vec<f64>,
}

/// Orders read from a CSV file, each releasing a number of lots at a time.
#[derive(Debug, Clone, PartialEq)]
pub struct OrderTrace {
    /// The CSV file as the scenario names it (for reports).
    pub file: String,
    /// Orders in non-decreasing time order; at least one.
    pub orders: Vec<Order>,
    /// Play the trace again every this many seconds; `None` plays it once.
    /// Longer than the last order's time when given.
    pub repeat_s: Option<f64>,
}

/// One line of an order trace.
#[derive(Clone, Copy, PartialEq)]
pub struct Order {
    /// Seconds from the start of the run (of each play of the trace, with `repeat`).
    pub time_s: f64,
    /// Product index.
    pub product: usize,
    /// Lots released at once at the product's receiving dock (at least 1),
    /// before the demand factor.
    pub quantity: u32,
    /// When the order's lots are due, s from the start of the run (of each
    /// play, with `repeat`), from the trace's `due` column; never before
    /// `time_s`. `None`: the product's allowance, if it has one.
    pub due_s: Option<f64>,
}

// Written out for the reason given at `Location`'s: without a due column, the debug text of before.
impl fmt::Debug for Order {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut s = f.debug_struct("Order");
        s.field("time_s", &self.time_s).field("product", &self.product).field("quantity", &self.quantity);
        if let Some(d) = &self.due_s {
            s.field("due_s", d);
        }
        s.finish()
    }
}

/// One step of a routing.
#[derive(Debug, Clone, PartialEq)]
pub struct Operation {
    /// The scenario's name for the step.
    pub name: String,
    /// Department index where it happens.
    pub department: usize,
    /// Processing time per lot; `None` only for the final step at a shipping dock.
    pub time: Option<Dist>,
    /// Possible next operations (index into the routing) with probabilities
    /// summing to 1. Empty exactly when this step is at a shipping dock: the
    /// lot leaves the plant.
    pub next: Vec<(usize, f64)>,
}

/// How loads move between departments.
#[derive(Debug, Clone, PartialEq)]
pub enum Handling {
    /// Moves take no time and need no mover (for validating queueing results).
    Instant,
    /// Fleets of movers; every product is carried by at least one.
    Fleets(Vec<Fleet>),
}

/// Kinds of handling device. The kind sets defaults and labels; the fields of
/// [`Fleet`] set behaviour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum MoverKind {
    /// Powered industrial truck carrying one unit load.
    Forklift,
    /// Tow tractor pulling carts.
    TowCart,
    /// A person on foot carrying a tote or pushing a hand cart.
    Walker,
}

/// Which mover serves which move request.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DispatchRule {
    /// A new request goes to the idle mover closest to the pick-up point; a
    /// mover that becomes free takes the oldest waiting request.
    NearestIdle,
    /// Oldest request first: requests are served strictly in the order they
    /// were made, each by the mover that has been idle longest.
    FirstCome,
    /// A new request goes to the idle mover closest to the pick-up point; a
    /// mover that becomes free takes the waiting request whose pick-up is
    /// nearest to where it is (equally near: the older request).
    NearestRequest,
    /// As [`DispatchRule::NearestIdle`], and a mover that comes free with no
    /// waiting request drives to the reserve department while fewer than
    /// `movers` idle movers are there or on their way; it takes no request
    /// until it arrives.
    Reserve {
        /// Movers to keep at the reserve (1 to the fleet's count).
        movers: u32,
        /// The reserve department; `None`: the department where this fleet
        /// picks up the most loads per hour (from the static from-to chart).
        at: Option<usize>,
    },
}

/// What a mover does after a delivery when no request is waiting, and, for
/// [`IdleRule::AlwaysHome`], even when one is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum IdleRule {
    /// Wait where it dropped its last load.
    Stay,
    /// Take a waiting request straight from where it set its last load
    /// down; only when none is waiting, drive empty back to its home. On the
    /// way home it takes no request; it takes one when it gets there.
    GoHome,
    /// After every delivery drive empty back to its home, even when requests
    /// are waiting, and take no request until it gets there: every move
    /// starts from home.
    AlwaysHome,
    /// Drive empty to the nearest of the fleet's parking locations (equally
    /// near: the first listed); it takes no request until it arrives.
    Park,
}

/// Which of the fleets allowed to serve a move takes it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FleetChoice {
    /// The first listed fleet allowed to serve the move takes it, always.
    FirstListed,
    /// The nearest idle mover of any allowed fleet; with none idle, the
    /// request waits for the first freed mover of any allowed fleet.
    NearestIdle,
}

/// One entry of a fleet's `serves` list: a move matches when its departments
/// equal the ones given (a missing side matches any department).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct MoveFilter {
    /// Department the load is picked up from; `None`: any.
    pub from: Option<usize>,
    /// Department the load is taken to; `None`: any.
    pub to: Option<usize>,
}

/// When a fleet's operators work and how much of their time is lost.
#[derive(Debug, Clone, PartialEq)]
pub struct Operators {
    /// Share of time that is productive (0 < e <= 1). Travel and handling
    /// times are divided by it: it stands for traffic, operator delays and
    /// other lost time, as the efficiency factor of the fleet-size planning
    /// formula does (docs/formulas.md §7).
    pub efficiency: f64,
    /// Working windows (shifts less breaks); `None`: on duty all the time.
    pub duty: Option<DutyCalendar>,
}

/// On-duty windows repeating every `period_s` seconds from the start of the run.
///
/// The loader guarantees `period_s > 0` and `on` sorted, disjoint and not
/// touching, each window `0 <= start < end <= period_s`, at least one, and
/// not the whole period (that is `None` in [`Operators::duty`]).
#[derive(Debug, Clone, PartialEq)]
pub struct DutyCalendar {
    /// Length of one repetition, s.
    pub period_s: f64,
    /// (start, end) offsets in the period of each on-duty window, s.
    pub on: Vec<(f64, f64)>,
    /// The shifts as declared, breaks not taken out, sorted by start: what
    /// results `--by shift` are sliced by (`timebuckets.rs`).
    pub shifts: Vec<(f64, f64)>,
}

/// Where a fleet's movers start and, with [`IdleRule::GoHome`] or
/// [`IdleRule::AlwaysHome`], return.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Home {
    /// A fixed location, whatever the layout.
    Location(usize),
    /// Wherever this department sits in the layout being run.
    Department(usize),
}

/// A fleet of identical movers.
#[derive(Clone, PartialEq)]
pub struct Fleet {
    /// The scenario's name for it.
    pub id: String,
    /// Forklift, tow cart or walker.
    pub kind: MoverKind,
    /// Number of movers (at least 1).
    pub count: u32,
    /// Travel speed with a load, m/s (> 0).
    pub speed_loaded: f64,
    /// Travel speed empty, m/s (> 0).
    pub speed_empty: f64,
    /// Time to pick a load up, s (>= 0).
    pub load_s: f64,
    /// Time to set a load down, s (>= 0).
    pub unload_s: f64,
    /// Cost per mover per hour of the run, busy or idle (currency).
    pub cost_per_h: f64,
    /// Cost per kilometre travelled, loaded or empty (currency).
    pub cost_per_km: f64,
    /// Where the movers start and return to.
    pub home: Home,
    /// Which mover serves which request.
    pub dispatch: DispatchRule,
    /// What an idle mover does.
    pub idle: IdleRule,
    /// `carries[product]`: whether this fleet moves that product's lots.
    pub carries: Vec<bool>,
    /// Acceleration and braking, m/s² (> 0); `None`: speed changes are instantaneous.
    pub accel: Option<f64>,
    /// The moves it may serve (any entry matching); empty: every move.
    pub serves: Vec<MoveFilter>,
    /// Heaviest lot it may carry, kg; `None`: no limit.
    pub max_load_kg: Option<f64>,
    /// Loads a mover can have on board at once (at least 1).
    pub capacity: u32,
    /// Parking locations (location indices) for [`IdleRule::Park`]; empty otherwise.
    pub parking: Vec<usize>,
    /// Efficiency and working hours of the operators.
    pub operators: Operators,
    /// Mover breakdowns; `None`: movers never fail.
    pub breakdowns: Option<Breakdowns>,
    /// Battery charge cycle; `None`: no charging.
    pub charging: Option<Charging>,
    /// Which waiting move request a free mover takes (`requests`): first in
    /// first out, by priority or by due date ([`QueueOrder::ShortestTime`] is refused).
    /// Under `dispatch: nearest-request` the nearest pick-up comes first whatever this is.
    pub request_order: QueueOrder,
}

// Written out for the reason given at `Location`'s: a fleet with the default
// request order prints the debug text of before.
impl fmt::Debug for Fleet {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut s = f.debug_struct("Fleet");
        s.field("id", &self.id)
            .field("kind", &self.kind)
            .field("count", &self.count)
            .field("speed_loaded", &self.speed_loaded)
            .field("speed_empty", &self.speed_empty)
            .field("load_s", &self.load_s)
            .field("unload_s", &self.unload_s)
            .field("cost_per_h", &self.cost_per_h)
            .field("cost_per_km", &self.cost_per_km)
            .field("home", &self.home)
            .field("dispatch", &self.dispatch)
            .field("idle", &self.idle)
            .field("carries", &self.carries)
            .field("accel", &self.accel)
            .field("serves", &self.serves)
            .field("max_load_kg", &self.max_load_kg)
            .field("capacity", &self.capacity)
            .field("parking", &self.parking)
            .field("operators", &self.operators)
            .field("breakdowns", &self.breakdowns)
            .field("charging", &self.charging);
        if self.request_order != QueueOrder::Fifo {
            s.field("request_order", &self.request_order);
        }
        s.finish()
    }
}

impl Fleet {
    /// Expected share of mover time in service: the breakdown availability
    /// times, with charging, every ÷ (every + for), the share left by a
    /// mover that operates all the time (an upper bound on the time lost to
    /// charging, so this is a conservative figure).
    pub fn availability(&self) -> f64 {
        let a = self.breakdowns.as_ref().map_or(1.0, Breakdowns::availability);
        a * self.charging.map_or(1.0, |c| c.every_s / (c.every_s + c.for_s))
    }
}

impl Department {
    /// Share of time a machine is up (1 without breakdowns).
    pub fn availability(&self) -> f64 {
        self.breakdowns.as_ref().map_or(1.0, Breakdowns::availability)
    }

    /// Share of clock time that is scheduled working time (1 without a calendar).
    pub fn scheduled_share(&self) -> f64 {
        self.calendar.as_ref().map_or(1.0, WorkCalendar::scheduled_share)
    }
}

/// Run settings from the scenario (the command line may override them).
#[derive(Clone, Copy, PartialEq)]
pub struct RunSettings {
    /// Simulated time per replication, s, warm-up included.
    pub horizon_s: f64,
    /// Statistics are cleared at this time, s (< horizon).
    pub warmup_s: f64,
    /// Independent replications (at least 1).
    pub replications: u32,
    /// Base seed of every random stream.
    pub seed: u64,
    /// `--allow-overload`: a replication whose WIP passes the overload limit
    /// (docs/formulas.md §22) turns arrivals away instead of stopping. Never
    /// set by a scenario: only the command line sets it.
    pub allow_overload: bool,
}

/// As derived, but `allow_overload` is shown only when set: an experiment's
/// content hash reads the plant's debug form, and a flag that is off (as in
/// every plant a scenario alone gives) must not change the hashes of
/// results written before the flag existed.
impl std::fmt::Debug for RunSettings {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let mut d = f.debug_struct("RunSettings");
        d.field("horizon_s", &self.horizon_s)
            .field("warmup_s", &self.warmup_s)
            .field("replications", &self.replications)
            .field("seed", &self.seed);
        if self.allow_overload {
            d.field("allow_overload", &self.allow_overload);
        }
        d.finish()
    }
}

impl Plant {
    /// Some product assembles kits of components (`parts:`): the assembly metrics are reported.
    pub fn assembles(&self) -> bool {
        self.products.iter().any(|p| !p.kits.is_empty())
    }

    /// Distance in metres between two locations.
    pub fn distance(&self, from_location: usize, to_location: usize) -> f64 {
        self.distance[from_location * self.locations.len() + to_location]
    }

    /// Index of the layout with this name.
    pub fn layout_index(&self, name: &str) -> Option<usize> {
        self.layouts.iter().position(|l| l.name == name)
    }

    /// The first listed fleet that may carry lots of `product` (by `carries`
    /// and load weight), whatever the move; `None` for instant handling or
    /// when none may. Which fleets may serve a given move: [`Plant::fleets_for_move`].
    pub fn fleet_for(&self, product: usize) -> Option<usize> {
        (0..self.fleets().len()).find(|&f| self.fleet_may_carry(f, product))
    }

    /// Whether fleet `f` may carry lots of `product` at all: the product is
    /// in the fleet's `carries` and no heavier than its `max_load`.
    pub fn fleet_may_carry(&self, f: usize, product: usize) -> bool {
        self.fleets()[f].may_carry(product, self.products[product].weight_kg)
    }

    /// Whether fleet `f` may serve the move of a `product` lot from
    /// department `from` to department `to`.
    pub fn fleet_may_serve(&self, f: usize, product: usize, from: usize, to: usize) -> bool {
        self.fleets()[f].may_serve(product, self.products[product].weight_kg, from, to)
    }

    /// The fleets allowed to serve a move, in listed order (empty for instant
    /// handling). With [`FleetChoice::FirstListed`] the first one takes it.
    /// Builds a list: for compiling and the static picture, not the hot loop.
    pub fn fleets_for_move(&self, product: usize, from: usize, to: usize) -> Vec<usize> {
        (0..self.fleets().len()).filter(|&f| self.fleet_may_serve(f, product, from, to)).collect()
    }

    /// Some lot has a due date (a product's `due`, or the order trace's `due`
    /// column): the due-date metrics are reported.
    pub fn has_due_dates(&self) -> bool {
        self.products.iter().any(|p| p.due_within_s.is_some())
            || self.orders.as_ref().is_some_and(|t| t.orders.iter().any(|o| o.due_s.is_some()))
    }

    /// The fleets (empty for instant handling).
    pub fn fleets(&self) -> &[Fleet] {
        match &self.handling {
            Handling::Instant => &[],
            Handling::Fleets(f) => f,
        }
    }
}

impl Plant {
    /// The long-run mean arrival rate of `product`, lots per second, before the
    /// demand factor: what the static picture uses.
    ///
    /// For a profile it is the base rate × the mean factor (the profile
    /// repeats, so every full period brings the same expected number of lots).
    /// For the order trace with `repeat` it is the product's lots in the trace
    /// ÷ the repeat period; without `repeat` it is the lots ordered up to the
    /// scenario's run horizon (`run.horizon`) ÷ that horizon, the average over
    /// the run the scenario describes. A run with another `--horizon` sees
    /// the trace as it is and may average more or less.
    pub fn mean_rate_per_s(&self, product: usize) -> f64 {
        match &self.products[product].demand {
            Demand::Rate { per_s, profile: None } => *per_s,
            Demand::Rate { per_s, profile: Some(pr) } => per_s * pr.mean_factor(),
            Demand::Orders => {
                self.orders.as_ref().map_or(0.0, |t| t.mean_rate_per_s(product, self.run.horizon_s))
            }
        }
    }
}

impl Plant {
    /// An upper bound on the lots (and thinning candidates) one replication
    /// of `horizon_s` seconds at `demand_factor` draws: every rate at its
    /// profile's peak, the order trace played as often as it fits. What the
    /// ceiling [`crate::limits::MAX_EXPECTED_LOTS`] is checked against.
    pub fn lots_bound(&self, horizon_s: f64, demand_factor: f64) -> f64 {
        let rates: f64 = self
            .products
            .iter()
            .map(|p| match &p.demand {
                Demand::Rate { per_s, profile } => per_s * profile.as_ref().map_or(1.0, Profile::peak_factor),
                Demand::Orders => 0.0,
            })
            .sum();
        let trace = self.orders.as_ref().map_or(0.0, |t| {
            let once: f64 = t.orders.iter().map(|o| f64::from(o.quantity)).sum();
            let plays = t.repeat_s.map_or(1.0, |r| (horizon_s / r).floor() + 1.0);
            once * plays
        });
        (rates * horizon_s + trace) * demand_factor
    }
}

impl Profile {
    /// Length of one repetition, s.
    pub fn period_s(&self) -> f64 {
        self.every_s * self.factors.len() as f64
    }

    /// Mean of the factors: the long-run rate is the base rate times this.
    pub fn mean_factor(&self) -> f64 {
        self.factors.iter().sum::<f64>() / self.factors.len() as f64
    }

    /// Largest factor: the thinning sampler draws candidates at base × this.
    pub fn peak_factor(&self) -> f64 {
        self.factors.iter().copied().fold(0.0, f64::max)
    }

    /// The factor in force at time `t` s (>= 0) since the start of the run.
    #[inline]
    pub fn factor_at(&self, t: f64) -> f64 {
        self.factors[profile_index(t, self.every_s, self.factors.len())]
    }
}

/// Which of `n` segments of length `every_s` covers time `t` (>= 0), the
/// pattern repeating: an index computation, so the hot loop needs no search.
#[inline]
pub(crate) fn profile_index(t: f64, every_s: f64, n: usize) -> usize {
    // `as u64` saturates, so a huge t stays in range; t/every is exact enough
    // that only a time within rounding of a boundary could fall either side.
    ((t / every_s) as u64 % n as u64) as usize
}

impl OrderTrace {
    /// Lots of `product` in one play of the trace, before the demand factor.
    pub fn lots(&self, product: usize) -> u64 {
        self.orders.iter().filter(|o| o.product == product).map(|o| u64::from(o.quantity)).sum()
    }

    /// Mean lots per second of `product` over a run of `horizon_s` (see
    /// [`Plant::mean_rate_per_s`] for the rule).
    pub fn mean_rate_per_s(&self, product: usize, horizon_s: f64) -> f64 {
        match self.repeat_s {
            Some(r) => self.lots(product) as f64 / r,
            None => {
                // The simulation releases an order falling exactly on the horizon, so it counts.
                let n: u64 = self
                    .orders
                    .iter()
                    .filter(|o| o.product == product && o.time_s <= horizon_s)
                    .map(|o| u64::from(o.quantity))
                    .sum();
                n as f64 / horizon_s
            }
        }
    }
}

impl Fleet {
    /// Whether this fleet may carry lots of product `product` weighing
    /// `weight_kg`: it is in `carries` and, where both are given, no heavier
    /// than `max_load`.
    pub fn may_carry(&self, product: usize, weight_kg: Option<f64>) -> bool {
        let light_enough = match (weight_kg, self.max_load_kg) {
            (Some(w), Some(max)) => w <= max,
            _ => true,
        };
        self.carries[product] && light_enough
    }

    /// Whether this fleet may serve the move of such a lot from department
    /// `from` to department `to`: it may carry it, and `serves` is absent or
    /// has an entry matching the move.
    pub fn may_serve(&self, product: usize, weight_kg: Option<f64>, from: usize, to: usize) -> bool {
        let matches = |m: &MoveFilter| m.from.is_none_or(|d| d == from) && m.to.is_none_or(|d| d == to);
        self.may_carry(product, weight_kg) && (self.serves.is_empty() || self.serves.iter().any(matches))
    }
}

impl Home {
    /// The home's location index under a layout.
    pub fn location(self, layout: &Layout) -> usize {
        match self {
            Home::Location(l) => l,
            Home::Department(d) => layout.location_of[d],
        }
    }
}

impl DutyCalendar {
    /// Whether the operators are on duty at offset `x` (`0 <= x < period_s`) of a period.
    fn on_at_offset(&self, x: f64) -> bool {
        self.on.iter().any(|&(a, b)| a <= x && x < b)
    }

    /// Whether the operators are on duty at time `t` (>= 0) of the run.
    pub fn on_at(&self, t: f64) -> bool {
        self.on_at_offset(t.rem_euclid(self.period_s))
    }

    /// Offsets in the period (`0 <= x < period_s`, increasing) where the duty
    /// state changes, a change across the end of one period into the next
    /// counting at offset 0. On and off alternate from one to the next.
    pub fn changes(&self) -> Vec<f64> {
        let p = self.period_s;
        let mut out = Vec::with_capacity(2 * self.on.len());
        // Just before the start of a period is the end of the previous one.
        let on_before_start = self.on.last().is_some_and(|&(_, b)| b == p);
        if on_before_start != self.on_at_offset(0.0) {
            out.push(0.0);
        }
        for &(a, b) in &self.on {
            if a > 0.0 {
                out.push(a);
            }
            if b < p {
                out.push(b);
            }
        }
        out
    }

    /// On-duty seconds between times `a` and `b` of the run (`0 <= a <= b`).
    pub fn on_duty_s(&self, a: f64, b: f64) -> f64 {
        let p = self.period_s;
        let per_period: f64 = self.on.iter().map(|&(s, e)| e - s).sum();
        // Whole periods, then what has passed of the windows in the partial one.
        let up_to = |t: f64| {
            let n = (t / p).floor();
            let x = t - n * p;
            n * per_period + self.on.iter().map(|&(s, e)| (x.min(e) - s).max(0.0)).sum::<f64>()
        };
        up_to(b) - up_to(a)
    }
}

#[cfg(test)]
mod tests {
    use super::DutyCalendar;

    const H: f64 = 3600.0;

    #[test]
    fn duty_changes_alternate_across_the_end_of_the_period() {
        // Common practice: a night shift 22–6 h is written as two windows; the
        // day boundary is no change, so it flips only at 6 h and 22 h.
        let night = DutyCalendar {
            period_s: 24.0 * H,
            on: vec![(0.0, 6.0 * H), (22.0 * H, 24.0 * H)],
            shifts: vec![(0.0, 6.0 * H), (22.0 * H, 24.0 * H)],
        };
        assert_eq!(night.changes(), [6.0 * H, 22.0 * H]);
        assert!(night.on_at(0.0) && night.on_at(23.0 * H) && !night.on_at(12.0 * H));
        // A window from 0 that ends before the period: a change at offset 0
        // (coming back each period) and one at 8 h.
        let early =
            DutyCalendar { period_s: 24.0 * H, on: vec![(0.0, 8.0 * H)], shifts: vec![(0.0, 8.0 * H)] };
        assert_eq!(early.changes(), [0.0, 8.0 * H]);
        // A window inside the period: no change at 0.
        let day = DutyCalendar {
            period_s: 24.0 * H,
            on: vec![(6.0 * H, 22.0 * H)],
            shifts: vec![(6.0 * H, 22.0 * H)],
        };
        assert_eq!(day.changes(), [6.0 * H, 22.0 * H]);
        assert!(!day.on_at(0.0));
    }

    #[test]
    fn on_duty_seconds_count_whole_and_partial_periods() {
        // 6–22 h, 16 h a day. From 3 h to 60 h, by hand: day 1 16 h, day 2
        // 16 h, day 3 up to 12 h 6 h; 38 h in all (common practice).
        let day = DutyCalendar {
            period_s: 24.0 * H,
            on: vec![(6.0 * H, 22.0 * H)],
            shifts: vec![(6.0 * H, 22.0 * H)],
        };
        assert!((day.on_duty_s(3.0 * H, 60.0 * H) - 38.0 * H).abs() < 1e-6);
        assert!((day.on_duty_s(0.0, 24.0 * H) - 16.0 * H).abs() < 1e-6);
        assert!((day.on_duty_s(10.0 * H, 10.0 * H)).abs() < 1e-9);
    }
}

/// What a layout search must respect, from the scenario's `search:` section.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SearchRules {
    /// `pinned[department]`: the location it must keep. Docks are pinned
    /// where the first layout puts them unless the scenario pins them elsewhere.
    pub pinned: Vec<Option<usize>>,
    /// `keep_empty[location]`: no department may take it.
    pub keep_empty: Vec<bool>,
    /// Department pairs that must sit in neighbouring locations.
    pub adjacent: Vec<(usize, usize)>,
    /// Department pairs that must not sit in neighbouring locations.
    pub apart: Vec<(usize, usize)>,
    /// Two locations at most this far apart (m, by the scenario's distances)
    /// are neighbours; needed when there are adjacency rules.
    pub neighbour_distance_m: Option<f64>,
    /// (department, location, cost per hour) of putting that department there.
    pub floor_costs: Vec<(usize, usize, f64)>,
}

// Crews: named pools of people that departments' operations and repairs need
// (read by scenario/crews.rs, run by sim/model/crews.rs).

/// A named pool of identical people.
#[derive(Debug, Clone, PartialEq)]
pub struct Crew {
    /// The scenario's name for it.
    pub id: String,
    /// People in the crew (at least 1).
    pub size: u32,
    /// Cost of one person per hour on the payroll (the scenario's currency),
    /// paid for the whole window, on duty or not, busy or idle.
    pub cost_per_h: f64,
    /// When the crew works (shifts less breaks); `None`: on duty all the time.
    pub duty: Option<DutyCalendar>,
    /// Department the crew waits at between tasks (for walking to repairs); `None`: no walking.
    pub home: Option<usize>,
    /// Walking speed, m/s, over the layout's distances from `home`; `None`: no walking.
    pub walk_speed: Option<f64>,
}

impl Crew {
    /// The long-run share of time the crew is on duty (1 without shifts).
    pub fn on_duty_share(&self) -> f64 {
        self.duty.as_ref().map_or(1.0, |d| d.on.iter().map(|&(a, b)| b - a).sum::<f64>() / d.period_s)
    }
}

/// What part of an operation holds a person.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PersonFor {
    /// Only the setup (a change of product); an operation without a setup needs nobody.
    Setup,
    /// The setup, if any, and the whole processing time.
    Operation,
    /// A loading time of its own at the start of the operation, before any setup and processing.
    Loading,
}

impl PersonFor {
    /// The word the scenario uses.
    pub fn word(self) -> &'static str {
        match self {
            PersonFor::Setup => "setup",
            PersonFor::Operation => "operation",
            PersonFor::Loading => "loading",
        }
    }
}

/// A department's need for a person from a crew.
#[derive(Debug, Clone, PartialEq)]
pub struct People {
    /// Index into [`crate::plant::Plant::crews`].
    pub crew: usize,
    /// Which part of the operation holds the person.
    pub task: PersonFor,
    /// The loading time (`task` is [`PersonFor::Loading`] exactly when this is set).
    pub loading: Option<Dist>,
}
