//! The plant simulation: one replication of one layout, event by event.
//!
//! [`Plan`] is built once per (plant, layout) and shared by every replication;
//! [`simulate`] runs one replication and returns its [`RepStats`]. The model's
//! state is index-based: lots live in a slab, queues hold lot indices, and no
//! event allocates once the queues have grown to their working size.

mod arrivals;
mod model;
mod stats;

pub use model::{simulate, simulate_releases, simulate_wip_series};
pub use stats::{FleetStats, RepStats, TICK_S};

use crate::plant::{Demand, DepartmentRole, DispatchRule, Handling, IdleRule, Plant};

/// What a replication needs beyond the plant: which layout, how long, which seed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RunSpec {
    /// Layout index into `Plant::layouts`.
    pub layout: usize,
    /// Simulated time per replication, s.
    pub horizon_s: f64,
    /// Statistics are cleared at this time, s.
    pub warmup_s: f64,
    /// Multiplier on every product's demand: on its rate, or on each trace
    /// order's quantity (q·f lots: the whole part, plus one more with
    /// probability equal to the fraction).
    pub demand_factor: f64,
    /// Base seed of every stream.
    pub seed: u64,
}

/// The plant compiled for one layout: flat arrays the event handlers index into.
#[derive(Debug, Clone)]
pub struct Plan {
    pub(crate) n_locations: usize,
    pub(crate) distance: Vec<f64>,
    pub(crate) dept_location: Vec<usize>,
    pub(crate) dept_role: Vec<DepartmentRole>,
    pub(crate) machines: Vec<u32>,
    pub(crate) products: Vec<PlanProduct>,
    pub(crate) fleets: Vec<PlanFleet>,
    pub(crate) instant: bool,
    /// The order trace (empty without one), in time order.
    pub(crate) orders: Vec<PlanOrder>,
    /// Play the trace again every this many seconds; `None`: once.
    pub(crate) order_repeat_s: Option<f64>,
}

/// How a product's lots are released.
#[derive(Debug, Clone)]
pub(crate) enum PlanArrivals {
    /// Exponential gaps at this rate (before the demand factor).
    Constant { rate_per_s: f64 },
    /// Lewis–Shedler thinning: candidates at `peak_per_s` (before the demand
    /// factor), each kept with probability `accept[k]` (factor ÷ peak factor)
    /// of the profile segment `k` it falls in.
    Thinned { peak_per_s: f64, every_s: f64, accept: Vec<f64> },
    /// Only by the order trace.
    Orders,
}

/// One order of the trace, as the event handler reads it.
#[derive(Debug, Clone, Copy)]
pub(crate) struct PlanOrder {
    pub(crate) time_s: f64,
    pub(crate) product: u32,
    pub(crate) quantity: u32,
}

#[derive(Debug, Clone)]
pub(crate) struct PlanProduct {
    pub(crate) arrivals: PlanArrivals,
    pub(crate) enters_at: usize,
    pub(crate) fleet: usize,
    pub(crate) ops: Vec<PlanOp>,
}

#[derive(Debug, Clone)]
pub(crate) struct PlanOp {
    pub(crate) department: usize,
    pub(crate) time: Option<crate::dist::Dist>,
    /// (next operation, cumulative probability); empty at shipping.
    pub(crate) next: Vec<(usize, f64)>,
}

#[derive(Debug, Clone)]
pub(crate) struct PlanFleet {
    pub(crate) count: u32,
    pub(crate) speed_loaded: f64,
    pub(crate) speed_empty: f64,
    pub(crate) load_s: f64,
    pub(crate) unload_s: f64,
    pub(crate) home_location: usize,
    pub(crate) dispatch: DispatchRule,
    pub(crate) idle: IdleRule,
}

impl Plan {
    /// Compile `plant` under layout `layout` (an index into its layouts).
    ///
    /// # Panics
    /// If `layout` is out of range (callers resolve names first).
    pub fn new(plant: &Plant, layout: usize) -> Plan {
        let lay = &plant.layouts[layout];
        let products = plant
            .products
            .iter()
            .enumerate()
            .map(|(p, prod)| PlanProduct {
                arrivals: plan_arrivals(&prod.demand),
                enters_at: prod.enters_at,
                fleet: plant.fleet_for(p).unwrap_or(0),
                ops: prod
                    .routing
                    .iter()
                    .map(|op| {
                        let mut acc = 0.0;
                        let mut next: Vec<(usize, f64)> = op
                            .next
                            .iter()
                            .map(|&(j, p)| {
                                acc += p;
                                (j, acc)
                            })
                            .collect();
                        // Guard against rounding: the last branch catches every draw.
                        if let Some(last) = next.last_mut() {
                            last.1 = f64::INFINITY;
                        }
                        PlanOp { department: op.department, time: op.time.clone(), next }
                    })
                    .collect(),
            })
            .collect();
        let fleets = plant
            .fleets()
            .iter()
            .map(|f| PlanFleet {
                count: f.count,
                speed_loaded: f.speed_loaded,
                speed_empty: f.speed_empty,
                load_s: f.load_s,
                unload_s: f.unload_s,
                home_location: f.home.location(lay),
                dispatch: f.dispatch,
                idle: f.idle,
            })
            .collect();
        Plan {
            n_locations: plant.locations.len(),
            distance: plant.distance.clone(),
            dept_location: lay.location_of.clone(),
            dept_role: plant.departments.iter().map(|d| d.role).collect(),
            machines: plant.departments.iter().map(|d| d.machines).collect(),
            products,
            fleets,
            instant: matches!(plant.handling, Handling::Instant),
            orders: plant.orders.as_ref().map_or_else(Vec::new, |t| {
                t.orders
                    .iter()
                    .map(|o| PlanOrder { time_s: o.time_s, product: o.product as u32, quantity: o.quantity })
                    .collect()
            }),
            order_repeat_s: plant.orders.as_ref().and_then(|t| t.repeat_s),
        }
    }

    #[inline]
    pub(crate) fn dist(&self, a: usize, b: usize) -> f64 {
        self.distance[a * self.n_locations + b]
    }
}

/// The arrival process of a product's demand.
fn plan_arrivals(demand: &Demand) -> PlanArrivals {
    match demand {
        Demand::Rate { per_s, profile: None } => PlanArrivals::Constant { rate_per_s: *per_s },
        Demand::Rate { per_s, profile: Some(pr) } => {
            let peak = pr.peak_factor();
            if pr.factors.iter().all(|&f| f == peak) {
                // A flat profile is a constant rate: the plain exponential gaps
                // give the same process with half the draws.
                PlanArrivals::Constant { rate_per_s: per_s * peak }
            } else {
                PlanArrivals::Thinned {
                    peak_per_s: per_s * peak,
                    every_s: pr.every_s,
                    accept: pr.factors.iter().map(|&f| f / peak).collect(),
                }
            }
        }
        Demand::Orders => PlanArrivals::Orders,
    }
}
