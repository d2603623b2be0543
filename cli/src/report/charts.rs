//! The report's charts as inline SVG: differences against the baseline with their intervals, and a metric over the time buckets.

use std::fmt::Write as _;

use crate::render::palette::{mix, rgb, AMBER, BRICK, GRID, SLATE, TEAL};
use crate::render::plot::{tick, FONT_FAMILY};

use super::html::esc;

/// How a difference reads: better or worse beyond noise, or not told apart from zero.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub enum Verdict {
    /// Better than the baseline; the interval excludes zero.
    Better,
    /// Worse than the baseline; the interval excludes zero.
    Worse,
    /// The interval includes zero, or the metric has no better direction.
    Unclear,
}

/// One row of the difference chart.
pub struct DiffRow {
    /// "flow time" (and the layout, when several are compared).
    pub label: String,
    /// Difference as a percentage of the baseline's mean, with its interval.
    pub pct: f64,
    /// Interval ends, % of the baseline's mean.
    pub lo: f64,
    /// Interval ends, % of the baseline's mean.
    pub hi: f64,
    /// The difference in the metric's unit, as the table writes it.
    pub text: String,
    /// Better, worse or unclear.
    pub verdict: Verdict,
}

/// Round `x` up to 1, 2 or 5 × a power of ten.
fn nice_up(x: f64) -> f64 {
    if x <= 0.0 || !x.is_finite() {
        return 1.0;
    }
    let p = 10f64.powf(x.log10().floor());
    [1.0, 2.0, 5.0, 10.0].into_iter().map(|m| m * p).find(|&v| v >= x).unwrap_or(10.0 * p)
}

/// Differences against the baseline, in % of its mean, each with its 95% interval.
pub fn differences(rows: &[DiffRow], baseline: &str) -> String {
    let (left, right, plot_w, row_h, top) = (250.0, 220.0, 430.0, 28.0, 34.0);
    let width = left + plot_w + right;
    let height = top + row_h * rows.len() as f64 + 34.0;
    let span = nice_up(rows.iter().flat_map(|r| [r.lo.abs(), r.hi.abs(), r.pct.abs()]).fold(0.0, f64::max));
    let x = |v: f64| left + plot_w * (v + span) / (2.0 * span);
    let mut s = String::new();
    let _ = write!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {width} {height}\" role=\"img\" \
         font-family=\"{FONT_FAMILY}\" font-size=\"13\" class=\"difference-chart\">\
         <title>Paired differences against {b}, % of {b}'s mean, with 95% intervals</title>",
        b = esc(baseline)
    );
    for k in -2..=2 {
        let v = span * f64::from(k) / 2.0;
        let _ = write!(
            s,
            "<line x1=\"{0:.1}\" x2=\"{0:.1}\" y1=\"{1}\" y2=\"{2:.1}\" stroke=\"{3}\" stroke-width=\"{4}\"/>\
             <text x=\"{0:.1}\" y=\"{5:.1}\" text-anchor=\"middle\" fill=\"{6}\">{7}%</text>",
            x(v),
            top - 6.0,
            height - 30.0,
            if k == 0 { rgb(SLATE) } else { rgb(GRID) },
            if k == 0 { 1.5 } else { 1.0 },
            height - 14.0,
            rgb(SLATE),
            if k > 0 { format!("+{}", tick(v)) } else { tick(v).replace('-', "−") }
        );
    }
    let _ = write!(
        s,
        "<text x=\"{:.1}\" y=\"16\" text-anchor=\"end\" fill=\"{}\">lower than {b} ←</text>\
         <text x=\"{:.1}\" y=\"16\" fill=\"{}\">→ higher than {b}</text>",
        x(0.0) - 8.0,
        rgb(SLATE),
        x(0.0) + 8.0,
        rgb(SLATE),
        b = esc(baseline)
    );
    for (i, r) in rows.iter().enumerate() {
        let y = top + row_h * (i as f64 + 0.5);
        let colour = match r.verdict {
            Verdict::Better => rgb(TEAL),
            Verdict::Worse => rgb(BRICK),
            Verdict::Unclear => rgb(mix(SLATE, (255, 255, 255), 0.35)),
        };
        if i % 2 == 0 {
            let _ = write!(
                s,
                "<rect x=\"0\" y=\"{:.1}\" width=\"{width}\" height=\"{row_h}\" fill=\"{}\"/>",
                y - row_h / 2.0,
                rgb(mix(GRID, (255, 255, 255), 0.5))
            );
        }
        let _ = write!(
            s,
            "<g class=\"difference\" data-verdict=\"{v:?}\"><text x=\"{lx}\" y=\"{ty:.1}\" text-anchor=\"end\" \
             fill=\"{sl}\">{label}</text>\
             <line x1=\"{a:.1}\" x2=\"{b:.1}\" y1=\"{y:.1}\" y2=\"{y:.1}\" stroke=\"{c}\" stroke-width=\"3\" \
             stroke-linecap=\"round\"/><circle cx=\"{m:.1}\" cy=\"{y:.1}\" r=\"5\" fill=\"{c}\"/>\
             <text x=\"{rx}\" y=\"{ty:.1}\" fill=\"{c}\">{text}</text></g>",
            v = r.verdict,
            lx = left - 12.0,
            ty = y + 4.5,
            sl = rgb(SLATE),
            label = esc(&r.label),
            a = x(r.lo.max(-span)),
            b = x(r.hi.min(span)),
            m = x(r.pct.clamp(-span, span)),
            c = colour,
            rx = left + plot_w + 12.0,
            text = esc(&r.text)
        );
    }
    s.push_str("</svg>");
    s
}

