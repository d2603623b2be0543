//! Event handlers of the plant: arrivals and trace orders, operations, and moves by fleets of movers.

use std::collections::VecDeque;

use layflow_engine::{run_until, stream, Calendar, Model, Stream, Tally, TickHistogram, TimeWeighted};
use rand::RngExt;
use rand_distr::Exp1;

use super::arrivals::next_thinned;
use super::stats::{FleetStats, RepStats, TICK_S};
use super::{Plan, PlanArrivals, RunSpec};
use crate::plant::{DepartmentRole, DispatchRule, IdleRule};

/// Stream keys: each source of randomness has its own stream (common random numbers).
/// `ARRIVALS, product` also draws the thinning uniforms of a profiled product
/// and the extra lot of a trace order scaled by the demand factor: all of
/// them belong to the product's demand, which no layout may change.
const ARRIVALS: u64 = 1;
const LOT: u64 = 2;

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
    /// A mover has set its load down at the destination.
    Deliver { mover: u32 },
    /// A mover returning home arrives.
    Home { mover: u32 },
    /// Record the plant's WIP for a warm-up series (pilot runs only).
    Sample,
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
    rng: Stream,
}

#[derive(Debug, Clone, Copy)]
struct Mover {
    fleet: u32,
    location: u32,
    /// Lot on board or being fetched; NONE when idle or going home.
    lot: u32,
    idle_since: f64,
}

struct Department {
    busy: u32,
    queue: VecDeque<u32>,
    wip: TimeWeighted,
    busy_level: TimeWeighted,
    queue_level: TimeWeighted,
}

struct FleetState {
    idle: Vec<u32>,
    requests: VecDeque<u32>,
    wait: Tally,
    acc: FleetStats,
}

struct PlantModel<'a> {
    plan: &'a Plan,
    seed: u64,
    replication: u64,
    demand_factor: f64,
    window: (f64, f64),
    arrival_rng: Vec<Stream>,
    lots_made: Vec<u64>,
    lots: Vec<Lot>,
    free_lots: Vec<u32>,
    departments: Vec<Department>,
    movers: Vec<Mover>,
    fleets: Vec<FleetState>,
    wip: TimeWeighted,
    transit: TimeWeighted,
    shipped: Vec<u64>,
    flow: Vec<Tally>,
    flow_all: Tally,
    flow_hist: TickHistogram,
    wait_all: Tally,
    wait_hist: TickHistogram,
    /// Interval and cumulative WIP areas of a warm-up series (pilot runs only).
    series_step: f64,
    series_area: Vec<f64>,
    /// Which play of the order trace is running (0: the first).
    order_play: u64,
    /// (time, product) of every lot released, when logging (tests of common random numbers).
    log_releases: bool,
    releases: Vec<(f64, u32)>,
}

/// Run one replication of `plan` and return what it measured.
///
/// Replication `r` with seed `s` gives the same result on every platform and
/// whatever else runs beside it.
pub fn simulate(plan: &Plan, spec: &RunSpec, replication: u64) -> RepStats {
    let (stats, _, _) = simulate_inner(plan, spec, replication, None, false);
    stats
}

