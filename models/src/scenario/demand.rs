//! Demand: each product's rate and repeating profile, and the order trace read from a CSV file.
//!
//! A product gets its lots either from `demand` (Poisson arrivals at
//! `per_hour`, times a repeating `profile` of factors when given) or from the
//! scenario's `orders` trace, never both. The trace is a CSV file, its path
//! relative to the scenario file, with the header `time,product,quantity` (in
//! any column order). Lines starting with `#` are comments and blank lines are
//! skipped. `time` is a duration with its unit since the start of the run (of
//! each play, with `repeat`), or, with `orders.start`, a date-time mapped to run
//! time by that instant (see [`crate::datetime`]); in non-decreasing order.
//! `quantity` is a whole number of lots, at least 1. Cells are separated by `,`,
//! `;` or tabs; decimal commas are detected per file. Errors in the file name the
//! file, its line and the column. Demand per shift, day, week or month is spread
//! over the scenario's `working_time` ([`working_time`]).

use std::path::Path;

use super::context::Ctx;
use super::error::ScenarioError;
use super::locate::FieldPath;
use super::schema::{ProductSpec, Scenario};
use crate::datetime::{looks_like_date, parse_datetime, DateTime, WEEKDAYS};
use crate::limits;
use crate::plant::{Demand, Order, OrderTrace, Product, Profile};
use crate::suggest::{did_you_mean, name_list};
use crate::units::{format_duration, parse_duration};

/// The columns of an order trace, in the order the messages list them.
const COLUMNS: [&str; 3] = ["time", "product", "quantity"];
/// The optional fourth column: when the order is due, written as its time is.
const DUE: &str = "due";
/// Every column a trace may have: the three it must, and `due`.
const ALL_COLUMNS: [&str; 4] = ["time", "product", "quantity", DUE];

/// The fields demand may be given in, one per product.
const PERIODS: [&str; 5] = ["per_hour", "per_shift", "per_day", "per_week", "per_month"];

/// The scenario's `working_time`, compiled: how many working hours a shift, a
/// day, a week and a month of demand mean, and when in the week lots arrive.
#[derive(Debug, Clone)]
pub(crate) struct WorkingTime {
    /// Shifts a working day (`shifts.on`).
    shifts_per_day: f64,
    /// Working days a week, from Monday.
    days: f64,
    /// Working hours a week: the on-duty hours of a day (breaks taken out) × days.
    hours_per_week: f64,
    /// Weeks a month.
    weeks_per_month: f64,
    /// 1 in working time, 0 outside, over one week from Monday 00:00.
    profile: Profile,
}

