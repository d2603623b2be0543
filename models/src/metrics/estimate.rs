//! Estimates across replications: a mean with its 95% Student t half-width, and pooled percentiles.

use layflow_engine::{interval, Interval, TickHistogram};
use serde::Serialize;

/// Confidence level of every interval in a summary.
pub const CONFIDENCE: f64 = 0.95;

/// A mean over replications with its 95% half-width (`null` with one replication).
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct Estimate {
    /// Mean over replications.
    pub mean: f64,
    /// Half-width of the 95% Student t interval.
    pub half_width: Option<f64>,
    /// Replications.
    pub n: usize,
}

/// An [`Estimate`] of a duration, with percentiles of the pooled histogram.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct DurationEstimate {
    /// Mean over replications of each replication's mean.
    pub mean: f64,
    /// Half-width of the 95% Student t interval.
    pub half_width: Option<f64>,
    /// Replications.
    pub n: usize,
    /// Median of every observation pooled across replications.
    pub p50: f64,
    /// 90th percentile, pooled.
    pub p90: f64,
    /// 95th percentile, pooled.
    pub p95: f64,
    /// 99th percentile, pooled.
    pub p99: f64,
    /// Observations pooled.
    pub count: u64,
}

impl DurationEstimate {
    /// The mean and its interval without the percentiles.
    pub fn estimate(&self) -> Estimate {
        Estimate { mean: self.mean, half_width: self.half_width, n: self.n }
    }
}

impl From<Interval> for Estimate {
    fn from(iv: Interval) -> Self {
        Estimate { mean: iv.mean, half_width: iv.half_width, n: iv.n }
    }
}

/// Mean and interval over the replications that observed the metric: a
/// replication that shipped no lot has no flow time, which is not a flow
/// time of 0. `n` says how many replications counted.
pub fn est(xs: impl Iterator<Item = f64>) -> Estimate {
    let v: Vec<f64> = xs.filter(|x| x.is_finite()).collect();
    interval(&v, CONFIDENCE).into()
}

/// Replications an estimate holds exactly before it folds them into moments:
/// up to this many, [`Moments::estimate`] is [`est`] over the values, to the
/// last bit; past it, each full chunk is reduced to (count, mean, sum of
/// squared deviations) and merged, so memory stays `CHUNK` values whatever
/// the number of replications.
pub const CHUNK: usize = 64;

/// A metric's values over replications in constant memory, giving the same
/// [`Estimate`] as [`est`] over every value.
///
/// The mean is the running sum of the values in replication order divided by
/// their count, the same arithmetic as [`est`]'s, so it agrees to the last
/// bit for any number of replications. The variance is the two-pass sum of
/// squared deviations within each chunk of [`CHUNK`] values, chunks merged by
/// the pairwise update of Chan, Golub and LeVeque ("Algorithms for computing
/// the sample variance", *The American Statistician* 37(3), 1983; from
/// memory): M2 = M2a + M2b + δ²·na·nb/(na + nb), δ the difference of the
/// chunk means. Up to [`CHUNK`] values there is one chunk and nothing to
/// merge, so the half-width is [`est`]'s exactly; beyond, it can differ from
/// the two-pass sum over every value in its last bits only (both are
/// backward stable).
#[derive(Debug, Clone)]
pub struct Moments {
    /// Sum of the finite values, in order (starts at `f64`'s neutral element, as `Iterator::sum`).
    total: f64,
    /// Finite values seen.
    n: usize,
    /// Values in the merged chunks.
    merged_n: usize,
    /// Their mean.
    merged_mean: f64,
    /// Their sum of squared deviations from that mean.
    merged_m2: f64,
    /// The current chunk's values (at most [`CHUNK`]).
    chunk: Vec<f64>,
}

/// (count, mean, sum of squared deviations) of `xs`, two-pass as in `layflow_engine::interval`.
fn two_pass(xs: &[f64]) -> (usize, f64, f64) {
    let n = xs.len();
    let mean = xs.iter().sum::<f64>() / n as f64;
    (n, mean, xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>())
}

impl Default for Moments {
    fn default() -> Moments {
        Moments::new()
    }
}

impl Moments {
    /// No values yet.
    pub fn new() -> Moments {
        Moments {
            total: std::iter::empty::<f64>().sum(),
            n: 0,
            merged_n: 0,
            merged_mean: 0.0,
            merged_m2: 0.0,
            chunk: Vec::new(),
        }
    }

    /// Add one replication's value; a non-finite one (nothing observed) is left out, as in [`est`].
    pub fn add(&mut self, x: f64) {
        if !x.is_finite() {
            return;
        }
        self.total += x;
        self.n += 1;
        self.chunk.push(x);
        if self.chunk.len() == CHUNK {
            let (n, mean, m2) = two_pass(&self.chunk);
            (self.merged_n, self.merged_mean, self.merged_m2) =
                merge((self.merged_n, self.merged_mean, self.merged_m2), (n, mean, m2));
            self.chunk.clear();
        }
    }

    /// Values counted (finite ones).
    pub fn count(&self) -> usize {
        self.n
    }

    /// Values held in memory now: never more than [`CHUNK`], whatever [`Moments::count`] is.
    pub fn retained(&self) -> usize {
        self.chunk.len()
    }

