//! Fleet-sizing targets: `METRIC OP VALUE`, e.g. `move_wait_p95 <= 5 min`, judged with 95% confidence.
//!
//! The language is deliberately tiny: one metric name, one comparison
//! (`<=`, `<`, `>=`, `>`), one value. Durations need a unit (s, min, h, d);
//! shares are a fraction or a percentage (`0.85`, `85%`); other values are
//! plain numbers in the unit the metric's name states.

use layflow_engine::t_quantile;
use layflow_models::report::Estimate;
use layflow_models::units::parse_duration;
use serde::Serialize;

use crate::Failure;

/// What a target's value is measured in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Unit {
    /// Seconds; written with a unit.
    Duration,
    /// A fraction; written `0.85` or `85%`.
    Share,
    /// A plain number (lots per hour, lots, money per hour, money per load).
    Number,
}

/// Metrics a target may name: (name, unit, what it is).
pub const TARGET_METRICS: &[(&str, Unit, &str)] = &[
    ("move_wait", Unit::Duration, "mean wait from move request to pick-up, this fleet's moves"),
    ("move_wait_p50", Unit::Duration, "median wait for this fleet (per replication, then averaged)"),
    ("move_wait_p90", Unit::Duration, "90th-percentile wait for this fleet"),
    ("move_wait_p95", Unit::Duration, "95th-percentile wait for this fleet"),
    ("move_wait_p99", Unit::Duration, "99th-percentile wait for this fleet"),
    ("utilization", Unit::Share, "share of mover time busy (loaded, empty or handling)"),
    ("empty_share", Unit::Share, "share of mover time travelling empty"),
    ("flow_time", Unit::Duration, "mean flow time, receiving to shipping, every product"),
    ("throughput", Unit::Number, "lots shipped per hour"),
    ("wip", Unit::Number, "time-average lots in the plant"),
    ("cost_per_h", Unit::Number, "this fleet's cost per hour"),
    ("cost_per_load", Unit::Number, "this fleet's cost per load moved"),
];

/// A comparison.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Op {
    /// `<=`
    #[serde(rename = "<=")]
    AtMost,
    /// `<`
    #[serde(rename = "<")]
    Below,
    /// `>=`
    #[serde(rename = ">=")]
    AtLeast,
    /// `>`
    #[serde(rename = ">")]
    Above,
}

impl Op {
    fn symbol(self) -> &'static str {
        match self {
            Op::AtMost => "<=",
            Op::Below => "<",
            Op::AtLeast => ">=",
            Op::Above => ">",
        }
    }
    fn upper(self) -> bool {
        matches!(self, Op::AtMost | Op::Below)
    }
}

/// One parsed target.
#[derive(Debug, Clone, Serialize)]
pub struct Target {
    /// As the user wrote it.
    pub text: String,
    /// Index into [`TARGET_METRICS`].
    #[serde(skip)]
    pub metric: usize,
    /// The metric's name.
    pub name: &'static str,
    /// The comparison.
    pub op: Op,
    /// The value in base units (seconds, a fraction, or the number).
    pub value: f64,
}

/// Parse `METRIC OP VALUE`.
pub fn parse(text: &str) -> Result<Target, Failure> {
    let bad = |why: String| {
        Failure::input(format!(
            "--target {text:?}: {why}. Write METRIC OP VALUE, e.g. 'move_wait_p95 <= 5 min' or \
             'utilization <= 85%'; metrics: {}",
            TARGET_METRICS.iter().map(|m| m.0).collect::<Vec<_>>().join(", ")
        ))
    };
    let t = text.trim();
    let (pos, op, len) = ["<=", ">=", "<", ">"]
        .iter()
        .find_map(|sym| t.find(sym).map(|p| (p, *sym, sym.len())))
        .ok_or_else(|| bad("no comparison (<=, <, >=, >)".into()))?;
    let op = match op {
        "<=" => Op::AtMost,
        ">=" => Op::AtLeast,
        "<" => Op::Below,
        _ => Op::Above,
    };
    let name = t[..pos].trim();
    let value_text = t[pos + len..].trim();
    let metric = TARGET_METRICS.iter().position(|m| m.0 == name).ok_or_else(|| {
        let near = TARGET_METRICS
            .iter()
            .map(|m| (strsim::jaro_winkler(m.0, name), m.0))
            .filter(|(s, _)| *s > 0.8)
            .max_by(|a, b| a.0.total_cmp(&b.0))
            .map(|(_, m)| format!(" (did you mean {m:?}?)"))
            .unwrap_or_default();
        bad(format!("unknown metric {name:?}{near}"))
    })?;
    if value_text.is_empty() {
        return Err(bad("no value after the comparison".into()));
    }
    let (mname, unit, _) = TARGET_METRICS[metric];
    let value = match unit {
        Unit::Duration => {
            parse_duration(value_text).map_err(|e| bad(format!("{mname} is a duration: {e}")))?
        }
        Unit::Share => {
            let (num, scale) = match value_text.strip_suffix('%') {
                Some(p) => (p.trim(), 0.01),
                None => (value_text, 1.0),
            };
            let v: f64 = num.parse().map_err(|_| {
                bad(format!("{mname} is a share: write a fraction such as 0.85 or a percentage such as 85%"))
            })?;
            v * scale
        }
        Unit::Number => value_text
            .parse()
            .map_err(|_| bad(format!("{mname} takes a plain number, e.g. {mname} >= 5.5")))?,
    };
    if !value.is_finite() || value < 0.0 {
        return Err(bad("the value must be a number of zero or more".into()));
    }
    if unit == Unit::Share && value > 1.0 {
        return Err(bad(format!("{mname} is a share between 0 and 1 (or 0% and 100%)")));
    }
    Ok(Target { text: t.to_string(), metric, name: mname, op, value })
}