/// One series of the bucket chart: a layout's (or a size's) mean per bucket with its interval.
pub struct Series {
    /// Mean and half-width per bucket (`None` where the bucket saw nothing).
    pub points: Vec<Option<(f64, Option<f64>)>>,
}

/// Colours of the series, in order: the palette, then mixes of it.
pub fn series_colour(i: usize) -> (u8, u8, u8) {
    const LIST: [(u8, u8, u8); 4] = [TEAL, AMBER, SLATE, BRICK];
    let c = LIST[i % LIST.len()];
    if i < LIST.len() {
        c
    } else {
        mix(c, (255, 255, 255), 0.45)
    }
}

/// What a line chart marks besides its series.
#[derive(Default)]
pub struct Marks<'a> {
    /// A column shaded and labelled: the peak bucket, the recommended size.
    pub column: Option<(usize, &'a str)>,
    /// A horizontal line with its label (a target), in the values' unit.
    pub target: Option<(f64, String)>,
    /// A logarithmic value axis (waits that fall by orders of magnitude with fleet size).
    pub log: bool,
}

/// A metric over categories (time buckets, fleet sizes): one line per
/// series with its 95% band, and the [`Marks`]. `scale` divides values for
/// the axis (e.g. 60 for minutes).
pub fn line_chart(labels: &[String], series: &[Series], marks: &Marks, axis: &str, scale: f64) -> String {
    let (left, right, top, bottom, plot_h) = (64.0, 16.0, 16.0, 64.0, 230.0);
    // Wide enough for its labels, never so narrow that the page blows its text up.
    let step = (860.0 / labels.len().max(1) as f64).clamp(8.0, 60.0).max(440.0 / labels.len().max(1) as f64);
    let plot_w = step * labels.len().max(1) as f64;
    let width = left + plot_w + right;
    let height = top + plot_h + bottom;
    let vals: Vec<f64> = series
        .iter()
        .flat_map(|s| s.points.iter().flatten())
        .flat_map(|&(m, h)| [(m + h.unwrap_or(0.0)) / scale, (m - h.unwrap_or(0.0)) / scale, m / scale])
        .chain(marks.target.as_ref().map(|t| t.0 / scale))
        .filter(|v| v.is_finite())
        .collect();
    let hi = vals.iter().copied().fold(0.0, f64::max);
    // Log axis: whole decades around the positive values.
    let lo_pos = vals.iter().copied().filter(|&v| v > 0.0).fold(f64::INFINITY, f64::min);
    let (d0, d1) = if marks.log && lo_pos.is_finite() {
        (lo_pos.log10().floor(), hi.log10().ceil().max(lo_pos.log10().floor() + 1.0))
    } else {
        (0.0, 1.0)
    };
    let log = marks.log && lo_pos.is_finite();
    let y_max = if log { 10f64.powf(d1) } else { nice_up(hi) };
    let x = |i: usize| left + step * (i as f64 + 0.5);
    let frac = |v: f64| -> f64 {
        if log {
            ((v.max(10f64.powf(d0))).log10() - d0) / (d1 - d0)
        } else {
            v / y_max
        }
    };
    let y = |v: f64| top + plot_h * (1.0 - frac(v / scale).clamp(0.0, 1.0));
    let mut s = String::new();
    let _ = write!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {width} {height}\" role=\"img\" \
         font-family=\"{FONT_FAMILY}\" font-size=\"12\" class=\"line-chart\"><title>{}</title>",
        esc(axis)
    );
    if let Some((p, word)) = marks.column {
        let _ = write!(
            s,
            "<rect class=\"marked\" x=\"{:.1}\" y=\"{top}\" width=\"{step:.1}\" height=\"{plot_h}\" fill=\"{}\"/>\
             <text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\" fill=\"{}\" font-weight=\"bold\">{}</text>",
            left + step * p as f64,
            rgb(mix(AMBER, (255, 255, 255), 0.7)),
            x(p),
            top + 12.0,
            rgb(mix(AMBER, SLATE, 0.4)),
            esc(word)
        );
    }
    let ticks: Vec<f64> = if log {
        (d0 as i32..=d1 as i32).map(|k| 10f64.powi(k)).collect()
    } else {
        (0..=4).map(|k| y_max * f64::from(k) / 4.0).collect()
    };
    for v in ticks {
        let yy = top + plot_h * (1.0 - frac(v));
        let _ = write!(
            s,
            "<line x1=\"{left}\" x2=\"{:.1}\" y1=\"{yy:.1}\" y2=\"{yy:.1}\" stroke=\"{}\"/>\
             <text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\" fill=\"{}\">{}</text>",
            left + plot_w,
            rgb(GRID),
            left - 6.0,
            yy + 4.0,
            rgb(SLATE),
            tick(v)
        );
    }
    let every = (labels.len() as f64 / 12.0).ceil().max(1.0) as usize;
    for (i, l) in labels.iter().enumerate() {
        if i % every == 0 {
            let short = l.split('–').next().unwrap_or(l);
            let _ = write!(
                s,
                "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\" transform=\"rotate(-40 {:.1} {:.1})\" \
                 fill=\"{}\">{}</text>",
                x(i),
                top + plot_h + 16.0,
                x(i),
                top + plot_h + 16.0,
                rgb(SLATE),
                esc(short)
            );
        }
    }
    let _ = write!(
        s,
        "<text x=\"14\" y=\"{:.1}\" transform=\"rotate(-90 14 {:.1})\" text-anchor=\"middle\" fill=\"{}\">{}</text>",
        top + plot_h / 2.0,
        top + plot_h / 2.0,
        rgb(SLATE),
        esc(axis)
    );
    if let Some((t, label)) = &marks.target {
        let yy = y(*t);
        let _ = write!(
            s,
            "<line class=\"target\" x1=\"{left}\" x2=\"{:.1}\" y1=\"{yy:.1}\" y2=\"{yy:.1}\" stroke=\"{c}\" \
             stroke-width=\"1.6\" stroke-dasharray=\"6 4\"/><text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\" \
             fill=\"{c}\">{}</text>",
            left + plot_w,
            left + plot_w - 4.0,
            yy - 5.0,
            esc(label),
            c = rgb(BRICK)
        );
    }
    for (k, ser) in series.iter().enumerate() {
        let c = rgb(series_colour(k));
        // The band: upper edge left to right, lower edge back, per run of observed buckets.
        let mut runs: Vec<Vec<(usize, f64, f64)>> = vec![Vec::new()];
        for (i, p) in ser.points.iter().enumerate() {
            match p {
                Some((m, h)) => runs.last_mut().expect("a run").push((i, *m, h.unwrap_or(0.0))),
                None => runs.push(Vec::new()),
            }
        }
        for run in runs.iter().filter(|r| !r.is_empty()) {
            let mut d = String::new();
            for (j, &(i, m, h)) in run.iter().enumerate() {
                let _ = write!(d, "{}{:.1},{:.1} ", if j == 0 { "M" } else { "L" }, x(i), y(m + h));
            }
            for &(i, m, h) in run.iter().rev() {
                let _ = write!(d, "L{:.1},{:.1} ", x(i), y((m - h).max(if log { 1e-300 } else { 0.0 })));
            }
            let _ = write!(s, "<path d=\"{d}Z\" fill=\"{c}\" fill-opacity=\"0.14\" stroke=\"none\"/>");
            let mut line = String::new();
            for (j, &(i, m, _)) in run.iter().enumerate() {
                let _ = write!(line, "{}{:.1},{:.1} ", if j == 0 { "M" } else { "L" }, x(i), y(m));
            }
            let _ = write!(s, "<path d=\"{line}\" fill=\"none\" stroke=\"{c}\" stroke-width=\"2.2\"/>");
            for &(i, m, _) in run {
                let _ = write!(s, "<circle cx=\"{:.1}\" cy=\"{:.1}\" r=\"2.6\" fill=\"{c}\"/>", x(i), y(m));
            }
        }
    }
    s.push_str("</svg>");
    s
}