    /// Mean and 95% interval, as [`est`] over every value added.
    pub fn estimate(&self) -> Estimate {
        if self.merged_n == 0 {
            return layflow_engine::interval(&self.chunk, CONFIDENCE).into();
        }
        let merged = (self.merged_n, self.merged_mean, self.merged_m2);
        let (n, _, m2) = if self.chunk.is_empty() { merged } else { merge(merged, two_pass(&self.chunk)) };
        let mean = self.total / n as f64;
        let var = m2 / (n - 1) as f64;
        let hw = layflow_engine::t_quantile(CONFIDENCE, n - 1) * (var / n as f64).sqrt();
        Estimate { mean, half_width: Some(hw), n }
    }

    /// As [`Moments::estimate`], with the standard error of the mean, as [`est_with_se`].
    pub fn estimate_with_se(&self) -> (Estimate, Option<f64>) {
        with_se(self.estimate())
    }
}

/// Pairwise merge of two (count, mean, M2) summaries (Chan, Golub and LeVeque 1983).
fn merge(a: (usize, f64, f64), b: (usize, f64, f64)) -> (usize, f64, f64) {
    if a.0 == 0 {
        return b;
    }
    let n = a.0 + b.0;
    let delta = b.1 - a.1;
    let mean = a.1 + delta * b.0 as f64 / n as f64;
    (n, mean, a.2 + b.2 + delta * delta * (a.0 as f64 * b.0 as f64 / n as f64))
}

/// An estimate with the standard error of its mean, s/√n, read back from the half-width.
fn with_se(e: Estimate) -> (Estimate, Option<f64>) {
    let se = e.half_width.map(|h| h / layflow_engine::t_quantile(CONFIDENCE, e.n - 1));
    (e, se)
}

/// As [`est`], with the standard error of the mean (s/√n) that one-sided bounds need.
pub fn est_with_se(xs: impl Iterator<Item = f64>) -> (Estimate, Option<f64>) {
    with_se(est(xs))
}

/// A duration's estimate from each replication's mean, with the percentiles
/// of every observation pooled (histograms added exactly).
pub fn dur(means: impl Iterator<Item = f64>, hist: &TickHistogram) -> DurationEstimate {
    with_hist(est(means), hist)
}

/// A duration's estimate `e` (of each replication's mean) with the percentiles of `hist`.
pub fn with_hist(e: Estimate, hist: &TickHistogram) -> DurationEstimate {
    DurationEstimate {
        mean: e.mean,
        half_width: e.half_width,
        n: e.n,
        p50: hist.quantile(0.50),
        p90: hist.quantile(0.90),
        p95: hist.quantile(0.95),
        p99: hist.quantile(0.99),
        count: hist.count(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metrics::compute::observed;
    use layflow_engine::Tally;

    #[test]
    fn replications_without_observations_are_left_out_not_counted_as_zero() {
        let mut seen = Tally::new();
        seen.add(10.0);
        seen.add(14.0);
        let empty = Tally::new();
        let e = est([observed(&seen), observed(&empty), observed(&seen)].into_iter());
        // Two replications of mean 12, the empty one skipped: a zero would give 8.
        assert_eq!((e.mean, e.n), (12.0, 2));
        assert_eq!(e.half_width, Some(0.0));
    }

    #[test]
    fn moments_equal_the_two_pass_estimate_to_the_last_bit_within_a_chunk() {
        // Up to CHUNK values there is one chunk: the same arithmetic as `est`.
        let xs: Vec<f64> = (0..CHUNK).map(|i| ((i * 7919) % 101) as f64 / 3.0 + 0.1).collect();
        for n in [0, 1, 2, 17, CHUNK] {
            let mut m = Moments::new();
            xs[..n].iter().for_each(|&x| m.add(x));
            let (a, b) = (m.estimate(), est(xs[..n].iter().copied()));
            assert_eq!((a.mean.to_bits(), a.n), (b.mean.to_bits(), b.n), "n = {n}");
            assert_eq!(a.half_width.map(f64::to_bits), b.half_width.map(f64::to_bits), "n = {n}");
        }
    }

    #[test]
    fn moments_keep_a_chunk_whatever_the_count_and_match_the_closed_form() {
        // The values 1..=n have mean (n + 1)/2 and sample variance n(n + 1)/12
        // (sums of the first n integers and squares; from memory). Relative
        // tolerance 1e-12: both sides are sums of n = 10,000 terms, each
        // rounding at most n·ε ≈ 2e-12 in the worst case and far less in
        // practice; a wrong merge formula is off by whole percents.
        let n = 10_000usize;
        let mut m = Moments::new();
        let mut peak = 0;
        for i in 1..=n {
            m.add(i as f64);
            peak = peak.max(m.retained());
        }
        m.add(f64::NAN); // nothing observed: left out, as in `est`
        assert!(peak <= CHUNK, "held {peak} values");
        let e = m.estimate();
        let nf = n as f64;
        assert_eq!(e.n, n);
        assert_eq!(e.mean, (nf + 1.0) / 2.0);
        let var = nf * (nf + 1.0) / 12.0;
        let hw = layflow_engine::t_quantile(CONFIDENCE, n - 1) * (var / nf).sqrt();
        let got = e.half_width.expect("n > 1");
        assert!((got - hw).abs() <= 1e-12 * hw, "half-width {got} against {hw}");
        // And against the two-pass estimate over every value.
        let two_pass = est((1..=n).map(|i| i as f64));
        assert!((got - two_pass.half_width.unwrap()).abs() <= 1e-12 * hw);
    }
}
