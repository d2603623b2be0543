//! Variable demand against theory: profiled Poisson arrivals by thinning, order traces, and common random numbers.
//!
//! Sources:
//! - Thinning: P. A. W. Lewis and G. S. Shedler, "Simulation of
//!   nonhomogeneous Poisson processes by thinning", Naval Research Logistics
//!   Quarterly 26(3):403–413, 1979 (docs/formulas.md §13): the count of arrivals
//!   in [a, b] is Poisson with mean ∫ₐᵇ λ(t) dt, so its mean and variance
//!   both equal that integral, and counts over disjoint intervals are
//!   independent.
//! - The spread of a sample variance: for n independent draws with variance
//!   σ² and fourth central moment μ₄, Var(S²) = μ₄/n − σ⁴(n−3)/(n(n−1))
//!   (the standard result, e.g. Kendall and Stuart, *The Advanced Theory of
//!   Statistics*, vol. 1, sampling moments of the variance). A Poisson count
//!   with mean μ has σ² = μ and μ₄ = μ + 3μ² (its central moments, e.g.
//!   Johnson, Kemp and Kotz, *Univariate Discrete Distributions*), so for
//!   large μ the standard deviation of S² is close to σ²·√(2/(n−1)), the
//!   normal case.
//! - Bernoulli draws: a variable that is 1 with probability p has mean p and
//!   variance p(1 − p).
//!
//! Tolerances: every statistical row allows 4 standard errors of the
//! quantity, computed from the theory (not from the sample). The sample
//! means here average thousands of independent replications, so they are
//! close to normal, and a correct model misses a row with probability about
//! 6e-5; the seeds are fixed, so the tests are deterministic. Each row also
//! states its tolerance as a share of the theory, to show it has the power to
//! catch a wrong factor (a 10% error or more).

use std::path::Path;

use layflow_models::analysis::StaticPicture;
use layflow_models::parse_scenario;
use layflow_models::plant::Plant;
use layflow_models::sim::{simulate_releases, Plan, RunSpec};
use layflow_tests::{load, run_spec, scenario_path, Checks, HOUR};

/// Standard errors allowed per row (see the file comment).
const Z: f64 = 4.0;

/// Lots shipped per replication, for product `p`, under `spec`.
fn shipped(plant: &Plant, spec: RunSpec, replications: u32, p: usize) -> Vec<f64> {
    run_spec(plant, spec, replications).reps.iter().map(|r| r.shipped[p] as f64).collect()
}

/// Sample mean and (n − 1) sample variance.
fn mean_var(x: &[f64]) -> (f64, f64) {
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    let v = x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0);
    (m, v)
}

/// The scenario's own run settings, with the window and factor given.
fn spec(plant: &Plant, warmup_h: f64, horizon_h: f64, demand_factor: f64) -> RunSpec {
    RunSpec {
        layout: 0,
        horizon_s: horizon_h * HOUR,
        warmup_s: warmup_h * HOUR,
        demand_factor,
        seed: plant.run.seed,
    }
}

/// Checks that the mean and variance of Poisson counts with mean `mu` are `mu`.
fn check_poisson(c: &mut Checks, what: &str, mu: f64, counts: &[f64]) {
    let n = counts.len() as f64;
    let (m, v) = mean_var(counts);
    let se_mean = (mu / n).sqrt();
    let tol = Z * se_mean;
    c.exact(&format!("{what}: mean count = ∫λ [tol {Z}·√(μ/n), {:.2}% of μ]", 100.0 * tol / mu), mu, m, tol);
    let mu4 = mu + 3.0 * mu * mu;
    let sd_var = (mu4 / n - mu * mu * (n - 3.0) / (n * (n - 1.0))).sqrt();
    let tol = Z * sd_var;
    c.exact(
        &format!("{what}: variance of the count = ∫λ [tol {Z}·sd(S²), {:.1}% of μ]", 100.0 * tol / mu),
        mu,
        v,
        tol,
    );
}

#[test]
fn profiled_arrivals_are_poisson_with_mean_the_integral_of_the_rate() {
    // The scenario's comment works out ∫λ = 132 lots over its 22 h with no
    // warm-up; moves are instant and the routing goes straight to shipping,
    // so lots shipped = arrivals.
    let plant = load("validation/thinning-profile.yaml");
    let n = plant.run.replications;
    let mut c = Checks::new("thinning (Lewis and Shedler 1979): counts over a repeating profile");
    // The long-run rate is per_hour × the mean factor, 6 × 1.0 (the static picture uses it).
    c.exact(
        "static picture: mean arrivals per hour",
        6.0,
        StaticPicture::new(&plant, 1.0).product_rate_per_h[0],
        1e-12,
    );
    let counts = shipped(&plant, spec(&plant, 0.0, 22.0, 1.0), n, 0);
    check_poisson(&mut c, "0-22 h", 132.0, &counts);
    // Demand factor 1.5 scales λ(t), so ∫λ = 198 lots.
    let counts = shipped(&plant, spec(&plant, 0.0, 22.0, 1.5), n, 0);
    check_poisson(&mut c, "0-22 h at demand factor 1.5", 198.0, &counts);
    c.finish();
}

