//! Uniform distribution on [min, max).

use rand::Rng;
use rand_distr::Distribution;

use super::non_negative;

/// Uniform on [min, max) with 0 <= min < max.
#[derive(Debug, Clone, PartialEq)]
pub struct Uniform {
    min: f64,
    max: f64,
    sampler: rand_distr::Uniform<f64>,
}

impl Uniform {
    /// Validates the bounds; a degenerate range is refused because a constant says it plainly.
    pub fn new(min: f64, max: f64) -> Result<Uniform, String> {
        non_negative("uniform min", min)?;
        if !(max > min && max.is_finite()) {
            return Err(format!("uniform max ({max}) must be finite and greater than min ({min})"));
        }
        let sampler = rand_distr::Uniform::new(min, max).map_err(|e| format!("uniform: {e}"))?;
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
