//! Exponential distribution given by its mean.

use rand::Rng;
use rand_distr::Distribution;

use super::error::{positive, sampler, DistError, Param};

/// Exponential with a mean > 0.
#[derive(Debug, Clone, PartialEq)]
pub struct Exponential {
    mean: f64,
    sampler: rand_distr::Exp<f64>,
}

impl Exponential {
    /// Validates the mean.
    pub fn new(mean: f64) -> Result<Exponential, DistError> {
        positive(Param::ExponentialMean, mean)?;
        let sampler = rand_distr::Exp::new(1.0 / mean).map_err(sampler("exponential"))?;
        Ok(Exponential { mean, sampler })
    }
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }
    pub(crate) fn mean(&self) -> f64 {
        self.mean
    }
    pub(crate) fn variance(&self) -> f64 {
        self.mean * self.mean
    }
    pub(crate) fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            1.0 - (-x / self.mean).exp()
        }
    }
}