/// Compiles `working_time`, if given.
///
/// The shifts repeat every day (`every: 1 d`) on the first `days` days of the
/// week from Monday, the run clock's first day. Lots of a demand given per
/// shift, day, week or month arrive in working time only, as a Poisson stream
/// at the rate that makes up that demand: the hourly rate is the week's lots ÷
/// the week's working hours. The arrival pattern is a profile over the week
/// whose step is the largest that puts every shift and break edge on a step
/// boundary (2 h for shifts at 06:00, 14:00 and 22:00).
pub(crate) fn working_time(s: &Scenario, ctx: &Ctx) -> Result<Option<WorkingTime>, ScenarioError> {
    let Some(w) = &s.working_time else {
        return Ok(None);
    };
    let wp = FieldPath::root().key("working_time");
    if w.shifts.every.0 != 86_400.0 {
        return Err(ctx
            .err(
                &wp.key("shifts").key("every"),
                format!("the working-time shifts repeat every day, got every: {}", format_duration(w.shifts.every.0)),
            )
            .with_hint("write `every: 1 d`, and say which days of the week are worked with `days: 5` (Monday to Friday)"));
    }
    let duty = super::operators::duty_calendar(
        &w.shifts,
        w.breaks.as_deref(),
        &wp,
        "the working time",
        "the plant",
        ctx,
    )?;
    let on: Vec<(f64, f64)> = duty.as_ref().map_or(vec![(0.0, 86_400.0)], |d| d.on.clone());
    let days = w.days.unwrap_or(7);
    if !(1..=7).contains(&days) {
        return Err(ctx
            .err(&wp.key("days"), format!("days must be 1 to 7 working days a week, got {days}"))
            .with_hint("`days: 5` is Monday to Friday: the run clock starts on a Monday"));
    }
    let weeks_per_month = match w.weeks_per_month {
        None => 52.0 / 12.0,
        Some(x) if (4.0..=5.0).contains(&x) => x,
        Some(x) => {
            return Err(ctx
                .err(&wp.key("weeks_per_month"), format!("weeks_per_month must lie in 4 to 5, got {x}"))
                .with_hint("leave it out for 52/12 = 4.33 weeks (a year of 52 weeks in 12 months)"))
        }
    };
    // The profile's step: the greatest common divisor of every edge, in whole seconds.
    let mut step: u64 = 86_400;
    for &(a, b) in &on {
        for edge in [a, b] {
            if edge.fract() != 0.0 {
                return Err(ctx
                    .err(
                        &wp.key("shifts"),
                        format!("a shift or break edge at {edge} s is not a whole second"),
                    )
                    .with_hint("write edges in whole minutes, e.g. [6 h, 14.5 h]"));
            }
            step = gcd(step, edge as u64);
        }
    }
    if step < 60 {
        return Err(ctx
            .err(&wp.key("shifts"), "shift and break edges must fall on whole minutes")
            .with_hint("a week is then at most 10 080 steps of arrivals on or off, e.g. [6 h, 14.5 h]"));
    }
    let factors = (0..7 * 86_400 / step)
        .map(|k| {
            let t = k * step;
            let (day, second) = (t / 86_400, (t % 86_400) as f64);
            let working = day < u64::from(days) && on.iter().any(|&(a, b)| a <= second && second < b);
            if working {
                1.0
            } else {
                0.0
            }
        })
        .collect();
    let hours_per_day: f64 = on.iter().map(|&(a, b)| b - a).sum::<f64>() / 3600.0;
    Ok(Some(WorkingTime {
        shifts_per_day: w.shifts.on.len() as f64,
        days: f64::from(days),
        hours_per_week: hours_per_day * f64::from(days),
        weeks_per_month,
        profile: Profile { every_s: step as f64, factors },
    }))
}

fn gcd(a: u64, b: u64) -> u64 {
    if b == 0 {
        a
    } else {
        gcd(b, a % b)
    }
}

