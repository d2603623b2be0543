//! The static picture of a plant: visit ratios, from-to chart, load-distance and predicted utilisations.
//!
//! Expected flows come from demand × routing probabilities. Demand is each
//! product's long-run mean rate ([`Plant::mean_rate_per_s`]): a profile's
//! mean factor, or an order trace's lots per repeat period (or per run
//! horizon when it plays once), so a plant whose demand varies is judged by
//! its average load; its peaks show only in the simulation. Rework loops mean
//! an operation can be visited more than once per lot, so visit ratios solve
//! the visit (traffic) equations v = e₁ + Pᵀv of the product's routing, an
//! absorbing Markov chain whose absorbing state is the shipping step
//! (Jackson 1957 for the open-network form of these equations).
//!
//! Each move's flow goes to the fleets allowed to serve it
//! ([`move_shares`]): all of it to the first listed under
//! `fleet_choice: first-listed`; under `nearest-idle`, shared in proportion
//! to the fleets' movers, as if every mover were equally likely to be the
//! nearest idle one (an approximation: the simulation decides by position).

use crate::plant::{DepartmentRole, FleetChoice, Plant};
use crate::travel::travel_time;

/// Expected visits per lot to each operation of a product's routing.
///
/// The loader guarantees every reachable step can reach shipping, so the
/// system is non-singular; a singular one (which validation rules out) gives
/// `None`.
pub fn visit_ratios(plant: &Plant, product: usize) -> Option<Vec<f64>> {
    let ops = &plant.products[product].routing;
    let n = ops.len();
    // Without a step that leads back (rework), each step's visits are final
    // once every earlier step has passed its share on: one pass over the
    // routing, time and memory linear in its steps. A loop needs the solve.
    let first = &plant.products[product].first;
    if ops.iter().enumerate().all(|(i, op)| op.next.iter().all(|&(j, _)| j > i)) {
        let mut v = vec![0.0; n];
        for &(j, p) in first {
            v[j] += p;
        }
        for (i, op) in ops.iter().enumerate() {
            for &(j, p) in &op.next {
                v[j] += p * v[i];
            }
        }
        return Some(v);
    }
    // (I − Pᵀ) v = e₁, with P[i][j] the branch probability from step i to step j.
    let mut a = vec![0.0; n * n];
    let mut b = vec![0.0; n];
    for &(j, p) in first {
        b[j] += p;
    }
    for i in 0..n {
        a[i * n + i] += 1.0;
    }
    for (i, op) in ops.iter().enumerate() {
        for &(j, p) in &op.next {
            a[j * n + i] -= p;
        }
    }
    solve(&mut a, &mut b, n).then_some(b)
}

/// Gaussian elimination with partial pivoting, in place; `b` becomes the solution.
fn solve(a: &mut [f64], b: &mut [f64], n: usize) -> bool {
    for col in 0..n {
        let pivot =
            (col..n).max_by(|&r, &s| a[r * n + col].abs().total_cmp(&a[s * n + col].abs())).unwrap_or(col);
        if a[pivot * n + col].abs() < 1e-12 {
            return false;
        }
        if pivot != col {
            for k in 0..n {
                a.swap(col * n + k, pivot * n + k);
            }
            b.swap(col, pivot);
        }
        for r in col + 1..n {
            let f = a[r * n + col] / a[col * n + col];
            if f != 0.0 {
                for k in col..n {
                    a[r * n + k] -= f * a[col * n + k];
                }
                b[r] -= f * b[col];
            }
        }
    }
    for col in (0..n).rev() {
        let mut s = b[col];
        for k in col + 1..n {
            s -= a[col * n + k] * b[k];
        }
        b[col] = s / a[col * n + col];
    }
    true
}

/// A from-to chart kept sparse: loads per hour for each (from, to) pair of
/// departments that has flow, in row-major order (by `from`, then `to`).
///
/// A plant's routings touch few of its departments² pairs, so memory and
/// time follow the routing steps, not the departments squared; [`FlowChart::dense`]
/// gives the full matrix to whoever needs one (layout search's flow matrix).
/// Every sum over the chart runs in row-major order, the order a dense
/// departments² loop adds the non-zero entries in, so figures are the same
/// to the last bit as from the dense chart.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct FlowChart {
    departments: usize,
    /// (from, to, loads/h), sorted by (from, to), each pair once, no zero flow.
    entries: Vec<(usize, usize, f64)>,
}

