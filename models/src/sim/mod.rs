//! The plant simulation: one replication of one layout, event by event.
//!
//! [`Plan`] is built once per (plant, layout) and shared by every replication;
//! [`simulate`] runs one replication and returns its [`RepStats`]. The model's
//! state is index-based: lots live in a slab, queues hold lot indices, and no
//! event allocates once the queues have grown to their working size.

mod arrivals;
mod buckets;
mod model;
pub mod overload;
mod stats;
pub mod trace;

pub use model::trace::simulate_traced;
pub use model::{simulate, simulate_releases, simulate_scan_steps, simulate_wip_series};
pub use stats::{
    CrewRep, Deadlock, DueSet, DueStats, FleetStats, KitStats, Overload, RepStats, SegmentStats, TICK_S,
};

use crate::plant::{
    AltRule, Breakdowns, Charging, Demand, DepartmentRole, DispatchRule, FleetChoice, Handling, IdleRule,
    LoadStart, Plant, Setups, ShiftEnd,
};
use crate::travel::travel_time;

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
    /// The fleets allowed to serve each move, in listed order, one run after
    /// another; a [`FleetSet`] names a run.
    pub(crate) fleet_sets: Vec<u32>,
    /// `fleet_choice: nearest-idle`: a request goes to the nearest idle mover
    /// of any allowed fleet, and waits in every allowed fleet's list.
    pub(crate) nearest_fleet: bool,
    /// Departments in the plant (`dept_location` may hold as many again:
    /// the overflow areas, see `overflow`).
    pub(crate) n_departments: usize,
    /// Some department has finite staging: the blocking rules run. When
    /// false, the event handlers take exactly the paths they took before
    /// staging existed, so seeded results do not change.
    pub(crate) staging: bool,
    /// Most lots waiting for a machine, per department (`u32::MAX`: unlimited).
    pub(crate) inbound_cap: Vec<u32>,
    /// Most finished lots waiting to leave, per department (`u32::MAX`: unlimited).
    pub(crate) outbound_cap: Vec<u32>,
    /// Some department has an overflow location. Then a lot dropped at the
    /// overflow area of department `d` sits at pseudo-department
    /// `n_departments + d`, whose location is `dept_location[n_departments + d]`.
    pub(crate) overflow: bool,
    /// Per department: it has an overflow location.
    pub(crate) has_overflow: Vec<bool>,
    /// Per department: a receiving dock that turns lots away when the first department is full.
    pub(crate) turn_away: Vec<bool>,
    /// Machine breakdowns per department.
    pub(crate) breakdowns: Vec<Option<Breakdowns>>,
    /// A set holding only fleet `f`, for the return trip from an overflow area.
    pub(crate) single_fleet: Vec<FleetSet>,
    /// Per department: each machine is tracked on its own (breakdowns, a calendar or setups).
    /// Departments without keep the plain busy count, as before these existed.
    pub(crate) tracked: Vec<bool>,
    /// Working hours per department.
    pub(crate) calendars: Vec<Option<PlanCalendar>>,
    /// Setup times per department.
    pub(crate) setups: Vec<Option<Setups>>,
    /// Some product's lots move in several unit loads.
    pub(crate) split: bool,
    /// The aisle network when movers travel it segment by segment (a
    /// capacity, a speed limit or a zone somewhere); `None`: one leg per trip.
    pub(crate) aisles: Option<crate::network::AisleNetwork>,
    /// When WIP has grown past any level a stable plant reaches: stop, or turn arrivals away.
    pub(crate) overload: overload::OverloadRule,
    /// Results per time bucket as well (`--by`); `None`: the whole window only.
    pub(crate) buckets: Option<crate::timebuckets::Grid>,
    /// Some product has a random first operation or alternatives chosen by
    /// the plant's state: lots go through `model/alternatives.rs`. When
    /// false the handlers take exactly their paths of before.
    pub(crate) alternatives: bool,
    /// The rule of each group of alternatives, all products' in turn ([`PlanOp::group`]).
    pub(crate) groups: Vec<AltRule>,
    /// Per department: the shared queue of the first-free group it belongs to, or `u32::MAX`.
    pub(crate) pool_of: Vec<u32>,
    /// First-free groups' shared queues (one per set of departments).
    pub(crate) n_pools: usize,
    /// Per department (overflow areas included), the order its waiting lots are served in.
    pub(crate) queue_order: Vec<crate::plant::QueueOrder>,
    /// Some lot has a due date: each lot's is kept, and lateness recorded at shipping.
    pub(crate) due: bool,
    /// Some department is a batch machine: lots reaching one go through
    /// `model/batches.rs`. When false the handlers take their paths of before.
    pub(crate) batched: bool,
    /// Per department, its batch rules (`None`: one lot at a time).
    pub(crate) batch: Vec<Option<crate::plant::Batching>>,
    /// Some product assembles kits: lots go through `model/assembly.rs` at
    /// their arrival. When false the handlers take exactly their paths of before.
    pub(crate) assembly: bool,
    /// The kits and who feeds them (empty unless `assembly`).
    pub(crate) kits: model::assembly::KitPlan,
    /// The plant has crews: the handlers call `model/crews.rs`. When false
    /// they take exactly their paths of before.
    pub(crate) has_crews: bool,
    /// Crews, with their duty in the handlers' form.
    pub(crate) crews: Vec<PlanCrew>,
    /// Per department, the person its operations need.
    pub(crate) people: Vec<Option<crate::plant::People>>,
    /// Per department, the crew its repairs need.
    pub(crate) technicians: Vec<Option<usize>>,
}

