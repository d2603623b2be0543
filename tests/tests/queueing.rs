//! Queueing theory against the simulation: M/M/1, M/M/c (Erlang C), M/D/1 and M/G/1 (Pollaczek–Khinchine), and an open Jackson network with rework.
//!
//! Formula tests pin the helpers in `layflow_tests` to the worked numbers of
//! `docs/formulas.md` (relative 1e-6 or better, as docs/validation.md asks).
//!
//! Simulation tests run each `scenarios/validation/*.yaml` file with its own
//! run settings and compare replication estimates with theory. How the
//! tolerance is derived (the same for every statistical row):
//! - Each replication is long (25,000–100,000 h, i.e. 10⁵–10⁶ services),
//!   so its mean is close to normal and the 40 replication means give a
//!   Student t interval whose half-width hw is t(0.975, 39) = 2.023 standard
//!   errors. We allow K = 3 half-widths (≈ 6.1 standard errors): a correct
//!   model fails a row with probability about 4e-7 (t with 39 df), so under
//!   1e-5 for the whole file.
//! - Bias: the warm-up is at least 10 relaxation times 1/(μ(1−√ρ)²) of the
//!   slowest station (Morse's M/M/1 relaxation time, from memory: 18 h for
//!   M/M/1 here, 30 h for M/M/3, ≤ 90 h for the λ = 0.8/h M/G/1 rows, ≤ 18 h
//!   per Jackson station, against warm-ups of 500–1000 h), so the
//!   initial-condition bias is below e⁻¹⁰ of the level; the ratio estimator of
//!   the mean flow time and the window edges add O(W/T) ≈ 1e-4. We allow a
//!   bias of BIAS_REL = 1e-3 of the theoretical value, which covers both.
//! - Power: a row also fails when its tolerance exceeds POWER (4%) of the
//!   theoretical value for queue lengths and waits, or POWER_TIGHT (1%) for
//!   utilisations and throughputs, so each row would catch a 5% error in
//!   a mean (the runs give tolerances of about 1.5–3% and 0.3–0.5%).

use layflow_models::analysis::{visit_ratios, StaticPicture};
use layflow_tests::{
    check_little, department, erlang_b, erlang_c, hours, hw, little_edge_bound, load, mmc,
    pollaczek_khinchine, run_layout, scaled, shifted, Checks, QueueMeans, HOUR,
};

/// Half-widths allowed (see the file comment).
const K: f64 = 3.0;
/// Bias allowance, relative to theory (see the file comment).
const BIAS_REL: f64 = 1e-3;
/// Largest tolerance allowed for queue lengths and waits, relative to theory.
const POWER: f64 = 0.04;
/// Largest tolerance allowed for utilisations and throughputs.
const POWER_TIGHT: f64 = 0.01;

// ---------------------------------------------------------------------------
// The formulas themselves.
// ---------------------------------------------------------------------------

