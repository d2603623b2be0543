//! Results per time bucket (hour of day, period) against theory: M_t/M/∞, thinned arrivals, stationarity, exposures.
//!
//! Sources:
//! - M_t/M/∞: S. G. Eick, W. A. Massey and W. Whitt, "The physics of the
//!   M_t/G/∞ queue", Operations Research 41(4):731–742, 1993 (from memory),
//!   written up with worked hourly numbers in docs/formulas.md §18: the mean
//!   number in service m(t) obeys m′ = λ(t) − μ·m(t).
//! - Thinning: P. A. W. Lewis and G. S. Shedler, "Simulation of
//!   nonhomogeneous Poisson processes by thinning", Naval Research Logistics
//!   Quarterly 26(3):403–413, 1979 (docs/formulas.md §13): the count of
//!   releases in a set of times is Poisson with mean ∫λ over it.
//! - Stationarity: in a stationary process every stretch of time has the
//!   same expected time average and rate, so each bucket's expectation is the
//!   whole window's (a property of stationary processes, no formula).
//! - Exposures: calendar arithmetic.
//!
//! Tolerances: a test that makes k statistical checks at once allows a
//! family-wise false-failure probability of [`FAMILY_ALPHA`] = 1%, split
//! evenly over its checks (Bonferroni: P(any miss) ≤ Σ P(miss) = k·α/k), so
//! each check is two-sided at level 1 − 0.01/k with Student t on the
//! replications' own spread (df = replications − 1), or the normal quantile
//! for Poisson counts whose variance theory gives. Seeds are fixed, so every
//! test is deterministic; the bound says that a correct model would fail a
//! fresh seed at most 1% of the time. Each check prints its tolerance as a
//! share of the theory, to show the power to catch an error of a few percent.

use layflow_engine::t_quantile;
use layflow_models::metrics::{value, Id};
use layflow_models::parse_scenario;
use layflow_models::plant::Plant;
use layflow_models::sim::{simulate, simulate_releases, Plan, RepStats, RunSpec};
use layflow_models::study::replicate;
use layflow_models::timebuckets::{By, Grid};
use layflow_tests::{department, load, scenario_path, Checks, HOUR};
use statrs::distribution::{ContinuousCDF, Normal};

/// Family-wise probability that a correct model fails one of a test's statistical checks.
const FAMILY_ALPHA: f64 = 0.01;
const DAY: f64 = 24.0 * HOUR;

/// The two-sided Bonferroni t quantile for one of `checks` checks, df = `reps` − 1.
fn bonferroni_t(checks: usize, reps: usize) -> f64 {
    t_quantile(1.0 - FAMILY_ALPHA / checks as f64, reps - 1)
}

/// The two-sided Bonferroni normal quantile for one of `checks` checks.
fn bonferroni_z(checks: usize) -> f64 {
    Normal::new(0.0, 1.0).unwrap().inverse_cdf(1.0 - FAMILY_ALPHA / (2.0 * checks as f64))
}

/// Mean and standard error of the mean.
fn mean_se(x: &[f64]) -> (f64, f64) {
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    let v = x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0);
    (m, (v / n).sqrt())
}

/// The scenario's run settings.
fn own_spec(plant: &Plant) -> RunSpec {
    RunSpec {
        layout: 0,
        horizon_s: plant.run.horizon_s,
        warmup_s: plant.run.warmup_s,
        demand_factor: plant.demand_factor,
        seed: plant.run.seed,
    }
}

/// Every replication of `plant` under `spec`, with results per bucket of `by`.
fn bucketed(plant: &Plant, spec: &RunSpec, by: &By, reps: u32) -> (Grid, Vec<RepStats>) {
    let grid = Grid::new(by, plant, spec.warmup_s, spec.horizon_s).unwrap();
    let plan = Plan::new(plant, spec.layout).with_buckets(grid.clone());
    let runs = replicate(&plan, spec, reps, |_| {});
    for r in &runs {
        assert_eq!(r.by.len(), grid.len());
        assert!(r.overload.is_none() && r.deadlock.is_none());
    }
    (grid, runs)
}

