//! Finite staging, blocking and breakdowns against outside results: M/M/1/K with lost arrivals, a two-station line with blocking after service (its Markov chain), and machine availability MTBF/(MTBF+MTTR).
//!
//! Tolerances as in `queueing.rs`: each replication is long (10⁴–10⁵
//! services), so the 40 replication means give a Student t interval of
//! half-width hw ≈ 2.02 standard errors; a row passes when |sim − theory| ≤
//! K = 3 half-widths + a bias allowance of 1e-3 of theory (warm-ups of
//! 200–400 h against relaxation times of a few hours for these small,
//! finite chains). A correct model fails a row with probability about 4e-7.
//! Each row must also be sharp: its tolerance may not exceed 4% of theory
//! (1% for availabilities and throughputs), so it would catch a 5% error.

use layflow_models::metrics::Estimate;
use layflow_models::plant::Plant;
use layflow_tests::{department, load, run_layout, scaled, Checks};

const K: f64 = 3.0;
const BIAS_REL: f64 = 1e-3;
const POWER: f64 = 0.04;
const POWER_TIGHT: f64 = 0.01;

fn est(e: &Option<Estimate>) -> Estimate {
    e.expect("the figure is reported for this plant")
}

#[test]
fn mm1k_with_lost_arrivals_matches_gross_and_harris() {
    // M/M/1/K, lambda = 4/h, mu = 5/h, K = 5 (docs/formulas.md §14; Gross,
    // Shortle, Thompson and Harris, Fundamentals of Queueing Theory, 4th ed.,
    // finite queues): P_n = (1 − ρ)ρⁿ/(1 − ρ^{K+1}).
    let (lambda, rho, k) = (4.0, 0.8_f64, 5);
    let norm = 1.0 - rho.powi(k + 1);
    let p_k = (1.0 - rho) * rho.powi(k) / norm;
    let l = rho / (1.0 - rho) - f64::from(k + 1) * rho.powi(k + 1) / norm;
    let mut c = Checks::new("M/M/1/K with lost arrivals (Gross & Harris)");
    // docs/formulas.md §14 prints P_K = 0.0888 to 3 significant figures.
    c.exact("P_K vs the printed 0.0888", 0.0888, p_k, 5e-5);
    let plant = load("validation/mm1k-turn-away.yaml");
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let d = &s.departments[department(&plant, "press")];
    // Turned-away lots per hour ÷ λ estimates P_K (Poisson arrivals see time averages).
    let lost = scaled(&est(&s.turned_away_per_h), 1.0 / lambda);
    c.estimate("loss probability P_K", p_k, &lost, K, BIAS_REL * p_k, POWER);
    c.estimate("mean number in system L", l, &d.wip_mean, K, BIAS_REL * l, POWER);
    let x = lambda * (1.0 - p_k);
    c.estimate("throughput λ(1 − P_K), lots/h", x, &s.throughput_per_h, K, BIAS_REL * x, POWER_TIGHT);
    // With lots turned away upstream nothing ever blocks.
    c.exact("blocked share of the press", 0.0, est(&d.blocked_share).mean, 0.0);
    c.finish();
}

/// Stationary distribution of a generator `q` (n × n, row-major) by a general
/// linear solve of πQ = 0, Σπ = 1 (one balance equation replaced by the
/// normalisation), Gaussian elimination with partial pivoting.
fn stationary(q: &[f64], n: usize) -> Vec<f64> {
    // Rows of A are the balance equations: A[j][i] = Q[i][j].
    let mut a = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..n {
            a[j * n + i] = q[i * n + j];
        }
    }
    let mut b = vec![0.0; n];
    for i in 0..n {
        a[(n - 1) * n + i] = 1.0;
    }
    b[n - 1] = 1.0;
    for col in 0..n {
        let piv = (col..n).max_by(|&r, &s| a[r * n + col].abs().total_cmp(&a[s * n + col].abs())).unwrap();
        assert!(a[piv * n + col].abs() > 1e-12, "singular chain");
        for k in 0..n {
            a.swap(col * n + k, piv * n + k);
        }
        b.swap(col, piv);
        for r in 0..n {
            if r != col {
                let f = a[r * n + col] / a[col * n + col];
                for k in col..n {
                    a[r * n + k] -= f * a[col * n + k];
                }
                b[r] -= f * b[col];
            }
        }
    }
    (0..n).map(|i| b[i] / a[i * n + i]).collect()
}