impl FlowChart {
    /// The chart of `departments` departments from (from, to, flow) contributions
    /// in any order: contributions to the same pair are added in the order given
    /// (as a dense chart would add them), and pairs left with no flow are dropped.
    pub fn from_contributions(departments: usize, mut parts: Vec<(usize, usize, f64)>) -> FlowChart {
        // A stable sort keeps each pair's contributions in the order given.
        parts.sort_by_key(|&(i, j, _)| (i, j));
        let mut entries: Vec<(usize, usize, f64)> = Vec::with_capacity(parts.len());
        for (i, j, f) in parts {
            match entries.last_mut() {
                Some(last) if (last.0, last.1) == (i, j) => last.2 += f,
                // 0 + f is f, as the first addition into a zeroed dense cell.
                _ => entries.push((i, j, 0.0 + f)),
            }
        }
        entries.retain(|e| e.2 != 0.0);
        FlowChart { departments, entries }
    }

    /// A chart from a dense row-major departments² matrix.
    pub fn from_dense(departments: usize, flow: &[f64]) -> FlowChart {
        let entries = flow
            .iter()
            .enumerate()
            .filter(|(_, &f)| f != 0.0)
            .map(|(k, &f)| (k / departments, k % departments, f))
            .collect();
        FlowChart { departments, entries }
    }

    /// Loads per hour from department `from` to `to` (0 where none flow).
    pub fn get(&self, from: usize, to: usize) -> f64 {
        self.entries.binary_search_by_key(&(from, to), |&(i, j, _)| (i, j)).map_or(0.0, |k| self.entries[k].2)
    }

    /// The pairs with flow, as (from, to, loads/h), in row-major order.
    pub fn iter(&self) -> impl Iterator<Item = (usize, usize, f64)> + '_ {
        self.entries.iter().copied()
    }

    /// Pairs with flow.
    pub fn len(&self) -> usize {
        self.entries.len()
    }

    /// No pair has flow.
    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }

    /// Departments on each side.
    pub fn departments(&self) -> usize {
        self.departments
    }

    /// Loads per hour over every pair (summed in row-major order).
    pub fn total(&self) -> f64 {
        self.entries.iter().map(|e| e.2).sum()
    }

    /// The full row-major departments² matrix (memory departments²: for layout search only).
    pub fn dense(&self) -> Vec<f64> {
        let n = self.departments;
        let mut out = vec![0.0; n * n];
        for &(i, j, f) in &self.entries {
            out[i * n + j] = f;
        }
        out
    }

    /// Every entry times `k`.
    fn scale(&mut self, k: f64) {
        self.entries.iter_mut().for_each(|e| e.2 *= k);
    }
}

/// The static picture of a plant at a demand factor; layout-dependent parts per layout.
#[derive(Debug, Clone)]
pub struct StaticPicture {
    /// Demand factor applied.
    pub demand_factor: f64,
    /// Long-run mean arrivals per hour of each product, demand factor applied.
    pub product_rate_per_h: Vec<f64>,
    /// Visit ratios per product, per operation.
    pub visits: Vec<Vec<f64>>,
    /// Loads per hour from department i to department j, all products
    /// (sparse). Moves within a department are not counted.
    pub from_to: FlowChart,
    /// The same per product.
    pub from_to_by_product: Vec<FlowChart>,
    /// Lots per hour arriving for processing at each department.
    pub arrivals_per_h: Vec<f64>,
    /// Predicted utilisation λ·E[S]/c per department (0 for docks).
    pub utilization: Vec<f64>,
    /// Share of time a machine is up, MTBF/(MTBF + MTTR), per department (1 without breakdowns).
    pub availability: Vec<f64>,
    /// Load against the capacity left by breakdowns and the calendar,
    /// (λ·E[S] + setup time per hour)/(c·scheduled share·A): at or above 1 the
    /// department cannot keep up. Equal to `utilization` without breakdowns,
    /// calendar or setups. (With busy-time failures each busy hour brings
    /// MTTR/MTBF hours of repair, which gives the same factor 1/A.)
    pub utilization_available: Vec<f64>,
    /// Share of clock time that is scheduled working time, per department (1 without a calendar).
    pub scheduled_share: Vec<f64>,
    /// Expected setup seconds per hour per machine, as a share of the hour:
    /// each lot's predecessor on the machine is taken to be a random lot of
    /// the department's mix (FIFO with independent arrivals), so a change
    /// from product i to j comes with probability share_i·share_j. 0 without setups.
    pub setup_share: Vec<f64>,
    /// Per fleet, per department: loads per hour the fleet picks up there
    /// (its share of the from-to chart, by [`move_shares`]).
    pub fleet_pickups_per_h: Vec<Vec<f64>>,
    /// Per layout, in scenario order.
    pub layouts: Vec<LayoutPicture>,
}

