//! Plain aligned text tables and number formatting for the terminal.

use layflow_models::metrics::{DurationEstimate, Estimate};
pub use layflow_models::text::{num, time_unit};

/// A table of text cells; the first column is left-aligned, the rest right-aligned.
pub struct Table {
    header: Vec<String>,
    rows: Vec<Vec<String>>,
}

impl Table {
    /// A table with these column headings.
    pub fn new<S: AsRef<str>>(header: &[S]) -> Table {
        Table { header: header.iter().map(|s| s.as_ref().to_string()).collect(), rows: Vec::new() }
    }

    /// Add a row (cells beyond the header are dropped, missing ones blank).
    pub fn row(&mut self, cells: Vec<String>) {
        self.rows.push(cells);
    }

    /// Render with two spaces between columns and an indent.
    pub fn render(&self, indent: usize) -> String {
        let n = self.header.len();
        let mut width: Vec<usize> = self.header.iter().map(|h| h.chars().count()).collect();
        for r in &self.rows {
            for (i, c) in r.iter().take(n).enumerate() {
                width[i] = width[i].max(c.chars().count());
            }
        }
        let mut out = String::new();
        let line = |cells: &[String], out: &mut String| {
            out.push_str(&" ".repeat(indent));
            for (i, w) in width.iter().enumerate() {
                let c = cells.get(i).map_or("", String::as_str);
                let pad = w - c.chars().count();
                if i == 0 {
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
        out
    }
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

/// A duration estimate in a readable unit, e.g. `5.21 ± 0.10 h`.
pub fn dur(e: &Estimate) -> String {
    if !e.mean.is_finite() {
        return "-".to_string();
    }
    let (u, s) = time_unit(e.mean);
    format!("{} {u}", pm(e, 1.0 / s))
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
