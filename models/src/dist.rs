//! Probability distributions for processing times: validated on construction, sampled from a stream.
//!
//! Each family lives in its own submodule with its constructor checks, its
//! sampler and its moments; this file only dispatches. Constructors return
//! `Result<_, DistError>` and are written so that NaN fails every check, so a `Dist` that
//! exists is valid: sampling cannot fail and never yields a negative value.

mod empirical;
mod error;
mod exponential;
mod gamma;
mod lognormal;
mod normal;
mod triangular;
mod uniform;
mod weibull;

pub use empirical::Empirical;
pub use error::{rounded, DistError, Param};
pub use exponential::Exponential;
pub use gamma::{Erlang, Gamma};
pub use lognormal::LogNormal;
pub use normal::TruncatedNormal;
pub use triangular::Triangular;
pub use uniform::Uniform;
pub use weibull::Weibull;

use rand::Rng;

/// The largest gamma cv accepted: the shape 1/cv² stays a normal f64 above
/// zero (cv² up to 1e300, shape down to 1e-300), so a cv this large still
/// describes a gamma; beyond it the derived parameters underflow or overflow.
pub const GAMMA_CV_MAX: f64 = 1e150;

use error::{non_negative, positive};

/// A validated distribution of a non-negative quantity (seconds for times).
///
/// Construct through the `Dist::...` constructors, which reject NaN and
/// out-of-range parameters, so an invalid distribution cannot exist.
///
/// ```
/// use layflow_models::dist::Dist;
/// use rand::SeedableRng;
/// let d = Dist::triangular(240.0, 300.0, 480.0).unwrap();
/// let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(7);
/// let x = d.sample(&mut rng);
/// assert!((240.0..=480.0).contains(&x));
/// assert_eq!(d.mean(), 340.0);
/// ```
#[derive(Debug, Clone, PartialEq)]
pub enum Dist {
    /// Always the same value.
    Constant(f64),
    /// Uniform on [min, max).
    Uniform(Uniform),
    /// Triangular on [min, max] with a mode.
    Triangular(Triangular),
    /// Exponential with a mean.
    Exponential(Exponential),
    /// Normal truncated at zero (negative draws are redrawn).
    Normal(TruncatedNormal),
    /// Lognormal given by the mean and coefficient of variation of the variable itself.
    LogNormal(LogNormal),
    /// Gamma with a shape and scale.
    Gamma(Gamma),
    /// Erlang: a gamma with whole-number shape k, the sum of k exponential phases.
    Erlang(Erlang),
    /// Weibull with a scale and shape.
    Weibull(Weibull),
    /// A discrete table of values and probabilities.
    Empirical(Empirical),
}

impl Dist {
    /// Always `value` (finite, >= 0).
    pub fn constant(value: f64) -> Result<Dist, DistError> {
        non_negative(Param::ConstantValue, value)?;
        Ok(Dist::Constant(value))
    }
    /// Uniform on [min, max) with 0 <= min < max.
    pub fn uniform(min: f64, max: f64) -> Result<Dist, DistError> {
        Uniform::new(min, max).map(Dist::Uniform).and_then(|d| d.finite("uniform"))
    }
    /// Triangular with 0 <= min <= mode <= max and min < max.
    pub fn triangular(min: f64, mode: f64, max: f64) -> Result<Dist, DistError> {
        Triangular::new(min, mode, max).map(Dist::Triangular).and_then(|d| d.finite("triangular"))
    }
    /// Exponential with `mean` > 0.
    pub fn exponential(mean: f64) -> Result<Dist, DistError> {
        Exponential::new(mean).map(Dist::Exponential).and_then(|d| d.finite("exponential"))
    }
    /// Normal with the given mean and sd (both > 0) *before* truncation at zero.
    pub fn normal(mean: f64, sd: f64) -> Result<Dist, DistError> {
        TruncatedNormal::new(mean, sd).map(Dist::Normal).and_then(|d| d.finite("normal"))
    }
    /// Lognormal whose own mean is `mean` (> 0) and coefficient of variation `cv` (> 0).
    pub fn lognormal(mean: f64, cv: f64) -> Result<Dist, DistError> {
        LogNormal::new(mean, cv).map(Dist::LogNormal).and_then(|d| d.finite("lognormal"))
    }
    /// Gamma with mean `mean` (> 0) and coefficient of variation `cv` (> 0, at most [`GAMMA_CV_MAX`]).
    pub fn gamma(mean: f64, cv: f64) -> Result<Dist, DistError> {
        positive(Param::GammaMean, mean)?;
        positive(Param::GammaCv, cv)?;
        // Shape and scale are derived: a refusal of either is the cv's, said in the cv's words.
        let (shape, scale) = (1.0 / (cv * cv), mean * cv * cv);
        let derived_ok = shape.is_normal() && shape > 0.0 && scale.is_finite() && scale > 0.0;
        if !derived_ok || cv > GAMMA_CV_MAX {
            let max = if mean > 1.0 { GAMMA_CV_MAX.min((f64::MAX / mean).sqrt()) } else { GAMMA_CV_MAX };
            return Err(DistError::CvTooLarge { family: "gamma", cv, max });
        }
        Gamma::new(shape, scale).map(Dist::Gamma).and_then(|d| d.finite("gamma"))
    }
    /// Gamma with `shape` and `scale` (both > 0); mean = shape × scale.
    pub fn gamma_shape_scale(shape: f64, scale: f64) -> Result<Dist, DistError> {
        Gamma::new(shape, scale).map(Dist::Gamma).and_then(|d| d.finite("gamma"))
    }
    /// Erlang with `k` >= 1 phases and overall `mean` > 0.
    pub fn erlang(k: u32, mean: f64) -> Result<Dist, DistError> {
        Erlang::new(k, mean).map(Dist::Erlang).and_then(|d| d.finite("erlang"))
    }
    /// Weibull with `scale` > 0 and `shape` > 0.
    pub fn weibull(scale: f64, shape: f64) -> Result<Dist, DistError> {
        Weibull::new(scale, shape).map(Dist::Weibull).and_then(|d| d.finite("weibull"))
    }
    /// A table of `(value, probability)` rows; values >= 0, probabilities >= 0 summing to 1 (±1e-9).
    pub fn empirical(rows: &[(f64, f64)]) -> Result<Dist, DistError> {
        Empirical::new(rows).map(Dist::Empirical).and_then(|d| d.finite("empirical"))
    }