#[test]
fn erlang_c_matches_the_reference_values() {
    let mut c = Checks::new("Erlang B and C formulas (docs/formulas.md §1)");
    // docs/formulas.md §1 [C] (Erlang C as in GNU Octave `queueing` `erlangc`):
    // C(3, 2.4) = 288/445 exactly, C(3, 2) = 4/9 exactly.
    c.relative("C(3, 2.4) = 288/445", 288.0 / 445.0, erlang_c(3, 2.4), 1e-12);
    c.exact("C(3, 2.4) vs printed 0.647191", 0.647191, erlang_c(3, 2.4), 5e-7);
    c.relative("C(3, 2) = 4/9", 4.0 / 9.0, erlang_c(3, 2.0), 1e-12);
    // One server: C(1, a) = a, the M/M/1 probability of waiting (docs/formulas.md §1, P(wait) = ρ).
    c.relative("C(1, 0.8) = 0.8", 0.8, erlang_c(1, 0.8), 1e-12);
    // docs/formulas.md §3 table, station 2: P(wait) = 0.676761 for c = 2, a = 4.65/3.
    c.exact("C(2, 1.55) vs printed 0.676761", 0.676761, erlang_c(2, 1.55), 5e-7);
    // Cross-check with Erlang B (docs/formulas.md §1): B(3, 2.4) = 0.268406 and
    // C = cB/(c − a(1 − B)).
    let b = erlang_b(3, 2.4);
    c.exact("B(3, 2.4) vs printed 0.268406", 0.268406, b, 5e-7);
    c.relative(
        "C = cB/(c − a(1 − B)) at c = 3, a = 2.4",
        erlang_c(3, 2.4),
        3.0 * b / (3.0 - 2.4 * (1.0 - b)),
        1e-12,
    );
    // B(1, a) = a/(1 + a) (from memory: the one-server loss system).
    c.relative("B(1, 2) = 2/3", 2.0 / 3.0, erlang_b(1, 2.0), 1e-12);

    // M/M/3 means, docs/formulas.md §1: Wq = 96/89 h, Lq = 2.58876, W = 2.07865 h, L = 4.98876.
    let m = mmc(3, 2.4, 1.0);
    c.relative("M/M/3 Wq = 96/89 h", 96.0 / 89.0, m.wq, 1e-12);
    // Exact: Lq = 2.4·96/89 = 230.4/89, L = 2.4·185/89 = 444/89; the printed
    // 6-figure values are within half a unit in the last place (5e-6).
    c.relative("M/M/3 Lq = 230.4/89", 230.4 / 89.0, m.lq, 1e-12);
    c.relative("M/M/3 L = 444/89", 444.0 / 89.0, m.l, 1e-12);
    c.exact("M/M/3 Lq vs printed 2.58876", 2.58876, m.lq, 5e-6);
    c.exact("M/M/3 W vs printed 2.07865", 2.07865, m.w, 5e-6);
    c.exact("M/M/3 L vs printed 4.98876", 4.98876, m.l, 5e-6);
    c.relative("M/M/3 rho", 0.8, m.rho, 1e-12);
    // M/M/1, docs/formulas.md §1: λ = 4, μ = 5 gives L = 4, Lq = 3.2, W = 1 h, Wq = 0.8 h.
    let m = mmc(1, 4.0, 5.0);
    for (what, want, got) in [("L", 4.0, m.l), ("Lq", 3.2, m.lq), ("W", 1.0, m.w), ("Wq", 0.8, m.wq)] {
        c.relative(&format!("M/M/1 {what}"), want, got, 1e-12);
    }
    // docs/formulas.md §3 table, station 2 (c = 2, λ = 4.65, μ = 3): Lq 2.33106, L 3.88106, W 0.834637 h.
    let m = mmc(2, 4.65, 3.0);
    // Printed to 6 figures: half a unit in the last place.
    c.exact("M/M/2 station 2 Lq vs printed 2.33106", 2.33106, m.lq, 5e-6);
    c.exact("M/M/2 station 2 L vs printed 3.88106", 3.88106, m.l, 5e-6);
    c.exact("M/M/2 station 2 W vs printed 0.834637", 0.834637, m.w, 5e-7);
    c.finish();
}