#[test]
fn each_hour_gets_its_own_factor() {
    // Windows of one hour: the count in hour k is Poisson with mean 6 × f_k
    // lots (the factors repeat every 5 h: 0.5, 1.5, 2.5, 0, 0.5). Hour 7 is
    // hour 2 of the second period, so it must match hour 2.
    let plant = load("validation/thinning-profile.yaml");
    let n = plant.run.replications;
    let mut c = Checks::new("thinning: counts hour by hour follow the profile");
    let mut means = Vec::new();
    for (hour, factor) in [(0.0, 0.5), (2.0, 2.5), (7.0, 2.5), (4.0, 0.5)] {
        let counts = shipped(&plant, spec(&plant, hour, hour + 1.0, 1.0), n, 0);
        check_poisson(&mut c, &format!("hour {hour}-{}", hour + 1.0), 6.0 * factor, &counts);
        means.push(mean_var(&counts).0);
    }
    // The high hour against the low one: the ratio of the factors, 2.5/0.5 = 5.
    // By the delta method sd(m₂/m₀) ≈ r·√(se₂²/μ₂² + se₀²/μ₀²), se² = μ/n.
    let (hi, lo) = (15.0, 3.0);
    let sd = 5.0 * ((1.0 / (hi * f64::from(n))) + (1.0 / (lo * f64::from(n)))).sqrt();
    c.exact("hour 2 ÷ hour 0 = 2.5 ÷ 0.5", 5.0, means[1] / means[0], Z * sd);
    // A zero factor lets nothing through, in every replication.
    let counts = shipped(&plant, spec(&plant, 3.0, 4.0, 1.0), n, 0);
    c.holds("hour 3-4 (factor 0): no arrivals in any replication", counts.iter().all(|&x| x == 0.0));
    c.finish();
}

#[test]
fn a_flat_profile_is_the_constant_rate() {
    // Factors all equal to 1 describe the same Poisson process as no profile
    // (Lewis and Shedler: λ(t) = λ). The model then uses the plain
    // exponential gaps, so even the draws are the same.
    let path = scenario_path("validation/thinning-profile.yaml");
    let text = std::fs::read_to_string(&path).unwrap();
    let flat = text.replace("factors: [0.5, 1.5, 2.5, 0, 0.5]", "factors: [1, 1, 1]");
    let constant =
        text.replace("      profile:\n        every: 1 h\n        factors: [0.5, 1.5, 2.5, 0, 0.5]\n", "");
    assert_ne!(flat, text);
    assert_ne!(constant, text);
    let releases = |t: &str| {
        let plant = parse_scenario(t, &path).unwrap();
        simulate_releases(&Plan::new(&plant, 0), &spec(&plant, 0.0, 22.0, 1.0), 3)
    };
    let (a, b) = (releases(&flat), releases(&constant));
    assert!(a.len() > 100, "{} lots", a.len());
    assert_eq!(a, b);
}

#[test]
fn a_trace_releases_exactly_its_lots() {
    // orders-trace.csv, one 6 h play: gaskets 3 (15 min), 1 (2 h), 2 (5 h);
    // flanges 2 (30 min), 4 (2 h). Four plays start within 24 h.
    let plant = load("validation/orders-trace.yaml");
    let mut c = Checks::new("order trace at demand factor 1");
    let run = run_spec(&plant, spec(&plant, 0.0, 24.0, 1.0), 20);
    c.holds("24 gaskets and 24 flanges in every replication", run.reps.iter().all(|r| r.shipped == [24, 24]));
    let pic = StaticPicture::new(&plant, 1.0);
    // With `repeat`: lots in the trace ÷ the repeat period, 6 lots / 6 h each.
    c.exact("static picture: gaskets per hour", 1.0, pic.product_rate_per_h[0], 1e-12);
    c.exact("static picture: flanges per hour", 1.0, pic.product_rate_per_h[1], 1e-12);

    // The release times are the file's times, play after play.
    let releases = simulate_releases(&Plan::new(&plant, 0), &spec(&plant, 0.0, 24.0, 1.0), 0);
    let mut want = Vec::new();
    for play in 0..4 {
        let at = |h: f64| play as f64 * 6.0 * HOUR + h * HOUR;
        want.extend([(at(0.25), 0); 3]);
        want.extend([(at(0.5), 1); 2]);
        want.push((at(2.0), 0));
        want.extend([(at(2.0), 1); 4]);
        want.extend([(at(5.0), 0); 2]);
    }
    c.holds("release times and products as in orders-trace.csv", releases == want);

    // Without `repeat` the trace plays once: 6 and 6 lots, and the static
    // picture spreads them over the scenario's 24 h horizon.
    let path = scenario_path("validation/orders-trace.yaml");
    let text = std::fs::read_to_string(&path).unwrap().replace("  repeat: 6 h\n", "");
    let once = parse_scenario(&text, &path).unwrap();
    let run = run_spec(&once, spec(&once, 0.0, 24.0, 1.0), 5);
    c.holds("without repeat: 6 gaskets and 6 flanges", run.reps.iter().all(|r| r.shipped == [6, 6]));
    c.exact(
        "without repeat: static gaskets per hour = 6 / 24 h",
        0.25,
        run.picture.product_rate_per_h[0],
        1e-12,
    );
    c.finish();
}