/// What the static method says about one layout.
#[derive(Debug, Clone)]
pub struct LayoutPicture {
    /// Σ flow × distance, load-metres per hour.
    pub load_distance_m_per_h: f64,
    /// load-distance × cost per load-metre, currency per hour.
    pub handling_cost_per_h: f64,
    /// Per fleet: a lower bound on utilisation (loaded travel, loading and
    /// unloading only; any empty travel comes on top). Times follow the
    /// fleet's speed, acceleration and efficiency; a fleet that carries k
    /// loads at once is credited with loaded travel ÷ k, since one trip can
    /// carry up to k loads. The share is of all hours, on duty or not.
    pub fleet_utilization_lower_bound: Vec<f64>,
    /// Per fleet: loaded trips per hour it must make.
    pub fleet_trips_per_h: Vec<f64>,
}

impl StaticPicture {
    /// Compute the picture; `demand_factor` overrides the scenario's.
    pub fn new(plant: &Plant, demand_factor: f64) -> StaticPicture {
        let nd = plant.departments.len();
        let mut visits = Vec::with_capacity(plant.products.len());
        let mut by_product = Vec::with_capacity(plant.products.len());
        let mut arrivals = vec![0.0; nd];
        let mut work_s_per_h = vec![0.0; nd];
        let mut rates = Vec::with_capacity(plant.products.len());
        // Lots per hour of each product at each department, for the setup
        // mix: per department, (product, lots/h) in product order, only the
        // products that visit it.
        let mut mix: Vec<Vec<(usize, f64)>> = vec![Vec::new(); nd];
        for (p, prod) in plant.products.iter().enumerate() {
            let v = visit_ratios(plant, p).unwrap_or_else(|| vec![0.0; prod.routing.len()]);
            let rate_h = plant.mean_rate_per_s(p) * 3600.0 * demand_factor;
            rates.push(rate_h);
            let mut ft = Vec::with_capacity(prod.routing.len() * 2);
            // From the dock to each first operation in its share (× 1 exactly when there is one).
            for &(j, pr) in &prod.first {
                let first = prod.routing[j].department;
                if first != prod.enters_at {
                    ft.push((prod.enters_at, first, rate_h * pr));
                }
            }
            for (k, op) in prod.routing.iter().enumerate() {
                let d = op.department;
                // A component consumed into a kit (its last step, where the routing ends) is not
                // worked there. A step at a batch machine has no time of its own but is worked.
                let consumed = prod.into.is_some() && op.next.is_empty();
                if plant.departments[d].role == DepartmentRole::Work && !consumed {
                    arrivals[d] += rate_h * v[k];
                    match mix[d].last_mut() {
                        Some((q, x)) if *q == p => *x += rate_h * v[k],
                        _ => mix[d].push((p, 0.0 + rate_h * v[k])),
                    }
                    work_s_per_h[d] += rate_h * v[k] * op.time.as_ref().map_or(0.0, |t| t.mean());
                }
                for &(j, pr) in &op.next {
                    let to = prod.routing[j].department;
                    if to != d {
                        ft.push((d, to, rate_h * v[k] * pr));
                    }
                }
            }
            let mut ft = FlowChart::from_contributions(nd, ft);
            // Each move of a lot is one move per unit load.
            let loads = f64::from(prod.lot.map_or(1, |l| l.loads()));
            if loads != 1.0 {
                ft.scale(loads);
            }
            visits.push(v);
            by_product.push(ft);
        }
        // A batch machine's steps carry no time of their own: each load takes
        // its share of a full batch, E[T(K)]/K. This is a lower bound on the
        // machine's busy share (smaller batches cost more per load), and below
        // 1 exactly when the machine keeps up once queues fill its batches
        // (docs/formulas.md §24).
        for (d, dep) in plant.departments.iter().enumerate() {
            if let Some(b) = &dep.batch {
                work_s_per_h[d] = arrivals[d] * b.mean_time_s(b.max) / f64::from(b.max);
            }
        }
        // Every product's chart added pair by pair in product order, as a dense sum would.
        let from_to =
            FlowChart::from_contributions(nd, by_product.iter().flat_map(FlowChart::iter).collect());
        let utilization = plant
            .departments
            .iter()
            .enumerate()
            .map(
                |(d, dep)| {
                    if dep.machines == 0 {
                        0.0
                    } else {
                        work_s_per_h[d] / 3600.0 / f64::from(dep.machines)
                    }
                },
            )
            .collect::<Vec<f64>>();
        let availability: Vec<f64> = plant.departments.iter().map(|d| d.availability()).collect();
        let scheduled_share: Vec<f64> = plant.departments.iter().map(|d| d.scheduled_share()).collect();
        let setup_share: Vec<f64> = plant
            .departments
            .iter()
            .enumerate()
            .map(|(d, dep)| match &dep.setups {
                Some(st) if dep.machines > 0 && arrivals[d] > 0.0 => {
                    // Products that never visit d add nothing: only its mix is summed.
                    let mut s = 0.0;
                    for &(i, mi) in &mix[d] {
                        for &(j, mj) in &mix[d] {
                            if let Some(t) = st.for_change(i, j) {
                                s += mi / arrivals[d] * mj * t.mean();
                            }
                        }
                    }
                    s / 3600.0 / f64::from(dep.machines)
                }
                _ => 0.0,
            })
            .collect();
        let utilization_available = (0..nd)
            .map(|d| {
                let u = utilization[d] + setup_share[d];
                if scheduled_share[d] == 1.0 && availability[d] == 1.0 {
                    u
                } else {
                    u / (availability[d] * scheduled_share[d])
                }
            })
            .collect();
        // Each product's chart split among the fleets, once for every layout.
        let split: Vec<Vec<FlowChart>> =
            by_product.iter().enumerate().map(|(p, ft)| by_fleet(plant, p, ft)).collect();
        let layouts = (0..plant.layouts.len()).map(|l| layout_picture(plant, l, &from_to, &split)).collect();
        let fleet_pickups_per_h = pickups(plant, &split);
        StaticPicture {
            demand_factor,
            product_rate_per_h: rates,
            visits,
            from_to,
            from_to_by_product: by_product,
            arrivals_per_h: arrivals,
            utilization,
            availability,
            utilization_available,
            scheduled_share,
            setup_share,
            fleet_pickups_per_h,
            layouts,
        }
    }