// ---------------------------------------------------------------------------
// 1. M_t/M/∞ by hour of day.
// ---------------------------------------------------------------------------

/// λ(t) of scenarios/validation/mt-m-inf.yaml, lots/h, for hour of day `h`.
fn day_rate(h: usize) -> f64 {
    if h < 8 {
        10.0
    } else {
        2.0
    }
}

/// docs/formulas.md §18: the hourly averages of m(t) in the periodic steady
/// state of m′ = λ(t) − μm, μ = 1/h, λ = [`day_rate`]. Over an hour of
/// constant λ from m₀: m(1) = m₀e^{−μ} + (λ/μ)(1 − e^{−μ}) and the hour's
/// average is λ/μ + (m₀ − λ/μ)(1 − e^{−μ})/μ. The periodic state is the fixed
/// point of a day's map m(0) ↦ m(24), which contracts by e^{−24}, so five days
/// from m = 0 reach it to far below 1e-12. Returns (m(0), hourly averages).
fn mt_m_inf_hourly() -> (f64, Vec<f64>) {
    let mu = 1.0;
    let decay = (-mu * 1.0_f64).exp();
    let mut m = 0.0;
    let mut m0 = 0.0;
    let mut avg = vec![0.0; 24];
    for _day in 0..5 {
        m0 = m;
        for (h, a) in avg.iter_mut().enumerate() {
            let l = day_rate(h) / mu;
            *a = l + (m - l) * (1.0 - decay) / mu;
            m = m * decay + l * (1.0 - decay);
        }
    }
    (m0, avg)
}

/// The §18 table of docs/formulas.md, hours 0–1 … 23–24 (six decimals).
const FORMULAS_18: [f64; 24] = [
    4.943036, 8.139647, 9.315614, 9.748229, 9.907378, 9.965926, 9.987465, 9.995389, 7.055268, 3.859729,
    2.684156, 2.251687, 2.092590, 2.034062, 2.012531, 2.004610, 2.001696, 2.000624, 2.000230, 2.000084,
    2.000031, 2.000011, 2.000004, 2.000002,
];

#[test]
fn the_ode_matches_the_worked_numbers_of_formulas_18() {
    let (m0, avg) = mt_m_inf_hourly();
    let mut c = Checks::new("M_t/M/∞ ODE (docs/formulas.md §18) against its worked table");
    // The table is printed to six decimals: rounding is at most 5e-7.
    c.exact("m(0) in the periodic steady state", 2.0000009, m0, 1e-6);
    for (h, (&want, &got)) in FORMULAS_18.iter().zip(&avg).enumerate() {
        c.exact(&format!("hour {h}-{}", h + 1), want, got, 1e-5);
    }
    // Little (§4): the day's average of m is λ̄/μ = (8·10 + 16·2)/24 = 112/24.
    c.exact("day's average = λ̄/μ", 112.0 / 24.0, avg.iter().sum::<f64>() / 24.0, 1e-9);
    c.finish();
}

