//! Analytic fleet sizing: how many movers a flow of loads needs, before any simulation.
//!
//! Two textbook forms of facilities planning:
//!
//! - The delivery-cycle form (Groover): one typical cycle of load, loaded
//!   trip, unload and empty return, Tc = T_L + L_d/v_L + T_U + L_e/v_E;
//!   AT = 60·A·T_f·E_w available minutes per vehicle-hour; n = R_f·Tc/AT.
//! - The from-to chart form (as in Tompkins et al., *Facilities Planning*):
//!   N = [Σ f_ij d_ij / v_L + Σ e_ij d_ij / v_E + h·Σ f_ij] / (60 min × η),
//!   with the empty flow e_ij either assumed equal to the loaded flow run
//!   backwards ([`EmptyRule::SameAsLoaded`]) or the least empty travel that
//!   rebalances the movers ([`EmptyRule::MinimumEmptyFlow`], Maxwell &
//!   Muckstadt 1982, cited from memory).
//!
//! Everything is SI inside: metres, seconds, m/s; flows in loads per hour.

use good_lp::{microlp, variable, Expression, ProblemVariables, Solution, SolverModel, Variable};

use crate::analysis::StaticPicture;
use crate::plant::{Handling, Plant};
use crate::travel::travel_time;

// ----------------------------------------------------------------------------
// Delivery-cycle form
// ----------------------------------------------------------------------------

/// One typical delivery cycle of the delivery-cycle (Groover) form, SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DeliveryCycle {
    /// Time to pick the load up, T_L, s.
    pub load_s: f64,
    /// Distance travelled loaded, L_d, m.
    pub loaded_m: f64,
    /// Speed loaded, v_L, m/s.
    pub speed_loaded: f64,
    /// Time to set the load down, T_U, s.
    pub unload_s: f64,
    /// Distance travelled empty back to the next pick-up, L_e, m.
    pub empty_m: f64,
    /// Speed empty, v_E, m/s.
    pub speed_empty: f64,
    /// Acceleration (= braking) limit, m/s²; `None` keeps the textbook's L/v.
    pub accel: Option<f64>,
}

/// The fractions of each hour a vehicle does useful work in the delivery-cycle form.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Availability {
    /// A: share of time the vehicle is not broken down or charging, in (0, 1].
    pub availability: f64,
    /// T_f: traffic factor, share of time not lost to congestion and blocking, in (0, 1].
    pub traffic: f64,
    /// E_w: efficiency of the operator, in (0, 1].
    pub worker_efficiency: f64,
}

impl Availability {
    /// A·T_f·E_w: the share of an hour a vehicle spends on deliveries.
    pub fn factor(&self) -> f64 {
        self.availability * self.traffic * self.worker_efficiency
    }
}

/// Result of the delivery-cycle form.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CycleEstimate {
    /// Tc, s per delivery.
    pub cycle_s: f64,
    /// AT, available seconds per vehicle per hour.
    pub available_s_per_h: f64,
    /// R_dv = AT/Tc, deliveries one vehicle makes per hour.
    pub deliveries_per_vehicle_h: f64,
    /// n = R_f/R_dv, as a real number.
    pub vehicles: f64,
    /// n rounded up to whole vehicles.
    pub vehicles_rounded_up: u64,
}

/// Fleet size by the delivery-cycle form for `deliveries_per_h` (R_f) deliveries an hour.
pub fn delivery_cycle_fleet(
    cycle: &DeliveryCycle,
    deliveries_per_h: f64,
    factors: &Availability,
) -> Result<CycleEstimate, String> {
    non_negative("load time", cycle.load_s)?;
    non_negative("unload time", cycle.unload_s)?;
    non_negative("loaded distance", cycle.loaded_m)?;
    non_negative("empty distance", cycle.empty_m)?;
    positive("loaded speed", cycle.speed_loaded)?;
    positive("empty speed", cycle.speed_empty)?;
    check_accel(cycle.accel)?;
    non_negative("deliveries per hour", deliveries_per_h)?;
    fraction("availability", factors.availability)?;
    fraction("traffic factor", factors.traffic)?;
    fraction("worker efficiency", factors.worker_efficiency)?;

    let cycle_s = cycle.load_s
        + travel_time(cycle.loaded_m, cycle.speed_loaded, cycle.accel)
        + cycle.unload_s
        + travel_time(cycle.empty_m, cycle.speed_empty, cycle.accel);
    let available_s_per_h = 3600.0 * factors.factor();
    let vehicles = deliveries_per_h * cycle_s / available_s_per_h;
    Ok(CycleEstimate {
        cycle_s,
        available_s_per_h,
        // A cycle of zero length (nothing to do) lets one vehicle make unlimited deliveries.
        deliveries_per_vehicle_h: if cycle_s > 0.0 { available_s_per_h / cycle_s } else { f64::INFINITY },
        vehicles,
        vehicles_rounded_up: round_up(vehicles),
    })
}

// ----------------------------------------------------------------------------
// From-to chart form
// ----------------------------------------------------------------------------

/// How empty travel is estimated in the from-to chart form.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EmptyRule {
    /// The textbook's conservative approximation: every loaded trip is
    /// followed by an empty trip of the same length back, so empty distance =
    /// loaded distance. It ignores that a mover which drops a load may find
    /// the next one where it stands; it is not a guaranteed upper bound (a
    /// dispatch rule or a home base can do worse).
    SameAsLoaded,
    /// The least empty travel that puts movers back where loads start
    /// (Maxwell & Muckstadt 1982, cited from memory): a transportation
    /// problem from departments that receive more loads than they send to
    /// those that send more than they receive. With distances that obey the
    /// triangle inequality, no dispatching can do with less empty travel in
    /// the long run, so it is a lower bound.
    MinimumEmptyFlow,
}

