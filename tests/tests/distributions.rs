//! Statistical checks of the processing-time distributions against theory: Kolmogorov–Smirnov fit, moments, truncated-normal formulas.
//!
//! Every check uses a fixed seed, so a run is repeatable; the stated α or
//! number of standard errors is the chance that a correct sampler would
//! fail with an arbitrary seed, chosen small so that a new seed (after a
//! dependency bump) will not fail spuriously.

use layflow_models::dist::Dist;
use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;

/// Draws per check: enough for a KS critical value of about 0.014.
const N: usize = 20_000;

/// Significance level of each KS test.
const ALPHA: f64 = 0.001;

/// Standard errors allowed for a moment: a normal tail beyond 5 σ has
/// probability 6e-7, and n = 20 000 makes the sample moments close to normal.
const Z: f64 = 5.0;

fn draw(d: &Dist, seed: u64) -> Vec<f64> {
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    (0..N).map(|_| d.sample(&mut rng)).collect()
}

/// Asymptotic critical value of the one-sample KS statistic,
/// sqrt(−ln(α/2) / 2) / sqrt(n) (standard result; Law, Simulation Modeling
/// and Analysis [from memory]). Valid for continuous CDFs.
fn ks_critical(n: usize) -> f64 {
    (-(ALPHA / 2.0).ln() / 2.0).sqrt() / (n as f64).sqrt()
}

fn ks_statistic(samples: &[f64], d: &Dist) -> f64 {
    let mut x = samples.to_vec();
    x.sort_by(f64::total_cmp);
    let n = x.len() as f64;
    x.iter()
        .enumerate()
        .map(|(i, &v)| {
            let f = d.cdf(v);
            (f - i as f64 / n).max((i + 1) as f64 / n - f)
        })
        .fold(0.0, f64::max)
}

/// Sample mean within Z standard errors of `mean()`; sample variance within
/// Z standard errors of `variance()`, the error of s² estimated as
/// sqrt((m4 − s⁴)/n) from the sample's fourth central moment (standard result).
fn check_moments(name: &str, d: &Dist, x: &[f64]) {
    let n = x.len() as f64;
    let m = x.iter().sum::<f64>() / n;
    let s2 = x.iter().map(|v| (v - m) * (v - m)).sum::<f64>() / (n - 1.0);
    let m4 = x.iter().map(|v| (v - m).powi(4)).sum::<f64>() / n;
    let se_mean = (d.variance() / n).sqrt();
    assert!(
        (m - d.mean()).abs() <= Z * se_mean,
        "{name}: sample mean {m} vs mean() {} (allowed {})",
        d.mean(),
        Z * se_mean
    );
    let se_var = ((m4 - s2 * s2) / n).sqrt();
    assert!(
        (s2 - d.variance()).abs() <= Z * se_var,
        "{name}: sample variance {s2} vs variance() {} (allowed {})",
        d.variance(),
        Z * se_var
    );
}

fn continuous_cases() -> Vec<(&'static str, Dist)> {
    vec![
        ("uniform", Dist::uniform(120.0, 300.0).unwrap()),
        ("triangular", Dist::triangular(240.0, 300.0, 480.0).unwrap()),
        ("triangular at min", Dist::triangular(0.0, 0.0, 60.0).unwrap()),
        ("exponential", Dist::exponential(600.0).unwrap()),
        ("normal, light truncation", Dist::normal(300.0, 60.0).unwrap()),
        ("normal, heavy truncation", Dist::normal(60.0, 90.0).unwrap()),
        ("lognormal", Dist::lognormal(900.0, 0.5).unwrap()),
        ("gamma mean/cv", Dist::gamma(1320.0, 0.35).unwrap()),
        ("gamma shape < 1", Dist::gamma_shape_scale(0.5, 100.0).unwrap()),
        ("erlang", Dist::erlang(3, 600.0).unwrap()),
        ("weibull", Dist::weibull(1800.0, 2.2).unwrap()),
        ("weibull shape < 1", Dist::weibull(100.0, 0.8).unwrap()),
    ]
}

#[test]
fn continuous_samples_fit_their_cdf() {
    let crit = ks_critical(N);
    for (k, (name, d)) in continuous_cases().iter().enumerate() {
        let x = draw(d, 1000 + k as u64);
        let dn = ks_statistic(&x, d);
        assert!(dn <= crit, "{name}: KS D = {dn} > {crit} (alpha {ALPHA})");
        assert!(x.iter().all(|v| *v >= 0.0), "{name}: negative draw");
    }
}

#[test]
fn sample_moments_match_mean_and_variance() {
    for (k, (name, d)) in continuous_cases().iter().enumerate() {
        check_moments(name, d, &draw(d, 2000 + k as u64));
    }
    let e = Dist::empirical(&[(240.0, 0.2), (360.0, 0.5), (540.0, 0.3)]).unwrap();
    check_moments("empirical", &e, &draw(&e, 3000));
}

#[test]
fn empirical_frequencies_match_the_table() {
    let rows = [(240.0, 0.2), (360.0, 0.5), (540.0, 0.3), (600.0, 0.0)];
    let d = Dist::empirical(&rows).unwrap();
    let x = draw(&d, 4000);
    for (v, p) in rows {
        let share = x.iter().filter(|s| **s == v).count() as f64 / N as f64;
        // Binomial standard error of a proportion.
        let se = (p * (1.0 - p) / N as f64).sqrt();
        assert!((share - p).abs() <= Z * se, "value {v}: share {share} vs p {p}");
    }
    // Hand-computed: 0.2·240 + 0.5·360 + 0.3·540 = 390.
    assert!((d.mean() - 390.0).abs() < 1e-9);
}

