//! Targets a study must meet, `METRIC OP VALUE` (e.g. `move_wait_p95_s <= 5 min`), judged with 95% confidence.
//!
//! The language is deliberately tiny: one metric name from the registry, one
//! comparison (`<=`, `<`, `>=`, `>`), one value. Durations need a unit (s,
//! min, h, d); shares are a fraction or a percentage (`0.85`, `85%`); other
//! values are plain numbers in the unit the metric's name states.

use layflow_engine::t_quantile;
use serde::Serialize;

use crate::metrics::estimate::Estimate;
use crate::metrics::list::{find_metric, Metric};
use crate::metrics::registry::{canonical, Scope, Unit};
use crate::scenario::parse_factor;
use crate::suggest::did_you_mean;
use crate::text::num;
use crate::units::{format_duration, parse_duration};

use super::progress::StudyError;

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
    /// Index of the metric in the list it was parsed against.
    #[serde(skip)]
    pub metric: usize,
    /// The metric judged, by its full label (`forklifts/move_wait_p95_s`).
    pub name: String,
    /// The comparison.
    pub op: Op,
    /// The value in base units (seconds, a fraction, or the number).
    pub value: f64,
    /// The metric's unit.
    #[serde(skip)]
    pub unit: Unit,
    /// What the metric is, in one sentence.
    #[serde(skip)]
    pub what: &'static str,
}

