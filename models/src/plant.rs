//! The compiled plant: an immutable, index-based description built from a scenario file.
//!
//! Everything here has been validated: names are resolved to indices, times are
//! seconds, speeds are metres per second, rates are per second. The simulation
//! and the static analysis read only this; nothing in it is a string that the
//! hot loop needs to look at.

use crate::dist::Dist;

/// A whole plant as the scenario describes it, with every layout it names.
#[derive(Debug, Clone)]
pub struct Plant {
    /// Free-text name shown in reports.
    pub name: String,
    /// Slots on the floor where a department can sit.
    pub locations: Vec<Location>,
    /// How distances between locations were obtained (for reports).
    pub distance_rule: DistanceRule,
    /// Location-to-location distance in metres, row-major, `locations.len()` squared.
    pub distance: Vec<f64>,
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
}

/// A slot on the floor with its pick-up/drop-off point.
#[derive(Debug, Clone)]
pub struct Location {
    /// The scenario's name for it.
    pub id: String,
    /// Pick-up/drop-off point, metres.
    pub x: f64,
    /// Pick-up/drop-off point, metres.
    pub y: f64,
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
#[derive(Debug, Clone)]
pub struct Department {
    /// The scenario's name for it.
    pub id: String,
    /// Work centre or dock.
    pub role: DepartmentRole,
    /// Parallel identical machines (1 or more for work departments; 0 for docks).
    pub machines: u32,
}

/// One candidate assignment of departments to locations.
#[derive(Debug, Clone)]
pub struct Layout {
    /// The scenario's name for it.
    pub name: String,
    /// `location_of[department]` is the index of that department's location.
    /// Every department has one and no two share one.
    pub location_of: Vec<usize>,
}

/// A product: its demand and its routing.
#[derive(Debug, Clone)]
pub struct Product {
    /// The scenario's name for it.
    pub id: String,
    /// Where its lots come from: a Poisson rate (maybe varying by a profile) or the order trace.
    pub demand: Demand,
    /// The receiving dock (department index) where lots of this product enter.
    pub enters_at: usize,
    /// Operations; `routing[0]` is the first one visited.
    pub routing: Vec<Operation>,
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
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Order {
    /// Seconds from the start of the run (of each play of the trace, with `repeat`).
    pub time_s: f64,
    /// Product index.
    pub product: usize,
    /// Lots released at once at the product's receiving dock (at least 1),
    /// before the demand factor.
    pub quantity: u32,
}

/// One step of a routing.
#[derive(Debug, Clone)]
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
#[derive(Debug, Clone)]
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
    /// Requests are served strictly in the order they were made, each by the
    /// mover that has been idle longest.
    FirstCome,
}

/// What a mover does when it has no request to serve.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum IdleRule {
    /// Wait where it dropped its last load.
    Stay,
    /// Drive empty back to its home; it takes no request until it arrives.
    GoHome,
}

/// Where a fleet's movers start and, with [`IdleRule::GoHome`], return.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Home {
    /// A fixed location, whatever the layout.
    Location(usize),
    /// Wherever this department sits in the layout being run.
    Department(usize),
}

/// A fleet of identical movers.
#[derive(Debug, Clone)]
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
}

/// Run settings from the scenario (the command line may override them).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RunSettings {
    /// Simulated time per replication, s, warm-up included.
    pub horizon_s: f64,
    /// Statistics are cleared at this time, s (< horizon).
    pub warmup_s: f64,
    /// Independent replications (at least 1).
    pub replications: u32,
    /// Base seed of every random stream.
    pub seed: u64,
}

impl Plant {
    /// Distance in metres between two locations.
    pub fn distance(&self, from_location: usize, to_location: usize) -> f64 {
        self.distance[from_location * self.locations.len() + to_location]
    }

    /// Index of the layout with this name.
    pub fn layout_index(&self, name: &str) -> Option<usize> {
        self.layouts.iter().position(|l| l.name == name)
    }

    /// The fleet that carries lots of `product`: the first listed that may.
    /// `None` for instant handling.
    pub fn fleet_for(&self, product: usize) -> Option<usize> {
        match &self.handling {
            Handling::Instant => None,
            Handling::Fleets(fleets) => fleets.iter().position(|f| f.carries[product]),
        }
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

impl Home {
    /// The home's location index under a layout.
    pub fn location(self, layout: &Layout) -> usize {
        match self {
            Home::Location(l) => l,
            Home::Department(d) => layout.location_of[d],
        }
    }
}