/// A crew as the event handlers read it.
#[derive(Debug, Clone)]
pub(crate) struct PlanCrew {
    pub(crate) size: u32,
    pub(crate) duty: Option<PlanDuty>,
    pub(crate) home: Option<usize>,
    pub(crate) walk_speed: Option<f64>,
}

/// A department's working hours as the event handlers read them.
#[derive(Debug, Clone)]
pub(crate) struct PlanCalendar {
    pub(crate) duty: PlanDuty,
    /// Pause operations under way at the end of a working window (else finish them).
    pub(crate) pause: bool,
}

/// The fleets allowed to serve one move: `Plan::fleet_sets[start..start + len]`.
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct FleetSet {
    pub(crate) start: u32,
    pub(crate) len: u32,
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
    /// When its lots are due (from the start of the play); NaN: the product's allowance.
    pub(crate) due_s: f64,
}

#[derive(Debug, Clone)]
pub(crate) struct PlanProduct {
    pub(crate) arrivals: PlanArrivals,
    pub(crate) enters_at: usize,
    /// Fleets allowed to serve the move from the receiving dock to the first step.
    pub(crate) entry: FleetSet,
    /// With a random first operation or alternatives at the first step:
    /// (first operation, cumulative probability, fleets), as `PlanOp::next`;
    /// empty otherwise (then `entry` serves operation 0).
    pub(crate) first: Vec<(usize, f64, FleetSet)>,
    pub(crate) ops: Vec<PlanOp>,
    /// Lots in several unit loads: (quantity, transfer batch, start on the first load).
    pub(crate) split: Option<(u32, u32, bool)>,
    /// Key under a priority order: its `priority`, or infinity without one.
    pub(crate) priority: f64,
    /// Due this long after release, s; NaN: no allowance.
    pub(crate) due_within_s: f64,
}

#[derive(Debug, Clone)]
pub(crate) struct PlanOp {
    pub(crate) department: usize,
    pub(crate) time: Option<crate::dist::Dist>,
    /// (next operation, cumulative probability, fleets allowed to serve the
    /// move there: an empty set when it is in the same department); empty at
    /// shipping. The fleets sit beside the branch so that choosing one reads
    /// one cache line.
    pub(crate) next: Vec<(usize, f64, FleetSet)>,
    /// The group of alternatives it belongs to (index into `Plan::groups`),
    /// or `u32::MAX`. A branch list holds a group's operations side by side.
    pub(crate) group: u32,
    /// Expected processing time, s: the key of `shortest-time` (read, not
    /// drawn, so ordering draws nothing from the lot's stream).
    pub(crate) mean_s: f64,
}

