//! A fleet's operators: efficiency, and the shifts and breaks that make up their working hours.

use super::context::Ctx;
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::{OperatorsSpec, ShiftsSpec};
use crate::limits;
use crate::plant::{DutyCalendar, Operators};
use crate::units::{format_duration, Seconds};

/// Compiles `operators` (absent: efficiency 1, on duty all the time).
pub(crate) fn operators(
    spec: Option<&OperatorsSpec>,
    fleet: &str,
    op: &FieldPath,
    ctx: &Ctx,
) -> Result<Operators, ScenarioError> {
    let Some(spec) = spec else {
        return Ok(Operators { efficiency: 1.0, duty: None });
    };
    let efficiency = spec.efficiency.map_or(1.0, |e| e.0);
    if !(efficiency > 0.0 && efficiency <= 1.0) {
        return Err(ctx
            .err(
                &op.key("efficiency"),
                format!("operator efficiency of fleet \"{fleet}\" must lie in (0, 1], got {efficiency}"),
            )
            .with_hint("e.g. `efficiency: 0.85`: travel and handling then take 1/0.85 times as long"));
    }
    if efficiency < limits::MIN_EFFICIENCY {
        return Err(ctx
            .err(
                &op.key("efficiency"),
                format!(
                    "operator efficiency {} of fleet \"{fleet}\" is below the floor of {}: {}",
                    limits::shown(efficiency),
                    limits::MIN_EFFICIENCY,
                    limits::MIN_EFFICIENCY_WHY
                ),
            )
            .with_hint("e.g. `efficiency: 0.85`: travel and handling then take 1/0.85 times as long"));
    }
    let duty = match (&spec.shifts, &spec.breaks) {
        (None, None) => None,
        (None, Some(_)) => {
            return Err(ctx
                .err(&op.key("breaks"), format!("the breaks of fleet \"{fleet}\" need `shifts`"))
                .with_hint(
                    "breaks repeat with the shift period: add `shifts: { every: 1 d, on: [[0 h, 24 h]] }`",
                ))
        }
        (Some(sh), breaks) => {
            let (owner, who) = (format!("fleet \"{fleet}\""), format!("the operators of fleet \"{fleet}\""));
            duty_calendar(sh, breaks.as_deref(), op, &owner, &who, ctx)?
        }
    };
    Ok(Operators { efficiency, duty })
}

/// Compiles `shifts` and `breaks` under `base` (where both fields sit) into
/// working windows; `None` when they cover the whole period. `who` names the
/// owner in messages (`fleet "x"`) and `who` those who work (`the operators of fleet "x"`).
/// Shifts may touch but not overlap, and no break may be as long as a shift it cuts.
pub(crate) fn duty_calendar(
    sh: &ShiftsSpec,
    breaks: Option<&[[Seconds; 2]]>,
    base: &FieldPath,
    owner: &str,
    who: &str,
    ctx: &Ctx,
) -> Result<Option<DutyCalendar>, ScenarioError> {
    let sp = base.key("shifts");
    let period = sh.every.0;
    if !(period > 0.0) {
        return Err(ctx.err(
            &sp.key("every"),
            format!("the shift period must be longer than 0, got {}", format_duration(period)),
        ));
    }
    limits::check_period("a shift period", period).map_err(|m| ctx.err(&sp.key("every"), m))?;
    if sh.on.is_empty() {
        return Err(ctx
            .err(&sp.key("on"), format!("{owner} has no shift windows"))
            .with_hint("give windows such as `on: [[6 h, 14 h], [14 h, 22 h]]`, or leave `shifts` out"));
    }
    let shifts = windows(&sh.on, period, &sp.key("on"), "shift", ctx)?;
    for (i, &(a, b)) in shifts.iter().enumerate() {
        if let Some(j) = (0..i).find(|&j| shifts[j].0 < b && a < shifts[j].1) {
            return Err(ctx
                .err(
                    &sp.key("on").index(i),
                    format!(
                        "shift [{}, {}] overlaps shift [{}, {}] of {owner}",
                        format_duration(a),
                        format_duration(b),
                        format_duration(shifts[j].0),
                        format_duration(shifts[j].1)
                    ),
                )
                .with_hint("shifts may meet end to start ([6 h, 14 h] then [14 h, 22 h]) but not overlap"));
        }
    }
    let off = match breaks {
        Some(b) => windows(b, period, &base.key("breaks"), "break", ctx)?,
        None => Vec::new(),
    };
    let on = subtract(&union(shifts.clone()), &union(off.clone()));
    if on.is_empty() {
        return Err(ctx
            .err(base, format!("{who} are never on duty"))
            .with_hint("the breaks cover every shift window; shorten the breaks"));
    }
    for (i, &(c, d)) in off.iter().enumerate() {
        if let Some(&(a, b)) = shifts.iter().find(|&&(a, b)| c < b && a < d && d - c >= b - a) {
            return Err(ctx
                .err(
                    &base.key("breaks").index(i),
                    format!(
                        "break [{}, {}] lasts {}, as long as or longer than the shift [{}, {}] ({}) it overlaps",
                        format_duration(c),
                        format_duration(d),
                        format_duration(d - c),
                        format_duration(a),
                        format_duration(b),
                        format_duration(b - a)
                    ),
                )
                .with_hint("a break is a pause within a shift; to leave a shift out, remove it from `shifts.on`"));
        }
    }
    let mut shifts = shifts;
    shifts.sort_by(|a, b| a.0.total_cmp(&b.0));
    Ok(if on == [(0.0, period)] { None } else { Some(DutyCalendar { period_s: period, on, shifts }) })
}

