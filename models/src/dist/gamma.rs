//! Gamma distribution, and Erlang as the gamma with a whole-number shape.

use rand::Rng;
use rand_distr::Distribution;

use super::error::{positive, sampler, DistError, Param};

/// Gamma with shape k > 0 and scale θ > 0: mean kθ, variance kθ².
#[derive(Debug, Clone, PartialEq)]
pub struct Gamma {
    shape: f64,
    scale: f64,
    sampler: rand_distr::Gamma<f64>,
}

impl Gamma {
    /// Validates shape and scale.
    pub fn new(shape: f64, scale: f64) -> Result<Gamma, DistError> {
        positive(Param::GammaShape, shape)?;
        positive(Param::GammaScale, scale)?;
        let sampler = rand_distr::Gamma::new(shape, scale).map_err(sampler("gamma"))?;
        Ok(Gamma { shape, scale, sampler })
    }
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.sampler.sample(rng)
    }
    pub(crate) fn mean(&self) -> f64 {
        self.shape * self.scale
    }
    pub(crate) fn variance(&self) -> f64 {
        self.shape * self.scale * self.scale
    }
    pub(crate) fn cdf(&self, x: f64) -> f64 {
        if x <= 0.0 {
            0.0
        } else {
            statrs::function::gamma::gamma_lr(self.shape, x / self.scale)
        }
    }
}

/// Erlang: the sum of k independent exponential phases with overall mean `mean`.
#[derive(Debug, Clone, PartialEq)]
pub struct Erlang {
    k: u32,
    inner: Gamma,
}

impl Erlang {
    /// Validates k >= 1 and the mean.
    pub fn new(k: u32, mean: f64) -> Result<Erlang, DistError> {
        if k == 0 {
            return Err(DistError::NoPhases);
        }
        positive(Param::ErlangMean, mean)?;
        let inner = Gamma::new(f64::from(k), mean / f64::from(k))?;
        Ok(Erlang { k, inner })
    }
    /// Number of phases.
    pub fn k(&self) -> u32 {
        self.k
    }
    pub(crate) fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        self.inner.sample(rng)
    }
    pub(crate) fn mean(&self) -> f64 {
        self.inner.mean()
    }
    pub(crate) fn variance(&self) -> f64 {
        self.inner.variance()
    }
    pub(crate) fn cdf(&self, x: f64) -> f64 {
        self.inner.cdf(x)
    }
}
