//! Weibull distribution with a scale and a shape.

use rand::Rng;
use rand_distr::Distribution;

use super::error::{positive, sampler, DistError, Param};
use statrs::function::gamma::gamma;

/// Weibull with scale λ > 0 and shape k > 0.
#[derive(Debug, Clone, PartialEq)]
pub struct Weibull {
    scale: f64,
    shape: f64,
    sampler: rand_distr::Weibull<f64>,
}

impl Weibull {
    /// Validates scale and shape.
    pub fn new(scale: f64, shape: f64) -> Result<Weibull, DistError> {
        positive(Param::WeibullScale, scale)?;
        positive(Param::WeibullShape, shape)?;
        let sampler = rand_distr::Weibull::new(scale, shape).map_err(sampler("weibull"))?;
        Ok(Weibull { scale, shape, sampler })
    }
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }
    /// λ Γ(1 + 1/k) (standard result).
    pub(crate) fn mean(&self) -> f64 {
        self.scale * gamma(1.0 + 1.0 / self.shape)
    }
    /// λ² [Γ(1 + 2/k) − Γ(1 + 1/k)²] (standard result).
    pub(crate) fn variance(&self) -> f64 {
        let g1 = gamma(1.0 + 1.0 / self.shape);
        self.scale * self.scale * (gamma(1.0 + 2.0 / self.shape) - g1 * g1)
    }
    pub(crate) fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            1.0 - (-(x / self.scale).powf(self.shape)).exp()
        }
    }
}