#[test]
fn pollaczek_khinchine_matches_the_reference_table() {
    let mut c =
        Checks::new("Pollaczek–Khinchine mean-value formula (docs/formulas.md §2; Cooper 1981, p. 189)");
    // λ = 0.8/h, τ = 1 h. Rows (c_s², Wq, Lq, W, L) as exact fractions of the
    // printed table: deterministic (2, 1.6, 3, 2.4), Erlang-2 (3, 2.4, 4, 3.2),
    // exponential (4, 3.2, 5, 4), Uniform[0.5, 1.5] (13/6, 26/15, 19/6, 38/15).
    let rows: [(&str, f64, [f64; 4], [f64; 4]); 4] = [
        ("deterministic", 0.0, [2.0, 1.6, 3.0, 2.4], [2.0, 1.6, 3.0, 2.4]),
        ("Erlang-2", 0.5, [3.0, 2.4, 4.0, 3.2], [3.0, 2.4, 4.0, 3.2]),
        ("exponential", 1.0, [4.0, 3.2, 5.0, 4.0], [4.0, 3.2, 5.0, 4.0]),
        (
            "Uniform[0.5,1.5]",
            1.0 / 12.0,
            [13.0 / 6.0, 26.0 / 15.0, 19.0 / 6.0, 38.0 / 15.0],
            [2.16667, 1.73333, 3.16667, 2.53333],
        ),
    ];
    for (name, cs2, exact, printed) in rows {
        let m = pollaczek_khinchine(0.8, 1.0, cs2);
        let got = [m.wq, m.lq, m.w, m.l];
        for (k, what) in ["Wq", "Lq", "W", "L"].iter().enumerate() {
            c.relative(&format!("{name} {what} (exact)"), exact[k], got[k], 1e-12);
            // The printed table has 6 significant figures: half a unit in the last place.
            c.exact(&format!("{name} {what} (printed)"), printed[k], got[k], 5e-6);
        }
    }
    // With c_s² = 1 the formula must agree with M/M/1 at the same λ and μ.
    let pk = pollaczek_khinchine(4.0, 0.2, 1.0);
    c.relative("P–K with c_s² = 1 equals M/M/1 (λ = 4, μ = 5) W", mmc(1, 4.0, 5.0).w, pk.w, 1e-12);
    c.finish();
}

// ---------------------------------------------------------------------------
// Single stations.
// ---------------------------------------------------------------------------

/// Runs a one-station validation scenario and checks it against `th`.
///
/// `rivals` are the mean flow times (h) of the other M/G/1 rows, which the
/// run must *reject* under the same tolerance: this shows that c_s² matters,
/// and that the rows are sharp enough to tell the distributions apart.
fn single_station(
    file: &str,
    station: &str,
    lambda_h: f64,
    mean_service_h: f64,
    th: QueueMeans,
    rivals: &[(&str, f64)],
) {
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let d = &s.departments[department(&plant, station)];
    let mut c = Checks::new(file);
    let b = |x: f64| BIAS_REL * x;
    c.estimate("L, lots in the department", th.l, &d.wip_mean, K, b(th.l), POWER);
    c.estimate("L, lots in the plant", th.l, &s.wip_mean, K, b(th.l), POWER);
    c.estimate("Lq, lots waiting", th.lq, &d.queue_mean, K, b(th.lq), POWER);
    let w = hours(&s.flow_time_s);
    c.estimate("W, mean flow time (h)", th.w, &w, K, b(th.w), POWER);
    for &(name, other) in rivals {
        let tol = K * hw(&w) + b(other);
        let gap = (w.mean - other).abs();
        c.holds(
            &format!("W rejects the {name} row: |{:.4} − {other:.4}| = {gap:.4} h > tol {tol:.4} h", w.mean),
            gap > tol,
        );
    }
    // Wq per replication = its mean flow time minus the known mean processing time;
    // subtracting a constant leaves the half-width as it is.
    c.estimate("Wq = W − E[S] (h)", th.wq, &shifted(&w, -mean_service_h), K, b(th.wq), POWER);
    c.estimate("utilisation", th.rho, &d.utilization, K, b(th.rho), POWER_TIGHT);
    c.estimate("throughput (lots/h)", lambda_h, &s.throughput_per_h, K, b(lambda_h), POWER_TIGHT);
    // The static prediction λE[S]/c is a formula: exact.
    c.relative("static utilisation λE[S]/c", th.rho, d.utilization_predicted, 1e-12);
    check_little(&mut c, file, &run, little_edge_bound(&run));
    c.finish();
}

