//! Why a distribution could not be built: one variant per rule its parameters must follow.
//!
//! Callers choose what to tell people by matching the variant (for example,
//! whether the message quotes a time in seconds), never by reading the text.
//! The text itself is the message shown to people, so it must stay stable.

use std::fmt;

/// A named parameter of a distribution family, as messages spell it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Param {
    /// The value of a constant.
    ConstantValue,
    /// The lower bound of a uniform.
    UniformMin,
    /// The lower bound of a triangular.
    TriangularMin,
    /// The mean of an exponential.
    ExponentialMean,
    /// The mean of a normal before truncation.
    NormalMean,
    /// The standard deviation of a normal before truncation.
    NormalSd,
    /// The mean of a lognormal.
    LognormalMean,
    /// The coefficient of variation of a lognormal.
    LognormalCv,
    /// The mean of a gamma given by mean and cv.
    GammaMean,
    /// The coefficient of variation of a gamma given by mean and cv.
    GammaCv,
    /// The shape of a gamma.
    GammaShape,
    /// The scale of a gamma.
    GammaScale,
    /// The overall mean of an Erlang.
    ErlangMean,
    /// The scale of a Weibull.
    WeibullScale,
    /// The shape of a Weibull.
    WeibullShape,
}

impl Param {
    /// The name used in messages, e.g. `gamma shape`.
    pub fn name(self) -> &'static str {
        match self {
            Param::ConstantValue => "constant value",
            Param::UniformMin => "uniform min",
            Param::TriangularMin => "triangular min",
            Param::ExponentialMean => "exponential mean",
            Param::NormalMean => "normal mean",
            Param::NormalSd => "normal sd",
            Param::LognormalMean => "lognormal mean",
            Param::LognormalCv => "lognormal cv",
            Param::GammaMean => "gamma mean",
            Param::GammaCv => "gamma cv",
            Param::GammaShape => "gamma shape",
            Param::GammaScale => "gamma scale",
            Param::ErlangMean => "erlang mean",
            Param::WeibullScale => "weibull scale",
            Param::WeibullShape => "weibull shape",
        }
    }

    /// Whether the parameter is in the unit of the variable itself (seconds
    /// for a time), rather than a pure number such as a shape or a cv.
    pub fn has_units(self) -> bool {
        !matches!(self, Param::LognormalCv | Param::GammaCv | Param::GammaShape | Param::WeibullShape)
    }
}

/// A rule that a distribution's parameters broke.
///
/// Every check is written so that NaN breaks it too. `Display` gives the
/// message shown to people.
#[derive(Debug, Clone, PartialEq)]
pub enum DistError {
    /// The parameter must be a finite number >= 0.
    NotNonNegative {
        /// Which parameter.
        param: Param,
        /// The value given.
        value: f64,
    },
    /// The parameter must be a finite number > 0.
    NotPositive {
        /// Which parameter.
        param: Param,
        /// The value given.
        value: f64,
    },
    /// The upper bound of a range (uniform, triangular) must be finite and greater than the lower.
    MaxNotAboveMin {
        /// The family, as messages spell it (`uniform`, `triangular`).
        family: &'static str,
        /// The lower bound given.
        min: f64,
        /// The upper bound given.
        max: f64,
    },
    /// A triangular's mode must lie between its min and max.
    ModeOutsideRange {
        /// The lower bound given.
        min: f64,
        /// The mode given.
        mode: f64,
        /// The upper bound given.
        max: f64,
    },
    /// An Erlang needs at least one phase (k >= 1).
    NoPhases,
    /// An empirical table needs at least one row.
    EmptyTable,
    /// Every value of an empirical table must be finite and >= 0.
    RowValue {
        /// The 0-based row.
        row: usize,
        /// The value given.
        value: f64,
    },
    /// Every probability of an empirical table must lie in [0, 1].
    RowProbability {
        /// The 0-based row.
        row: usize,
        /// The probability given.
        probability: f64,
    },
    /// The probabilities of an empirical table must sum to 1, within a tolerance.
    ProbabilitySum {
        /// What they sum to.
        sum: f64,
        /// How far from 1 the sum may be.
        tolerance: f64,
    },
    /// Parameters that pass every check above but give a mean or variance
    /// that is not a finite number (a Weibull shape of 1e-300 has an
    /// infinite mean), so no average or utilisation could be predicted.
    MomentsNotFinite {
        /// The family, as messages spell it.
        family: &'static str,
        /// The mean the parameters give.
        mean: f64,
        /// The variance the parameters give.
        variance: f64,
    },
    /// A coefficient of variation so large that the parameters derived from
    /// it (a gamma's shape 1/cv², scale mean × cv²) are no longer finite
    /// numbers > 0: the message names the cv the user wrote, not the shape.
    CvTooLarge {
        /// The family, as messages spell it.
        family: &'static str,
        /// The cv given.
        cv: f64,
        /// The largest cv accepted.
        max: f64,
    },
    /// The sampler refused parameters that passed the checks above (extreme
    /// values whose derived parameters overflow, e.g. a huge lognormal cv).
    Sampler {
        /// The family, as messages spell it.
        family: &'static str,
        /// The sampler's own explanation.
        reason: String,
    },
}

