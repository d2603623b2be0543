//! Crews against theory: technicians as the machine-repair model M/M/c//N, operators as M/M/2 (Erlang C), and hand-timed schedules for people held for setups, loading, across shifts and walking to repairs.
//!
//! Tolerances of the statistical rows follow tests/tests/queueing.rs: K = 3
//! half-widths of the 40-replication Student t interval (t(0.975, 39) =
//! 2.023, so K·hw ≈ 6.1 standard errors: a correct model fails a row with
//! probability about 1e-9), plus a bias allowance of 1e-3 of theory for the
//! start-up (the warm-up of 500 h is over 50 relaxation times of either
//! model: about 1/(2μ(1−√ρ)²) ≈ 15 h for the M/M/2 at ρ = 0.75, and a few
//! mean repair times, 2 h, for the machine-repair chain; from memory of
//! Morse's M/M/1 relaxation time), and a power limit: each tolerance must
//! stay under 4% of theory for waits and lengths and 1% for utilisations
//! and availabilities, so a 5% error is caught.
//!
//! The hand-timed rows are exact: constant times, an order trace and instant
//! moves leave nothing random, and every time is a sum of whole minutes
//! (exact in f64), so they are compared to 1e-9.

use layflow_models::metrics::{value, Estimate, Id};
use layflow_models::plant::Plant;
use layflow_models::sim::RepStats;
use layflow_tests::{
    check_little, department, hours, load, mmc, run_layout, scaled, shifted, Checks, Run, HOUR,
};

const K: f64 = 3.0;
const BIAS_REL: f64 = 1e-3;
const POWER: f64 = 0.04;
const POWER_TIGHT: f64 = 0.01;
const TOL: f64 = 1e-9;
const MIN: f64 = 60.0;

/// Per replication, `f` of it, as a Student t interval.
fn per_rep(run: &Run, f: impl Fn(&RepStats) -> f64) -> Estimate {
    let xs: Vec<f64> = run.reps.iter().map(f).collect();
    let iv = layflow_engine::interval(&xs, 0.95);
    Estimate { mean: iv.mean, half_width: iv.half_width, n: iv.n }
}

/// The machine-repair model M/M/c//N (docs/formulas.md §19): N machines,
/// c repairers, failure rate `lambda` per running machine, repair rate `mu`.
/// Returns (L down, Lq waiting for a repairer, Wq, availability, repairer utilisation).
/// Gross, Shortle, Thompson & Harris, Fundamentals of Queueing Theory,
/// finite-source queues; Palm 1947 (from memory).
fn machine_repair(n: u32, c: u32, lambda: f64, mu: f64) -> (f64, f64, f64, f64, f64) {
    let r = lambda / mu;
    let choose = |n: u32, k: u32| (0..k).fold(1.0, |a, i| a * f64::from(n - i) / f64::from(i + 1));
    let fact = |k: u32| (1..=k).fold(1.0, |a, i| a * f64::from(i));
    let weights: Vec<f64> = (0..=n)
        .map(|k| {
            if k <= c {
                choose(n, k) * r.powi(k as i32)
            } else {
                choose(n, k) * fact(k) / (fact(c) * f64::from(c).powi((k - c) as i32)) * r.powi(k as i32)
            }
        })
        .collect();
    let total: f64 = weights.iter().sum();
    let p: Vec<f64> = weights.iter().map(|w| w / total).collect();
    let l: f64 = p.iter().enumerate().map(|(k, x)| k as f64 * x).sum();
    let lq: f64 =
        p.iter().enumerate().filter(|(k, _)| *k as u32 > c).map(|(k, x)| (k as f64 - f64::from(c)) * x).sum();
    let failures = lambda * (f64::from(n) - l);
    (l, lq, lq / failures, 1.0 - l / f64::from(n), (l - lq) / f64::from(c))
}

#[test]
fn the_machine_repair_formula_gives_the_published_values() {
    // The worked case: N = 6, c = 2, λ = 0.1/h, μ = 0.5/h (values as
    // docs/formulas.md §19 lists them, six decimals).
    let (l, lq, wq, a, u) = machine_repair(6, 2, 0.1, 0.5);
    let mut c = Checks::new("machine-repair model M/M/2//6");
    c.exact("L", 1.115351, l, 5e-7);
    c.exact("Lq", 0.138421, lq, 5e-7);
    c.exact("Wq (h)", 0.283380, wq, 5e-7);
    c.exact("availability", 0.814108, a, 5e-7);
    c.exact("repairer utilisation", 0.488465, u, 5e-7);
    c.finish();
}