/// The mover side of the from-to chart form, SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MoverSpec {
    /// Speed with a load, m/s.
    pub speed_loaded: f64,
    /// Speed empty, m/s.
    pub speed_empty: f64,
    /// Acceleration (= braking) limit, m/s²; `None` gives d/v per trip.
    pub accel: Option<f64>,
    /// Load plus unload time per loaded trip, h in the formula, s.
    pub handling_s_per_trip: f64,
}

/// Result of the from-to chart form. All rates are per hour of operation.
///
/// Serialised as `fleet` reports it: the rule and the empty-flow matrix are
/// the sweep's own business and stay out of the JSON.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FleetEstimate {
    /// Loaded trips per hour, Σ f_ij.
    pub trips_per_h: f64,
    /// Σ f_ij d_ij, loaded metres per hour.
    pub loaded_m_per_h: f64,
    /// Σ e_ij d_ij, empty metres per hour.
    pub empty_m_per_h: f64,
    /// Seconds per hour spent travelling loaded.
    pub loaded_travel_s_per_h: f64,
    /// Seconds per hour spent travelling empty.
    pub empty_travel_s_per_h: f64,
    /// h·Σ f_ij, seconds per hour spent loading and unloading.
    pub handling_s_per_h: f64,
    /// Sum of the three: mover-seconds of work per hour.
    pub busy_s_per_h: f64,
    /// N = busy / (3600 s × efficiency), as a real number.
    pub vehicles: f64,
    /// N rounded up to whole vehicles.
    pub vehicles_rounded_up: u64,
    /// Which empty-travel rule produced `empty_*`.
    #[serde(skip)]
    pub empty_rule: EmptyRule,
    /// With [`EmptyRule::MinimumEmptyFlow`]: empty trips per hour from
    /// department i to j, row-major like the flow matrix. `None` for
    /// [`EmptyRule::SameAsLoaded`], which has no matrix of its own.
    #[serde(skip)]
    pub empty_flow: Option<Vec<f64>>,
}

/// Fleet size by the from-to chart form.
///
/// `flow_per_h` is an n×n matrix of loads per hour from department i to j and
/// `distance_m` the n×n department-to-department distances, both row-major
/// (the layout of [`StaticPicture::from_to`]). Docks are departments like any
/// other: a receiving dock only sends loads and a shipping dock only receives
/// them. Diagonal entries count as trips of length `distance_m[i][i]`.
/// `efficiency` in (0, 1] is the share of each hour a mover does useful work;
/// the delivery-cycle form's A·T_f·E_w fits here.
pub fn from_to_fleet(
    flow_per_h: &[f64],
    distance_m: &[f64],
    mover: &MoverSpec,
    rule: EmptyRule,
    efficiency: f64,
) -> Result<FleetEstimate, String> {
    check_matrices(flow_per_h, distance_m)?;
    positive("loaded speed", mover.speed_loaded)?;
    positive("empty speed", mover.speed_empty)?;
    check_accel(mover.accel)?;
    non_negative("handling time per trip", mover.handling_s_per_trip)?;
    fraction("efficiency", efficiency)?;

    let (vl, ve, a) = (mover.speed_loaded, mover.speed_empty, mover.accel);
    let mut trips = 0.0;
    let mut loaded_m = 0.0;
    let mut loaded_s = 0.0;
    // The conservative rule drives each loaded leg again, empty.
    let mut mirror_s = 0.0;
    for (&f, &d) in flow_per_h.iter().zip(distance_m) {
        if f > 0.0 {
            trips += f;
            loaded_m += f * d;
            loaded_s += f * travel_time(d, vl, a);
            mirror_s += f * travel_time(d, ve, a);
        }
    }
    let (empty_m, empty_s, empty_flow) = match rule {
        EmptyRule::SameAsLoaded => (loaded_m, mirror_s, None),
        EmptyRule::MinimumEmptyFlow => {
            // Without an acceleration limit time is distance/v_E, so
            // minimising distance (Maxwell–Muckstadt's objective) is the same
            // and numerically cleaner. With one, short empty trips cost
            // relatively more time, so the time itself is minimised: that is
            // what the fleet size depends on.
            let cost: Vec<f64> = match a {
                None => distance_m.to_vec(),
                Some(_) => distance_m.iter().map(|&d| travel_time(d, ve, a)).collect(),
            };
            let e = min_empty_flow(flow_per_h, &cost)?;
            let mut m = 0.0;
            let mut s = 0.0;
            for (k, &x) in e.iter().enumerate() {
                if x > 0.0 {
                    m += x * distance_m[k];
                    s += x * travel_time(distance_m[k], ve, a);
                }
            }
            (m, s, Some(e))
        }
    };
    let handling_s = trips * mover.handling_s_per_trip;
    let busy = loaded_s + empty_s + handling_s;
    let vehicles = busy / (3600.0 * efficiency);
    Ok(FleetEstimate {
        trips_per_h: trips,
        loaded_m_per_h: loaded_m,
        empty_m_per_h: empty_m,
        loaded_travel_s_per_h: loaded_s,
        empty_travel_s_per_h: empty_s,
        handling_s_per_h: handling_s,
        busy_s_per_h: busy,
        vehicles,
        vehicles_rounded_up: round_up(vehicles),
        empty_rule: rule,
        empty_flow,
    })
}

/// Net loads per hour into each department: inflow − outflow (column sum −
/// row sum of the n×n matrix). Positive where loads pile up faster than they
/// leave, so empty movers pile up there too: a shipping dock is always
/// positive, a receiving dock always negative, and a department that passes
/// every load on is zero.
pub fn net_flow(flow_per_h: &[f64]) -> Result<Vec<f64>, String> {
    let n = square_side(flow_per_h.len(), "flow")?;
    check_entries(flow_per_h, n, "flow", "loads per hour")?;
    Ok(net_of(flow_per_h, n))
}

