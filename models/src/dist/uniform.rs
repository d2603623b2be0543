//! Uniform distribution on [min, max).

use rand::Rng;
use rand_distr::Distribution;

use super::error::{non_negative, sampler, DistError, Param};

/// Uniform on [min, max) with 0 <= min < max.
#[derive(Debug, Clone, PartialEq)]
pub struct Uniform {
    min: f64,
    max: f64,
    sampler: rand_distr::Uniform<f64>,
}

impl Uniform {
    /// Validates the bounds; a degenerate range is refused because a constant says it plainly.
    pub fn new(min: f64, max: f64) -> Result<Uniform, DistError> {
        non_negative(Param::UniformMin, min)?;
        if !(max > min && max.is_finite()) {
            return Err(DistError::MaxNotAboveMin { family: "uniform", min, max });
        }
        let sampler = rand_distr::Uniform::new(min, max).map_err(sampler("uniform"))?;
        Ok(Uniform { min, max, sampler })
    }
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }
    pub(crate) fn mean(&self) -> f64 {
        0.5 * (self.min + self.max)
    }
    pub(crate) fn variance(&self) -> f64 {
        let w = self.max - self.min;
        w * w / 12.0
    }
    pub(crate) fn cdf(&self, x: f64) -> f64 {
        ((x - self.min) / (self.max - self.min)).clamp(0.0, 1.0)
    }
}