#[test]
fn mm1_single_machine() {
    // docs/formulas.md §1: λ = 4/h, μ = 5/h: ρ = 0.8, L = 4, Lq = 3.2, W = 1 h, Wq = 0.8 h.
    let th = mmc(1, 4.0, 5.0);
    assert!(
        (th.l - 4.0).abs() < 1e-12 && (th.w - 1.0).abs() < 1e-12,
        "the formula gives the reference values"
    );
    single_station("validation/mm1.yaml", "press", 4.0, 0.2, th, &[]);
}

#[test]
fn mm1_flow_time_percentiles() {
    // In a FIFO M/M/1 queue the time in system is exponential with rate μ − λ
    // (a standard result, from memory: e.g. Gross et al., Fundamentals of
    // Queueing Theory), so its p-quantile is ln(1/(1 − p))/(μ − λ) hours.
    // Each replication's own histogram gives its quantile; across the 40
    // replications that is an interval like any other (the quantile estimator
    // of 200,000 lots has O(1/n) bias). The histogram keeps 3 significant
    // digits, so we add 1e-3 of resolution to the bias allowance.
    let file = "validation/mm1.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let mut c = Checks::new("M/M/1 flow-time percentiles (exponential sojourn time)");
    let f = &run.summary.flow_time_s;
    for (p, pooled) in [(0.5, f.p50), (0.9, f.p90), (0.95, f.p95), (0.99, f.p99)] {
        let q = (1.0f64 / (1.0 - p)).ln() / (5.0 - 4.0);
        let per_rep: Vec<f64> = run.reps.iter().map(|r| r.flow_hist.quantile(p) / HOUR).collect();
        let iv = layflow_engine::interval(&per_rep, 0.95);
        let e = layflow_models::metrics::Estimate { mean: iv.mean, half_width: iv.half_width, n: iv.n };
        let bias = (BIAS_REL + 1e-3) * q;
        // p99 rests on the 1% tail of each replication, so it is the noisiest:
        // we ask its tolerance to stay under 6% (a 10% error in it fails).
        let power = if p > 0.95 { 0.06 } else { POWER };
        c.estimate(&format!("p{} of flow time (h), per replication", p * 100.0), q, &e, K, bias, power);
        // The summary pools every lot: the same quantile, within the same tolerance.
        c.exact(&format!("p{} pooled in the summary (h)", p * 100.0), q, pooled / HOUR, K * hw(&e) + bias);
    }
    c.finish();
}

#[test]
fn demand_factor_scales_the_arrival_rate() {
    // The M/M/1 plant at demand factor 0.5: λ = 2/h, μ = 5/h, so ρ = 0.4,
    // L = 0.4/0.6 = 2/3, W = 1/(5 − 2) = 1/3 h (docs/formulas.md §1 formulas).
    // ρ = 0.4 relaxes in 1/(μ(1−√ρ)²) = 1.5 h, so 40 × 5,000 h after 100 h of
    // warm-up give half-widths near 0.5%.
    let plant = load("validation/mm1.yaml");
    let spec = layflow_models::sim::RunSpec {
        layout: 0,
        horizon_s: 5100.0 * HOUR,
        warmup_s: 100.0 * HOUR,
        demand_factor: 0.5,
        seed: 11,
    };
    let run = layflow_tests::run_spec(&plant, spec, 40);
    let th = mmc(1, 2.0, 5.0);
    let s = &run.summary;
    let mut c = Checks::new("demand factor 0.5 on the M/M/1 plant");
    let press = department(&plant, "press");
    c.relative("static utilisation at factor 0.5", 0.4, run.picture.utilization[press], 1e-12);
    c.estimate("throughput (lots/h)", 2.0, &s.throughput_per_h, K, BIAS_REL * 2.0, POWER_TIGHT);
    // The error this test is after (a factor not applied, or applied twice)
    // is 100%, so POWER (4%) is ample power here even for the utilisation.
    c.estimate("utilisation", th.rho, &s.departments[press].utilization, K, BIAS_REL * th.rho, POWER);
    c.estimate("L", th.l, &s.wip_mean, K, BIAS_REL * th.l, POWER);
    c.estimate("W (h)", th.w, &hours(&s.flow_time_s), K, BIAS_REL * th.w, POWER);
    check_little(&mut c, "factor 0.5", &run, little_edge_bound(&run));
    c.finish();
}