/// The minimum empty flow: empty trips per hour e_ij (n×n, row-major) that
/// move every surplus of empty movers (net inflow of loads > 0) to a
/// department with a deficit (net inflow < 0) at the least total cost Σ e_ij c_ij,
/// a transportation problem (Maxwell & Muckstadt 1982, cited from memory).
///
/// `cost` is n×n: metres for the distance-minimising original, or seconds of
/// travel. Only surplus → deficit entries can be non-zero; their total equals
/// the total surplus.
pub fn min_empty_flow(flow_per_h: &[f64], cost: &[f64]) -> Result<Vec<f64>, String> {
    let n = check_pair(flow_per_h, cost, "cost", "costs")?;

    let mut net = net_of(flow_per_h, n);
    // Inflow and outflow of a department that passes every load on are equal
    // sums taken in different orders; treat what rounding leaves as zero so
    // that it does not become a spurious supply or demand.
    let scale: f64 = flow_per_h.iter().sum();
    for x in &mut net {
        if x.abs() <= 1e-12 * scale {
            *x = 0.0;
        }
    }
    let sources: Vec<usize> = (0..n).filter(|&k| net[k] > 0.0).collect();
    let sinks: Vec<usize> = (0..n).filter(|&k| net[k] < 0.0).collect();
    let mut empty = vec![0.0; n * n];
    if sources.is_empty() || sinks.is_empty() {
        return Ok(empty);
    }
    // Σ net is zero in exact arithmetic; in floating point the two totals can
    // differ in the last bits. Capping each side and shipping the smaller
    // total keeps the problem feasible without a tolerance.
    let supply: f64 = sources.iter().map(|&k| net[k]).sum();
    let demand: f64 = sinks.iter().map(|&k| -net[k]).sum();
    let total = supply.min(demand);

    let m = sinks.len();
    let mut vars = ProblemVariables::new();
    let x: Vec<Variable> = (0..sources.len() * m).map(|_| vars.add(variable().min(0.0))).collect();
    let mut objective = Expression::with_capacity(x.len());
    let mut shipped = Expression::with_capacity(x.len());
    for (si, &s) in sources.iter().enumerate() {
        for (ti, &t) in sinks.iter().enumerate() {
            objective.add_mul(cost[s * n + t], x[si * m + ti]);
            shipped.add_mul(1.0, x[si * m + ti]);
        }
    }
    let mut problem = vars.minimise(objective).using(microlp);
    for (si, &s) in sources.iter().enumerate() {
        let mut out = Expression::with_capacity(m);
        for ti in 0..m {
            out.add_mul(1.0, x[si * m + ti]);
        }
        problem = problem.with(out.leq(net[s]));
    }
    for (ti, &t) in sinks.iter().enumerate() {
        let mut into = Expression::with_capacity(sources.len());
        for si in 0..sources.len() {
            into.add_mul(1.0, x[si * m + ti]);
        }
        problem = problem.with(into.leq(-net[t]));
    }
    problem = problem.with(shipped.eq(total));
    let solution = problem
        .solve()
        .map_err(|e| format!("the minimum-empty-flow transportation problem could not be solved: {e}"))?;
    for (si, &s) in sources.iter().enumerate() {
        for (ti, &t) in sinks.iter().enumerate() {
            // The simplex can leave a basic variable a hair below zero.
            empty[s * n + t] = solution.value(x[si * m + ti]).max(0.0);
        }
    }
    Ok(empty)
}

/// The from-to chart estimate for one fleet of a plant under one layout.
///
/// Only the moves that fleet serves count: each product's flow from
/// department i to j goes to the first listed fleet that may serve that move
/// ([`Plant::fleet_may_serve`]: `carries`, load weight and `serves`), as the
/// simulation does with the first-listed fleet choice. With the nearest-idle
/// fleet choice the split depends on which mover is free, so this is the
/// estimate for the first-listed split. Flows come from the static picture's
/// per-product from-to charts, which include the moves out of receiving and
/// into shipping docks; that is why the minimum empty flow sends empties
/// from shipping back towards receiving. Distances are the plant's between
/// the departments' locations in `layout`; the handling time per trip is the
/// fleet's load plus unload time. Each trip carries one load: a fleet whose
/// movers take several at once needs fewer trips than this counts.
///
/// `efficiency` in (0, 1] is the share of each hour a mover does useful work
/// (the fleet's own `operators.efficiency` is the value the simulation
/// uses). The estimate ignores the fleet's size (`count`): it says how many
/// it needs.
pub fn fleet_estimate(
    plant: &Plant,
    pic: &StaticPicture,
    layout: usize,
    fleet: usize,
    rule: EmptyRule,
    efficiency: f64,
) -> Result<FleetEstimate, String> {
    let fleets = match &plant.handling {
        Handling::Instant => return Err("handling is instant: there is no fleet to size".to_string()),
        Handling::Fleets(f) => f,
    };
    let fl = fleets.get(fleet).ok_or_else(|| {
        format!("fleet index {fleet} is out of range (the plant has {} fleets)", fleets.len())
    })?;
    let lay = plant.layouts.get(layout).ok_or_else(|| {
        format!("layout index {layout} is out of range (the plant has {} layouts)", plant.layouts.len())
    })?;
    let nd = plant.departments.len();
    let nl = plant.locations.len();
    if pic.from_to_by_product.len() != plant.products.len()
        || pic.from_to_by_product.iter().any(|ft| ft.departments() != nd)
    {
        return Err("the static picture was not computed for this plant (its sizes do not match)".to_string());
    }
    if lay.location_of.len() != nd
        || lay.location_of.iter().any(|&l| l >= nl)
        || plant.distance.len() != nl * nl
    {
        return Err(format!("layout \"{}\" does not place every department at a known location", lay.name));
    }

    let mut flow = vec![0.0; nd * nd];
    for (p, ft) in pic.from_to_by_product.iter().enumerate() {
        for (i, j, f) in ft.iter() {
            if (0..fleets.len()).find(|&g| plant.fleet_may_serve(g, p, i, j)) == Some(fleet) {
                flow[i * nd + j] += f;
            }
        }
    }
    let loc = &lay.location_of;
    let mut distance = vec![0.0; nd * nd];
    for i in 0..nd {
        for j in 0..nd {
            distance[i * nd + j] = plant.distance(loc[i], loc[j]);
        }
    }
    // With the fleet's acceleration limit each from-to pair costs what
    // `travel::travel_time` gives, not d/v, so the estimate times trips by
    // the same rule as a simulation that uses that function.
    let mover = MoverSpec {
        speed_loaded: fl.speed_loaded,
        speed_empty: fl.speed_empty,
        accel: fl.accel,
        handling_s_per_trip: fl.load_s + fl.unload_s,
    };
    from_to_fleet(&flow, &distance, &mover, rule, efficiency).map_err(|e| format!("fleet \"{}\": {e}", fl.id))
}