/// How one size fares against one target.
#[derive(Debug, Clone, Serialize)]
pub struct Verdict {
    /// The target as written.
    pub target: String,
    /// The estimate it was judged on.
    pub mean: f64,
    /// The one-sided 95% confidence bound on the side that matters (upper
    /// for `<`, `<=`; lower for `>`, `>=`); `None` with one replication.
    pub bound: Option<f64>,
    /// Met with 95% confidence: the bound itself satisfies the comparison.
    pub met: bool,
    /// The mean satisfies it but the bound does not: more replications may settle it.
    pub unsure: bool,
}

/// Judge `e` against `t`: met when the one-sided 95% bound satisfies the
/// comparison (mean ± t(0.95, n−1)·s/√n; Student t, as in
/// [`layflow_engine::interval`]). From the two-sided 90% half-width, which
/// is the one-sided 95% margin.
pub fn judge(t: &Target, e: &Estimate, sd_over_root_n: Option<f64>) -> Verdict {
    let margin = match (sd_over_root_n, e.n) {
        (Some(se), n) if n >= 2 => Some(t_quantile(0.90, n - 1) * se),
        _ => None,
    };
    let bound = margin.map(|m| if t.op.upper() { e.mean + m } else { e.mean - m });
    let ok = |x: f64| match t.op {
        Op::AtMost => x <= t.value,
        Op::Below => x < t.value,
        Op::AtLeast => x >= t.value,
        Op::Above => x > t.value,
    };
    let mean_ok = e.mean.is_finite() && ok(e.mean);
    let met = bound.is_some_and(|b| b.is_finite() && ok(b));
    Verdict { target: t.text.clone(), mean: e.mean, bound, met, unsure: mean_ok && !met }
}

impl Target {
    /// What the target says, e.g. `move_wait_p95 <= 5 min`.
    pub fn describe(&self) -> String {
        let v = match TARGET_METRICS[self.metric].1 {
            Unit::Duration => crate::table::dur_plain(self.value),
            Unit::Share => format!("{}%", (self.value * 1e4).round() / 100.0),
            Unit::Number => crate::table::num(self.value),
        };
        format!("{} {} {v}", self.name, self.op.symbol())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn targets_parse_with_units() {
        let t = parse("move_wait_p95 <= 5 min").ok().unwrap();
        assert_eq!((t.name, t.op, t.value), ("move_wait_p95", Op::AtMost, 300.0));
        let t = parse("utilization<85%").ok().unwrap();
        assert_eq!((t.op, t.value), (Op::Below, 0.85));
        assert_eq!(parse("utilization <= 0.85").ok().unwrap().value, 0.85);
        assert_eq!(parse("throughput >= 5.5").ok().unwrap().op, Op::AtLeast);
    }

    #[test]
    fn wrong_targets_say_why() {
        for (text, needle) in [
            ("move_wait_p95 5 min", "no comparison"),
            ("move_wiat <= 5 min", "did you mean \"move_wait\""),
            ("move_wait <= 5", "needs a unit"),
            ("utilization <= 5 min", "is a share"),
            ("utilization <= 120%", "between 0 and 1"),
            ("throughput >= fast", "plain number"),
            ("wip <= -3", "zero or more"),
            ("wip <=", "no value"),
        ] {
            let e = parse(text).err().unwrap_or_else(|| panic!("{text} should fail"));
            assert!(e.message().contains(needle), "{text}: {}", e.message());
        }
    }

    #[test]
    fn judged_on_the_one_sided_bound() {
        // n = 10, s/√n = 1: the one-sided 95% margin is t(0.95, 9) = 1.833113
        // (NIST/SEMATECH e-Handbook §1.3.6.7.2, 0.95 column: 1.833).
        let t = parse("wip <= 12").ok().unwrap();
        let e = Estimate { mean: 10.0, half_width: None, n: 10 };
        let v = judge(&t, &e, Some(1.0));
        assert!((v.bound.unwrap() - 11.833113).abs() < 1e-5);
        assert!(v.met && !v.unsure);
        let v = judge(&t, &Estimate { mean: 11.0, ..e }, Some(1.0));
        assert!(!v.met && v.unsure, "mean meets it, the bound does not");
        let t = parse("throughput >= 9").ok().unwrap();
        assert!(judge(&t, &e, Some(0.5)).met);
        // One replication: no bound, never met with confidence.
        assert!(!judge(&t, &Estimate { n: 1, ..e }, None).met);
    }
}