#[derive(Debug, Clone)]
pub(crate) struct PlanFleet {
    pub(crate) count: u32,
    pub(crate) speed_loaded: f64,
    pub(crate) speed_empty: f64,
    pub(crate) accel: Option<f64>,
    pub(crate) efficiency: f64,
    /// Speeds × efficiency: constant-speed travel is one division, d ÷ this.
    pub(crate) pace_loaded: f64,
    pub(crate) pace_empty: f64,
    /// Loading time, s, divided by the efficiency.
    pub(crate) load_s: f64,
    /// Unloading time, s, divided by the efficiency.
    pub(crate) unload_s: f64,
    pub(crate) home_location: usize,
    pub(crate) dispatch: DispatchRule,
    pub(crate) idle: IdleRule,
    pub(crate) capacity: u32,
    /// Parking locations, in listed order ([`IdleRule::Park`]).
    pub(crate) parking: Vec<usize>,
    /// Location of the reserve ([`DispatchRule::Reserve`]; the home otherwise).
    pub(crate) reserve_location: usize,
    /// Movers to keep at the reserve (0 without [`DispatchRule::Reserve`]).
    pub(crate) reserve_movers: u32,
    /// The operators' working hours; `None`: always on duty.
    pub(crate) duty: Option<PlanDuty>,
    /// Mover breakdowns.
    pub(crate) breakdowns: Option<Breakdowns>,
    /// Battery charge cycle.
    pub(crate) charging: Option<Charging>,
    /// Breakdowns or charging: movers go out of service, and operating time is kept per mover.
    pub(crate) service: bool,
    /// Which waiting request a free mover takes.
    pub(crate) request_order: crate::plant::QueueOrder,
}

/// A duty calendar as the event handlers read it.
#[derive(Debug, Clone)]
pub(crate) struct PlanDuty {
    pub(crate) period_s: f64,
    /// Offsets in the period where the duty state flips, increasing.
    pub(crate) changes: Vec<f64>,
    /// On duty at time 0.
    pub(crate) on_at_start: bool,
}

/// Where a replication stands in a repeating [`PlanDuty`]: the period and
/// the index of its next change (a department's shifts, a fleet's operators).
#[derive(Debug, Clone, Copy, Default)]
pub(crate) struct DutyCursor {
    period: u64,
    index: usize,
}

impl DutyCursor {
    /// The cursor at time 0. A change at offset 0 of the first period is
    /// the state at time 0 itself (`on_at_start`), so it is skipped.
    pub(crate) fn start(duty: &PlanDuty) -> DutyCursor {
        let n = duty.changes.len();
        if duty.changes[0] == 0.0 {
            DutyCursor { period: u64::from(n == 1), index: 1 % n }
        } else {
            DutyCursor::default()
        }
    }

    /// The time of the next change, and advance past it.
    pub(crate) fn advance(&mut self, duty: &PlanDuty) -> f64 {
        let t = self.period as f64 * duty.period_s + duty.changes[self.index];
        self.index += 1;
        if self.index == duty.changes.len() {
            self.index = 0;
            self.period += 1;
        }
        t
    }
}

impl PlanFleet {
    /// Seconds to drive `d` metres, loaded or empty: the trapezoidal profile
    /// with an acceleration (docs/formulas.md §8), constant speed without, divided
    /// by the operators' efficiency. Exactly d/v for the defaults.
    #[inline]
    pub(crate) fn travel_s(&self, d: f64, loaded: bool) -> f64 {
        match self.accel {
            // v × 1 = v, so without an efficiency this is exactly d/v.
            None => d / if loaded { self.pace_loaded } else { self.pace_empty },
            Some(_) => {
                let v = if loaded { self.speed_loaded } else { self.speed_empty };
                travel_time(d, v, self.accel) / self.efficiency
            }
        }
    }
}

