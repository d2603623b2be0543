//! Normal distribution truncated at zero, so that a time is never negative.
//!
//! Negative draws are redrawn. Because the mean must be positive, at least
//! half of the draws are accepted, so a bounded number of tries almost
//! always suffices; if they all fail the draw falls back to inverting the
//! truncated CDF, which is exact but slower.

use rand::{Rng, RngExt};
use rand_distr::Distribution;

use super::error::{positive, sampler, DistError, Param};

/// Tries before the inversion fallback: with acceptance >= 1/2 all fail with
/// probability at most 2^-64.
const MAX_TRIES: u32 = 64;

/// Standard normal density φ.
pub(crate) fn phi(z: f64) -> f64 {
    (-0.5 * z * z).exp() / (2.0 * std::f64::consts::PI).sqrt()
}

/// Standard normal distribution function Φ.
pub(crate) fn big_phi(z: f64) -> f64 {
    0.5 * statrs::function::erf::erfc(-z / std::f64::consts::SQRT_2)
}

/// Inverse of Φ, for p in (0, 1).
fn big_phi_inv(p: f64) -> f64 {
    -std::f64::consts::SQRT_2 * statrs::function::erf::erfc_inv(2.0 * p)
}

/// Normal with mean μ > 0 and sd σ > 0 before truncation, conditioned on X >= 0.
#[derive(Debug, Clone, PartialEq)]
pub struct TruncatedNormal {
    mu: f64,
    sigma: f64,
    /// Φ(α) with α = -μ/σ: the probability mass cut off below zero.
    cut: f64,
    sampler: rand_distr::Normal<f64>,
}

impl TruncatedNormal {
    /// Validates the parameters of the untruncated normal.
    pub fn new(mean: f64, sd: f64) -> Result<TruncatedNormal, DistError> {
        positive(Param::NormalMean, mean)?;
        positive(Param::NormalSd, sd)?;
        let sampler = rand_distr::Normal::new(mean, sd).map_err(sampler("normal"))?;
        Ok(TruncatedNormal { mu: mean, sigma: sd, cut: big_phi(-mean / sd), sampler })
    }
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        for _ in 0..MAX_TRIES {
            let x = self.sampler.sample(rng);
            if x >= 0.0 {
                return x;
            }
        }
        let u: f64 = rng.random();
        let p = (self.cut + u * (1.0 - self.cut)).clamp(f64::MIN_POSITIVE, 1.0 - f64::EPSILON);
        (self.mu + self.sigma * big_phi_inv(p)).max(0.0)
    }
    /// Mean of the truncated variable: μ + σ φ(α)/Z with α = -μ/σ, Z = 1 - Φ(α)
    /// (standard result for the truncated normal).
    pub(crate) fn mean(&self) -> f64 {
        let alpha = -self.mu / self.sigma;
        self.mu + self.sigma * phi(alpha) / (1.0 - self.cut)
    }
    /// Variance of the truncated variable: σ² [1 + α φ(α)/Z - (φ(α)/Z)²].
    pub(crate) fn variance(&self) -> f64 {
        let alpha = -self.mu / self.sigma;
        let lambda = phi(alpha) / (1.0 - self.cut);
        self.sigma * self.sigma * (1.0 + alpha * lambda - lambda * lambda)
    }
    pub(crate) fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            return 0.0;
        }
        let p = big_phi((x - self.mu) / self.sigma);
        ((p - self.cut) / (1.0 - self.cut)).clamp(0.0, 1.0)
    }
}
