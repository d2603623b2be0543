//! Plain aligned text tables and number formatting for the terminal.

use std::sync::atomic::{AtomicBool, Ordering};

use layflow_models::metrics::{DurationEstimate, Estimate, Kind};
pub use layflow_models::text::{num, time_unit};

/// The width default tables fit in, characters; `--wide` lifts it.
pub const WIDTH: usize = 100;

static WIDE: AtomicBool = AtomicBool::new(false);
static VERBOSE: AtomicBool = AtomicBool::new(false);

/// `--wide`: show every column, however wide the table gets.
pub fn set_wide(on: bool) {
    WIDE.store(on, Ordering::Relaxed);
}

/// Whether `--wide` was given.
pub fn wide() -> bool {
    WIDE.load(Ordering::Relaxed)
}

/// `--verbose`: show the statistical working (procedure constants, pilot details).
pub fn set_verbose(on: bool) {
    VERBOSE.store(on, Ordering::Relaxed);
}

/// Whether `--verbose` was given.
pub fn verbose() -> bool {
    VERBOSE.load(Ordering::Relaxed)
}

/// A table of text cells; the first column is left-aligned, the rest right-aligned.
///
/// Columns marked optional are hidden, in the order marked, while the table
/// is wider than [`WIDTH`]; a note under it names them and says `--wide`
/// shows them.
pub struct Table {
    header: Vec<String>,
    rows: Vec<Vec<String>>,
    optional: Vec<String>,
}

impl Table {
    /// A table with these column headings.
    pub fn new<S: AsRef<str>>(header: &[S]) -> Table {
        Table {
            header: header.iter().map(|s| s.as_ref().to_string()).collect(),
            rows: Vec::new(),
            optional: Vec::new(),
        }
    }

    /// Add a row (cells beyond the header are dropped, missing ones blank).
    pub fn row(&mut self, cells: Vec<String>) {
        self.rows.push(cells);
    }

    /// Columns (by heading) that may be hidden to fit [`WIDTH`], the first named hidden first.
    pub fn optional<S: AsRef<str>>(&mut self, headings: &[S]) {
        self.optional.extend(headings.iter().map(|h| h.as_ref().to_string()));
    }

    /// Column widths of the columns `keep`.
    fn widths(&self, keep: &[usize]) -> Vec<usize> {
        keep.iter()
            .map(|&i| {
                let cells = self.rows.iter().filter_map(|r| r.get(i)).map(|c| c.chars().count());
                cells.fold(self.header[i].chars().count(), usize::max)
            })
            .collect()
    }

    /// Render with two spaces between columns and an indent.
    pub fn render(&self, indent: usize) -> String {
        let mut keep: Vec<usize> = (0..self.header.len()).collect();
        let mut hidden: Vec<&str> = Vec::new();
        let total = |w: &[usize]| indent + w.iter().sum::<usize>() + 2 * w.len().saturating_sub(1);
        if !WIDE.load(Ordering::Relaxed) {
            for name in &self.optional {
                if total(&self.widths(&keep)) <= WIDTH {
                    break;
                }
                if let Some(pos) = keep.iter().position(|&i| self.header[i] == *name) {
                    keep.remove(pos);
                    hidden.push(name);
                }
            }
        }
        let width = self.widths(&keep);
        let mut out = String::new();
        let line = |cells: &[String], out: &mut String| {
            out.push_str(&" ".repeat(indent));
            for (k, (&i, w)) in keep.iter().zip(&width).enumerate() {
                let c = cells.get(i).map_or("", String::as_str);
                let pad = w - c.chars().count();
                if k == 0 {
                    out.push_str(c);
                    out.push_str(&" ".repeat(pad));
                } else {
                    out.push_str("  ");
                    out.push_str(&" ".repeat(pad));
                    out.push_str(c);
                }
            }
            let trimmed = out.trim_end().len();
            out.truncate(trimmed);
            out.push('\n');
        };
        line(&self.header, &mut out);
        for r in &self.rows {
            line(r, &mut out);
        }
        if !hidden.is_empty() {
            let note = format!("(hidden to fit {WIDTH} columns, shown by --wide: {})", hidden.join(", "));
            out.push_str(&wrap(&note, indent));
        }
        out
    }
}