#[test]
fn technicians_of_a_crew_are_the_machine_repair_model() {
    let file = "validation/crews-machine-repair.yaml";
    let plant = load(file);
    let (l, lq, wq, a, u) = machine_repair(6, 2, 0.1, 0.5);
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let mut c = Checks::new(file);
    let b = |x: f64| BIAS_REL * x;
    let d = department(&plant, "presses");
    let avail = s.departments[d].availability.expect("presses have breakdowns");
    c.estimate("availability (share of presses up)", a, &avail, K, b(a), POWER_TIGHT);
    // Presses down = N × (1 − availability), per replication.
    let down = per_rep(&run, |r| 6.0 * (1.0 - r.availability[d]));
    c.estimate("L, presses down (waiting or in repair)", l, &down, K, b(l), POWER);
    let crew = &s.crews.as_ref().expect("the plant has crews")[0];
    c.estimate("fitter utilisation", u, &crew.utilization, K, b(u), POWER_TIGHT);
    let w = scaled(&Estimate { mean: crew.person_wait_s.mean, ..crew.person_wait_s }, 1.0 / HOUR);
    c.estimate("Wq, a repair's wait for a fitter (h)", wq, &w, K, b(wq), POWER);
    // Lq by Little's law per replication: failures per hour (λ × presses up) × Wq.
    let lq_sim =
        per_rep(&run, |r| 0.1 * 6.0 * r.availability[d] * value(Id::CrewPersonWait, &plant, r, 0) / HOUR);
    c.estimate("Lq, presses waiting for a fitter (Little)", lq, &lq_sim, K, b(lq), POWER);
    // Little's law for the fitters: busy fitters = failures per hour × MTTR.
    let busy = per_rep(&run, |r| 2.0 * value(Id::CrewUtilization, &plant, r, 0));
    let rate_mttr = per_rep(&run, |r| 0.1 * 6.0 * r.availability[d] * 2.0);
    c.estimate(
        "busy fitters = failure rate × MTTR",
        rate_mttr.mean,
        &busy,
        K,
        b(rate_mttr.mean),
        POWER_TIGHT,
    );
    c.exact("people cost = 2 × 45 per hour", 90.0, s.people_cost_per_h.expect("crews").mean, TOL);
    check_little(&mut c, "lots", &run, layflow_tests::little_edge_bound(&run));
    c.finish();
}

#[test]
fn two_operators_shared_by_three_departments_are_mm2() {
    // Erlang C (docs/formulas.md §1; Gross, Shortle, Thompson & Harris,
    // Fundamentals of Queueing Theory, M/M/c; from memory): c = 2,
    // λ = 1.5/h, μ = 1/h: Wq = 9/7 h, W = 16/7 h, L = 24/7, ρ = 0.75.
    // Why the plant is exactly M/M/2: scenarios/validation/crews-operators-mm2.yaml
    // and docs/formulas.md §27 (machines per department ≥ crew size, one
    // first-come-first-served queue of requests for the crew, equal exponential times).
    let th = mmc(2, 1.5, 1.0);
    assert!((th.wq - 9.0 / 7.0).abs() < 1e-12 && (th.l - 24.0 / 7.0).abs() < 1e-12);
    let file = "validation/crews-operators-mm2.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let mut c = Checks::new(file);
    let b = |x: f64| BIAS_REL * x;
    let w = hours(&s.flow_time_s);
    c.estimate("W, flow time (h)", th.w, &w, K, b(th.w), POWER);
    c.estimate("Wq = W − E[S] (h)", th.wq, &shifted(&w, -1.0), K, b(th.wq), POWER);
    c.estimate("L, lots in the plant", th.l, &s.wip_mean, K, b(th.l), POWER);
    let crew = &s.crews.as_ref().expect("the plant has crews")[0];
    c.estimate("operator utilisation ρ", th.rho, &crew.utilization, K, b(th.rho), POWER_TIGHT);
    c.estimate("throughput (lots/h)", 1.5, &s.throughput_per_h, K, b(1.5), POWER_TIGHT);
    c.relative("predicted operator utilisation λE[S]/c", 0.75, crew.utilization_predicted, 1e-12);
    // Every lot waits for a machine, then for an operator; the two parts sum to Wq.
    let parts = per_rep(&run, |r| {
        let mut sum = 0.0;
        for d in ["drill", "mill", "grind"].map(|id| department(&plant, id)) {
            sum += (r.queue[d] / (0.5 / HOUR)) + value(Id::DepartmentPersonWait, &plant, r, d);
        }
        sum / 3.0 / HOUR
    });
    c.estimate(
        "queue for a machine (Little) + wait for a person = Wq (h)",
        th.wq,
        &parts,
        K,
        b(th.wq),
        POWER,
    );
    check_little(&mut c, "lots", &run, layflow_tests::little_edge_bound(&run));
    c.finish();
}

fn product(plant: &Plant, id: &str) -> usize {
    plant.products.iter().position(|p| p.id == id).unwrap_or_else(|| panic!("no product {id:?}"))
}