#[test]
fn mt_m_inf_department_wip_by_hour_follows_the_ode() {
    // scenarios/validation/mt-m-inf.yaml: one warm-up day (the start from
    // empty decays as e^{−t}, so e^{−24} ≈ 4e-11 of m is left: no bias), then
    // 40 days × 40 replications. Moves are instant, so the department's WIP
    // is the number in process, m(t) in expectation, hour by hour.
    //
    // Power (from the model): the hourly time average of a Poisson(m) level
    // with autocorrelation e^{−μτ} has variance about 2m(e^{−1})/1 h ≈ 0.74m,
    // so the mean over 1,600 days has SE ≈ 0.021√m: 0.07 lots at m = 10, 0.03
    // at m = 2; the tolerances below (about 3.9 SE) come to about 3–7% of m
    // (checked under 10%), while ignoring the lag (taking m = λ/μ) would be
    // 100% off in hour 0–1.
    let plant = load("validation/mt-m-inf.yaml");
    let spec = own_spec(&plant);
    let reps = plant.run.replications;
    let (grid, runs) = bucketed(&plant, &spec, &By::HourOfDay, reps);
    let d = department(&plant, "finishing");
    let (_, ode) = mt_m_inf_hourly();
    let n = runs.len();
    let k = bonferroni_t(24 + 1, n);
    let mut c = Checks::new("M_t/M/∞ (Eick, Massey and Whitt 1993): department WIP by hour of day");
    for (b, &m) in ode.iter().enumerate() {
        let x: Vec<f64> = runs.iter().map(|r| value(Id::DepartmentWip, &plant, &r.by[b], d)).collect();
        let (mean, se) = mean_se(&x);
        let tol = k * se;
        c.exact(
            &format!(
                "{}: WIP = m(t) hourly average [tol {k:.2}·SE, {:.1}% of m]",
                grid.labels[b],
                100.0 * tol / m
            ),
            m,
            mean,
            tol,
        );
        c.holds(&format!("{} tolerance under 10% of m", grid.labels[b]), tol <= 0.10 * m);
    }
    // The day's average over buckets, weighted by exposure, per replication:
    // its expectation is λ̄/μ = 112/24 (Little, §4; §18).
    let day: Vec<f64> = runs
        .iter()
        .map(|r| {
            let w: f64 = r.by.iter().map(|b| b.window_s).sum();
            r.by.iter().map(|b| value(Id::DepartmentWip, &plant, b, d) * b.window_s).sum::<f64>() / w
        })
        .collect();
    let (mean, se) = mean_se(&day);
    c.exact(&format!("day's average, exposure-weighted [tol {k:.2}·SE]"), 112.0 / 24.0, mean, k * se);
    // The same weighted sum is the whole window's figure, to rounding.
    let worst = runs.iter().zip(&day).map(|(r, a)| (r.wip_department[d] - a).abs()).fold(0.0, f64::max);
    c.exact("exposure-weighted buckets = whole window (worst replication)", 0.0, worst, 1e-9);
    c.finish();
}

// ---------------------------------------------------------------------------
// 2. Releases by hour of day under thinning.
// ---------------------------------------------------------------------------

#[test]
fn releases_by_hour_of_day_are_poisson_with_the_integral_of_the_rate() {
    // Lewis and Shedler (docs/formulas.md §13): the releases that fall in
    // hour-of-day b over D days of one replication are Poisson with mean
    // D·λ_b·1 h; over R independent replications the total N_b is Poisson
    // with mean μ_b = R·D·λ_b, so (N_b − μ_b)/√μ_b is close to standard
    // normal (μ_b ≥ 3,200). Bonferroni over the 24 hours.
    let plant = load("validation/mt-m-inf.yaml");
    let spec = own_spec(&plant);
    let reps = plant.run.replications;
    let grid = Grid::new(&By::HourOfDay, &plant, spec.warmup_s, spec.horizon_s).unwrap();
    let plan = Plan::new(&plant, 0);
    let mut counts = [0u64; 24];
    for rep in 0..u64::from(reps) {
        for (t, _) in simulate_releases(&plan, &spec, rep) {
            if t >= spec.warmup_s && t < spec.horizon_s {
                counts[grid.locate(t).0] += 1;
            }
        }
    }
    let days = (spec.horizon_s - spec.warmup_s) / DAY;
    let z = bonferroni_z(24);
    let mut c = Checks::new("thinning (Lewis and Shedler 1979): releases by hour of day");
    for (b, &n) in counts.iter().enumerate() {
        let mu = f64::from(reps) * days * day_rate(b);
        let tol = z * mu.sqrt();
        c.exact(
            &format!("{}: releases = R·D·∫λ [tol {z:.2}·√μ, {:.1}% of μ]", grid.labels[b], 100.0 * tol / mu),
            mu,
            n as f64,
            tol,
        );
    }
    c.finish();
}