#[test]
fn constant_is_constant() {
    let d = Dist::constant(360.0).unwrap();
    assert!(draw(&d, 5).iter().all(|v| *v == 360.0));
    assert_eq!((d.mean(), d.variance()), (360.0, 0.0));
}

/// Simpson's rule for ∫ f on [a, b] with `m` (even) intervals.
fn simpson(f: impl Fn(f64) -> f64, a: f64, b: f64, m: usize) -> f64 {
    let h = (b - a) / m as f64;
    let inner: f64 = (1..m).map(|i| f(a + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 }).sum();
    (f(a) + f(b) + inner) * h / 3.0
}

#[test]
fn truncated_normal_moments_match_the_formula() {
    let (mu, sigma) = (60.0, 90.0);
    let d = Dist::normal(mu, sigma).unwrap();
    // Numerical moments of the density φ((x−μ)/σ)/σ on [0, ∞), cut at μ + 15σ
    // where the tail mass is below 1e-50. Simpson's error with 20 000 steps
    // is far below the 1e-9 relative tolerance used.
    let pdf = |x: f64| (-0.5 * ((x - mu) / sigma).powi(2)).exp();
    let top = mu + 15.0 * sigma;
    let z = simpson(pdf, 0.0, top, 20_000);
    let m1 = simpson(|x| x * pdf(x), 0.0, top, 20_000) / z;
    let m2 = simpson(|x| x * x * pdf(x), 0.0, top, 20_000) / z;
    assert!((d.mean() - m1).abs() <= 1e-9 * m1, "{} vs {m1}", d.mean());
    let var = m2 - m1 * m1;
    assert!((d.variance() - var).abs() <= 1e-9 * var, "{} vs {var}", d.variance());
}

#[test]
fn truncated_normal_limits() {
    // Nearly no truncation (μ = 100σ): the plain normal's moments.
    let d = Dist::normal(1000.0, 10.0).unwrap();
    assert!((d.mean() - 1000.0).abs() < 1e-9);
    assert!((d.variance() - 100.0).abs() < 1e-9);
    // μ → 0: the half-normal, mean σ√(2/π), variance σ²(1 − 2/π) (standard
    // result). With μ = 1e-9σ the moments move by about 1e-9σ.
    let s = 50.0;
    let d = Dist::normal(1e-9 * s, s).unwrap();
    let pi = std::f64::consts::PI;
    assert!((d.mean() - s * (2.0 / pi).sqrt()).abs() < 1e-7 * s);
    assert!((d.variance() - s * s * (1.0 - 2.0 / pi)).abs() < 1e-7 * s * s);
}

#[test]
fn closed_form_means() {
    // Weibull with shape 1 is exponential: mean = scale, variance = scale² (Γ(2) = 1, Γ(3) = 2).
    let w = Dist::weibull(100.0, 1.0).unwrap();
    assert!((w.mean() - 100.0).abs() < 1e-9 && (w.variance() - 1e4).abs() < 1e-6);
    // Triangular (a + b + c)/3 and (a² + b² + c² − ab − ac − bc)/18.
    let t = Dist::triangular(240.0, 300.0, 480.0).unwrap();
    assert_eq!(t.mean(), 340.0);
    assert!((t.variance() - 2600.0).abs() < 1e-9);
    // Lognormal keeps the mean and cv it was given.
    let l = Dist::lognormal(900.0, 0.5).unwrap();
    assert!((l.mean() - 900.0).abs() < 1e-9 && (l.variance() - 450.0f64.powi(2)).abs() < 1e-6);
    // Erlang k = 3, mean 600: variance mean²/k.
    let e = Dist::erlang(3, 600.0).unwrap();
    assert!((e.variance() - 120_000.0).abs() < 1e-6);
}

#[test]
fn constructors_reject_nan_and_bad_ranges() {
    let nan = f64::NAN;
    assert!(Dist::constant(nan).is_err() && Dist::constant(-1.0).is_err());
    assert!(Dist::uniform(nan, 1.0).is_err() && Dist::uniform(5.0, 5.0).is_err());
    assert!(Dist::triangular(1.0, 5.0, 4.0).is_err() && Dist::triangular(1.0, nan, 4.0).is_err());
    assert!(Dist::exponential(0.0).is_err() && Dist::exponential(f64::INFINITY).is_err());
    assert!(Dist::normal(0.0, 1.0).is_err() && Dist::normal(1.0, nan).is_err());
    assert!(Dist::lognormal(1.0, 0.0).is_err());
    assert!(Dist::gamma(nan, 1.0).is_err() && Dist::gamma_shape_scale(1.0, -1.0).is_err());
    assert!(Dist::erlang(0, 1.0).is_err());
    assert!(Dist::weibull(1.0, 0.0).is_err());
    assert!(Dist::empirical(&[]).is_err());
    let e = Dist::empirical(&[(1.0, 0.5), (2.0, 0.4)]).unwrap_err().to_string();
    assert!(e.contains("1e-9"), "{e}");
    assert!(Dist::empirical(&[(1.0, 0.5), (2.0, 0.5 + 1e-12)]).is_ok(), "within tolerance");
}