#[test]
fn mmc_erlang_c_three_machines() {
    // docs/formulas.md §1: c = 3, λ = 2.4/h, μ = 1/h: Wq = 1.07865 h, L = 4.98876, W = 2.07865 h.
    let th = mmc(3, 2.4, 1.0);
    assert!((th.wq - 1.07865).abs() < 5e-6 && (th.l - 4.98876).abs() < 5e-6);
    single_station("validation/mmc-erlang-c.yaml", "lathes", 2.4, 1.0, th, &[]);
}

#[test]
fn md1_constant_processing() {
    // docs/formulas.md §2 table, deterministic row: W = 3 h, L = 2.4.
    let th = pollaczek_khinchine(0.8, 1.0, 0.0);
    assert!((th.w - 3.0).abs() < 1e-12 && (th.l - 2.4).abs() < 1e-12);
    // docs/formulas.md §2 rows it must not match: Uniform W = 19/6 h (5.6% higher), Erlang-2 W = 4 h.
    single_station(
        "validation/md1.yaml",
        "station",
        0.8,
        1.0,
        th,
        &[("Uniform", 19.0 / 6.0), ("Erlang-2", 4.0)],
    );
}

#[test]
fn mg1_erlang2_processing() {
    // docs/formulas.md §2 table, Erlang-2 row (c_s² = 1/2): W = 4 h, L = 3.2. Its
    // distance from the M/D/1 row (W = 3 h) is 33%, far outside either
    // tolerance, so together they show that c_s² matters.
    let th = pollaczek_khinchine(0.8, 1.0, 0.5);
    assert!((th.w - 4.0).abs() < 1e-12);
    // docs/formulas.md §2 rows it must not match: M/D/1 W = 3 h, exponential W = 5 h.
    single_station(
        "validation/mg1-erlang2.yaml",
        "station",
        0.8,
        1.0,
        th,
        &[("M/D/1", 3.0), ("exponential", 5.0)],
    );
}

#[test]
fn mg1_uniform_processing() {
    // docs/formulas.md §2 table, Uniform[0.5, 1.5] row (c_s² = 1/12): W = 3.16667 h, L = 2.53333.
    // It lies 5.6% above M/D/1 (3 h), so the row also tells c_s² = 1/12 from 0.
    let th = pollaczek_khinchine(0.8, 1.0, 1.0 / 12.0);
    assert!((th.w - 19.0 / 6.0).abs() < 1e-12);
    // docs/formulas.md §2 rows it must not match: M/D/1 W = 3 h, Erlang-2 W = 4 h.
    single_station(
        "validation/mg1-uniform.yaml",
        "station",
        0.8,
        1.0,
        th,
        &[("M/D/1", 3.0), ("Erlang-2", 4.0)],
    );
}

// ---------------------------------------------------------------------------
// The Jackson network.
// ---------------------------------------------------------------------------