/// The product's `demand`, or [`Demand::Orders`] when it has none (checked
/// against the trace by [`order_trace`]).
pub(crate) fn product_demand(
    spec: &ProductSpec,
    pp: &FieldPath,
    working: Option<&WorkingTime>,
    ctx: &Ctx,
) -> Result<Demand, ScenarioError> {
    let Some(d) = &spec.demand else {
        return Ok(Demand::Orders);
    };
    let dp = pp.key("demand");
    let given: Vec<(&str, f64)> = PERIODS
        .iter()
        .zip([d.per_hour, d.per_shift, d.per_day, d.per_week, d.per_month])
        .filter_map(|(&name, v)| v.map(|v| (name, v)))
        .collect();
    let (period, amount) = match given.as_slice() {
        [one] => *one,
        [] => {
            return Err(ctx
                .err(&dp, format!("the demand of product \"{}\" gives no rate", spec.id))
                .with_hint(format!("give one of {}, e.g. `demand: {{ per_hour: 2 }}`", PERIODS.join(", "))))
        }
        [(a, _), (b, _), ..] => {
            return Err(ctx
                .err(&dp.key(b), format!("the demand of product \"{}\" gives both `{a}` and `{b}`", spec.id))
                .with_hint("give one rate: the others follow from `working_time`"))
        }
    };
    if !(amount > 0.0 && amount.is_finite()) {
        let what = period.trim_start_matches("per_");
        return Err(ctx.err(
            &dp.key(period),
            format!("demand of product \"{}\" must be a number > 0 lots per {what}, got {amount}", spec.id),
        ));
    }
    if period != "per_hour" {
        let Some(w) = working else {
            return Err(ctx
                .err(
                    &dp.key(period),
                    format!("demand `{period}` needs the scenario's `working_time` to say how long that is"),
                )
                .with_hint(
                    "add e.g. `working_time: { shifts: { every: 1 d, on: [[6 h, 14 h], [14 h, 22 h]] }, days: 5 }` \
                     (two 8 h shifts, Monday to Friday), or give `per_hour`",
                ));
        };
        if d.profile.is_some() {
            return Err(ctx
                .err(&dp.key("profile"), format!("a `profile` goes with `per_hour`, not with `{period}`"))
                .with_hint(
                    "lots given per shift, day, week or month already arrive in working time only; \
                     for another pattern, give `per_hour` with a profile",
                ));
        }
        let per_week = match period {
            "per_shift" => amount * w.shifts_per_day * w.days,
            "per_day" => amount * w.days,
            "per_week" => amount,
            _ => amount / w.weeks_per_month,
        };
        let per_hour = per_week / w.hours_per_week;
        limits::check_at_most(period, per_hour, limits::MAX_PER_HOUR, limits::RATE_WHY)
            .map_err(|m| ctx.err(&dp.key(period), m))?;
        return Ok(Demand::Rate { per_s: per_hour / 3600.0, profile: Some(w.profile.clone()) });
    }
    let per_hour = amount;
    limits::check_at_most("per_hour", per_hour, limits::MAX_PER_HOUR, limits::RATE_WHY)
        .map_err(|m| ctx.err(&dp.key("per_hour"), m))?;
    let profile = match &d.profile {
        None => None,
        Some(pr) => {
            let prp = dp.key("profile");
            let every = pr.every.0;
            if !(every > 0.0) {
                return Err(ctx
                    .err(
                        &prp.key("every"),
                        format!("every must be longer than 0, got {}", format_duration(every)),
                    )
                    .with_hint("`every` is how long each factor lasts, e.g. `every: 1 h`"));
            }
            limits::check_period("a profile period", every).map_err(|m| {
                ctx.err(&prp.key("every"), m)
                    .with_hint("`every` is how long each factor lasts, e.g. `every: 1 h`")
            })?;
            let fp = prp.key("factors");
            let factors: Vec<f64> = pr.factors.iter().map(|f| f.0).collect();
            if factors.is_empty() {
                return Err(ctx
                    .err(&fp, format!("the profile of product \"{}\" has no factors", spec.id))
                    .with_hint("list one multiplier of `per_hour` per period, e.g. `factors: [0.5, 1.5]`"));
            }
            for (k, &f) in factors.iter().enumerate() {
                if !(f >= 0.0 && f.is_finite()) {
                    return Err(ctx
                        .err(&fp.index(k), format!("profile factor {f} must be a number >= 0"))
                        .with_hint("a factor multiplies `per_hour`; 0 means no arrivals in that period"));
                }
                limits::check_at_most("profile factor", f, limits::MAX_FACTOR, limits::RATE_WHY)
                    .map_err(|m| ctx.err(&fp.index(k), m))?;
            }
            if !factors.iter().any(|&f| f > 0.0) {
                return Err(ctx
                    .err(
                        &fp,
                        format!(
                            "every factor of the profile of product \"{}\" is 0: no lot would arrive",
                            spec.id
                        ),
                    )
                    .with_hint("give at least one factor > 0"));
            }
            Some(Profile { every_s: every, factors })
        }
    };
    Ok(Demand::Rate { per_s: per_hour / 3600.0, profile })
}

