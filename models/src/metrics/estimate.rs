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

/// As [`est`], with the standard error of the mean (s/√n) that one-sided bounds need.
pub fn est_with_se(xs: impl Iterator<Item = f64>) -> (Estimate, Option<f64>) {
    let e = est(xs);
    let se = e.half_width.map(|h| h / layflow_engine::t_quantile(CONFIDENCE, e.n - 1));
    (e, se)
}

/// A duration's estimate from each replication's mean, with the percentiles
/// of every observation pooled (histograms added exactly).
pub fn dur(means: impl Iterator<Item = f64>, hist: &TickHistogram) -> DurationEstimate {
    let e = est(means);
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
}