    /// Departments predicted to be at or over capacity (utilisation against availability ≥ 1).
    pub fn overloaded(&self) -> impl Iterator<Item = usize> + '_ {
        self.utilization_available.iter().enumerate().filter(|(_, &u)| u >= 1.0).map(|(d, _)| d)
    }
}

/// Σ_ij flow_ij × d(location(i), location(j)) over a department-level from-to chart.
pub fn load_distance(plant: &Plant, layout: usize, flow: &FlowChart) -> f64 {
    flow_weighted(plant, layout, flow, |d| d)
}

/// Σ_ij flow_ij × per_trip(d(location(i), location(j))) over the pairs with flow, in row-major order.
fn flow_weighted(plant: &Plant, layout: usize, flow: &FlowChart, per_trip: impl Fn(f64) -> f64) -> f64 {
    let loc = &plant.layouts[layout].location_of;
    let mut z = 0.0;
    for (i, j, f) in flow.iter() {
        z += f * per_trip(plant.distance(loc[i], loc[j]));
    }
    z
}

/// How the flow of a move of a `product` lot from department `from` to `to`
/// is shared among fleets, as (fleet, share) with shares summing to 1; empty
/// for instant handling. `first-listed`: all to the first allowed fleet;
/// `nearest-idle`: in proportion to the allowed fleets' movers.
pub fn move_shares(plant: &Plant, product: usize, from: usize, to: usize) -> Vec<(usize, f64)> {
    let allowed = plant.fleets_for_move(product, from, to);
    match plant.fleet_choice {
        FleetChoice::FirstListed => allowed.first().map(|&f| (f, 1.0)).into_iter().collect(),
        FleetChoice::NearestIdle => {
            let fleets = plant.fleets();
            let movers: f64 = allowed.iter().map(|&f| f64::from(fleets[f].count)).sum();
            allowed.iter().map(|&f| (f, f64::from(fleets[f].count) / movers)).collect()
        }
    }
}