// ----------------------------------------------------------------------------
// Checks and helpers
// ----------------------------------------------------------------------------

/// Whole vehicles for a real count. A count within 1e-9 (relative) above a
/// whole number is taken as that number: 2.0000000000004 from rounding in the
/// sums is an exact fit of two vehicles, not a call for a third.
fn round_up(x: f64) -> u64 {
    if !(x > 0.0) {
        return 0;
    }
    let floor = x.floor();
    // `as u64` saturates, so an absurd count cannot wrap.
    if x - floor <= 1e-9 * x.max(1.0) {
        floor as u64
    } else {
        floor as u64 + 1
    }
}

fn net_of(flow: &[f64], n: usize) -> Vec<f64> {
    let mut net = vec![0.0; n];
    for i in 0..n {
        for j in 0..n {
            let f = flow[i * n + j];
            net[j] += f;
            net[i] -= f;
        }
    }
    net
}

fn square_side(len: usize, what: &str) -> Result<usize, String> {
    let n = len.isqrt();
    if n * n == len {
        Ok(n)
    } else {
        Err(format!("the {what} matrix has {len} entries, which is not a square number of departments"))
    }
}

fn check_matrices(flow: &[f64], distance: &[f64]) -> Result<usize, String> {
    check_pair(flow, distance, "distance", "distances")
}

/// A flow matrix and a second matrix (`what`, whose entries are `unit`) of
/// the same square size, every entry finite and ≥ 0; returns the side.
fn check_pair(flow: &[f64], other: &[f64], what: &str, unit: &str) -> Result<usize, String> {
    let n = square_side(flow.len(), "flow")?;
    if other.len() != flow.len() {
        return Err(format!(
            "the {what} matrix has {} entries but the flow matrix has {} ({n}×{n})",
            other.len(),
            flow.len()
        ));
    }
    check_entries(flow, n, "flow", "loads per hour")?;
    check_entries(other, n, what, unit)?;
    Ok(n)
}

fn check_entries(m: &[f64], n: usize, what: &str, unit: &str) -> Result<(), String> {
    match m.iter().position(|x| !(x.is_finite() && *x >= 0.0)) {
        None => Ok(()),
        Some(k) => Err(format!(
            "{what} from department {} to department {} is {}: {unit} must be finite and at least 0",
            k / n,
            k % n,
            m[k]
        )),
    }
}

fn positive(what: &str, x: f64) -> Result<(), String> {
    if x > 0.0 && x.is_finite() {
        Ok(())
    } else {
        Err(format!("{what} must be a finite number above 0, got {x}"))
    }
}

fn non_negative(what: &str, x: f64) -> Result<(), String> {
    if x >= 0.0 && x.is_finite() {
        Ok(())
    } else {
        Err(format!("{what} must be a finite number of at least 0, got {x}"))
    }
}

fn fraction(what: &str, x: f64) -> Result<(), String> {
    if x > 0.0 && x <= 1.0 {
        Ok(())
    } else {
        Err(format!("{what} must be above 0 and at most 1, got {x}"))
    }
}