impl fmt::Display for DistError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DistError::NotNonNegative { param, value } => {
                write!(f, "{} must be a finite number >= 0, got {value}", param.name())
            }
            DistError::NotPositive { param, value } => {
                write!(f, "{} must be a finite number > 0, got {value}", param.name())
            }
            DistError::MaxNotAboveMin { family, min, max } => {
                write!(f, "{family} max ({max}) must be finite and greater than min ({min})")
            }
            DistError::ModeOutsideRange { min, mode, max } => {
                write!(f, "triangular mode ({mode}) must lie between min ({min}) and max ({max})")
            }
            DistError::NoPhases => f.write_str("erlang k must be a whole number >= 1, got 0"),
            DistError::EmptyTable => {
                f.write_str("an empirical table needs at least one [value, probability] row")
            }
            DistError::RowValue { row, value } => {
                write!(f, "empirical row {row}: value must be finite and >= 0, got {value}")
            }
            DistError::RowProbability { row, probability } => {
                write!(
                    f,
                    "empirical row {row}: probability must lie in [0, 1], got {}",
                    rounded(*probability)
                )
            }
            DistError::ProbabilitySum { sum, tolerance } => {
                write!(f, "empirical probabilities sum to {}, not 1 (tolerance {tolerance:e})", rounded(*sum))
            }
            DistError::MomentsNotFinite { family, mean, variance } => write!(
                f,
                "{family}: these parameters give a mean of {mean:e} and a variance of {variance:e}; both must be \
                 finite numbers, or no average, utilisation or interval can be computed"
            ),
            DistError::CvTooLarge { family, cv, max } => write!(
                f,
                "{family} cv must be at most {max:e}, got {cv:e}: the {family} is built with shape 1/cv² and scale \
                 mean × cv², which are not finite numbers > 0 for a larger cv"
            ),
            DistError::Sampler { family, reason } => write!(f, "{family}: {reason}"),
        }
    }
}

impl std::error::Error for DistError {}

/// Checks that a parameter is finite and at least zero (false for NaN).
pub(crate) fn non_negative(param: Param, value: f64) -> Result<(), DistError> {
    if value >= 0.0 && value.is_finite() {
        Ok(())
    } else {
        Err(DistError::NotNonNegative { param, value })
    }
}

/// Checks that a parameter is finite and greater than zero (false for NaN).
pub(crate) fn positive(param: Param, value: f64) -> Result<(), DistError> {
    if value > 0.0 && value.is_finite() {
        Ok(())
    } else {
        Err(DistError::NotPositive { param, value })
    }
}

/// Wraps a sampler's refusal, naming the family as messages do.
pub(crate) fn sampler<E: fmt::Display>(family: &'static str) -> impl FnOnce(E) -> DistError {
    move |e| DistError::Sampler { family, reason: e.to_string() }
}

/// A sum or probability as people typed it: `0.95`, not `0.9500000000000001`.
/// Twelve decimals keep any difference larger than the 1e-9 sum tolerance
/// visible, and drop the last-bit noise of adding decimal fractions.
pub fn rounded(x: f64) -> String {
    if !x.is_finite() {
        return x.to_string();
    }
    let s = format!("{x:.12}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    if s == "-0" {
        "0".to_string()
    } else {
        s.to_string()
    }
}

#[cfg(test)]
mod tests {
    use crate::dist::Dist;

    /// Messages are part of the interface (scenario errors quote them), so
    /// each rule's text is pinned here.
    #[test]
    fn messages_are_stable() {
        let msg = |r: Result<Dist, super::DistError>| r.unwrap_err().to_string();
        assert_eq!(msg(Dist::constant(-1.0)), "constant value must be a finite number >= 0, got -1");
        assert_eq!(msg(Dist::exponential(f64::NAN)), "exponential mean must be a finite number > 0, got NaN");
        assert_eq!(msg(Dist::uniform(5.0, 5.0)), "uniform max (5) must be finite and greater than min (5)");
        assert_eq!(
            msg(Dist::triangular(1.0, 5.0, 4.0)),
            "triangular mode (5) must lie between min (1) and max (4)"
        );
        assert_eq!(msg(Dist::erlang(0, 1.0)), "erlang k must be a whole number >= 1, got 0");
        assert_eq!(
            msg(Dist::empirical(&[])),
            "an empirical table needs at least one [value, probability] row"
        );
        assert_eq!(
            msg(Dist::empirical(&[(-1.0, 1.0)])),
            "empirical row 0: value must be finite and >= 0, got -1"
        );
        assert_eq!(
            msg(Dist::empirical(&[(1.0, 1.5)])),
            "empirical row 0: probability must lie in [0, 1], got 1.5"
        );
        assert_eq!(
            msg(Dist::empirical(&[(1.0, 0.5), (2.0, 0.4)])),
            "empirical probabilities sum to 0.9, not 1 (tolerance 1e-9)"
        );
        assert_eq!(
            msg(Dist::weibull(60.0, 1e-300)),
            "weibull: these parameters give a mean of inf and a variance of NaN; both must be finite numbers, \
             or no average, utilisation or interval can be computed"
        );
        assert_eq!(
            msg(Dist::lognormal(1.0, 1e200)),
            "lognormal: variation parameter is non-finite in (log)normal distribution"
        );
    }

    #[test]
    fn sums_print_as_typed() {
        use super::rounded;
        let msg = |r: Result<Dist, super::DistError>| r.unwrap_err().to_string();
        assert_eq!(rounded(0.8 + 0.15), "0.95");
        assert_eq!(rounded(0.7 + 0.2 + 0.1), "1");
        assert_eq!(rounded(1.0 - 2e-9), "0.999999998", "a miss beyond the tolerance stays visible");
        assert_eq!(
            msg(Dist::empirical(&[(1.0, 0.8), (2.0, 0.15)])),
            "empirical probabilities sum to 0.95, not 1 (tolerance 1e-9)"
        );
    }
}