#[test]
fn bucketed_throughput_of_a_zero_time_plant_counts_the_releases() {
    // With the processing step removed and instant moves, a lot ships at the
    // instant it is released (flow time 0: the lag between release and
    // shipping is nil), so it is counted in the bucket of its release time.
    // Then per replication and per bucket, throughput × exposure = the
    // releases in that bucket, exactly (bookkeeping, not statistics).
    let path = scenario_path("validation/mt-m-inf.yaml");
    let text = std::fs::read_to_string(&path).unwrap();
    let zero =
        text.replace("      - { step: finish, at: finishing, time: { exponential: { mean: 1 h } } }\n", "");
    assert_ne!(zero, text);
    let plant = parse_scenario(&zero, &path).unwrap();
    let spec = RunSpec { horizon_s: 4.0 * DAY, ..own_spec(&plant) };
    let grid = Grid::new(&By::HourOfDay, &plant, spec.warmup_s, spec.horizon_s).unwrap();
    let plan = Plan::new(&plant, 0).with_buckets(grid.clone());
    let mut c = Checks::new("zero-time plant: bucketed throughput = releases per hour of day");
    let mut worst: f64 = 0.0;
    let mut total = 0u64;
    for rep in 0..5 {
        let r = simulate(&plan, &spec, rep);
        let mut counts = [0u64; 24];
        for (t, _) in simulate_releases(&plan, &spec, rep) {
            if t >= spec.warmup_s && t < spec.horizon_s {
                counts[grid.locate(t).0] += 1;
            }
        }
        for (b, &n) in counts.iter().enumerate() {
            let shipped = value(Id::Throughput, &plant, &r.by[b], 0) * r.by[b].window_s / HOUR;
            worst = worst.max((shipped - n as f64).abs());
            total += n;
        }
    }
    c.holds(&format!("{total} releases over 5 replications"), total > 1000);
    c.exact("worst |throughput × exposure − releases| over buckets and replications", 0.0, worst, 1e-9);
    c.finish();
}

// ---------------------------------------------------------------------------
// 3. A stationary plant: no bucket differs from the whole.
// ---------------------------------------------------------------------------

#[test]
fn a_stationary_plant_has_no_bucket_bias() {
    // scenarios/demo.yaml has constant demand, no calendars and a 2-day
    // warm-up, so after it the plant is (close to) stationary and every
    // bucket's expected WIP, busiest utilisation, throughput and flow time is
    // the whole window's. Per replication the difference bucket − whole is
    // computed (the two share the replication, so the paired difference
    // removes the replication's common noise), and its mean over the
    // replications must be within t·SE of 0, Bonferroni over buckets ×
    // metrics of both grids (t at 1 − 0.01/k, k = (24 + 72)·4 = 384: 4.47 at
    // df = 79).
    let plant = load("demo.yaml");
    let spec = own_spec(&plant);
    // Four times the scenario's 20 replications, to halve the noise (about
    // 4 s of release-mode running in all).
    let reps = 4 * plant.run.replications;
    let plain = replicate(&Plan::new(&plant, 0), &spec, reps, |_| {});
    let busiest = (0..plant.departments.len())
        .max_by(|&a, &b| {
            let u = |d: usize| plain.iter().map(|r| r.utilization[d]).sum::<f64>();
            u(a).total_cmp(&u(b))
        })
        .unwrap();
    let metrics: [(&str, Id, usize); 4] = [
        ("WIP", Id::Wip, 0),
        ("busiest utilisation", Id::DepartmentUtilization, busiest),
        ("throughput", Id::Throughput, 0),
        ("flow time", Id::FlowTime, 0),
    ];
    // Power: the widest tolerance over a grid's buckets, as a share of the
    // whole mean, must stay under these bounds, or a bucket bias of that size
    // could hide in the noise. An hour of the day folds the 18 days of the
    // window, so it is sharp; a 6 h period is one stretch of one replication,
    // as noisy as a 6 h run (WIP's autocorrelation lasts about a flow time, 3 h).
    let grids = [(By::HourOfDay, 0.08), (By::Period(6.0 * HOUR), 0.30)];
    let buckets: usize =
        grids.iter().map(|(by, _)| Grid::new(by, &plant, spec.warmup_s, spec.horizon_s).unwrap().len()).sum();
    let k = bonferroni_t(buckets * metrics.len(), reps as usize);
    let mut c = Checks::new("stationary demo plant: each bucket's mean = the whole window's");
    for (by, power) in &grids {
        let (grid, runs) = bucketed(&plant, &spec, by, reps);
        for (name, id, s) in metrics {
            let whole: Vec<f64> = runs.iter().map(|r| value(id, &plant, r, s)).collect();
            let (w, _) = mean_se(&whole);
            let mut widest: f64 = 0.0;
            for b in 0..grid.len() {
                let diff: Vec<f64> =
                    runs.iter().zip(&whole).map(|(r, x)| value(id, &plant, &r.by[b], s) - x).collect();
                let (m, se) = mean_se(&diff);
                let tol = k * se;
                widest = widest.max(tol / w);
                c.exact(
                    &format!("{} {}: {name} − whole [tol {k:.2}·SE]", by.name(), grid.labels[b]),
                    0.0,
                    m,
                    tol,
                );
            }
            c.holds(
                &format!(
                    "{} {name}: widest tolerance {:.1}% of the whole mean (must be ≤ {:.0}%)",
                    by.name(),
                    100.0 * widest,
                    100.0 * power
                ),
                widest <= *power,
            );
        }
    }
    c.finish();
}