/// Each product's from-to chart split by fleet, `[fleet]`, loads per hour.
fn by_fleet(plant: &Plant, product: usize, ft: &FlowChart) -> Vec<FlowChart> {
    let nd = plant.departments.len();
    let mut parts = vec![Vec::new(); plant.fleets().len()];
    for (i, j, flow) in ft.iter() {
        for (f, w) in move_shares(plant, product, i, j) {
            parts[f].push((i, j, w * flow));
        }
    }
    parts.into_iter().map(|p| FlowChart::from_contributions(nd, p)).collect()
}

/// Loads per hour each fleet picks up at each department.
fn pickups(plant: &Plant, split: &[Vec<FlowChart>]) -> Vec<Vec<f64>> {
    let nd = plant.departments.len();
    let mut out = vec![vec![0.0; nd]; plant.fleets().len()];
    for charts in split {
        for (f, chart) in charts.iter().enumerate() {
            // Each row's sum, in column order, added once per row with flow.
            let mut row: Option<(usize, f64)> = None;
            for (i, _, x) in chart.iter() {
                row = match row {
                    Some((r, sum)) if r == i => Some((r, sum + x)),
                    Some((r, sum)) => {
                        out[f][r] += sum;
                        Some((i, 0.0 + x))
                    }
                    None => Some((i, 0.0 + x)),
                };
            }
            if let Some((r, sum)) = row {
                out[f][r] += sum;
            }
        }
    }
    out
}

/// Loads per hour each fleet picks up at each department at the scenario's
/// own demand factor (`[fleet][department]`): where a reserve with no `at` waits.
pub fn fleet_pickups_per_h(plant: &Plant) -> Vec<Vec<f64>> {
    StaticPicture::new(plant, plant.demand_factor).fleet_pickups_per_h
}

/// Σ_ij flow_ij × travel time(d_ij) in seconds per hour at top speed `v` and
/// acceleration `accel`: load-distance ÷ v when there is no acceleration.
fn travel_s_per_h(plant: &Plant, layout: usize, flow: &FlowChart, v: f64, accel: Option<f64>) -> f64 {
    let Some(a) = accel else {
        return load_distance(plant, layout, flow) / v;
    };
    flow_weighted(plant, layout, flow, |d| travel_time(d, v, Some(a)))
}