/// Reads the order trace, if any, and checks that every product has exactly
/// one source of lots: `demand` or orders in the trace.
pub(crate) fn order_trace(
    s: &Scenario,
    products: &[Product],
    ctx: &Ctx,
) -> Result<Option<OrderTrace>, ScenarioError> {
    let pp = FieldPath::root().key("products");
    let Some(spec) = &s.orders else {
        if let Some(i) = products.iter().position(|p| p.demand == Demand::Orders) {
            return Err(ctx
                .err(&pp.index(i), format!("product \"{}\" has no `demand`", products[i].id))
                .with_hint(
                    "give it `demand: { per_hour: 2 }`, or feed it from an order trace: \
                     add `orders: { file: orders.csv }` and list its orders there",
                ));
        }
        return Ok(None);
    };
    let op = FieldPath::root().key("orders");
    let fp = op.key("file");
    let dir = ctx.origin.parent().unwrap_or_else(|| Path::new(""));
    let resolved = dir.join(&spec.file);
    let shown = resolved.display().to_string();
    let text = std::fs::read_to_string(&resolved).map_err(|e| {
        ctx.err(&fp, format!("cannot read order trace {shown}: {e}"))
            .with_hint("the CSV path is relative to the scenario file")
    })?;
    let in_file = |line: Option<u64>, column: Option<&str>, msg: String| {
        let at = line.map_or(String::new(), |l| format!(", line {l}"));
        let column = column.map_or(String::new(), |c| format!(", column {c}"));
        ctx.err(&fp, format!("in {shown}{at}{column}: {msg}"))
    };
    let times = match &spec.start {
        None => TimeColumn::Durations,
        Some(text) => TimeColumn::Since(
            run_start(text).map_err(|(msg, hint)| ctx.err(&op.key("start"), msg).with_hint(hint))?,
        ),
    };
    let ids: Vec<&str> = products.iter().map(|p| p.id.as_str()).collect();
    let (orders, lines) = read_orders(&text, &ids, times).map_err(|(line, column, msg, hint)| {
        let e = in_file(line, column, msg);
        match hint {
            Some(h) => e.with_hint(h),
            None => e,
        }
    })?;
    // Each product has one source of lots.
    for (o, &line) in orders.iter().zip(&lines) {
        let p = &products[o.product];
        if p.demand != Demand::Orders {
            return Err(ctx
                .err(
                    &pp.index(o.product).key("demand"),
                    format!("product \"{}\" has `demand` but also orders in {shown} (line {line})", p.id),
                )
                .with_hint(
                    "a product's lots come from `demand` or from the order trace, not both: remove one",
                ));
        }
    }
    let fed = |i: usize| orders.iter().any(|o| o.product == i);
    if let Some(i) = (0..products.len()).find(|&i| products[i].demand == Demand::Orders && !fed(i)) {
        return Err(ctx
            .err(
                &pp.index(i),
                format!("product \"{}\" has no `demand` and no orders in {shown}", products[i].id),
            )
            .with_hint(
                "give it `demand: { per_hour: 2 }`, or add lines `time,product,quantity` for it to the trace",
            ));
    }
    let last = orders.last().expect("read_orders refuses an empty trace");
    let repeat_s = match spec.repeat {
        None => None,
        Some(r) if r.0 > last.time_s => {
            limits::check_period("a trace repeat", r.0).map_err(|m| ctx.err(&op.key("repeat"), m))?;
            Some(r.0)
        }
        Some(r) => {
            return Err(ctx
                .err(
                    &op.key("repeat"),
                    format!(
                        "repeat ({}) must be longer than the time of the last order ({}, line {} of {shown})",
                        format_duration(r.0),
                        format_duration(last.time_s),
                        lines[lines.len() - 1]
                    ),
                )
                .with_hint(
                    "the trace plays again `repeat` after each start; make it longer than the trace, \
                     or leave it out to play the trace once",
                ))
        }
    };
    Ok(Some(OrderTrace { file: spec.file.clone(), orders, repeat_s }))
}

/// Reads `orders.start`: a date-time at 00:00 on a Monday.
///
/// The run clock starts on a Monday at 00:00: shifts, breaks, demand profiles
/// and `--by day-of-week` all count from there. A start on another day or at
/// another hour would slide every order against those calendars by a silent
/// amount, so it is refused, with the Monday before as the fix (orders before
/// the real first day are simply absent from the trace).
fn run_start(text: &str) -> Result<DateTime, (String, String)> {
    let start =
        parse_datetime(text).map_err(|e| (format!("start: {e}"), "e.g. `start: 2026-03-02T00:00`".into()))?;
    if start.weekday() != 0 || start.second_of_day() != 0.0 {
        return Err((
            format!(
                "start {} is a {} at {}, but the run clock starts on a Monday at 00:00",
                text.trim(),
                WEEKDAYS[start.weekday() as usize],
                {
                    let m = (start.second_of_day() / 60.0).floor() as u32;
                    format!("{:02}:{:02}", m / 60, m % 60)
                }
            ),
            format!(
                "shifts, breaks and demand profiles count from Monday 00:00; write `start: {}` \
                 (the Monday before; time 0 of the run is that instant)",
                start.monday_before()
            ),
        ));
    }
    Ok(start)
}