/// The two-station line of `validation/two-station-blocking.yaml` as a
/// continuous-time Markov chain: (a, s, m) with a lots waiting at station 1
/// (0..=qa), s its machine (0 idle, 1 busy, 2 blocked) and m lots at station
/// 2 or between (0..=room+1). Returns (throughput, P(station 1 blocked),
/// P(an arrival is turned away)), per hour.
fn two_station(lambda: f64, mu1: f64, mu2: f64, qa: usize, room: usize) -> (f64, f64, f64) {
    let top = room + 1;
    let mut states = Vec::new();
    for a in 0..=qa {
        for s in 0..3 {
            for m in 0..=top {
                if (s == 0 && a > 0) || (s == 2 && m != top) {
                    continue;
                }
                states.push((a, s, m));
            }
        }
    }
    let n = states.len();
    let index = |st: (usize, usize, usize)| states.iter().position(|&x| x == st).expect("valid state");
    let mut q = vec![0.0; n * n];
    let mut add = |from: usize, to: (usize, usize, usize), rate: f64| {
        let j = index(to);
        q[from * n + j] += rate;
        q[from * n + from] -= rate;
    };
    for (i, &(a, s, m)) in states.iter().enumerate() {
        // An arrival starts on an idle machine, queues, or is turned away.
        if s == 0 {
            add(i, (0, 1, m), lambda);
        } else if a < qa {
            add(i, (a + 1, s, m), lambda);
        }
        // Station 1 finishes: the lot moves on, or the machine blocks.
        if s == 1 {
            if m < top {
                let next = if a > 0 { (a - 1, 1, m + 1) } else { (0, 0, m + 1) };
                add(i, next, mu1);
            } else {
                add(i, (a, 2, m), mu1);
            }
        }
        // Station 2 finishes; a blocked station 1 passes its lot on and goes on.
        if m > 0 {
            let next = if s == 2 {
                if a > 0 {
                    (a - 1, 1, m)
                } else {
                    (0, 0, m)
                }
            } else {
                (a, s, m - 1)
            };
            add(i, next, mu2);
        }
    }
    let pi = stationary(&q, n);
    let mut x = 0.0;
    let mut blocked = 0.0;
    let mut full = 0.0;
    for (k, &(a, s, m)) in states.iter().enumerate() {
        if m > 0 {
            x += mu2 * pi[k];
        }
        if s == 2 {
            blocked += pi[k];
        }
        if s != 0 && a == qa {
            full += pi[k];
        }
    }
    (x, blocked, full)
}

#[test]
fn two_station_line_with_blocking_matches_its_markov_chain() {
    let mut c = Checks::new("two-station line, blocking after service (Markov chain)");
    // Sanity of the chain builder: with a very large buffer and no turning
    // away to speak of, throughput tends to λ (flow conservation).
    let (x_big, b_big, _) = two_station(0.5, 1.2, 1.0, 30, 30);
    c.relative("chain: λ = 0.5, large buffers → throughput ≈ λ", 0.5, x_big, 1e-6);
    c.exact("chain: large buffers → no blocking", 0.0, b_big, 1e-6);
    // Flow conservation: throughput = λ (1 − P(turned away)).
    let (x, blocked, full) = two_station(0.9, 1.2, 1.0, 2, 2);
    c.relative("chain: throughput = λ(1 − P_full)", 0.9 * (1.0 - full), x, 1e-9);

    let plant = load("validation/two-station-blocking.yaml");
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let forming = &s.departments[department(&plant, "forming")];
    c.estimate("throughput, lots/h", x, &s.throughput_per_h, K, BIAS_REL * x, POWER_TIGHT);
    c.estimate(
        "share of time station 1 is blocked",
        blocked,
        &est(&forming.blocked_share),
        K,
        BIAS_REL * blocked,
        POWER,
    );
    let lost = scaled(&est(&s.turned_away_per_h), 1.0 / 0.9);
    c.estimate("probability an arrival is turned away", full, &lost, K, BIAS_REL * full, POWER);
    println!("theory: throughput {x:.6}/h, blocked {blocked:.6}, turned away {full:.6}");
    c.finish();
}