/// The layout's figures; `split` holds each product's chart split among the fleets ([`by_fleet`]).
fn layout_picture(
    plant: &Plant,
    layout: usize,
    from_to: &FlowChart,
    split: &[Vec<FlowChart>],
) -> LayoutPicture {
    let load_distance_m_per_h = load_distance(plant, layout, from_to);
    let fleets = plant.fleets();
    let mut trips = vec![0.0; fleets.len()];
    let mut busy_s_per_h = vec![0.0; fleets.len()];
    for charts in split {
        for (f, chart) in charts.iter().enumerate() {
            let n: f64 = chart.total();
            if n == 0.0 {
                continue;
            }
            let fl = &fleets[f];
            let travel =
                travel_s_per_h(plant, layout, chart, fl.speed_loaded, fl.accel) / f64::from(fl.capacity);
            trips[f] += n;
            busy_s_per_h[f] += (travel + n * (fl.load_s + fl.unload_s)) / fl.operators.efficiency;
        }
    }
    let bound = fleets.iter().zip(&busy_s_per_h).map(|(fl, &s)| s / 3600.0 / f64::from(fl.count)).collect();
    LayoutPicture {
        load_distance_m_per_h,
        handling_cost_per_h: load_distance_m_per_h * plant.cost_per_load_metre,
        fleet_utilization_lower_bound: bound,
        fleet_trips_per_h: trips,
    }
}

#[cfg(test)]
mod tests {
    use super::FlowChart;

    #[test]
    fn a_sparse_chart_adds_each_pair_in_the_order_given_and_drops_empty_pairs() {
        // 0.1 + 0.2 + 0.3 is 0.6000000000000001 left to right and 0.6 right to
        // left: the order given must be kept for the pair (0, 1).
        let c = FlowChart::from_contributions(
            3,
            vec![(0, 1, 0.1), (2, 0, 5.0), (0, 1, 0.2), (1, 1, 0.0), (0, 1, 0.3)],
        );
        assert_eq!(c.get(0, 1), 0.1 + 0.2 + 0.3);
        assert_eq!(c.iter().collect::<Vec<_>>(), vec![(0, 1, 0.1 + 0.2 + 0.3), (2, 0, 5.0)]);
        assert_eq!((c.get(1, 1), c.len()), (0.0, 2));
        assert_eq!(FlowChart::from_dense(3, &c.dense()), c);
    }
}

/// One assembly step in the static picture (`check`): the kits it needs
/// against the kits its components can make.
#[derive(Debug, Clone, PartialEq)]
pub struct KitBalance {
    /// The assembling product.
    pub product: usize,
    /// Its assembly operation (index into the routing).
    pub op: usize,
    /// Lots per hour of the product reaching the step: the kits it needs.
    pub needed_per_h: f64,
    /// Per component: (product, lots per kit, its lots per hour reaching the assembly department).
    pub parts: Vec<(usize, u32, f64)>,
    /// Kits per hour predicted: min(needed, each component's lots per hour ÷ lots per kit).
    pub kits_per_h: f64,
}

impl KitBalance {
    /// Whether every component arrives at the rate the kits need it, to 1e-6 relative.
    pub fn balanced(&self) -> bool {
        self.parts.iter().all(|&(_, q, r)| {
            let supply = r / f64::from(q);
            (supply - self.needed_per_h).abs() <= 1e-6 * self.needed_per_h.max(supply)
        })
    }
}

/// Every assembly step of `plant` with its balance under the static picture
/// `pic` (empty for a plant that assembles nothing).
pub fn kit_balance(plant: &Plant, pic: &StaticPicture) -> Vec<KitBalance> {
    let reaching =
        |p: usize, op: usize| pic.product_rate_per_h[p] * pic.visits[p].get(op).copied().unwrap_or(0.0);
    let mut out = Vec::new();
    for (p, prod) in plant.products.iter().enumerate() {
        for kit in &prod.kits {
            let needed_per_h = reaching(p, kit.op);
            let parts: Vec<(usize, u32, f64)> = kit
                .parts
                .iter()
                .map(|&(c, q)| {
                    // Where it is consumed: its operation with no next at the assembly
                    // department (a scrap branch to a shipping dock also has none).
                    let at = prod.routing[kit.op].department;
                    let routing = &plant.products[c].routing;
                    let last =
                        routing.iter().position(|o| o.next.is_empty() && o.department == at).unwrap_or(0);
                    (c, q, reaching(c, last))
                })
                .collect();
            let kits_per_h = parts.iter().fold(needed_per_h, |m, &(_, q, r)| m.min(r / f64::from(q)));
            out.push(KitBalance { product: p, op: kit.op, needed_per_h, parts, kits_per_h });
        }
    }
    out
}