impl Plan {
    /// Compile `plant` under layout `layout` (an index into its layouts).
    ///
    /// # Panics
    /// If `layout` is out of range (callers resolve names first).
    pub fn new(plant: &Plant, layout: usize) -> Plan {
        let lay = &plant.layouts[layout];
        let mut fleet_sets: Vec<u32> = Vec::new();
        // The allowed fleets of the move of a `p` lot from department `a` to
        // `b`, appended to `fleet_sets`; the empty set when it stays.
        let mut set = |p: usize, a: usize, b: usize| {
            if a == b {
                return FleetSet::default();
            }
            let start = fleet_sets.len() as u32;
            fleet_sets.extend(plant.fleets_for_move(p, a, b).iter().map(|&f| f as u32));
            FleetSet { start, len: fleet_sets.len() as u32 - start }
        };
        let mut products = Vec::with_capacity(plant.products.len());
        let mut groups = Vec::new();
        for (p, prod) in plant.products.iter().enumerate() {
            let entry = set(p, prod.enters_at, prod.routing[0].department);
            let mut group_of = vec![u32::MAX; prod.routing.len()];
            for g in prod.alternatives.iter().filter(|g| g.rule.is_dynamic()) {
                for &o in &g.ops {
                    group_of[o] = groups.len() as u32;
                }
                groups.push(g.rule);
            }
            let plain_first = prod.first == [(0, 1.0)] && group_of[0] == u32::MAX;
            let mut acc = 0.0;
            let mut first: Vec<(usize, f64, FleetSet)> = if plain_first {
                Vec::new()
            } else {
                prod.first
                    .iter()
                    .map(|&(j, pr)| {
                        acc += pr;
                        (j, acc, set(p, prod.enters_at, prod.routing[j].department))
                    })
                    .collect()
            };
            if let Some(last) = first.last_mut() {
                last.1 = f64::INFINITY;
            }
            let mut ops = Vec::with_capacity(prod.routing.len());
            for op in &prod.routing {
                let mut acc = 0.0;
                let mut next: Vec<(usize, f64, FleetSet)> = op
                    .next
                    .iter()
                    .map(|&(j, pr)| {
                        acc += pr;
                        (j, acc, set(p, op.department, prod.routing[j].department))
                    })
                    .collect();
                // Guard against rounding: the last branch catches every draw.
                if let Some(last) = next.last_mut() {
                    last.1 = f64::INFINITY;
                }
                let group = group_of[ops.len()];
                let mean_s = op.time.as_ref().map_or(0.0, crate::dist::Dist::mean);
                ops.push(PlanOp { department: op.department, time: op.time.clone(), next, group, mean_s });
            }
            products.push(PlanProduct {
                arrivals: plan_arrivals(&prod.demand),
                enters_at: prod.enters_at,
                entry,
                first,
                ops,
                split: prod
                    .lot
                    .filter(|l| l.loads() > 1)
                    .map(|l| (l.quantity, l.transfer_batch, l.start == LoadStart::FirstLoad)),
                priority: prod.priority.map_or(f64::INFINITY, f64::from),
                due_within_s: prod.due_within_s.unwrap_or(f64::NAN),
            });
        }
        // The busiest pick-up department of each fleet, for a reserve with no `at`.
        let needs_busiest =
            plant.fleets().iter().any(|f| matches!(f.dispatch, DispatchRule::Reserve { at: None, .. }));
        let pickups = if needs_busiest { crate::analysis::fleet_pickups_per_h(plant) } else { Vec::new() };
        let fleets = plant
            .fleets()
            .iter()
            .enumerate()
            .map(|(f, fl)| {
                let e = fl.operators.efficiency;
                let home_location = fl.home.location(lay);
                let (reserve_movers, reserve_location) = match fl.dispatch {
                    DispatchRule::Reserve { movers, at: Some(d) } => (movers, lay.location_of[d]),
                    DispatchRule::Reserve { movers, at: None } => {
                        // The first department with the most pick-ups; the home
                        // if the fleet is expected to pick up nothing.
                        let row = &pickups[f];
                        let mut best: Option<usize> = None;
                        for (d, &n) in row.iter().enumerate() {
                            if n > 0.0 && best.is_none_or(|k| n > row[k]) {
                                best = Some(d);
                            }
                        }
                        (movers, best.map_or(home_location, |d| lay.location_of[d]))
                    }
                    _ => (0, home_location),
                };
                PlanFleet {
                    count: fl.count,
                    speed_loaded: fl.speed_loaded,
                    speed_empty: fl.speed_empty,
                    accel: fl.accel,
                    efficiency: e,
                    pace_loaded: fl.speed_loaded * e,
                    pace_empty: fl.speed_empty * e,
                    load_s: fl.load_s / e,
                    unload_s: fl.unload_s / e,
                    home_location,
                    dispatch: fl.dispatch,
                    request_order: fl.request_order,
                    idle: fl.idle,
                    capacity: fl.capacity,
                    parking: fl.parking.clone(),
                    reserve_location,
                    reserve_movers,
                    duty: fl.operators.duty.as_ref().map(|d| PlanDuty {
                        period_s: d.period_s,
                        changes: d.changes(),
                        on_at_start: d.on_at(0.0),
                    }),
                    breakdowns: fl.breakdowns.clone(),
                    charging: fl.charging,
                    service: fl.breakdowns.is_some() || fl.charging.is_some(),
                }
            })
            .collect();
        let nd = plant.departments.len();
        let overflow = plant.departments.iter().any(|d| d.staging.overflow.is_some());
        let mut dept_location = lay.location_of.clone();
        if overflow {
            // The overflow areas as pseudo-departments nd..2·nd (a department's
            // own location where it has none; nothing is ever dropped there).
            dept_location.extend(
                plant
                    .departments
                    .iter()
                    .enumerate()
                    .map(|(d, dep)| dep.staging.overflow.unwrap_or(lay.location_of[d])),
            );
        }
        let cap = |c: Option<u32>| c.unwrap_or(u32::MAX);
        let single_fleet = (0..plant.fleets().len())
            .map(|f| {
                let start = fleet_sets.len() as u32;
                fleet_sets.push(f as u32);
                FleetSet { start, len: 1 }
            })
            .collect();
        let split = plant.products.iter().any(|p| p.lot.is_some_and(|l| l.loads() > 1));
        let plan_duty = |d: &crate::plant::DutyCalendar| PlanDuty {
            period_s: d.period_s,
            changes: d.changes(),
            on_at_start: d.on_at(0.0),
        };
        let (pool_of, n_pools) = first_free_pools(plant);
        let queue_order = plant.departments.iter().map(|d| d.queue_order);
        // Overflow areas hold lots for a mover, never for a machine: first in first out.
        let queue_order =
            queue_order.chain((0..if overflow { nd } else { 0 }).map(|_| Default::default())).collect();
        Plan {
            alternatives: !groups.is_empty() || products.iter().any(|p| !p.first.is_empty()),
            groups,
            pool_of,
            n_pools,
            queue_order,
            due: plant.has_due_dates(),
            batched: plant.departments.iter().any(|d| d.batch.is_some()),
            batch: plant.departments.iter().map(|d| d.batch.clone()).collect(),
            assembly: plant.assembles(),
            kits: model::assembly::KitPlan::new(plant),
            buckets: None,
            overload: overload::OverloadRule::new(plant, layout),
            aisles: plant.aisles.as_ref().filter(|n| n.needs_simulation()).cloned(),
            tracked: plant
                .departments
                .iter()
                .map(|d| {
                    d.role == DepartmentRole::Work
                        && (d.breakdowns.is_some()
                            || d.calendar.is_some()
                            || d.setups.is_some()
                            || d.people.is_some())
                })
                .collect(),
            has_crews: !plant.crews.is_empty(),
            crews: plant
                .crews
                .iter()
                .map(|c| PlanCrew {
                    size: c.size,
                    duty: c.duty.as_ref().map(&plan_duty),
                    home: c.home,
                    walk_speed: c.walk_speed,
                })
                .collect(),
            people: plant.departments.iter().map(|d| d.people.clone()).collect(),
            technicians: plant.departments.iter().map(|d| d.technicians).collect(),
            calendars: plant
                .departments
                .iter()
                .map(|d| {
                    d.calendar.as_ref().map(|c| PlanCalendar {
                        duty: plan_duty(&c.duty),
                        pause: c.at_shift_end == ShiftEnd::Pause,
                    })
                })
                .collect(),
            setups: plant.departments.iter().map(|d| d.setups.clone()).collect(),
            split,
            n_departments: nd,
            staging: plant.departments.iter().any(|d| d.staging.is_limited()),
            inbound_cap: plant.departments.iter().map(|d| cap(d.staging.inbound)).collect(),
            outbound_cap: plant.departments.iter().map(|d| cap(d.staging.outbound)).collect(),
            overflow,
            has_overflow: plant.departments.iter().map(|d| d.staging.overflow.is_some()).collect(),
            turn_away: plant.departments.iter().map(|d| d.turn_away).collect(),
            breakdowns: plant.departments.iter().map(|d| d.breakdowns.clone()).collect(),
            single_fleet,
            n_locations: plant.locations.len(),
            distance: plant.distance.clone(),
            dept_location,
            dept_role: plant.departments.iter().map(|d| d.role).collect(),
            machines: plant.departments.iter().map(|d| d.machines).collect(),
            products,
            fleets,
            instant: matches!(plant.handling, Handling::Instant),
            orders: plant.orders.as_ref().map_or_else(Vec::new, |t| {
                t.orders
                    .iter()
                    .map(|o| PlanOrder {
                        time_s: o.time_s,
                        product: o.product as u32,
                        quantity: o.quantity,
                        due_s: o.due_s.unwrap_or(f64::NAN),
                    })
                    .collect()
            }),
            order_repeat_s: plant.orders.as_ref().and_then(|t| t.repeat_s),
            fleet_sets,
            nearest_fleet: plant.fleet_choice == FleetChoice::NearestIdle,
        }
    }