/// Run one replication and return every lot released into the plant as
/// (time, product index), in release order: what common random numbers must
/// keep the same under every layout and fleet.
pub fn simulate_releases(plan: &Plan, spec: &RunSpec, replication: u64) -> Vec<(f64, u32)> {
    let (_, _, releases) = simulate_inner(plan, spec, replication, None, true);
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
    let (_, areas, _) = simulate_inner(plan, spec, replication, Some(step_s), false);
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

/// One replication's statistics, WIP series areas and release log (the last two empty unless asked for).
type Run = (RepStats, Vec<f64>, Vec<(f64, u32)>);

fn simulate_inner(plan: &Plan, spec: &RunSpec, replication: u64, step: Option<f64>, log: bool) -> Run {
    let mut m = PlantModel::new(plan, spec, replication);
    m.log_releases = log;
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
    let mut events = run_until(&mut m, &mut cal, spec.warmup_s);
    m.reset_statistics(spec.warmup_s);
    events += run_until(&mut m, &mut cal, spec.horizon_s);
    let areas = std::mem::take(&mut m.series_area);
    let releases = std::mem::take(&mut m.releases);
    (m.finish(spec.horizon_s, events), areas, releases)
}

impl<'a> PlantModel<'a> {
    fn new(plan: &'a Plan, spec: &RunSpec, replication: u64) -> Self {
        let n_products = plan.products.len();
        let departments = plan
            .machines
            .iter()
            .map(|_| Department {
                busy: 0,
                queue: VecDeque::with_capacity(16),
                wip: TimeWeighted::new(0.0),
                busy_level: TimeWeighted::new(0.0),
                queue_level: TimeWeighted::new(0.0),
            })
            .collect();
        let mut movers = Vec::new();
        let mut fleets = Vec::new();
        for (f, fleet) in plan.fleets.iter().enumerate() {
            let mut idle = Vec::with_capacity(fleet.count as usize);
            for _ in 0..fleet.count {
                idle.push(movers.len() as u32);
                movers.push(Mover {
                    fleet: f as u32,
                    location: fleet.home_location as u32,
                    lot: NONE,
                    idle_since: 0.0,
                });
            }
            fleets.push(FleetState {
                idle,
                requests: VecDeque::with_capacity(16),
                wait: Tally::new(),
                acc: FleetStats::default(),
            });
        }
        PlantModel {
            plan,
            seed: spec.seed,
            replication,
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
            wip: TimeWeighted::new(0.0),
            transit: TimeWeighted::new(0.0),
            shipped: vec![0; n_products],
            flow: vec![Tally::new(); n_products],
            flow_all: Tally::new(),
            flow_hist: TickHistogram::new(TICK_S),
            wait_all: Tally::new(),
            wait_hist: TickHistogram::new(TICK_S),
            series_step: 0.0,
            series_area: Vec::new(),
            order_play: 0,
            log_releases: false,
            releases: Vec::new(),
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
        }
        for f in &mut self.fleets {
            f.wait.reset();
            // Fleet activity is clipped to the window when recorded, so it is not reset.
        }
        self.shipped.iter_mut().for_each(|s| *s = 0);
        self.flow.iter_mut().for_each(Tally::reset);
        self.flow_all.reset();
        self.flow_hist.reset();
        self.wait_all.reset();
        self.wait_hist.reset();
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
        for _ in 0..lots {
            self.release_lot(p, cal);
        }
    }

    /// A new lot of product `p` enters at its receiving dock now. Lots are
    /// numbered per product in release order, whatever released them, and
    /// the number keys the lot's own stream.
    fn release_lot(&mut self, p: usize, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let product = p as u32;
        let prod = &self.plan.products[p];
        if self.log_releases {
            self.releases.push((now, product));
        }
        let n = self.lots_made[p];
        self.lots_made[p] += 1;
        let lot = Lot {
            product,
            op: 0,
            department: prod.enters_at as u32,
            born: now,
            requested: now,
            rng: stream(self.seed, self.replication, &[LOT, p as u64, n]),
        };
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
        self.wip.add(now, 1.0);
        self.departments[prod.enters_at].wip.add(now, 1.0);
        self.route(id, 0, cal);
    }

    /// Send a lot from the department it is at to operation `op`.
    fn route(&mut self, id: u32, op: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let lot = &mut self.lots[id as usize];
        lot.op = op;
        let prod = &self.plan.products[lot.product as usize];
        let to = prod.ops[op as usize].department;
        let from = lot.department as usize;
        if to == from {
            self.start_or_queue(id, cal);
            return;
        }
        if self.plan.instant {
            self.departments[from].wip.add(now, -1.0);
            self.arrive(id, cal);
            return;
        }
        lot.requested = now;
        let f = prod.fleet;
        let pickup = self.plan.dept_location[from];
        let fleet = &mut self.fleets[f];
        let chosen = match self.plan.fleets[f].dispatch {
            _ if fleet.idle.is_empty() => None,
            DispatchRule::NearestIdle => {
                let movers = &self.movers;
                let plan = self.plan;
                let best = (0..fleet.idle.len())
                    .min_by(|&a, &b| {
                        let da = plan.dist(movers[fleet.idle[a] as usize].location as usize, pickup);
                        let db = plan.dist(movers[fleet.idle[b] as usize].location as usize, pickup);
                        // Equally near: the lower-numbered mover, whatever the idle list's order.
                        da.total_cmp(&db).then(fleet.idle[a].cmp(&fleet.idle[b]))
                    })
                    .expect("idle list is not empty");
                Some(fleet.idle.swap_remove(best))
            }
            DispatchRule::FirstCome => {
                let movers = &self.movers;
                let best = (0..fleet.idle.len())
                    .min_by(|&a, &b| {
                        let ta = movers[fleet.idle[a] as usize].idle_since;
                        let tb = movers[fleet.idle[b] as usize].idle_since;
                        ta.total_cmp(&tb).then(fleet.idle[a].cmp(&fleet.idle[b]))
                    })
                    .expect("idle list is not empty");
                Some(fleet.idle.swap_remove(best))
            }
        };
        match chosen {
            Some(mover) => self.dispatch(mover, id, cal),
            None => fleet.requests.push_back(id),
        }
    }

    /// Send `mover` empty to the lot's pick-up point.
    fn dispatch(&mut self, mover: u32, lot: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let m = &mut self.movers[mover as usize];
        m.lot = lot;
        let f = m.fleet as usize;
        let pickup = self.plan.dept_location[self.lots[lot as usize].department as usize];
        let d = self.plan.dist(m.location as usize, pickup);
        let t = d / self.plan.fleets[f].speed_empty;
        self.record_empty(f, now, now + t, d);
        // A delay that overflows to infinity (a validated but extreme speed of
        // 1e-300 m/s) is fine: the calendar puts it after every finite time.
        cal.schedule(now + t, Event::Pickup { mover });
    }

    fn record_empty(&mut self, f: usize, a: f64, b: f64, d: f64) {
        let w = self.in_window(a, b);
        let acc = &mut self.fleets[f].acc;
        acc.empty_s += w;
        if b > a {
            acc.distance_empty_m += d * w / (b - a);
        } else if a >= self.window.0 && a < self.window.1 {
            acc.distance_empty_m += d;
        }
    }

    fn pickup(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let m = self.movers[mover as usize];
        let f = m.fleet as usize;
        let fl = &self.plan.fleets[f];
        let lot = &self.lots[m.lot as usize];
        let from = lot.department as usize;
        let to = self.plan.products[lot.product as usize].ops[lot.op as usize].department;
        let wait = now - lot.requested;
        let d = self.plan.dist(self.plan.dept_location[from], self.plan.dept_location[to]);
        let t_load_end = now + fl.load_s;
        let t_travel_end = t_load_end + d / fl.speed_loaded;
        let t_end = t_travel_end + fl.unload_s;

        let handling = self.in_window(now, t_load_end) + self.in_window(t_travel_end, t_end);
        let loaded = self.in_window(t_load_end, t_travel_end);
        let counted = now >= self.window.0 && now < self.window.1;
        let fs = &mut self.fleets[f];
        fs.acc.handling_s += handling;
        fs.acc.loaded_s += loaded;
        if t_travel_end > t_load_end {
            fs.acc.distance_loaded_m += d * loaded / (t_travel_end - t_load_end);
        } else if counted {
            fs.acc.distance_loaded_m += d;
        }
        if counted {
            fs.acc.moves += 1;
            fs.wait.add(wait);
            self.wait_all.add(wait);
            self.wait_hist.record(wait);
        }
        self.departments[from].wip.add(now, -1.0);
        self.transit.add(now, 1.0);
        cal.schedule(t_end, Event::Deliver { mover });
    }

    fn deliver(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let m = &mut self.movers[mover as usize];
        let lot = m.lot;
        m.lot = NONE;
        let l = &self.lots[lot as usize];
        let to = self.plan.products[l.product as usize].ops[l.op as usize].department;
        m.location = self.plan.dept_location[to] as u32;
        self.transit.add(now, -1.0);
        self.arrive(lot, cal);
        self.mover_free(mover, cal);
    }

    /// A mover has finished a delivery or reached home: serve, go home, or wait.
    fn mover_free(&mut self, mover: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let f = self.movers[mover as usize].fleet as usize;
        if let Some(lot) = self.fleets[f].requests.pop_front() {
            self.dispatch(mover, lot, cal);
            return;
        }
        let fl = &self.plan.fleets[f];
        let here = self.movers[mover as usize].location as usize;
        if fl.idle == IdleRule::GoHome && here != fl.home_location {
            let d = self.plan.dist(here, fl.home_location);
            let t = d / fl.speed_empty;
            self.record_empty(f, now, now + t, d);
            self.movers[mover as usize].location = fl.home_location as u32;
            cal.schedule(now + t, Event::Home { mover });
            return;
        }
        self.movers[mover as usize].idle_since = now;
        self.fleets[f].idle.push(mover);
    }

    /// A lot reaches the department of its current operation.
    fn arrive(&mut self, id: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let lot = &mut self.lots[id as usize];
        let p = lot.product as usize;
        let dept = self.plan.products[p].ops[lot.op as usize].department;
        lot.department = dept as u32;
        if self.plan.dept_role[dept] == DepartmentRole::Shipping {
            let flow = now - lot.born;
            self.wip.add(now, -1.0);
            if now >= self.window.0 {
                self.shipped[p] += 1;
                self.flow[p].add(flow);
                self.flow_all.add(flow);
                self.flow_hist.record(flow);
            }
            self.free_lots.push(id);
            return;
        }
        self.departments[dept].wip.add(now, 1.0);
        self.start_or_queue(id, cal);
    }

    /// Start the lot's operation on a free machine, or queue it.
    fn start_or_queue(&mut self, id: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let dept = self.lots[id as usize].department as usize;
        let d = &mut self.departments[dept];
        if d.busy < self.plan.machines[dept] {
            d.busy += 1;
            d.busy_level.add(now, 1.0);
            self.start(id, cal);
        } else {
            d.queue.push_back(id);
            d.queue_level.add(now, 1.0);
        }
    }

    fn start(&mut self, id: u32, cal: &mut Calendar<Event>) {
        let lot = &mut self.lots[id as usize];
        let op = &self.plan.products[lot.product as usize].ops[lot.op as usize];
        let t = op.time.as_ref().map_or(0.0, |d| d.sample(&mut lot.rng));
        cal.schedule(cal.now() + t, Event::EndOperation { lot: id });
    }

    fn end_operation(&mut self, id: u32, cal: &mut Calendar<Event>) {
        let now = cal.now();
        let lot = &mut self.lots[id as usize];
        let dept = lot.department as usize;
        let op = &self.plan.products[lot.product as usize].ops[lot.op as usize];
        let next = if op.next.len() == 1 {
            op.next[0].0
        } else {
            let u: f64 = lot.rng.random();
            op.next.iter().find(|&&(_, cum)| u < cum).map_or(op.next[op.next.len() - 1].0, |b| b.0)
        };
        // Free the machine first: a rework loop back to this department queues behind others.
        let d = &mut self.departments[dept];
        if let Some(waiting) = d.queue.pop_front() {
            d.queue_level.add(now, -1.0);
            self.start(waiting, cal);
        } else {
            d.busy -= 1;
            d.busy_level.add(now, -1.0);
        }
        self.route(id, next as u32, cal);
    }

    fn finish(self, t: f64, events: u64) -> RepStats {
        let window_s = self.window.1 - self.window.0;
        RepStats {
            window_s,
            events,
            shipped: self.shipped,
            flow_time: self.flow,
            flow_time_all: self.flow_all,
            flow_hist: self.flow_hist,
            wip_total: self.wip.mean(t),
            wip_department: self.departments.iter().map(|d| d.wip.mean(t)).collect(),
            wip_transit: self.transit.mean(t),
            utilization: self
                .departments
                .iter()
                .zip(&self.plan.machines)
                .map(|(d, &c)| if c == 0 { 0.0 } else { d.busy_level.mean(t) / f64::from(c) })
                .collect(),
            queue: self.departments.iter().map(|d| d.queue_level.mean(t)).collect(),
            move_wait: self.fleets.iter().map(|f| f.wait).collect(),
            move_wait_all: self.wait_all,
            move_wait_hist: self.wait_hist,
            fleets: self.fleets.iter().map(|f| f.acc).collect(),
        }
    }
}

impl Model for PlantModel<'_> {
    type Event = Event;

    #[inline]
    fn handle(&mut self, event: Event, cal: &mut Calendar<Event>) {
        match event {
            Event::Arrival { product } => self.arrival(product, cal),
            Event::Order { index } => self.order(index, cal),
            Event::EndOperation { lot } => self.end_operation(lot, cal),
            Event::Pickup { mover } => self.pickup(mover, cal),
            Event::Deliver { mover } => self.deliver(mover, cal),
            // The mover is at home now, so mover_free will not send it home again.
            Event::Home { mover } => self.mover_free(mover, cal),
            Event::Sample => {
                let now = cal.now();
                self.series_area.push(self.wip.area(now));
                if now + self.series_step <= self.window.1 {
                    cal.schedule(now + self.series_step, Event::Sample);
                }
            }
        }
    }
}
