//! Triangular distribution on [min, max] with a mode.

use rand::Rng;
use rand_distr::Distribution;

use super::error::{non_negative, sampler, DistError, Param};

/// Triangular with 0 <= min <= mode <= max and min < max.
#[derive(Debug, Clone, PartialEq)]
pub struct Triangular {
    min: f64,
    mode: f64,
    max: f64,
    sampler: rand_distr::Triangular<f64>,
}

impl Triangular {
    /// Validates the three points.
    pub fn new(min: f64, mode: f64, max: f64) -> Result<Triangular, DistError> {
        non_negative(Param::TriangularMin, min)?;
        if !(max > min && max.is_finite()) {
            return Err(DistError::MaxNotAboveMin { family: "triangular", min, max });
        }
        if !(mode >= min && mode <= max) {
            return Err(DistError::ModeOutsideRange { min, mode, max });
        }
        let sampler = rand_distr::Triangular::new(min, max, mode).map_err(sampler("triangular"))?;
        Ok(Triangular { min, mode, max, sampler })
    }
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }
    pub(crate) fn mean(&self) -> f64 {
        (self.min + self.mode + self.max) / 3.0
    }
    pub(crate) fn variance(&self) -> f64 {
        let (a, c, b) = (self.min, self.mode, self.max);
        (a * a + b * b + c * c - a * b - a * c - b * c) / 18.0
    }
    pub(crate) fn cdf(&self, x: f64) -> f64 {
        let (a, c, b) = (self.min, self.mode, self.max);
        if x <= a {
            0.0
        } else if x >= b {
            1.0
        } else if x <= c {
            (x - a) * (x - a) / ((b - a) * (c - a))
        } else {
            1.0 - (b - x) * (b - x) / ((b - a) * (b - c))
        }
    }
}