fn check_accel(a: Option<f64>) -> Result<(), String> {
    a.map_or(Ok(()), |a| positive("acceleration", a))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// |got − want| within half a unit of the last of six significant
    /// figures, the precision at which docs/formulas.md prints its values.
    fn close6(got: f64, want: f64) -> bool {
        (got - want).abs() <= 5e-6 * want.abs().max(1.0)
    }

    // ---- Delivery-cycle form: docs/formulas.md §7, Groover check ----

    const FT: f64 = 0.3048; // international foot, m (exact by definition)

    fn groover_problem() -> (DeliveryCycle, Availability) {
        // docs/formulas.md §7: L_d = 500 ft, L_e = 350 ft, v = 300 ft/min,
        // T_L = T_U = 0.5 min, A = 0.95, T_f = 0.85, E_w = 0.90; converted to SI.
        let v = 300.0 * FT / 60.0;
        let cycle = DeliveryCycle {
            load_s: 30.0,
            loaded_m: 500.0 * FT,
            speed_loaded: v,
            unload_s: 30.0,
            empty_m: 350.0 * FT,
            speed_empty: v,
            accel: None,
        };
        (cycle, Availability { availability: 0.95, traffic: 0.85, worker_efficiency: 0.90 })
    }

    #[test]
    fn delivery_cycle_matches_groover_check() {
        // docs/formulas.md §7 (Groover, material transport systems): R_f = 60/h gives
        // Tc = 3.83333 min, AT = 43.6050 min, R_dv = 11.3752/h, n = 5.27462 → 6.
        let (cycle, factors) = groover_problem();
        let est = delivery_cycle_fleet(&cycle, 60.0, &factors).unwrap();
        assert!(close6(est.cycle_s / 60.0, 3.83333), "Tc = {} min", est.cycle_s / 60.0);
        assert!(close6(est.available_s_per_h / 60.0, 43.6050), "AT = {} min", est.available_s_per_h / 60.0);
        assert!(close6(est.deliveries_per_vehicle_h, 11.3752), "R_dv = {}", est.deliveries_per_vehicle_h);
        assert!(close6(est.vehicles, 5.27462), "n = {}", est.vehicles);
        assert_eq!(est.vehicles_rounded_up, 6);
    }

    #[test]
    fn delivery_cycle_rejects_bad_values() {
        // Project rule (DEVELOPERS.md): bad input is an error, never a panic or NaN.
        let (cycle, factors) = groover_problem();
        let bad_speed = DeliveryCycle { speed_empty: f64::NAN, ..cycle };
        assert!(delivery_cycle_fleet(&bad_speed, 60.0, &factors).unwrap_err().contains("empty speed"));
        let bad_accel = DeliveryCycle { accel: Some(0.0), ..cycle };
        assert!(delivery_cycle_fleet(&bad_accel, 60.0, &factors).unwrap_err().contains("acceleration"));
        let bad_a = Availability { availability: 1.5, ..factors };
        assert!(delivery_cycle_fleet(&cycle, 60.0, &bad_a).unwrap_err().contains("availability"));
        assert!(delivery_cycle_fleet(&cycle, -1.0, &factors).is_err());
    }

    // ---- From-to chart form: docs/formulas.md §7, from-to chart check ----

    /// docs/formulas.md §7: A(0,0), B(40,0), C(40,30) m, rectilinear;
    /// loads/h A→B 20, B→C 16, A→C 8, C→B 6.
    fn chart() -> (Vec<f64>, Vec<f64>) {
        #[rustfmt::skip]
        let flow = vec![
            0.0, 20.0, 8.0,
            0.0, 0.0, 16.0,
            0.0, 6.0, 0.0,
        ];
        let pts = [(0.0, 0.0), (40.0, 0.0), (40.0, 30.0)];
        let mut dist = vec![0.0; 9];
        for (i, a) in pts.iter().enumerate() {
            for (j, b) in pts.iter().enumerate() {
                dist[i * 3 + j] = f64::abs(a.0 - b.0) + f64::abs(a.1 - b.1);
            }
        }
        (flow, dist)
    }

    /// docs/formulas.md §7: v_L = 2.0 m/s, v_E = 2.5 m/s, h = 1.0 min per trip.
    const CHART_MOVER: MoverSpec =
        MoverSpec { speed_loaded: 2.0, speed_empty: 2.5, accel: None, handling_s_per_trip: 60.0 };

    // The chart's numbers are sums of a few products of small integers, so
    // the exact values are compared to 1e-9; the LP solution to 1e-7,
    // allowing for the simplex's own tolerances.

    #[test]
    fn net_flow_matches_reference() {
        // docs/formulas.md §7: net flow A −28, B +10, C +18.
        let net = net_flow(&chart().0).unwrap();
        assert_eq!(net, vec![-28.0, 10.0, 18.0]);
    }

    #[test]
    fn minimum_empty_flow_matches_reference() {
        // docs/formulas.md §7: 50 trips, 2020 m/h loaded; empties C→A 18 and
        // B→A 10, 1660 m/h; 16.8333 + 11.0667 + 50 = 77.9 min/h, η = 0.85,
        // so N = 1.52745 → 2.
        let (flow, dist) = chart();
        let est = from_to_fleet(&flow, &dist, &CHART_MOVER, EmptyRule::MinimumEmptyFlow, 0.85).unwrap();
        assert!((est.trips_per_h - 50.0).abs() < 1e-9);
        assert!((est.loaded_m_per_h - 2020.0).abs() < 1e-9);
        let e = est.empty_flow.as_ref().unwrap();
        #[rustfmt::skip]
        let want = [
            0.0, 0.0, 0.0,
            10.0, 0.0, 0.0,
            18.0, 0.0, 0.0,
        ];
        for (k, (&got, &w)) in e.iter().zip(&want).enumerate() {
            assert!((got - w).abs() < 1e-7, "empty flow [{}][{}] = {got}, want {w}", k / 3, k % 3);
        }
        assert!((est.empty_m_per_h - 1660.0).abs() < 1e-6);
        assert!(close6(est.loaded_travel_s_per_h / 60.0, 16.8333));
        assert!(close6(est.empty_travel_s_per_h / 60.0, 11.0667));
        assert!((est.handling_s_per_h / 60.0 - 50.0).abs() < 1e-9);
        assert!((est.busy_s_per_h / 60.0 - 77.9).abs() < 1e-6);
        assert!(close6(est.vehicles, 1.52745), "N = {}", est.vehicles);
        assert_eq!(est.vehicles_rounded_up, 2);
        assert_eq!(est.empty_rule, EmptyRule::MinimumEmptyFlow);
    }

    #[test]
    fn conservative_rule_matches_reference() {
        // docs/formulas.md §7, approximation (a): 80.3 min/h, N = 1.57451.
        let (flow, dist) = chart();
        let est = from_to_fleet(&flow, &dist, &CHART_MOVER, EmptyRule::SameAsLoaded, 0.85).unwrap();
        assert!((est.empty_m_per_h - 2020.0).abs() < 1e-9);
        assert!((est.busy_s_per_h / 60.0 - 80.3).abs() < 1e-9);
        assert!(close6(est.vehicles, 1.57451), "N = {}", est.vehicles);
        assert_eq!(est.vehicles_rounded_up, 2);
        assert!(est.empty_flow.is_none());
    }

    #[test]
    fn acceleration_limit_uses_the_travel_profile_per_trip() {
        // One load an hour over 50 m and another over 5 m, v = 2 m/s, a = 0.5 m/s²:
        // docs/formulas.md §8 gives 29 s and 6.32456 s per trip. The empties run
        // the same legs back (B→A and C→A are the only surplus → deficit pairs).
        #[rustfmt::skip]
        let flow = vec![
            0.0, 1.0, 1.0,
            0.0, 0.0, 0.0,
            0.0, 0.0, 0.0,
        ];
        #[rustfmt::skip]
        let dist = vec![
            0.0, 50.0, 5.0,
            50.0, 0.0, 55.0,
            5.0, 55.0, 0.0,
        ];
        let mover =
            MoverSpec { speed_loaded: 2.0, speed_empty: 2.0, accel: Some(0.5), handling_s_per_trip: 0.0 };
        let est = from_to_fleet(&flow, &dist, &mover, EmptyRule::MinimumEmptyFlow, 1.0).unwrap();
        assert!((est.loaded_travel_s_per_h - (29.0 + 6.32456)).abs() < 1e-5);
        assert!((est.empty_travel_s_per_h - (29.0 + 6.32456)).abs() < 1e-5);
        assert!((est.empty_m_per_h - 55.0).abs() < 1e-7);
    }

    #[test]
    fn no_flow_needs_no_vehicle() {
        // Trivially from the §7 formula: N = 0 / (60·η).
        let est =
            from_to_fleet(&[0.0; 4], &[0.0, 5.0, 5.0, 0.0], &CHART_MOVER, EmptyRule::MinimumEmptyFlow, 0.9)
                .unwrap();
        assert_eq!((est.busy_s_per_h, est.vehicles, est.vehicles_rounded_up), (0.0, 0.0, 0));
        assert_eq!(est.empty_flow, Some(vec![0.0; 4]));
    }

    #[test]
    fn from_to_rejects_bad_values() {
        // Project rule (DEVELOPERS.md): bad input is an error, never a panic.
        let (flow, dist) = chart();
        let r = EmptyRule::MinimumEmptyFlow;
        assert!(from_to_fleet(&flow[..8], &dist[..8], &CHART_MOVER, r, 0.85).unwrap_err().contains("square"));
        assert!(from_to_fleet(&flow, &dist[..4], &CHART_MOVER, r, 0.85)
            .unwrap_err()
            .contains("distance matrix"));
        let mut neg = flow.clone();
        neg[5] = -1.0;
        let msg = from_to_fleet(&neg, &dist, &CHART_MOVER, r, 0.85).unwrap_err();
        assert!(msg.contains("department 1 to department 2"), "{msg}");
        let mut nan = dist.clone();
        nan[1] = f64::NAN;
        assert!(from_to_fleet(&flow, &nan, &CHART_MOVER, r, 0.85).is_err());
        let slow = MoverSpec { speed_loaded: 0.0, ..CHART_MOVER };
        assert!(from_to_fleet(&flow, &dist, &slow, r, 0.85).unwrap_err().contains("loaded speed"));
        assert!(from_to_fleet(&flow, &dist, &CHART_MOVER, r, 0.0).unwrap_err().contains("efficiency"));
        assert!(from_to_fleet(&flow, &dist, &CHART_MOVER, r, f64::NAN).is_err());
        assert!(min_empty_flow(&flow, &dist[..4]).is_err());
    }

    #[test]
    fn whole_vehicles_ignore_rounding_noise() {
        // Ceiling, except that sums a few ulps above a whole number count as it.
        assert_eq!(round_up(2.0), 2);
        assert_eq!(round_up(2.0 + 4e-15), 2);
        assert_eq!(round_up(2.001), 3);
        assert_eq!(round_up(0.2), 1);
        assert_eq!(round_up(0.0), 0);
        assert_eq!(round_up(f64::NAN), 0);
    }

    /// SplitMix64 (Steele, Lea & Flood 2014): a fixed, seeded sequence so the
    /// random instances are the same on every run.
    struct SplitMix(u64);
    impl SplitMix {
        fn unit(&mut self) -> f64 {
            self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = self.0;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
        }
    }

    #[test]
    fn minimum_empty_flow_bounds_on_random_instances() {
        // Two properties of the transportation problem (Maxwell & Muckstadt
        // 1982, from memory): every surplus is shipped, so total empty flow =
        // total surplus; and the loaded flow run backwards is itself a way of
        // rebalancing the movers, which with rectilinear (metric, symmetric)
        // distances costs at least the optimum, so the minimum empty distance
        // never exceeds the conservative "empty = loaded" one.
        let mut rng = SplitMix(20_240_607);
        for case in 0..300 {
            let n = 2 + (rng.unit() * 7.0) as usize;
            let pts: Vec<(f64, f64)> = (0..n).map(|_| (rng.unit() * 100.0, rng.unit() * 60.0)).collect();
            let mut flow = vec![0.0; n * n];
            let mut dist = vec![0.0; n * n];
            for i in 0..n {
                for j in 0..n {
                    dist[i * n + j] = (pts[i].0 - pts[j].0).abs() + (pts[i].1 - pts[j].1).abs();
                    // About half the pairs carry loads; none within a department.
                    if i != j && rng.unit() < 0.5 {
                        flow[i * n + j] = (rng.unit() * 30.0 * 4.0).round() / 4.0;
                    }
                }
            }
            let e = min_empty_flow(&flow, &dist).unwrap();
            let net = net_flow(&flow).unwrap();
            let surplus: f64 = net.iter().filter(|&&x| x > 0.0).sum();
            let total: f64 = e.iter().sum();
            // Flows are quarters up to 30, so sums are exact in binary; 1e-7
            // allows for the simplex's tolerances.
            assert!((total - surplus).abs() < 1e-7, "case {case}: empty {total}, surplus {surplus}");
            for (k, &x) in e.iter().enumerate() {
                let (i, j) = (k / n, k % n);
                assert!(x == 0.0 || (net[i] > 0.0 && net[j] < 0.0), "case {case}: empties {i}→{j}");
            }
            let min = from_to_fleet(&flow, &dist, &CHART_MOVER, EmptyRule::MinimumEmptyFlow, 1.0).unwrap();
            let cons = from_to_fleet(&flow, &dist, &CHART_MOVER, EmptyRule::SameAsLoaded, 1.0).unwrap();
            // Relative 1e-9 covers rounding in sums of up to ~60 terms of size ≤ 5000.
            let slack = 1e-9 * cons.empty_m_per_h.max(1.0);
            assert!(
                min.empty_m_per_h <= cons.empty_m_per_h + slack,
                "case {case}: minimum {} > conservative {}",
                min.empty_m_per_h,
                cons.empty_m_per_h
            );
            assert!(min.vehicles <= cons.vehicles + 1e-9, "case {case}");
        }
    }

    // ---- From a plant's static picture ----

    /// The hand-checked plant of scenarios/validation/hand-checked-static.yaml
    /// (layout p123 only), with its flows split over two fleets when `split`.
    fn plant_yaml(split: bool) -> String {
        let fleets = if split {
            "fleets:
  - id: trucks
    kind: forklift
    count: 3
    speed: { loaded: 2.0 m/s, empty: 2.5 m/s }
    handling: { load: 30 s, unload: 30 s }
    home: receiving
    carries: [hinge]
  - id: carts
    kind: tow-cart
    count: 1
    speed: { loaded: 1 m/s, empty: 1 m/s }
    handling: { load: 10 s, unload: 10 s }
    home: receiving
    carries: [latch]
"
        } else {
            "fleets:
  - id: trucks
    kind: forklift
    count: 3
    speed: { loaded: 2.0 m/s, empty: 2.5 m/s }
    handling: { load: 30 s, unload: 30 s }
    home: receiving
"
        };
        format!(
            "plant: sizing check (invented)
run: {{ horizon: 10 d, replications: 2 }}
locations:
  - {{ id: L1, at: [0, 0] }}
  - {{ id: L2, at: [40, 0] }}
  - {{ id: L3, at: [40, 30] }}
  - {{ id: dock-in, at: [-10, 0] }}
  - {{ id: dock-out, at: [50, 30] }}
distance: rectilinear
departments:
  - {{ id: receiving, dock: receiving }}
  - {{ id: punching, machines: 1 }}
  - {{ id: bending, machines: 1 }}
  - {{ id: plating, machines: 2 }}
  - {{ id: shipping, dock: shipping }}
layouts:
  p123: {{ receiving: dock-in, punching: L1, bending: L2, plating: L3, shipping: dock-out }}
products:
  - id: hinge
    demand: {{ per_hour: 10 }}
    routing:
      - {{ step: a, at: punching, time: 2 min }}
      - step: b
        at: bending
        time: 3 min
        then: [{{ step: c, p: 0.8 }}, {{ step: ship, p: 0.2 }}]
      - step: c
        at: plating
        time: 3 min
        then: [{{ step: b2, p: 0.375 }}, {{ step: ship, p: 0.625 }}]
      - {{ step: b2, at: bending, time: 3 min, then: [{{ step: ship, p: 1 }}] }}
      - {{ step: ship, at: shipping }}
  - id: latch
    demand: {{ per_hour: 4 }}
    routing:
      - {{ step: a, at: punching, time: 2 min, then: [{{ step: c, p: 1 }}] }}
      - step: c
        at: plating
        time: 3 min
        then: [{{ step: ship, p: 0.9 }}, {{ step: redo, p: 0.1 }}]
      - {{ step: redo, at: plating, time: 1.5 min, then: [{{ step: c, p: 1 }}] }}
      - {{ step: ship, at: shipping }}
{fleets}"
        )
    }

    fn load(split: bool) -> (Plant, StaticPicture) {
        load_text(&plant_yaml(split))
    }

    fn load_text(yaml: &str) -> (Plant, StaticPicture) {
        let plant = crate::parse_scenario(yaml, std::path::Path::new("sizing-check.yaml"))
            .unwrap_or_else(|e| panic!("{e}"));
        // Demand factor 2 makes the inner flows those of the docs/formulas.md §7 chart.
        let pic = StaticPicture::new(&plant, 2.0);
        (plant, pic)
    }

    #[test]
    fn plant_estimate_includes_dock_moves() {
        // Hand computation with the docs/formulas.md §7 from-to formula. At demand
        // ×2 the flows are the §7 chart (A→B 20, B→C 16, A→C 8, C→B 6) plus the
        // dock moves the file's header lists, doubled: receiving→A 28 (10 m),
        // B→shipping 10 (40 m), C→shipping 18 (10 m): 106 trips, 2880 m/h.
        // Net flow is 0 at A, B and C; receiving −28, shipping +28, so the
        // empties are shipping→receiving 28 × 90 m = 2520 m/h.
        // Busy: 2880/2 + 2520/2.5 + 106 × 60 = 1440 + 1008 + 6360 = 8808 s/h;
        // N = 8808 / (3600 × 0.85) = 2.878431 → 3.
        // Conservative: 1440 + 2880/2.5 + 6360 = 8952 s/h, N = 2.925490.
        let (plant, pic) = load(false);
        let est = fleet_estimate(&plant, &pic, 0, 0, EmptyRule::MinimumEmptyFlow, 0.85).unwrap();
        assert!((est.trips_per_h - 106.0).abs() < 1e-9, "{}", est.trips_per_h);
        assert!((est.loaded_m_per_h - 2880.0).abs() < 1e-9);
        assert!((est.empty_m_per_h - 2520.0).abs() < 1e-6);
        let e = est.empty_flow.as_ref().unwrap();
        let nd = plant.departments.len();
        let (rec, ship) = (0, nd - 1);
        assert!((e[ship * nd + rec] - 28.0).abs() < 1e-7);
        assert!((e.iter().sum::<f64>() - 28.0).abs() < 1e-7);
        assert!((est.busy_s_per_h - 8808.0).abs() < 1e-6);
        assert!(close6(est.vehicles, 2.878431), "N = {}", est.vehicles);
        assert_eq!(est.vehicles_rounded_up, 3);
        let cons = fleet_estimate(&plant, &pic, 0, 0, EmptyRule::SameAsLoaded, 0.85).unwrap();
        assert!((cons.busy_s_per_h - 8952.0).abs() < 1e-9);
        assert!(close6(cons.vehicles, 2.925490));
    }

    #[test]
    fn plant_estimate_counts_only_the_fleets_own_moves() {
        // Same hand computation, per product. Hinge (20/h): receiving→A 20,
        // A→B 20, B→C 16, C→B 6, B→shipping 10, C→shipping 10 = 82 trips,
        // 200 + 800 + 480 + 180 + 400 + 100 = 2160 m/h; empties 20 × 90 m.
        // Latch (8/h): receiving→A, A→C, C→shipping, 8 each = 24 trips,
        // 80 + 560 + 80 = 720 m/h; empties 8 × 90 = 720 m/h. At 1 m/s and
        // 20 s a trip: 720 + 720 + 480 = 1920 s/h, N = 1920 / (3600 × 0.8) = 2/3.
        let (plant, pic) = load(true);
        let trucks = fleet_estimate(&plant, &pic, 0, 0, EmptyRule::MinimumEmptyFlow, 0.8).unwrap();
        assert!((trucks.trips_per_h - 82.0).abs() < 1e-9);
        assert!((trucks.loaded_m_per_h - 2160.0).abs() < 1e-9);
        assert!((trucks.empty_m_per_h - 1800.0).abs() < 1e-6);
        let carts = fleet_estimate(&plant, &pic, 0, 1, EmptyRule::MinimumEmptyFlow, 0.8).unwrap();
        assert!((carts.trips_per_h - 24.0).abs() < 1e-9);
        assert!((carts.loaded_m_per_h - 720.0).abs() < 1e-9);
        assert!((carts.empty_m_per_h - 720.0).abs() < 1e-6);
        assert!((carts.busy_s_per_h - 1920.0).abs() < 1e-6);
        assert!((carts.vehicles - 2.0 / 3.0).abs() < 1e-9);
        assert_eq!(carts.vehicles_rounded_up, 1);
    }

    #[test]
    fn plant_estimate_uses_the_fleets_acceleration() {
        // The carts of the previous test with a = 0.5 m/s² at v = 1 m/s: every
        // leg is at least 10 m, beyond v²/a = 2 m, so by docs/formulas.md §8 each
        // trip takes d/v + v/a = d + 2 s. Loaded: 720 + 24 × 2 = 768 s/h;
        // empty: 8 × (90 + 2) = 736 s/h; handling 480 s/h; 1984 s/h in all.
        let yaml = plant_yaml(true).replace(
            "speed: { loaded: 1 m/s, empty: 1 m/s }",
            "speed: { loaded: 1 m/s, empty: 1 m/s }\n    acceleration: 0.5 m/s2",
        );
        let (plant, pic) = load_text(&yaml);
        assert_eq!(plant.fleets()[1].accel, Some(0.5));
        let carts = fleet_estimate(&plant, &pic, 0, 1, EmptyRule::MinimumEmptyFlow, 0.8).unwrap();
        assert!((carts.loaded_travel_s_per_h - 768.0).abs() < 1e-9);
        assert!((carts.empty_travel_s_per_h - 736.0).abs() < 1e-6);
        assert!((carts.empty_m_per_h - 720.0).abs() < 1e-6);
        assert!((carts.busy_s_per_h - 1984.0).abs() < 1e-6);
    }

    #[test]
    fn plant_estimate_rejects_bad_indices() {
        // Project rule (DEVELOPERS.md): bad input is an error, never a panic.
        let (plant, pic) = load(true);
        let r = EmptyRule::MinimumEmptyFlow;
        assert!(fleet_estimate(&plant, &pic, 0, 2, r, 0.8).unwrap_err().contains("fleet index 2"));
        assert!(fleet_estimate(&plant, &pic, 1, 0, r, 0.8).unwrap_err().contains("layout index 1"));
        assert!(fleet_estimate(&plant, &pic, 0, 0, r, 1.2).unwrap_err().contains("efficiency"));
        let mut other = pic.clone();
        other.from_to_by_product.pop();
        assert!(fleet_estimate(&plant, &other, 0, 0, r, 0.8).unwrap_err().contains("static picture"));
        let instant = Plant { handling: Handling::Instant, ..plant };
        assert!(fleet_estimate(&instant, &pic, 0, 0, r, 0.8).unwrap_err().contains("instant"));
    }
}