/// An error in the file: its line and column (where known), what is wrong, and what to do.
type FileError = (Option<u64>, Option<&'static str>, String, Option<String>);

/// How the time column is read: durations since the start of the run, or
/// date-times mapped to run time by `orders.start`.
#[derive(Debug, Clone, Copy)]
pub(crate) enum TimeColumn {
    /// `6.5 h`: a duration since time 0.
    Durations,
    /// `2026-03-02 06:30`: a date-time; time 0 is this instant.
    Since(DateTime),
}

/// The cell separators an order trace may use, tried on the header line.
const SEPARATORS: [u8; 3] = [b',', b';', b'\t'];

/// The separator of the file: the first of `,` `;` tab that splits the header
/// into exactly the three column names; `,` when none does (the header's own
/// error then says what is wrong).
fn separator(text: &str) -> u8 {
    let header = text.lines().map(str::trim).find(|l| !l.is_empty() && !l.starts_with('#')).unwrap_or("");
    SEPARATORS
        .into_iter()
        .find(|&d| {
            let cells: Vec<&str> = header.split(char::from(d)).map(str::trim).collect();
            (cells.len() == COLUMNS.len() || cells.len() == ALL_COLUMNS.len())
                && cells.iter().all(|c| ALL_COLUMNS.iter().any(|n| n.eq_ignore_ascii_case(c)))
        })
        .unwrap_or(b',')
}

/// Parses the CSV text into orders, with the file line of each.
///
/// Cells are separated by `,`, `;` or tabs, detected once from the header. A
/// `;`- or tab-separated file may write decimals with a comma (`2,0`), as
/// spreadsheets in many locales export them: the file is read with decimal
/// commas when any number cell holds a comma, and then a number cell with a
/// point is refused (is `1.000` one or a thousand?). The choice is the file's,
/// never a cell's.
pub(crate) fn read_orders(
    text: &str,
    ids: &[&str],
    times: TimeColumn,
) -> Result<(Vec<Order>, Vec<u64>), FileError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let sep = separator(text);
    let header_hint = || Some(format!("the first line must be the header {}", COLUMNS.join(",")));
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(true)
        .delimiter(sep)
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(text.as_bytes());
    // A record's own position is where the reader started looking for it,
    // before any blank or comment lines, so a record's line is taken from
    // where it ends: the line of the byte before the reader's position.
    // Counting moves forward only: one pass over the text.
    let mut counted = (0usize, 1u64);
    let mut line_before = |end: u64| {
        let end = (end as usize).min(text.len()).max(1) - 1;
        let newlines =
            text.as_bytes()[counted.0.min(end)..end].iter().filter(|&&b| b == b'\n').count() as u64;
        counted = (end, counted.1 + newlines);
        counted.1
    };
    let header = reader.headers().map_err(|e| (None, None, format!("{e}"), None))?.clone();
    let header_line = Some(line_before(reader.position().byte()));
    if header.is_empty() || header.iter().all(str::is_empty) {
        return Err((None, None, "the file is empty".into(), header_hint()));
    }
    let mut col = [usize::MAX; 4];
    for (c, name) in header.iter().enumerate() {
        let Some(k) = ALL_COLUMNS.iter().position(|n| n.eq_ignore_ascii_case(name)) else {
            return Err((
                header_line,
                None,
                format!("unknown column \"{name}\"{}", did_you_mean(name, ALL_COLUMNS.iter().copied())),
                header_hint(),
            ));
        };
        if col[k] != usize::MAX {
            return Err((header_line, None, format!("column \"{name}\" appears twice"), header_hint()));
        }
        col[k] = c;
    }
    if let Some(k) = col[..COLUMNS.len()].iter().position(|&c| c == usize::MAX) {
        return Err((
            header_line,
            None,
            format!("the header has no \"{}\" column", COLUMNS[k]),
            header_hint(),
        ));
    }
    let shown_header = header.iter().collect::<Vec<_>>().join(&char::from(sep).to_string());
    let mut rows: Vec<(u64, csv::StringRecord)> = Vec::new();
    let mut rec = csv::StringRecord::new();
    loop {
        let more = reader.read_record(&mut rec);
        let line = line_before(reader.position().byte());
        if !more.map_err(|e| (Some(line), None, format!("{e}"), None))? {
            break;
        }
        if rec.len() != header.len() {
            return Err((
                Some(line),
                None,
                format!("{} cells; expected {} ({shown_header})", rec.len(), header.len()),
                None,
            ));
        }
        rows.push((line, rec.clone()));
    }
    // The number cells: quantities, and times when they are durations.
    let durations = matches!(times, TimeColumn::Durations);
    let number_cells = |r: &csv::StringRecord| {
        let q = (COLUMNS[2], r[col[2]].to_string());
        let t = durations.then(|| (COLUMNS[0], r[col[0]].to_string()));
        let due = (durations && col[3] != usize::MAX).then(|| (DUE, r[col[3]].to_string()));
        std::iter::once(q).chain(t).chain(due)
    };
    let cells: Vec<(u64, &str, String)> =
        rows.iter().flat_map(|(l, r)| number_cells(r).map(move |(n, c)| (*l, n, c))).collect();
    let decimals =
        crate::decimals::decide(sep, cells.iter().map(|(l, n, c)| (*l, *n, c.as_str()))).map_err(|e| {
            let column = COLUMNS.iter().copied().find(|c| *c == e.column);
            (Some(e.line), column, e.message, Some(e.hint))
        })?;
    let decimal = |cell: &str| decimals.read(cell);
    let mut orders = Vec::new();
    let mut lines = Vec::new();
    let mut previous: Option<(f64, u64)> = None;
    for (line, rec) in &rows {
        let (line, at) = (*line, Some(*line));
        let (t, p, q) = (&rec[col[0]], &rec[col[1]], &rec[col[2]]);
        // A time cell (`time`, or `due`) in run seconds.
        let run_time = |t: &str, column: &'static str| -> Result<f64, FileError> {
            Ok(match times {
                TimeColumn::Durations => {
                    if looks_like_date(t) {
                        return Err((
                        at,
                        Some(column),
                        format!("\"{t}\" is a date-time, but the scenario gives no `orders.start`"),
                        Some(
                            "say which instant is time 0 of the run: `orders: { file: ..., start: 2026-03-02T00:00 }` \
                             (a Monday at 00:00)"
                                .into(),
                        ),
                    ));
                    }
                    let time_s = parse_duration(&decimal(t))
                        .map_err(|e| (at, Some(column), format!("{column}: {e}"), None))?;
                    if time_s < 0.0 {
                        return Err((
                            at,
                            Some(column),
                            format!("{column} {t} is before the start of the run"),
                            None,
                        ));
                    }
                    time_s
                }
                TimeColumn::Since(start) => {
                    let dt = parse_datetime(t).map_err(|e| (at, Some(column), e, None))?;
                    if dt.offset_s.is_some() && start.offset_s.is_none() {
                        return Err((
                            at,
                            Some(column),
                            format!("\"{t}\" carries a UTC offset, but `orders.start` has none"),
                            Some(
                                "give the start its offset too, e.g. `start: 2026-03-02T00:00+01:00`".into(),
                            ),
                        ));
                    }
                    let time_s = dt.on_clock(start.offset_s) - start.local_s;
                    if time_s < 0.0 {
                        return Err((
                            at,
                            Some(column),
                            format!("{t} is before `orders.start` ({})", format_duration(-time_s)),
                            Some(
                                "move `orders.start` earlier (to a Monday at 00:00), or drop the order"
                                    .into(),
                            ),
                        ));
                    }
                    limits::check_duration(t, time_s).map_err(|m| (at, Some(column), m, None))?
                }
            })
        };
        let time_s = run_time(t, COLUMNS[0])?;
        let due_s = match col[3] {
            usize::MAX => None,
            c if rec[c].is_empty() => None,
            c => {
                let due_s = run_time(&rec[c], DUE)?;
                if due_s < time_s {
                    return Err((
                        at,
                        Some(DUE),
                        format!("the order is due at {}, before it is released at {t}", &rec[c]),
                        Some("a due date is on or after the order's time; check the two columns are not swapped".into()),
                    ));
                }
                Some(due_s)
            }
        };
        if let Some((before, before_line)) = previous {
            if time_s < before {
                return Err((
                    at,
                    Some(COLUMNS[0]),
                    format!(
                        "time {t} is earlier than the order before it ({} on line {before_line})",
                        format_duration(before)
                    ),
                    Some("list the orders in time order".into()),
                ));
            }
        }
        previous = Some((time_s, line));
        let product = ids.iter().position(|i| *i == p).ok_or_else(|| {
            (
                at,
                Some(COLUMNS[1]),
                format!("unknown product \"{p}\"{}", did_you_mean(p, ids.iter().copied())),
                Some(format!("the products are: {}", name_list(ids.iter().copied()))),
            )
        })?;
        let quantity = quantity(&decimal(q), q).map_err(|m| (at, Some(COLUMNS[2]), m, None))?;
        orders.push(Order { time_s, product, quantity, due_s });
        lines.push(line);
    }
    if orders.is_empty() {
        return Err((
            None,
            None,
            "the order trace has no orders".into(),
            Some("add lines such as `6.5 h,<product>,2` under the header time,product,quantity".into()),
        ));
    }
    Ok((orders, lines))
}