    /// Report every replication per time bucket of `grid` too (`RepStats::by`).
    /// The grid must be built for the horizon and warm-up the plan runs with.
    pub fn with_buckets(mut self, grid: crate::timebuckets::Grid) -> Plan {
        self.buckets = Some(grid);
        self
    }

    /// The time buckets replications report by, if any.
    pub fn buckets(&self) -> Option<&crate::timebuckets::Grid> {
        self.buckets.as_ref()
    }

    /// The fleets in a set.
    #[inline]
    pub(crate) fn fleets_in(&self, s: FleetSet) -> &[u32] {
        &self.fleet_sets[s.start as usize..(s.start + s.len) as usize]
    }

    #[inline]
    pub(crate) fn dist(&self, a: usize, b: usize) -> f64 {
        self.distance[a * self.n_locations + b]
    }
}

/// Per department, its first-free group's shared queue (`u32::MAX`: none),
/// and how many there are: one per set of departments (the loader allows a
/// department in one such set only).
fn first_free_pools(plant: &Plant) -> (Vec<u32>, usize) {
    let mut pool_of = vec![u32::MAX; plant.departments.len()];
    let mut sets: Vec<Vec<usize>> = Vec::new();
    for prod in &plant.products {
        for g in prod.alternatives.iter().filter(|g| g.rule == AltRule::FirstFree) {
            let mut set: Vec<usize> = g.ops.iter().map(|&o| prod.routing[o].department).collect();
            set.sort_unstable();
            let k = sets.iter().position(|s| *s == set).unwrap_or_else(|| {
                sets.push(set.clone());
                sets.len() - 1
            });
            for d in set {
                pool_of[d] = k as u32;
            }
        }
    }
    (pool_of, sets.len())
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