/// Parse `METRIC OP VALUE` against `list` (a plant's metrics). A name
/// without a subject means `fleet`'s metric where that fleet has one, else
/// the plant's. Also returns the note to show when an old name was read.
pub fn parse(
    text: &str,
    list: &[Metric],
    fleet: Option<&str>,
) -> Result<(Target, Option<String>), StudyError> {
    let names = || {
        let mut n: Vec<&str> = list
            .iter()
            .filter(|m| {
                m.scope == Scope::Plant || (m.scope == Scope::Fleet && Some(m.subject.as_str()) == fleet)
            })
            .map(|m| m.name)
            .collect();
        n.dedup();
        n
    };
    let bad = |why: String| {
        StudyError::Input(format!(
            "--target {text:?}: {why}. Write METRIC OP VALUE, e.g. 'move_wait_p95_s <= 5 min' or \
             'utilization <= 85%'; metrics: {}; or SUBJECT/METRIC for a product, department or other fleet",
            names().join(", ")
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
    let found = if name.contains('/') {
        find_metric(list, name)
    } else {
        let (canon, note) = canonical(name);
        let own = fleet.and_then(|f| find_metric(list, &format!("{f}/{canon}")));
        own.or_else(|| find_metric(list, &canon)).map(|(i, _)| (i, note))
    };
    let (metric, note) = found.ok_or_else(|| match name.rsplit_once('/') {
        Some((subject, _)) if !list.iter().any(|m| m.subject == subject.trim()) => {
            let mut subjects: Vec<&str> = Vec::new();
            for m in list.iter().filter(|m| !m.subject.is_empty()) {
                if !subjects.contains(&m.subject.as_str()) {
                    subjects.push(&m.subject);
                }
            }
            bad(format!(
                "no product, department, fleet or segment is called {:?}{}; the scenario has: {}",
                subject.trim(),
                did_you_mean(subject.trim(), subjects.iter().copied()),
                crate::suggest::name_list(subjects.iter().copied())
            ))
        }
        Some((subject, metric)) => {
            let theirs = list.iter().filter(|m| m.subject == subject.trim()).map(|m| m.name);
            bad(format!(
                "{:?} has no metric {:?}{}",
                subject.trim(),
                metric.trim(),
                did_you_mean(metric.trim(), theirs)
            ))
        }
        None => bad(format!("unknown metric {name:?}{}", did_you_mean(name, names()))),
    })?;
    if value_text.is_empty() {
        return Err(bad("no value after the comparison".into()));
    }
    let m = &list[metric];
    let label = m.label();
    let unit = m.def.unit;
    let value = match unit {
        Unit::Seconds => {
            parse_duration(value_text).map_err(|e| bad(format!("{label} is a duration: {e}")))?
        }
        Unit::Share => parse_factor(value_text).map_err(|_| {
            bad(format!("{label} is a share: write a fraction such as 0.85 or a percentage such as 85%"))
        })?,
        _ => value_text
            .parse()
            .map_err(|_| bad(format!("{label} takes a plain number, e.g. {label} >= 5.5")))?,
    };
    if !value.is_finite() || value < 0.0 {
        return Err(bad("the value must be a number of zero or more".into()));
    }
    if unit == Unit::Share && value > 1.0 {
        return Err(bad(format!("{label} is a share between 0 and 1 (or 0% and 100%)")));
    }
    Ok((Target { text: t.to_string(), metric, name: label, op, value, unit, what: m.def.what }, note))
}

/// How one alternative fares against one target.
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
    /// What the target says, e.g. `forklifts/move_wait_p95_s <= 5 min`.
    pub fn describe(&self) -> String {
        let v = match self.unit {
            Unit::Seconds => format_duration(self.value),
            Unit::Share => format!("{}%", (self.value * 1e4).round() / 100.0),
            _ => num(self.value),
        };
        format!("{} {} {v}", self.name, self.op.symbol())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::metrics::list::every_metric;

    fn list() -> Vec<Metric> {
        let plant = crate::parse_scenario(
            include_str!("../../../scenarios/validation/tiny-forklift.yaml"),
            std::path::Path::new("tiny-forklift.yaml"),
        )
        .expect("the validation scenario compiles");
        every_metric(&plant)
    }

    fn parse_one(text: &str) -> Result<Target, StudyError> {
        let l = list();
        let fleet = l.iter().find(|m| m.scope == Scope::Fleet).map(|m| m.subject.clone());
        parse(text, &l, fleet.as_deref()).map(|(t, _)| t)
    }

    #[test]
    fn targets_parse_with_units() {
        let t = parse_one("move_wait_p95 <= 5 min").ok().unwrap();
        assert!(t.name.ends_with("/move_wait_p95_s") && t.op == Op::AtMost && t.value == 300.0, "{t:?}");
        let t = parse_one("utilization<85%").ok().unwrap();
        assert_eq!((t.op, t.value), (Op::Below, 0.85));
        assert_eq!(parse_one("utilisation <= 0.85").ok().unwrap().value, 0.85);
        assert_eq!(parse_one("throughput >= 5.5").ok().unwrap().op, Op::AtLeast);
        assert_eq!(parse_one("throughput_per_h >= 5.5").ok().unwrap().name, "throughput_per_h");
    }

    #[test]
    fn wrong_targets_say_why() {
        for (text, needle) in [
            ("move_wait_p95 5 min", "no comparison"),
            ("move_wiat_s <= 5 min", "did you mean \"move_wait_s\""),
            ("move_wait <= 5", "needs a unit"),
            ("utilization <= 5 min", "is a share"),
            ("utilization <= 120%", "between 0 and 1"),
            ("throughput >= fast", "plain number"),
            ("wip <= -3", "zero or more"),
            ("wip <=", "no value"),
            ("nowhere/utilization <= 50%", "no product, department, fleet or segment is called \"nowhere\""),
        ] {
            let e = parse_one(text).err().unwrap_or_else(|| panic!("{text} should fail"));
            assert!(e.to_string().contains(needle), "{text}: {e}");
        }
    }

    #[test]
    fn judged_on_the_one_sided_bound() {
        // n = 10, s/√n = 1: the one-sided 95% margin is t(0.95, 9) = 1.833113
        // (NIST/SEMATECH e-Handbook §1.3.6.7.2, 0.95 column: 1.833).
        let t = parse_one("wip <= 12").ok().unwrap();
        let e = Estimate { mean: 10.0, half_width: None, n: 10 };
        let v = judge(&t, &e, Some(1.0));
        assert!((v.bound.unwrap() - 11.833113).abs() < 1e-5);
        assert!(v.met && !v.unsure);
        let v = judge(&t, &Estimate { mean: 11.0, ..e }, Some(1.0));
        assert!(!v.met && v.unsure, "mean meets it, the bound does not");
        let t = parse_one("throughput >= 9").ok().unwrap();
        assert!(judge(&t, &e, Some(0.5)).met);
        // One replication: no bound, never met with confidence.
        assert!(!judge(&t, &Estimate { n: 1, ..e }, None).met);
    }
}