// ---------------------------------------------------------------------------
// 4. Exposures.
// ---------------------------------------------------------------------------

#[test]
fn hour_of_day_exposures_are_what_the_calendar_gives() {
    // Warm-up 1.25 d (to 06:00 on day 2), window 10.5 d (to 18:00 on day 12):
    // the window holds 252 whole clock hours; hour-of-day b gets one hour for
    // each integer hour h in [30, 282) with h mod 24 = b, i.e. 11 for
    // 06:00–18:00 and 10 for the rest. Counted here by enumeration, not by
    // the grid's arithmetic.
    let plant = load("demo.yaml");
    let spec = RunSpec { horizon_s: 11.75 * DAY, warmup_s: 1.25 * DAY, ..own_spec(&plant) };
    let mut want = [0.0; 24];
    for h in 30..282 {
        want[h % 24] += HOUR;
    }
    let mut c = Checks::new("exposures per bucket");
    for by in [By::HourOfDay, By::Day, By::Period(6.0 * HOUR)] {
        let grid = Grid::new(&by, &plant, spec.warmup_s, spec.horizon_s).unwrap();
        let r = simulate(&Plan::new(&plant, 0).with_buckets(grid.clone()), &spec, 0);
        let expected: Vec<f64> = match by {
            By::HourOfDay => want.to_vec(),
            // Days 2..=12: day 2 from 06:00 (18 h), days 3–11 whole, day 12 to 18:00 (18 h).
            By::Day => [18.0].into_iter().chain([24.0; 9]).chain([18.0]).map(|h| h * HOUR).collect(),
            // 6 h periods from 06:00 day 2 to 18:00 day 12: 42 whole periods.
            _ => vec![6.0 * HOUR; 42],
        };
        c.holds(
            &format!("{}: {} buckets, want {}", by.name(), grid.len(), expected.len()),
            grid.len() == expected.len(),
        );
        for (b, want) in expected.iter().enumerate() {
            let got = r.by.get(b).map_or(f64::NAN, |x| x.window_s);
            c.exact(
                &format!("{} {}: exposure, s", by.name(), grid.labels.get(b).map_or("?", |s| s)),
                *want,
                got,
                1e-9,
            );
        }
    }
    c.finish();
}
