//! Empirical distribution: a discrete table of values with their probabilities.
//!
//! Sampled by inversion on the cumulative table (one uniform per draw), so a
//! lot's draws stay in step under common random numbers whatever the table.

use rand::{Rng, RngExt};

use super::error::DistError;

/// How far the probabilities may sum from 1: loose enough for decimal
/// fractions typed by hand, tight enough to catch a forgotten row.
pub const SUM_TOLERANCE: f64 = 1e-9;

/// A table of (value, probability) rows.
#[derive(Debug, Clone, PartialEq)]
pub struct Empirical {
    values: Vec<f64>,
    probs: Vec<f64>,
    /// Running sums of `probs`, the last forced to exactly 1.
    cumulative: Vec<f64>,
}

impl Empirical {
    /// Validates the rows: at least one, values finite and >= 0, probabilities >= 0 summing to 1.
    pub fn new(rows: &[(f64, f64)]) -> Result<Empirical, DistError> {
        if rows.is_empty() {
            return Err(DistError::EmptyTable);
        }
        let mut cumulative = Vec::with_capacity(rows.len());
        let mut sum = 0.0;
        for (i, &(v, p)) in rows.iter().enumerate() {
            if !(v >= 0.0 && v.is_finite()) {
                return Err(DistError::RowValue { row: i, value: v });
            }
            if !(0.0..=1.0).contains(&p) {
                return Err(DistError::RowProbability { row: i, probability: p });
            }
            sum += p;
            cumulative.push(sum);
        }
        if !((sum - 1.0).abs() <= SUM_TOLERANCE) {
            return Err(DistError::ProbabilitySum { sum, tolerance: SUM_TOLERANCE });
        }
        if let Some(last) = cumulative.last_mut() {
            *last = 1.0;
        }
        Ok(Empirical {
            values: rows.iter().map(|r| r.0).collect(),
            probs: rows.iter().map(|r| r.1).collect(),
            cumulative,
        })
    }
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let u: f64 = rng.random();
        let i = self.cumulative.partition_point(|&c| c <= u);
        self.values[i.min(self.values.len() - 1)]
    }
    pub(crate) fn mean(&self) -> f64 {
        self.values.iter().zip(&self.probs).map(|(v, p)| v * p).sum()
    }
    pub(crate) fn variance(&self) -> f64 {
        let m = self.mean();
        self.values.iter().zip(&self.probs).map(|(v, p)| p * (v - m) * (v - m)).sum()
    }
    pub(crate) fn cdf(&self, x: f64) -> f64 {
        self.values.iter().zip(&self.probs).filter(|(v, _)| **v <= x).map(|(_, p)| p).sum()
    }
}