#[test]
fn the_demand_factor_scales_trace_quantities_in_expectation() {
    // At f = 1.5 an order of q lots releases ⌊1.5q⌋ lots plus one with
    // probability frac(1.5q). Flanges: 2 → 3 and 4 → 6, whole, so exactly
    // 9 a play and 36 in four. Gaskets: 3 → 4.5, 1 → 1.5, 2 → 3: 8 lots a
    // play plus two Bernoulli(0.5) draws, so over four plays 32 plus eight
    // independent Bernoulli(0.5): mean 36 = 1.5 × 24, variance 8 × 0.25 = 2,
    // always between 32 and 40.
    let plant = load("validation/orders-trace.yaml");
    let n = plant.run.replications;
    let mut c = Checks::new("order trace at demand factor 1.5");
    let run = run_spec(&plant, spec(&plant, 0.0, 24.0, 1.5), n);
    c.holds("flanges: exactly 36 in every replication", run.reps.iter().all(|r| r.shipped[1] == 36));
    let gaskets: Vec<f64> = run.reps.iter().map(|r| r.shipped[0] as f64).collect();
    c.holds(
        "gaskets: between 32 and 40 in every replication",
        gaskets.iter().all(|&g| (32.0..=40.0).contains(&g)),
    );
    let (m, v) = mean_var(&gaskets);
    let se = (2.0 / f64::from(n)).sqrt();
    c.exact(
        &format!("gaskets: mean = 1.5 × 24 [tol {Z}·√(2/n), {:.2}%]", 100.0 * Z * se / 36.0),
        36.0,
        m,
        Z * se,
    );
    // The sum of eight Bernoulli(0.5) is binomial(8, 0.5), whose fourth
    // central moment is np(1−p)(1 + 3(n−2)p(1−p)) = 2 × 5.5 = 11 (Johnson,
    // Kemp and Kotz, as above); Var(S²) then follows from the file comment's formula.
    let nf = f64::from(n);
    let sd_var = (11.0 / nf - 4.0 * (nf - 3.0) / (nf * (nf - 1.0))).sqrt();
    c.exact("gaskets: variance = 8 × 0.25", 2.0, v, Z * sd_var);
    c.exact("static picture: gaskets per hour at factor 1.5", 1.5, run.picture.product_rate_per_h[0], 1e-12);
    c.finish();
}

#[test]
fn arrivals_do_not_depend_on_the_layout() {
    // Common random numbers (docs/formulas.md §13, paired comparisons need one
    // stream per source of randomness): the profiled product, the trace
    // product and the constant-rate product of the variable-demand demo
    // release the same lots at the same times under both layouts, whose
    // fleets drive very different distances.
    let plant = layflow_models::load_scenario(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/orders-demo.yaml"),
    )
    .unwrap();
    assert_eq!(plant.layouts.len(), 2);
    let spec = |layout| RunSpec { layout, ..spec(&plant, 2.0 * 24.0, 8.0 * 24.0, 1.0) };
    let (a_plan, b_plan) = (Plan::new(&plant, 0), Plan::new(&plant, 1));
    for rep in 0..3 {
        let a = simulate_releases(&a_plan, &spec(0), rep);
        let b = simulate_releases(&b_plan, &spec(1), rep);
        assert!(a.len() > 500, "{} lots in 8 days", a.len());
        for p in 0..3u32 {
            assert!(a.iter().any(|&(_, q)| q == p), "product {p} released nothing");
        }
        assert_eq!(a, b, "replication {rep}: releases differ between layouts");
        let (ra, rb) = (
            layflow_models::sim::simulate(&a_plan, &spec(0), rep),
            layflow_models::sim::simulate(&b_plan, &spec(1), rep),
        );
        assert_ne!(ra.fleets, rb.fleets, "the layouts should move differently");
    }
}