    /// This distribution, if its mean and variance are finite numbers
    /// (every prediction and interval rests on them); `family` names it.
    fn finite(self, family: &'static str) -> Result<Dist, DistError> {
        let (mean, variance) = (self.mean(), self.variance());
        if mean.is_finite() && variance.is_finite() {
            Ok(self)
        } else {
            Err(DistError::MomentsNotFinite { family, mean, variance })
        }
    }

    /// Draw one value (never negative).
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        match self {
            Dist::Constant(v) => *v,
            Dist::Uniform(d) => d.sample(rng),
            Dist::Triangular(d) => d.sample(rng),
            Dist::Exponential(d) => d.sample(rng),
            Dist::Normal(d) => d.sample(rng),
            Dist::LogNormal(d) => d.sample(rng),
            Dist::Gamma(d) => d.sample(rng),
            Dist::Erlang(d) => d.sample(rng),
            Dist::Weibull(d) => d.sample(rng),
            Dist::Empirical(d) => d.sample(rng),
        }
    }

    /// The mean of the distribution as sampled (after any truncation).
    pub fn mean(&self) -> f64 {
        match self {
            Dist::Constant(v) => *v,
            Dist::Uniform(d) => d.mean(),
            Dist::Triangular(d) => d.mean(),
            Dist::Exponential(d) => d.mean(),
            Dist::Normal(d) => d.mean(),
            Dist::LogNormal(d) => d.mean(),
            Dist::Gamma(d) => d.mean(),
            Dist::Erlang(d) => d.mean(),
            Dist::Weibull(d) => d.mean(),
            Dist::Empirical(d) => d.mean(),
        }
    }

    /// The variance of the distribution as sampled (after any truncation).
    pub fn variance(&self) -> f64 {
        match self {
            Dist::Constant(_) => 0.0,
            Dist::Uniform(d) => d.variance(),
            Dist::Triangular(d) => d.variance(),
            Dist::Exponential(d) => d.variance(),
            Dist::Normal(d) => d.variance(),
            Dist::LogNormal(d) => d.variance(),
            Dist::Gamma(d) => d.variance(),
            Dist::Erlang(d) => d.variance(),
            Dist::Weibull(d) => d.variance(),
            Dist::Empirical(d) => d.variance(),
        }
    }

    /// The cumulative distribution function P(X <= x), for statistical checks.
    pub fn cdf(&self, x: f64) -> f64 {
        match self {
            Dist::Constant(v) => f64::from(u8::from(x >= *v)),
            Dist::Uniform(d) => d.cdf(x),
            Dist::Triangular(d) => d.cdf(x),
            Dist::Exponential(d) => d.cdf(x),
            Dist::Normal(d) => d.cdf(x),
            Dist::LogNormal(d) => d.cdf(x),
            Dist::Gamma(d) => d.cdf(x),
            Dist::Erlang(d) => d.cdf(x),
            Dist::Weibull(d) => d.cdf(x),
            Dist::Empirical(d) => d.cdf(x),
        }
    }
}