/// Checks each `[start, end]` window: `0 <= start < end <= period`.
fn windows(
    list: &[[Seconds; 2]],
    period: f64,
    lp: &FieldPath,
    what: &str,
    ctx: &Ctx,
) -> Result<Vec<(f64, f64)>, ScenarioError> {
    let mut out = Vec::with_capacity(list.len());
    for (i, [a, b]) in list.iter().enumerate() {
        if !(0.0 <= a.0 && a.0 < b.0 && b.0 <= period) {
            return Err(ctx
                .err(
                    &lp.index(i),
                    format!(
                        "{what} window [{}, {}] must start before it ends, within the period of {} from 0",
                        format_duration(a.0),
                        format_duration(b.0),
                        format_duration(period)
                    ),
                )
                .with_hint(
                    "a window over the end of the period is two windows: [[0 h, 6 h], [22 h, 24 h]]",
                ));
        }
        out.push((a.0, b.0));
    }
    Ok(out)
}

/// Sorted, disjoint windows covering the same time, touching ones joined.
fn union(mut w: Vec<(f64, f64)>) -> Vec<(f64, f64)> {
    w.sort_by(|x, y| x.0.total_cmp(&y.0));
    let mut out: Vec<(f64, f64)> = Vec::with_capacity(w.len());
    for (a, b) in w {
        match out.last_mut() {
            Some(last) if a <= last.1 => last.1 = last.1.max(b),
            _ => out.push((a, b)),
        }
    }
    out
}

/// `on` less `off` (both as [`union`] leaves them), as sorted disjoint windows.
fn subtract(on: &[(f64, f64)], off: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    for &(a, b) in on {
        let mut start = a;
        for &(c, d) in off {
            if d <= start || c >= b {
                continue;
            }
            if c > start {
                out.push((start, c));
            }
            start = start.max(d);
        }
        if start < b {
            out.push((start, b));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shifts_less_breaks() {
        // Common practice: two shifts 6–14 h and 14–22 h join into one window,
        // and the breaks at 10 h and 18 h cut it into three.
        let h = 3600.0;
        let on = union(vec![(14.0 * h, 22.0 * h), (6.0 * h, 14.0 * h)]);
        assert_eq!(on, [(6.0 * h, 22.0 * h)]);
        let off = union(vec![(10.0 * h, 10.5 * h), (18.0 * h, 18.5 * h)]);
        let w = subtract(&on, &off);
        assert_eq!(w, [(6.0 * h, 10.0 * h), (10.5 * h, 18.0 * h), (18.5 * h, 22.0 * h)]);
        // A break over a window's edge trims it; one covering it removes it.
        assert_eq!(subtract(&[(0.0, 10.0)], &[(8.0, 12.0)]), [(0.0, 8.0)]);
        assert!(subtract(&[(2.0, 4.0)], &[(0.0, 5.0)]).is_empty());
    }
}