/// `text` in lines of at most [`WIDTH`] characters, each indented by `indent`.
pub fn wrap(text: &str, indent: usize) -> String {
    let mut out = String::new();
    let mut line = String::new();
    for word in text.split(' ') {
        if !line.is_empty() && indent + line.chars().count() + 1 + word.chars().count() > WIDTH {
            out.push_str(&format!("{}{line}\n", " ".repeat(indent)));
            line.clear();
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    out.push_str(&format!("{}{line}\n", " ".repeat(indent)));
    out
}

/// A whole number (for load-metres and the like), or scientific when huge.
pub fn whole(x: f64) -> String {
    if x.is_finite() && x.abs() < 1e9 {
        format!("{:.0}", x + 0.0)
    } else {
        num(x)
    }
}

/// `mean ± half-width` scaled by `scale`, with the half-width to the same decimals.
pub fn pm(e: &Estimate, scale: f64) -> String {
    pm_parts(e.mean, e.half_width, scale)
}

fn pm_parts(mean: f64, hw: Option<f64>, scale: f64) -> String {
    let m = num(mean * scale);
    match hw {
        Some(h) => {
            let decimals = m.split('.').nth(1).map_or(0, str::len);
            format!("{m} ± {:.*}", decimals, h * scale)
        }
        None => m,
    }
}

/// A share as a percentage, e.g. `73.3%`.
pub fn share(x: f64) -> String {
    if x.abs() >= 1e4 {
        format!("{}%", num(x * 100.0))
    } else {
        format!("{:.1}%", x * 100.0)
    }
}

/// A share as a percentage with its half-width.
pub fn pct(e: &Estimate) -> String {
    match e.half_width {
        Some(h) => format!("{:.1} ± {:.1}%", e.mean * 100.0, h * 100.0),
        None => format!("{:.1}%", e.mean * 100.0),
    }
}

/// `n thing` or `n things`.
pub fn count(n: usize, thing: &str) -> String {
    if n == 1 {
        format!("1 {thing}")
    } else {
        format!("{n} {thing}s")
    }
}

/// The unit that reads best for a set of durations, so that a column (or a
/// row) shares one unit: the largest magnitude decides.
pub fn unit_for(seconds: impl IntoIterator<Item = f64>) -> (&'static str, f64) {
    let largest = seconds.into_iter().filter(|x| x.is_finite()).map(f64::abs).fold(0.0, f64::max);
    time_unit(largest)
}

/// A duration estimate in `unit` (from [`unit_for`]), e.g. `0.521 ± 0.010 h`.
pub fn dur_in(e: &Estimate, unit: (&str, f64)) -> String {
    if !e.mean.is_finite() {
        return "-".to_string();
    }
    format!("{} {}", pm(e, 1.0 / unit.1), unit.0)
}

/// A duration estimate in a readable unit, e.g. `5.21 ± 0.10 h`.
pub fn dur(e: &Estimate) -> String {
    dur_in(e, time_unit(e.mean))
}

/// A duration estimate with its pooled percentiles.
pub fn dur_pct(e: &DurationEstimate) -> (String, String) {
    let (u, s) = time_unit(e.mean);
    let head = format!("{} {u}", pm_parts(e.mean, e.half_width, 1.0 / s));
    let tail = format!(
        "p50 {}  p90 {}  p95 {}  p99 {} {u}",
        num(e.p50 / s),
        num(e.p90 / s),
        num(e.p95 / s),
        num(e.p99 / s)
    );
    (head, tail)
}

/// ` (k of n replications)` when fewer replications than run observed the
/// metric (e.g. a product that shipped nothing in some), else nothing.
pub fn coverage(n: usize, replications: u32) -> String {
    if n < replications as usize {
        format!(" ({n} of {replications} replications)")
    } else {
        String::new()
    }
}

/// A plain duration in seconds, in a readable unit.
pub fn dur_plain(seconds: f64) -> String {
    layflow_models::units::format_duration(seconds)
}

/// "N events in T s (X million events/s)": how much was simulated, and how fast.
pub fn speed(events: u64, wall_s: f64) -> String {
    format!(
        "{events} events in {wall_s:.2} s ({:.1} million events/s)",
        events as f64 / wall_s.max(1e-9) / 1e6
    )
}

/// A signed paired difference in the metric's unit (durations in `unit`,
/// shared by the row), with its half-width and ` *` when its interval excludes zero.
pub fn difference_cell(e: &Estimate, excludes_zero: bool, kind: Kind, unit: (&str, f64)) -> String {
    if e.n == 0 {
        return "-".to_string();
    }
    // A plus only on a difference that prints as non-zero.
    let sign = |x: f64| if x > 0.0 && num(x) != "0" { "+" } else { "" };
    let mark = if excludes_zero { " *" } else { "" };
    let body = match kind {
        Kind::Duration => format!("{}{} {}", sign(e.mean), pm(e, 1.0 / unit.1), unit.0),
        Kind::Number => format!("{}{}", sign(e.mean), pm(e, 1.0)),
    };
    format!("{}{mark}", body.replace('-', "−"))
}

/// A money column's head: `cost/h` as before when the plant names no currency,
/// `cost (EUR/h)` when it does (`currency: EUR`), so every cost column says what it is in.
pub fn money_head(base: &str, per: &str, currency: Option<&str>) -> String {
    match currency {
        None => format!("{base}/{per}"),
        Some(c) => format!("{base} ({c}/{per})"),
    }
}

/// The unit after a money figure: `/h`, or `EUR/h` with a named currency.
pub fn money_unit(per: &str, currency: Option<&str>) -> String {
    format!("{}/{per}", currency.unwrap_or(""))
}

/// A registry label with its currency: `fleet cost (/h)` becomes `fleet cost (EUR/h)`;
/// unchanged when the plant names no currency or the label is not a cost.
pub fn with_currency(label: String, currency: Option<&str>) -> String {
    match currency {
        Some(c) if label.contains("(/") && label.contains("cost") => label.replace("(/", &format!("({c}/")),
        _ => label,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_column_of_durations_shares_the_unit_of_its_largest_value() {
        let u = unit_for([300.0, 3.0 * 3600.0, f64::NAN]);
        assert_eq!(u.0, "h");
        let five_min = Estimate { mean: 300.0, half_width: Some(30.0), n: 5 };
        assert_eq!(dur_in(&five_min, u), "0.083 ± 0.008 h");
        assert_eq!(unit_for([30.0, 50.0]).0, "s");
    }

    #[test]
    fn optional_columns_hide_only_while_the_table_is_too_wide() {
        let mut t = Table::new(&["name", "wide one", "keep"]);
        t.row(vec!["a".into(), "x".repeat(WIDTH), "1".into()]);
        t.optional(&["wide one"]);
        let out = t.render(2);
        assert!(!out.contains(&"x".repeat(WIDTH)) && out.contains("shown by --wide: wide one"), "{out}");
        assert!(out.lines().all(|l| l.chars().count() <= WIDTH), "{out}");
        let mut narrow = Table::new(&["name", "wide one"]);
        narrow.row(vec!["a".into(), "b".into()]);
        narrow.optional(&["wide one"]);
        assert!(narrow.render(2).contains("wide one") && !narrow.render(2).contains("--wide"));
    }

    #[test]
    fn wrapped_notes_keep_every_word_within_the_width() {
        let text = "word ".repeat(60);
        let out = wrap(text.trim(), 2);
        assert!(out.lines().all(|l| l.chars().count() <= WIDTH && l.starts_with("  ")));
        assert_eq!(out.split_whitespace().count(), 60);
    }
}
