//! Lognormal distribution given by the mean and coefficient of variation of the variable itself.
//!
//! Users know a time's mean and spread, not the parameters of its logarithm,
//! so the constructor converts: σ² = ln(1 + cv²), μ = ln(mean) − σ²/2.

use rand::Rng;
use rand_distr::Distribution;

use super::error::{positive, sampler, DistError, Param};
use super::normal::big_phi;

/// Lognormal with mean > 0 and cv > 0.
#[derive(Debug, Clone, PartialEq)]
pub struct LogNormal {
    mean: f64,
    cv: f64,
    mu: f64,
    sigma: f64,
    sampler: rand_distr::LogNormal<f64>,
}

impl LogNormal {
    /// Validates the mean and coefficient of variation.
    pub fn new(mean: f64, cv: f64) -> Result<LogNormal, DistError> {
        positive(Param::LognormalMean, mean)?;
        positive(Param::LognormalCv, cv)?;
        let sigma2 = cv.mul_add(cv, 1.0).ln();
        let sigma = sigma2.sqrt();
        let mu = mean.ln() - 0.5 * sigma2;
        let sampler = rand_distr::LogNormal::new(mu, sigma).map_err(sampler("lognormal"))?;
        Ok(LogNormal { mean, cv, mu, sigma, sampler })
    }
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }
    pub(crate) fn mean(&self) -> f64 {
        self.mean
    }
    pub(crate) fn variance(&self) -> f64 {
        let sd = self.cv * self.mean;
        sd * sd
    }
    pub(crate) fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            big_phi((x.ln() - self.mu) / self.sigma)
        }
    }
}
