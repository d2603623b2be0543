//! Durations given as distributions (processing, setup, failure and repair times): built, checked, and explained in seconds.

use super::context::Ctx;
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::DistSpec;
use crate::dist::{Dist, DistError};
use crate::limits;
use crate::units::format_duration;

/// Largest chance of a negative draw we accept from a normal repair or
/// failure time: three standard deviations (0.13%). The simulation redraws
/// negative values, so a wider normal silently becomes another distribution.
const MAX_NEGATIVE_SHARE: f64 = 0.00135;

/// A failure or repair time: any duration distribution, but not a normal that
/// goes below zero more than [`MAX_NEGATIVE_SHARE`] of the time.
pub(crate) fn duration(
    spec: &DistSpec,
    tp: &FieldPath,
    what: &str,
    ctx: &Ctx,
) -> Result<Dist, ScenarioError> {
    if let DistSpec::Normal { mean, sd } = spec {
        if mean.0 > 0.0 && sd.0 > 0.0 {
            use statrs::distribution::{ContinuousCDF, Normal};
            let below = Normal::new(mean.0, sd.0).map_or(1.0, |n| n.cdf(0.0));
            if below > MAX_NEGATIVE_SHARE {
                return Err(ctx
                    .err(
                        &tp.key("normal"),
                        format!(
                            "a {what} can go negative: a normal with mean {} and sd {} is below zero {:.1}% of the time",
                            format_duration(mean.0),
                            format_duration(sd.0),
                            100.0 * below
                        ),
                    )
                    .with_hint(
                        "use a lognormal or gamma with the same mean and cv, which cannot go negative, or keep sd <= mean/3",
                    ));
            }
        }
    }
    time_dist(spec, tp, ctx, what)
}

/// Builds a distribution of a duration (`what` names it in messages: a
/// processing time, a repair time).
pub(crate) fn time_dist(
    spec: &DistSpec,
    tp: &FieldPath,
    ctx: &Ctx,
    what: &str,
) -> Result<Dist, ScenarioError> {
    let in_seconds = |r: Result<Dist, DistError>, family: &str| {
        r.map_err(|e| {
            let err = ctx.err(&tp.key(family), e.to_string());
            if quotes_a_time(&e) {
                err.with_hint("times in this message are in seconds")
            } else {
                err
            }
        })
    };
    let d = match spec {
        DistSpec::Constant(v) => {
            if !(v.0 > 0.0) {
                return Err(
                    ctx.err(tp, format!("{what} must be longer than 0, got {}", format_duration(v.0)))
                );
            }
            in_seconds(Dist::constant(v.0), "constant")?
        }
        DistSpec::Uniform { min, max } => in_seconds(Dist::uniform(min.0, max.0), "uniform")?,
        DistSpec::Triangular { min, mode, max } => {
            in_seconds(Dist::triangular(min.0, mode.0, max.0), "triangular")?
        }
        DistSpec::Exponential { mean } => in_seconds(Dist::exponential(mean.0), "exponential")?,
        DistSpec::Normal { mean, sd } => in_seconds(Dist::normal(mean.0, sd.0), "normal")?,
        DistSpec::Lognormal { mean, cv, sd } => {
            let cv = match (cv, sd) {
                (Some(cv), None) => *cv,
                (None, Some(sd)) => sd.0 / mean.0,
                _ => {
                    return Err(ctx
                        .err(&tp.key("lognormal"), "give exactly one of `cv` and `sd`")
                        .with_hint("e.g. `{ lognormal: { mean: 15 min, cv: 0.5 } }`"))
                }
            };
            in_seconds(Dist::lognormal(mean.0, cv), "lognormal")?
        }
        DistSpec::Gamma { mean, cv, shape, scale } => match (mean, cv, shape, scale) {
            (Some(m), Some(cv), None, None) => in_seconds(Dist::gamma(m.0, *cv), "gamma")?,
            (None, None, Some(k), Some(th)) => in_seconds(Dist::gamma_shape_scale(*k, th.0), "gamma")?,
            _ => {
                return Err(ctx
                    .err(&tp.key("gamma"), "give either `mean` and `cv`, or `shape` and `scale`")
                    .with_hint(
                    "e.g. `{ gamma: { mean: 22 min, cv: 0.35 } }` or `{ gamma: { shape: 8, scale: 3 min } }`",
                ))
            }
        },
        DistSpec::Erlang { k, mean } => in_seconds(Dist::erlang(*k, mean.0), "erlang")?,
        DistSpec::Weibull { scale, shape } => in_seconds(Dist::weibull(scale.0, *shape), "weibull")?,
        DistSpec::Empirical(rows) => {
            let rows: Vec<(f64, f64)> = rows.iter().map(|(v, p)| (v.0, p.0)).collect();
            in_seconds(Dist::empirical(&rows), "empirical")?
        }
    };
    if !(d.mean() > 0.0) {
        return Err(ctx.err(tp, format!("{what} must have a mean longer than 0")));
    }
    // Each parameter is within the duration ceiling, but a heavy tail (a
    // lognormal with a huge cv) can still put the mean or spread beyond it.
    if d.mean() > limits::MAX_DURATION_S || d.variance().sqrt() > limits::MAX_DURATION_S {
        return Err(ctx.err(
            tp,
            format!(
                "{what} has a mean of {} s and a standard deviation of {} s, beyond the ceiling of {}: {}",
                limits::shown(d.mean()),
                limits::shown(d.variance().sqrt()),
                limits::max_duration_words(),
                limits::MAX_DURATION_WHY
            ),
        ));
    }
    Ok(d)
}

/// Whether a distribution's message quotes a time, which it gives in
/// seconds whatever unit the scenario used (so the hint says so).
fn quotes_a_time(e: &DistError) -> bool {
    match e {
        DistError::NotNonNegative { param, .. } | DistError::NotPositive { param, .. } => param.has_units(),
        DistError::MaxNotAboveMin { .. }
        | DistError::ModeOutsideRange { .. }
        | DistError::RowValue { .. } => true,
        DistError::NoPhases
        | DistError::CvTooLarge { .. }
        | DistError::EmptyTable
        | DistError::RowProbability { .. }
        | DistError::ProbabilitySum { .. } => false,
        // Only reachable through overflow in derived parameters; the value
        // that overflowed was given in the scenario's own terms.
        DistError::Sampler { .. } => true,
        DistError::MomentsNotFinite { .. } => true,
    }
}