#[test]
fn machine_availability_is_mtbf_over_mtbf_plus_mttr() {
    // A = MTBF/(MTBF + MTTR) = 2/(2 + 0.5) (docs/formulas.md §14; Barlow and Proschan 1975, from memory).
    let plant: Plant = load("validation/machine-availability.yaml");
    let a = 2.0 / 2.5;
    let lathe = department(&plant, "lathe");
    let mut c = Checks::new("machine availability MTBF/(MTBF+MTTR)");
    c.relative("static availability", a, plant.departments[lathe].availability(), 1e-12);
    let run = run_layout(&plant, 0);
    let d = &run.summary.departments[lathe];
    c.estimate("simulated availability", a, &est(&d.availability), K, BIAS_REL * a, POWER_TIGHT);
    // Every lot is processed, so utilisation against clock time is λ·E[S] = 1/3.
    c.estimate("utilisation λ·E[S]", 1.0 / 3.0, &d.utilization, K, BIAS_REL / 3.0, POWER);
    // The static capacity check: λ·E[S]/(c·A) = (1/3)/0.8 = 5/12.
    c.relative(
        "predicted load against availability λ·E[S]/(c·A) = 5/12",
        5.0 / 12.0,
        run.picture.utilization_available[lathe],
        1e-12,
    );
    c.finish();
}

#[test]
fn a_plant_that_deadlocks_through_blocking_stops_and_names_the_departments() {
    let plant = load("deadlock/two-areas.yaml");
    let run = run_layout(&plant, 0);
    let why = run.summary.deadlock.as_deref().expect("the plant must be reported as deadlocked");
    assert!(why.contains("pressing") && why.contains("welding"), "{why}");
    for r in &run.reps {
        let d = r.deadlock.as_ref().expect("every replication deadlocks");
        assert!(d.time_s < plant.run.horizon_s, "stopped at {}", d.time_s);
    }
}

#[test]
fn the_staging_and_breakdowns_demo_runs_and_reports_its_figures() {
    let plant = load("staging-breakdowns.yaml");
    let mut c = Checks::new("scenarios/staging-breakdowns.yaml");
    for l in 0..plant.layouts.len() {
        let run = run_layout(&plant, l);
        let s = &run.summary;
        c.holds(&format!("layout {l}: no deadlock"), s.deadlock.is_none());
        let milling = &s.departments[department(&plant, "milling")];
        let a = milling.availability.expect("milling has breakdowns").mean;
        c.holds(&format!("layout {l}: milling availability {a:.4} in (0.9, 1)"), a > 0.9 && a < 1.0);
        let fl = s.fleets[0].availability.expect("forklifts charge").mean;
        // Charging 45 min per 6 h of work at most, breakdowns 1 h per 60 h.
        c.holds(
            &format!("layout {l}: forklift availability {fl:.4} ≥ 6/6.75 × 60/61"),
            fl >= 6.0 / 6.75 * 60.0 / 61.0 - 0.01,
        );
        c.holds(&format!("layout {l}: overflow moves reported"), s.overflow_moves_per_h.is_some());
        // Every lot released is shipped or still in the plant: throughput ≈ demand.
        // The demo's own 10 replications give 4 half-widths ≈ 9.7% of the mean
        // (measured), so the noise bar is 12%: a plant losing a fifth of its
        // lots to a jam would still fail.
        c.estimate(
            &format!("layout {l}: throughput ≈ demand 2.2/h"),
            2.2,
            &s.throughput_per_h,
            4.0,
            0.0,
            0.12,
        );
    }
    c.finish();
}