#[test]
fn jackson_network_with_rework() {
    let file = "validation/jackson-rework.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    let stations = ["blanking", "forming", "sizing"];
    let idx: Vec<usize> = stations.iter().map(|s| department(&plant, s)).collect();

    // Static picture: the traffic equations λ = γ + Pᵀλ give λ = (4, 4.65, 6.25)
    // (docs/formulas.md §3), which must come out of the visit ratios to 1e-9.
    let pic = StaticPicture::new(&plant, 1.0);
    for (k, want) in [4.0, 4.65, 6.25].into_iter().enumerate() {
        c.relative(&format!("static λ at {}", stations[k]), want, pic.arrivals_per_h[idx[k]], 1e-9);
    }
    // Visit ratios per product, by hand: strap v2 = 0.6 + 0.2 v3, v3 = 0.4 + v2
    // gives (1, 0.85, 1.25); clip v2 = 1 + 0.2 v3, v3 = v2 gives (1.25, 1.25);
    // shipping is visited once. Weighted by γ they give the network's
    // visit ratios per external arrival (0.8, 0.93, 1.25) of docs/formulas.md §3.
    let strap = visit_ratios(&plant, 0).expect("strap routing solves");
    let clip = visit_ratios(&plant, 1).expect("clip routing solves");
    for (k, want) in [1.0, 0.85, 1.25, 1.0].into_iter().enumerate() {
        c.relative(&format!("strap visit ratio of step {k}"), want, strap[k], 1e-9);
    }
    for (k, want) in [1.25, 1.25, 1.0].into_iter().enumerate() {
        c.relative(&format!("clip visit ratio of step {k}"), want, clip[k], 1e-9);
    }
    for (k, want) in [0.8, 0.93, 1.25].into_iter().enumerate() {
        c.relative(&format!("network visit ratio v{}", k + 1), want, pic.arrivals_per_h[idx[k]] / 5.0, 1e-9);
    }

    // Theory per station from M/M/c (docs/formulas.md §3 table): c = (1, 2, 1), μ = (5, 3, 8).
    let th: Vec<QueueMeans> =
        [(1, 4.0, 5.0), (2, 4.65, 3.0), (1, 6.25, 8.0)].iter().map(|&(m, l, mu)| mmc(m, l, mu)).collect();
    let l_total: f64 = th.iter().map(|t| t.l).sum();
    c.relative("theory: network L = 11.4525 (docs/formulas.md §3)", 11.4525, l_total, 1e-5);
    c.relative("theory: network W = L/5 = 2.29050 h (docs/formulas.md §3)", 2.29050, l_total / 5.0, 1e-5);
    // Per product: W = Σ visits × station W (in a FIFO network whose
    // exponential rates do not depend on the class, every class sees the same
    // station sojourn time).
    let w_strap = strap[0] * th[0].w + strap[1] * th[1].w + strap[2] * th[2].w;
    let w_clip = clip[0] * th[1].w + clip[1] * th[2].w;
    c.relative(
        "theory: γ-weighted product W equals network W",
        l_total / 5.0,
        (4.0 * w_strap + w_clip) / 5.0,
        1e-9,
    );

    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let b = |x: f64| BIAS_REL * x;
    for (k, t) in th.iter().enumerate() {
        let d = &s.departments[idx[k]];
        c.estimate(&format!("{} L", stations[k]), t.l, &d.wip_mean, K, b(t.l), POWER);
        c.estimate(&format!("{} Lq", stations[k]), t.lq, &d.queue_mean, K, b(t.lq), POWER);
        c.estimate(&format!("{} utilisation", stations[k]), t.rho, &d.utilization, K, b(t.rho), POWER_TIGHT);
    }
    c.estimate("network L (lots in the plant)", l_total, &s.wip_mean, K, b(l_total), POWER);
    c.estimate(
        "network W, mean flow time (h)",
        l_total / 5.0,
        &hours(&s.flow_time_s),
        K,
        b(l_total / 5.0),
        POWER,
    );
    c.estimate("throughput (lots/h) = Σγ", 5.0, &s.throughput_per_h, K, b(5.0), POWER_TIGHT);
    let per_h = 1.0 / HOUR;
    c.estimate("strap W (h)", w_strap, &scaled(&s.products[0].flow_time_s, per_h), K, b(w_strap), POWER);
    c.estimate("clip W (h)", w_clip, &scaled(&s.products[1].flow_time_s, per_h), K, b(w_clip), POWER);
    check_little(&mut c, file, &run, little_edge_bound(&run));
    c.finish();
}