/// A quantity cell (`cell`, with any decimal comma made a point; `written` as in
/// the file): a whole number of lots, at least 1. `3.0` is 3: ERP exports
/// often write quantities with decimals.
fn quantity(cell: &str, written: &str) -> Result<u32, String> {
    let whole = match cell.parse::<i64>() {
        Ok(q) => q,
        Err(_) => match cell.parse::<f64>() {
            Ok(x) if x.is_finite() && x.fract() == 0.0 && x.abs() < 1e15 => x as i64,
            Ok(x) if x.is_finite() => {
                return Err(format!("quantity {written} is not a whole number of lots"))
            }
            _ => return Err(format!("quantity \"{written}\" is not a number")),
        },
    };
    match whole {
        q if q >= 1 => match u32::try_from(q) {
            Ok(q) if q <= limits::MAX_ORDER_LOTS => Ok(q),
            _ => Err(format!(
                "quantity {q} is more than the ceiling of {} lots an order: {}",
                limits::count_words(u64::from(limits::MAX_ORDER_LOTS)),
                limits::MAX_ORDER_LOTS_WHY
            )),
        },
        q => Err(format!("quantity {q}: an order releases at least 1 lot")),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const IDS: &[&str] = &["bracket", "hinge"];

    fn err(text: &str) -> (Option<u64>, String) {
        let (l, _, m, _) = read_orders(text, IDS, TimeColumn::Durations).unwrap_err();
        (l, m)
    }

    fn since(start: &str) -> TimeColumn {
        TimeColumn::Since(parse_datetime(start).unwrap())
    }

    #[test]
    fn reads_columns_in_any_order_with_comments_and_blank_lines() {
        let text = "# invented\nproduct, quantity, time\n\nbracket,2,90 min\n# a comment\nhinge,1,2 h\n";
        let (orders, lines) = read_orders(text, IDS, TimeColumn::Durations).unwrap();
        assert_eq!(
            orders,
            [
                Order { time_s: 5400.0, product: 0, quantity: 2, due_s: None },
                Order { time_s: 7200.0, product: 1, quantity: 1, due_s: None }
            ]
        );
        assert_eq!(lines, [4, 6], "file lines, comments and blank lines counted");
    }

    #[test]
    fn bad_cells_are_named_with_their_line() {
        let h = "time,product,quantity\n";
        assert_eq!(err(&format!("{h}1 h,bracket,1\n2 h,brackett,1\n")).0, Some(3));
        assert!(err(&format!("{h}1 h,brackett,1\n")).1.contains("did you mean \"bracket\""));
        assert!(err(&format!("{h}1 h,bracket,-2\n")).1.contains("quantity -2"));
        assert!(err(&format!("{h}1 h,bracket,0\n")).1.contains("quantity 0"));
        assert!(err(&format!("{h}1 h,bracket,1.5\n")).1.contains("not a whole number"));
        assert!(err(&format!("{h}90,bracket,1\n")).1.contains("needs a unit"));
        assert!(err(&format!("{h}2 h,bracket,1\n1 h,bracket,1\n"))
            .1
            .contains("earlier than the order before it"));
        assert!(err(&format!("{h}1 h,bracket\n")).1.contains("2 cells"));
        assert!(err("time,product\n1 h,bracket\n").1.contains("no \"quantity\" column"));
        assert!(err("time,product,quantities\n").1.contains("did you mean \"quantity\""));
        assert!(err("time,product,qty\n").1.contains("unknown column \"qty\""));
        assert!(err(h).1.contains("no orders"));
        assert!(err("").1.contains("empty"));
    }

    #[test]
    fn erp_timestamps_and_decimal_commas() {
        let start = since("2026-03-02T00:00");
        let text = "\u{feff}time;product;quantity\r\n2026-03-02 06:15;bracket;2,0\r\n\
                    2026-03-02T07:00:30;hinge;1\r\n2026-03-03T00:00Z;hinge;3,000\r\n";
        // The `Z` cell needs a start with an offset.
        let (l, c, m, _) = read_orders(text, IDS, start).unwrap_err();
        assert_eq!((l, c), (Some(4), Some("time")));
        assert!(m.contains("carries a UTC offset"), "{m}");
        let text = text.replace("00:00Z", "01:00+01:00");
        let (orders, lines) = read_orders(&text, IDS, since("2026-03-02T00:00+01:00")).unwrap();
        assert_eq!(
            orders,
            [
                Order { time_s: 22_500.0, product: 0, quantity: 2, due_s: None },
                Order { time_s: 25_230.0, product: 1, quantity: 1, due_s: None },
                Order { time_s: 90_000.0, product: 1, quantity: 3, due_s: None }
            ]
        );
        assert_eq!(lines, [2, 3, 4]);
        // Start in UTC: cells without an offset are read on the start's clock,
        // the +01:00 cell (01:00 on Tuesday, 00:00 UTC) is one day after the start.
        let (orders, _) = read_orders(&text, IDS, since("2026-03-02T00:00Z")).unwrap();
        assert_eq!((orders[0].time_s, orders[2].time_s), (22_500.0, 86_400.0));
    }

    #[test]
    fn erp_errors_name_the_row_and_column() {
        let start = since("2026-03-02T00:00");
        let e = |text: &str| read_orders(text, IDS, start).unwrap_err();
        let (l, c, m, _) = e("time,product,quantity\n2026-03-01 23:59,bracket,1\n");
        assert_eq!((l, c), (Some(2), Some("time")));
        assert!(m.contains("before `orders.start`"), "{m}");
        let (_, c, m, _) = e("time;product;quantity\n2026-03-02 06:00;bracket;2,5\n");
        assert_eq!(c, Some("quantity"));
        assert!(m.contains("quantity 2,5 is not a whole number"), "{m}");
        let (l, c, m, _) =
            e("time;product;quantity\n2026-03-02 06:00;bracket;2,0\n2026-03-02 07:00;hinge;1.000\n");
        assert_eq!((l, c), (Some(3), Some("quantity")));
        assert!(m.contains("writes decimals with a comma (line 2, column quantity)"), "{m}");
        let (_, _, m, _) = e("time,product,quantity\n2.3.2026 06:00,bracket,1\n");
        assert!(m.contains("not a date-time"), "{m}");
        let (_, _, m, _) = err_full("time,product,quantity\n2026-03-02 06:00,bracket,1\n");
        assert!(m.contains("no `orders.start`"), "{m}");
        assert!(run_start("2026-03-04T00:00").unwrap_err().1.contains("start: 2026-03-02T00:00"));
        assert!(run_start("2026-03-02T06:00").unwrap_err().0.contains("a Monday at 06:00"));
        assert!(run_start("2026-03-02 00:00").is_ok());
    }

    #[test]
    fn a_due_column_is_read_as_the_time_column_is() {
        // Durations; an empty cell leaves the order without a due date.
        let (orders, _) = read_orders(
            "time,product,quantity,due\n1 h,bracket,2,8 h\n2 h,hinge,1,\n",
            IDS,
            TimeColumn::Durations,
        )
        .unwrap();
        assert_eq!((orders[0].due_s, orders[1].due_s), (Some(28_800.0), None));
        // Date-times with `orders.start`, any column order, `;` cells.
        let text = "Due;Time;Product;Quantity\n2026-03-04 14:00;2026-03-02 06:00;bracket;1\n";
        let (orders, _) = read_orders(text, IDS, since("2026-03-02T00:00")).unwrap();
        assert_eq!((orders[0].time_s, orders[0].due_s), (21_600.0, Some(2.0 * 86_400.0 + 14.0 * 3600.0)));
        // Due before the release: refused at its line and column.
        let (l, c, m, _) =
            read_orders("time,product,quantity,due\n3 h,bracket,1,2 h\n", IDS, TimeColumn::Durations)
                .unwrap_err();
        assert_eq!((l, c), (Some(2), Some("due")));
        assert!(m.contains("before it is released"), "{m}");
    }

    fn err_full(text: &str) -> FileError {
        read_orders(text, IDS, TimeColumn::Durations).unwrap_err()
    }
}
