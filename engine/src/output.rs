//! Output analysis across replications: Student t intervals and paired differences.

use statrs::distribution::{ContinuousCDF, StudentsT};

/// A confidence interval for a mean: `mean ± half_width` from `n` replications.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Interval {
    /// Sample mean over replications.
    pub mean: f64,
    /// Half-width at the stated confidence; `None` with a single replication.
    pub half_width: Option<f64>,
    /// Number of replications.
    pub n: usize,
}

/// The two-sided Student t quantile t(1 − α/2, df) for a confidence `level` (e.g. 0.95).
///
/// # Panics
/// If `df` is 0 or `level` is outside (0, 1) (a programming error).
pub fn t_quantile(level: f64, df: usize) -> f64 {
    assert!(df > 0 && level > 0.0 && level < 1.0, "bad t quantile request");
    let t = StudentsT::new(0.0, 1.0, df as f64).expect("df > 0 is a valid Student t");
    t.inverse_cdf(0.5 + level / 2.0)
}

/// Mean and Student t interval of independent replication results.
pub fn interval(samples: &[f64], level: f64) -> Interval {
    let n = samples.len();
    if n == 0 {
        return Interval { mean: f64::NAN, half_width: None, n };
    }
    let mean = samples.iter().sum::<f64>() / n as f64;
    if n < 2 {
        return Interval { mean, half_width: None, n };
    }
    let var = samples.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
    let hw = t_quantile(level, n - 1) * (var / n as f64).sqrt();
    Interval { mean, half_width: Some(hw), n }
}

/// Paired-t interval of `a[r] - b[r]` (replications run with common random numbers).
///
/// # Panics
/// If the slices differ in length (a programming error).
pub fn paired_difference(a: &[f64], b: &[f64], level: f64) -> Interval {
    assert_eq!(a.len(), b.len(), "paired samples must have equal length");
    let d: Vec<f64> = a.iter().zip(b).map(|(x, y)| x - y).collect();
    interval(&d, level)
}

impl Interval {
    /// Whether the interval excludes zero (a difference that is not noise).
    pub fn excludes_zero(&self) -> bool {
        matches!(self.half_width, Some(h) if self.mean.abs() > h)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn t_quantiles_match_published_table() {
        // Exact t(0.975, df) values, as tabulated (NIST/SEMATECH e-Handbook of
        // Statistical Methods §1.3.6.7.2, 3 dp; more digits recomputed in
        // docs/formulas.md §6). Tolerance 1e-5 against the exact row.
        for (df, t) in [
            (1, 12.7062),
            (2, 4.30265),
            (4, 2.77645),
            (9, 2.26216),
            (19, 2.09302),
            (29, 2.04523),
            (99, 1.98422),
            (100, 1.98397),
        ] {
            let got = t_quantile(0.95, df);
            assert!((got - t).abs() < 1e-4 * t.max(1.0), "df {df}: {got} vs {t}");
        }
    }

    #[test]
    fn half_width_of_a_known_sample() {
        // n = 10 with sample sd 0.5 gives 2.26216 × 0.5 / √10 = 0.357678 (docs/formulas.md §6).
        // Ten values ±a around 3 with a chosen so that s = 0.5: s² = 10a²/9.
        let a = (0.25f64 * 9.0 / 10.0).sqrt();
        let xs: Vec<f64> = (0..10).map(|i| if i % 2 == 0 { 3.0 + a } else { 3.0 - a }).collect();
        let iv = interval(&xs, 0.95);
        assert!((iv.mean - 3.0).abs() < 1e-12);
        assert!((iv.half_width.unwrap() - 0.357678).abs() < 1e-5);
    }

    #[test]
    fn paired_difference_cancels_common_noise() {
        let a = [10.0, 12.0, 9.0, 14.0];
        let b = [9.0, 11.0, 8.0, 13.0];
        let d = paired_difference(&a, &b, 0.95);
        assert_eq!(d.mean, 1.0);
        assert_eq!(d.half_width, Some(0.0));
    }

    #[test]
    fn paired_difference_of_a_hand_worked_example() {
        // By hand: differences a − b = 2, 4, 3, 5, 1; mean 15/5 = 3;
        // deviations −1, 1, 0, 2, −2, squares sum 10; s² = 10/4 = 2.5,
        // s = 1.581139; s/√5 = √0.5 = 0.7071068. Half-width
        // t(0.975, 4)·s/√5 = 2.77645 × 0.7071068 = 1.963247, with t from
        // NIST/SEMATECH e-Handbook §1.3.6.7.2 (docs/formulas.md §6).
        let a = [12.5, 10.0, 14.25, 9.5, 11.0];
        let b = [10.5, 6.0, 11.25, 4.5, 10.0];
        let d = paired_difference(&a, &b, 0.95);
        assert_eq!(d.n, 5);
        assert!((d.mean - 3.0).abs() < 1e-12);
        let hw = d.half_width.unwrap();
        // s/√5 is exact arithmetic above, so the ratio is held to 1e-12.
        assert!((hw / t_quantile(0.95, 4) - 0.5f64.sqrt()).abs() < 1e-12);
        // 2.77645 is rounded to 6 s.f. (±5e-6); × 0.7071 that is ±3.6e-6.
        assert!((hw - 1.963247).abs() < 4e-6, "{hw}");
    }
}