#[test]
fn people_for_setups_and_for_loading_follow_the_hand_timed_schedule() {
    let file = "validation/crews-hand-timed.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let mut c = Checks::new(file);
    for r in &run.reps {
        // Flow times from the schedule in the scenario's header: hinges 55 and 90 min, the latch 65.
        let hinge = &r.flow_time[product(&plant, "hinge")];
        c.exact("hinges shipped", 2.0, hinge.count() as f64, 0.0);
        c.exact("hinge mean flow time (s)", (55.0 + 90.0) / 2.0 * MIN, hinge.mean(), TOL);
        c.exact("latch flow time (s)", 65.0 * MIN, r.flow_time[product(&plant, "latch")].mean(), TOL);
        c.exact("setter utilisation", 30.0 / 180.0, value(Id::CrewUtilization, &plant, r, 0), TOL);
        c.exact("setter mean wait (s)", 75.0, value(Id::CrewPersonWait, &plant, r, 0), TOL);
        let (mill, drill) = (department(&plant, "mill"), department(&plant, "drill"));
        c.exact(
            "mill's wait for a person (s)",
            2.5 * MIN,
            value(Id::DepartmentPersonWait, &plant, r, mill),
            TOL,
        );
        c.exact("drill's wait for a person (s)", 0.0, value(Id::DepartmentPersonWait, &plant, r, drill), TOL);
        c.exact("mill busy (waiting for the setter is not busy)", 110.0 / 180.0, r.utilization[mill], TOL);
        c.exact("drill busy (loading and processing)", 50.0 / 180.0, r.utilization[drill], TOL);
        // Little's law, exact here: the plant is empty at 0 and at the horizon.
        let shipped: u64 = r.shipped.iter().sum();
        c.exact(
            "Little: WIP = X × W",
            r.wip_total,
            shipped as f64 / r.window_s * r.flow_time_all.mean(),
            TOL,
        );
    }
    c.finish();
}

#[test]
fn a_crew_off_duty_finishes_its_task_and_starts_none() {
    let file = "validation/crews-shifts.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let mut c = Checks::new(file);
    for r in &run.reps {
        c.exact("mean flow time (s)", (40.0 + 75.0 + 90.0) / 3.0 * MIN, r.flow_time_all.mean(), TOL);
        c.exact("operator utilisation", 2.0 / 3.0, value(Id::CrewUtilization, &plant, r, 0), TOL);
        c.exact("utilisation of on-duty time", 1.0, value(Id::CrewScheduledUtilization, &plant, r, 0), TOL);
        c.exact("mean wait for the operator (s)", 700.0, value(Id::CrewPersonWait, &plant, r, 0), TOL);
        c.exact("people cost = 1 × 25 per hour", 25.0, value(Id::PeopleCost, &plant, r, 0), TOL);
        let shipped: u64 = r.shipped.iter().sum();
        c.exact(
            "Little: WIP = X × W",
            r.wip_total,
            shipped as f64 / r.window_s * r.flow_time_all.mean(),
            TOL,
        );
    }
    c.finish();
}

#[test]
fn every_use_of_crews_at_once_keeps_flow_balance_and_little_s_law() {
    let file = "validation/crews-mixed.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let mut c = Checks::new(file);
    let b = |x: f64| BIAS_REL * x;
    // Flow balance: a stable plant ships what it receives, 1.5 + 1 lots/h.
    c.estimate("throughput = arrivals (lots/h)", 2.5, &s.throughput_per_h, K, b(2.5), POWER_TIGHT);
    check_little(&mut c, "lots", &run, layflow_tests::little_edge_bound(&run));
    // Little's law for a crew (docs/formulas.md §4): busy people = tasks per
    // hour × mean time each holds a person. The operators hold a person for
    // the saws' whole processing time (a failure sends the person away and
    // the rest of the operation takes one again, so the held time is still
    // the processing time): 1.5/h × 30 min = 0.75 people. The loader holds
    // one for the 3 min loading of each of the mill's 1 lot/h: 0.05. (Busy
    // time failures of the mill count processing only, so a loading is never
    // cut short.)
    let crews = s.crews.as_ref().expect("crews");
    let busy = |i: usize| scaled(&crews[i].utilization, f64::from(plant.crews[i].size));
    c.estimate("operators busy = 1.5/h × 0.5 h", 0.75, &busy(0), K, b(0.75), POWER);
    c.estimate("loader busy = 1/h × 3 min", 0.05, &busy(2), K, b(0.05), POWER);
    // The operators are on duty 23 h a day and the window is 834 whole days:
    // busy on duty = busy × 24/23, per replication exactly.
    for r in &run.reps {
        let u = value(Id::CrewUtilization, &plant, r, 0);
        let on = value(Id::CrewScheduledUtilization, &plant, r, 0);
        c.exact("operators: busy on duty = busy × 24/23", u * 24.0 / 23.0, on, 1e-9);
    }
    c.finish();
}

#[test]
fn a_technician_walks_to_the_repair_and_back() {
    let file = "validation/crews-walking.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let mut c = Checks::new(file);
    let press = department(&plant, "press");
    for r in &run.reps {
        // Timed by hand in the scenario's header: 10 cycles of up 3600 s, down 50 + 1800 s.
        c.exact("press availability 3600/5450", 3600.0 / 5450.0, r.availability[press], TOL);
        c.exact(
            "fitter busy 18 950 s of 54 500",
            18950.0 / 54500.0,
            value(Id::CrewUtilization, &plant, r, 0),
            TOL,
        );
        c.exact("repairs never wait for the fitter", 0.0, value(Id::CrewPersonWait, &plant, r, 0), TOL);
    }
    c.finish();
}
