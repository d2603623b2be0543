//! Charts as SVG: fleet size against mover wait and utilisation, and layout-search cost over time.

use layflow_models::metrics::Unit;
use layflow_models::study::fleet::SizeResult;
use layflow_models::study::targets::Target;
use plotters::prelude::*;

use super::palette;
use crate::failure::Failure;

/// The palette's colours as the chart library wants them: teal for means,
/// amber for tails, slate for the analytic line, brick for targets.
const fn colour(c: (u8, u8, u8)) -> RGBColor {
    RGBColor(c.0, c.1, c.2)
}
const TEAL: RGBColor = colour(palette::TEAL);
const AMBER: RGBColor = colour(palette::AMBER);
const SLATE: RGBColor = colour(palette::SLATE);
const BRICK: RGBColor = colour(palette::BRICK);
const GRID: RGBColor = colour(palette::GRID);
/// The recommended size's band: a green apart from the palette's data colours.
const GREEN_MARK: RGBColor = RGBColor(46, 139, 87);
/// The scenario's other layouts in the search chart: a grey below the data colours.
const REFERENCE: RGBColor = RGBColor(120, 120, 120);

fn plot_error(e: impl std::fmt::Display) -> Failure {
    Failure::run(format!("cannot draw the picture: {e}"))
}

/// The legend every chart here shares: upper right, on a faint white box.
fn legend<'a, DB, CT>(c: &mut ChartContext<'a, DB, CT>) -> Result<(), Failure>
where
    DB: DrawingBackend + 'a,
    CT: CoordTranslate,
{
    c.configure_series_labels()
        .background_style(WHITE.mix(0.9))
        .border_style(colour(palette::LEGEND_BORDER))
        .position(SeriesLabelPosition::UpperRight)
        .label_font((FONT_FAMILY, 13))
        .draw()
        .map_err(plot_error)
}

/// The font list every chart and drawing names: open fonts common on Linux,
/// macOS and Windows installs, then the generic family. A renderer that maps
/// plain `sans-serif` to a font the machine lacks (resvg's default is Arial)
/// then still finds a face and draws the text.
pub const FONT_FAMILY: &str = "DejaVu Sans, Liberation Sans, Noto Sans, sans-serif";

/// A tick label without useless decimals: three significant digits, trailing zeros dropped.
pub fn tick(v: f64) -> String {
    if v == 0.0 || !v.is_finite() {
        return "0".into();
    }
    let digits = (2 - v.abs().log10().floor() as i32).clamp(0, 6) as usize;
    let s = format!("{v:.digits$}");
    let s = if s.contains('.') { s.trim_end_matches('0').trim_end_matches('.').to_string() } else { s };
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// Ticks for a log axis: 1, 2 and 5 times each power of ten within `lo..=hi`.
fn one_two_five(lo: f64, hi: f64) -> Vec<f64> {
    let mut v = Vec::new();
    let mut p = 10f64.powf(lo.log10().floor());
    while p <= hi && v.len() < 40 {
        for m in [1.0, 2.0, 5.0] {
            let t = m * p;
            if t >= lo && t <= hi {
                v.push(t);
            }
        }
        p *= 10.0;
    }
    v
}

/// Draw a line with dots, optionally named in the legend.
fn line_with_dots<'a, DB, CT>(
    c: &mut ChartContext<'a, DB, CT>,
    pts: Vec<(f64, f64)>,
    colour: RGBColor,
    width: u32,
    label: Option<String>,
) -> Result<(), Failure>
where
    DB: DrawingBackend + 'a,
    CT: CoordTranslate<From = (f64, f64)>,
{
    let anno = c.draw_series(LineSeries::new(pts.clone(), colour.stroke_width(width))).map_err(plot_error)?;
    if let Some(l) = label {
        anno.label(l)
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], colour.stroke_width(width)));
    }
    c.draw_series(pts.iter().map(|&p| Circle::new(p, 4, colour.filled()))).map_err(plot_error)?;
    Ok(())
}

/// A horizontal dashed target line across the panel, named in the legend.
fn target_line<'a, DB, CT>(
    c: &mut ChartContext<'a, DB, CT>,
    (x0, x1): (f64, f64),
    v: f64,
    t: &Target,
) -> Result<(), Failure>
where
    DB: DrawingBackend + 'a,
    CT: CoordTranslate<From = (f64, f64)>,
{
    c.draw_series(DashedLineSeries::new(vec![(x0, v), (x1, v)], 8, 6, BRICK.stroke_width(2)))
        .map_err(plot_error)?
        .label(format!("target: {}", t.describe()))
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], BRICK.stroke_width(2)));
    Ok(())
}

/// The recommended size as a vertical green band from `y0` to `y1`, named in the legend.
fn recommended_mark<'a, DB, CT>(
    c: &mut ChartContext<'a, DB, CT>,
    n: Option<u32>,
    (y0, y1): (f64, f64),
) -> Result<(), Failure>
where
    DB: DrawingBackend + 'a,
    CT: CoordTranslate<From = (f64, f64)>,
{
    let Some(n) = n else { return Ok(()) };
    let x = f64::from(n);
    c.draw_series(std::iter::once(PathElement::new(
        vec![(x, y0), (x, y1)],
        GREEN_MARK.mix(0.45).stroke_width(10),
    )))
    .map_err(plot_error)?
    .label(format!("recommended: {n} {}", if n == 1 { "mover" } else { "movers" }))
    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], GREEN_MARK.mix(0.45).stroke_width(10)));
    Ok(())
}

/// A named line of a panel: (legend label, colour, points).
type Line = (String, RGBColor, Vec<(f64, f64)>);

/// One panel's values: (size, value) for each size where the metric is known.
fn per_size(sizes: &[SizeResult], value: impl Fn(&SizeResult) -> Option<f64>) -> Vec<(f64, f64)> {
    sizes.iter().filter_map(|r| Some((f64::from(r.movers), value(r)?))).filter(|p| p.1.is_finite()).collect()
}

/// How a panel's unit reads on its axis: the axis title and the factor from base units.
fn axis_of(unit: Unit) -> (&'static str, f64) {
    match unit {
        Unit::Seconds => ("minutes", 1.0 / 60.0),
        Unit::Share => ("share of time (%)", 100.0),
        Unit::PerHour => ("per hour", 1.0),
        Unit::Count => ("number", 1.0),
        Unit::PerBatch => ("loads per batch", 1.0),
        Unit::MetresPerHour => ("metres per hour", 1.0),
        Unit::SecondsPerHour => ("mover-seconds per hour", 1.0),
        Unit::MoneyPerHour => ("cost per hour", 1.0),
        Unit::MoneyPerLoad => ("cost per load", 1.0),
    }
}

/// Panels over fleet size, one per unit: wait (mean and p95, minutes, on a
/// log scale so the small waits near a target stay readable beside the
/// queue's blow-up at too few movers), utilisation (simulated with its
/// interval, and analytic), handling cost per hour when the fleet is priced,
/// and one for each other unit a target uses. Every target is a dashed line
/// on the panel of its unit; the recommended size (the smallest meeting
/// every target) is a green band on every panel.
pub fn fleet_svg(
    fleet: &str,
    sizes: &[SizeResult],
    targets: &[Target],
    recommended: Option<u32>,
    currency: Option<&str>,
) -> Result<String, Failure> {
    let xs: Vec<f64> = sizes.iter().map(|r| f64::from(r.movers)).collect();
    let xr = (xs.first().copied().unwrap_or(1.0) - 0.5, xs.last().copied().unwrap_or(1.0) + 0.5);
    // A target's own metric, per size, from the verdicts (every target has one per size).
    let target_means = |i: usize| per_size(sizes, |r| r.targets.get(i).map(|v| v.mean));
    let own = |t: &Target, short: &str| t.name == short || t.name == format!("{fleet}/{short}");
    let cost = |r: &SizeResult| r.metrics.get("handling_cost_per_h").map(|e| e.mean);
    let priced = sizes.iter().any(|r| cost(r).is_some_and(|c| c > 0.0));
    let mut units: Vec<Unit> = vec![Unit::Seconds, Unit::Share];
    if priced {
        units.push(Unit::MoneyPerHour);
    }
    for t in targets {
        if !units.contains(&t.unit) {
            units.push(t.unit);
        }
    }
    const PANEL: u32 = 330;
    let note = match recommended {
        Some(n) => format!("{n} {} meet every target", if n == 1 { "mover" } else { "movers" }),
        None if targets.is_empty() => "no targets given".to_string(),
        None => "no size simulated meets every target".to_string(),
    };
    let mut svg = String::new();
    {
        let root =
            SVGBackend::with_string(&mut svg, (900, 40 + PANEL * units.len() as u32)).into_drawing_area();
        root.fill(&WHITE).map_err(plot_error)?;
        let root = root.titled(&format!("Fleet {fleet}: {note}"), (FONT_FAMILY, 22)).map_err(plot_error)?;
        let panels = root.split_evenly((units.len(), 1));
        for (unit, area) in units.iter().zip(&panels) {
            let (axis, k) = axis_of(*unit);
            let mine: Vec<(usize, &Target)> =
                targets.iter().enumerate().filter(|(_, t)| t.unit == *unit).collect();
            // (label, colour, points) of every line on this panel.
            let mut lines: Vec<Line> = Vec::new();
            let mut title = String::new();
            match unit {
                Unit::Seconds => {
                    title = "wait for a mover".into();
                    lines.push((
                        "mean wait".into(),
                        TEAL,
                        per_size(sizes, |r| Some(r.metrics.get("move_wait_s")?.mean)),
                    ));
                    lines.push((
                        "95th-percentile wait".into(),
                        AMBER,
                        per_size(sizes, |r| Some(r.metrics.get("move_wait_p95_s")?.mean)),
                    ));
                }
                Unit::Share => {
                    title = "utilisation".into();
                    lines.push((
                        "simulated (bars: 95% interval)".into(),
                        TEAL,
                        per_size(sizes, |r| Some(r.metrics.get("utilization")?.mean)),
                    ));
                    lines.push((
                        "analytic estimate".into(),
                        SLATE,
                        per_size(sizes, |r| Some(r.utilization_analytic)),
                    ));
                }
                Unit::MoneyPerHour if priced => {
                    let words = match currency {
                        Some(c) => format!("handling cost per hour ({c})"),
                        None => "handling cost per hour".to_string(),
                    };
                    title = words.clone();
                    lines.push((words, TEAL, per_size(sizes, cost)));
                }
                _ => {}
            }
            for (i, t) in &mine {
                let drawn = match unit {
                    Unit::Seconds => own(t, "move_wait_s") || own(t, "move_wait_p95_s"),
                    Unit::Share => own(t, "utilization"),
                    Unit::MoneyPerHour => own(t, "handling_cost_per_h") && priced,
                    _ => false,
                };
                if !drawn {
                    lines.push((t.name.clone(), SLATE, target_means(*i)));
                }
            }
            if title.is_empty() {
                title = mine.iter().map(|(_, t)| t.name.as_str()).collect::<Vec<_>>().join(", ");
            }
            for l in &mut lines {
                for p in &mut l.2 {
                    p.1 *= k;
                }
            }
            let values = lines
                .iter()
                .flat_map(|l| l.2.iter().map(|p| p.1))
                .chain(mine.iter().map(|(_, t)| t.value * k))
                .filter(|v| v.is_finite());
            let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(v), b.max(v)));
            let (lo, hi) = if lo.is_finite() { (lo, hi) } else { (0.0, 1.0) };
            if *unit == Unit::Seconds {
                // Log scale: the waits at too few movers run to hours, the
                // ones near a target are seconds to minutes; both stay legible.
                let floor = lo.max(hi * 1e-4).max(1e-3);
                let (y0, y1) = (floor / 1.6, hi.max(floor * 2.0) * 1.6);
                let mut c = ChartBuilder::on(area)
                    .caption(format!("{title} (log scale)"), (FONT_FAMILY, 18))
                    .margin(12)
                    .x_label_area_size(40)
                    .y_label_area_size(64)
                    .build_cartesian_2d(
                        xr.0..xr.1,
                        (y0..y1).log_scale().with_key_points(one_two_five(y0, y1)),
                    )
                    .map_err(plot_error)?;
                c.configure_mesh()
                    .x_desc("movers in the fleet")
                    .y_desc(format!("wait ({axis})"))
                    .y_labels(40)
                    .x_labels(sizes.len().min(20))
                    .x_label_formatter(&|x| format!("{x:.0}"))
                    .y_label_formatter(&|y| tick(*y))
                    .label_style((FONT_FAMILY, 13))
                    .axis_desc_style((FONT_FAMILY, 14))
                    .light_line_style(GRID)
                    .draw()
                    .map_err(plot_error)?;
                recommended_mark(&mut c, recommended, (y0, y1))?;
                for (label, colour, pts) in lines {
                    line_with_dots(
                        &mut c,
                        pts.into_iter().filter(|p| p.1 > 0.0).collect(),
                        colour,
                        3,
                        Some(label),
                    )?;
                }
                for (_, t) in &mine {
                    target_line(&mut c, xr, (t.value * k).max(y0), t)?;
                }
                legend(&mut c)?;
            } else {
                let (y0, y1) = if *unit == Unit::Share {
                    (0.0, hi.max(100.0) * 1.05)
                } else {
                    // Counts and costs read from zero unless they go below it.
                    let pad = ((hi - lo) * 0.1).max(hi.abs() * 0.05).max(1e-9);
                    (if lo >= 0.0 { 0.0 } else { lo - pad }, hi + pad)
                };
                let mut c = ChartBuilder::on(area)
                    .caption(title, (FONT_FAMILY, 18))
                    .margin(12)
                    .x_label_area_size(40)
                    .y_label_area_size(64)
                    .build_cartesian_2d(xr.0..xr.1, y0..y1)
                    .map_err(plot_error)?;
                c.configure_mesh()
                    .x_desc("movers in the fleet")
                    .y_desc(axis)
                    .x_labels(sizes.len().min(20))
                    .x_label_formatter(&|x| format!("{x:.0}"))
                    .y_label_formatter(&|y| tick(*y))
                    .label_style((FONT_FAMILY, 13))
                    .axis_desc_style((FONT_FAMILY, 14))
                    .light_line_style(GRID)
                    .draw()
                    .map_err(plot_error)?;
                recommended_mark(&mut c, recommended, (y0, y1))?;
                if *unit == Unit::Share {
                    // The simulated utilisation's 95% interval as bars.
                    c.draw_series(sizes.iter().filter_map(|r| {
                        let u = r.metrics.get("utilization")?;
                        let h = u.half_width? * 100.0;
                        let x = f64::from(r.movers);
                        Some(PathElement::new(
                            vec![(x, u.mean * 100.0 - h), (x, u.mean * 100.0 + h)],
                            TEAL.stroke_width(2),
                        ))
                    }))
                    .map_err(plot_error)?;
                }
                for (label, colour, pts) in lines {
                    let pts = pts.into_iter().map(|(x, y)| (x, y.min(y1))).collect();
                    line_with_dots(&mut c, pts, colour, if colour == SLATE { 2 } else { 3 }, Some(label))?;
                }
                for (_, t) in &mine {
                    target_line(&mut c, xr, t.value * k, t)?;
                }
                legend(&mut c)?;
            }
        }
        root.present().map_err(plot_error)?;
    }
    Ok(svg)
}

/// One method's best-so-far, for [`search_svg`].
pub struct SearchSeries<'a> {
    /// The method, as the legend names it.
    pub label: &'a str,
    /// (seconds since it began, best cost so far) at each improvement.
    pub points: Vec<(f64, f64)>,
    /// When it stopped.
    pub end_s: f64,
}

/// Best-so-far cost against time, one step line per method, with reference
/// levels (the start layout and the scenario's other layouts, or a known
/// optimum) as dashed lines. The time axis is logarithmic (searches improve
/// most in their first milliseconds) and begins just before the first
/// improvement any method made, so the stretch where the methods differ
/// fills the picture rather than the microseconds before any of them moved.
pub fn search_svg(
    title: &str,
    series: &[SearchSeries],
    unit: &str,
    references: &[(String, f64)],
) -> Result<String, Failure> {
    // The first improvement after each method's start point; half of the
    // earliest of them is where the axis begins.
    let first_move = series
        .iter()
        .filter_map(|s| s.points.get(1).or(s.points.first()).map(|p| p.0))
        .filter(|t| *t > 0.0)
        .fold(f64::INFINITY, f64::min);
    let earliest_s = if first_move.is_finite() { (first_move / 2.0).max(1e-7) } else { 1e-4 };
    let t_end = series.iter().map(|s| s.end_s).fold(earliest_s * 10.0, f64::max) * 1.2;
    let values =
        series.iter().flat_map(|s| s.points.iter().map(|p| p.1)).chain(references.iter().map(|r| r.1));
    let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(v), b.max(v)));
    if !lo.is_finite() {
        return Err(Failure::run("cannot draw the picture: no method reported a cost"));
    }
    let pad = ((hi - lo) * 0.08).max(hi.abs() * 1e-3).max(1e-9);
    let (y0, y1) = (lo - pad, hi + pad);
    let colours = [TEAL, AMBER, SLATE];
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 520)).into_drawing_area();
        root.fill(&WHITE).map_err(plot_error)?;
        let mut c = ChartBuilder::on(&root)
            .caption(format!("Layout search: {title}"), (FONT_FAMILY, 22))
            .margin(14)
            .x_label_area_size(44)
            .y_label_area_size(80)
            .build_cartesian_2d((earliest_s..t_end).log_scale(), y0..y1)
            .map_err(plot_error)?;
        c.configure_mesh()
            .x_desc("seconds since the search began (log scale, from just before the first improvement)")
            .y_desc(format!("best so far ({unit})"))
            .y_label_formatter(&|y| tick(*y))
            .x_label_formatter(&|x| tick(*x))
            .label_style((FONT_FAMILY, 13))
            .axis_desc_style((FONT_FAMILY, 14))
            .light_line_style(GRID)
            .draw()
            .map_err(plot_error)?;
        // Narrower lines on top of wider ones, so methods that end at the same
        // cost still show as nested stripes rather than hiding each other.
        let widths = [7u32, 4, 2];
        for (i, s) in series.iter().enumerate() {
            let colour = colours[i % colours.len()];
            let width = widths[i % widths.len()];
            // A step line: the best holds until the next improvement, then drops.
            let mut pts: Vec<(f64, f64)> = Vec::with_capacity(2 * s.points.len() + 1);
            for &(t, v) in &s.points {
                let t = t.max(earliest_s);
                if let Some(&(_, prev)) = pts.last() {
                    pts.push((t, prev));
                }
                pts.push((t, v));
            }
            if let Some(&(_, last)) = pts.last() {
                pts.push((s.end_s.max(earliest_s), last));
            }
            c.draw_series(LineSeries::new(pts, colour.stroke_width(width)))
                .map_err(plot_error)?
                .label(s.label)
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 24, y)], colour.stroke_width(width))
                });
        }
        // The first reference (the start layout, or the optimum) in brick, the
        // scenario's other layouts in grey, each with its own dash.
        for (i, (name, v)) in references.iter().enumerate() {
            let (style, dash) = if i == 0 {
                (BRICK.stroke_width(2), 8)
            } else {
                (REFERENCE.stroke_width(2), 3 + 2 * (i as u32 % 4))
            };
            c.draw_series(DashedLineSeries::new(vec![(earliest_s, *v), (t_end, *v)], dash, 6, style))
                .map_err(plot_error)?
                .label(format!("{name}: {}", super::table::num(*v)))
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], style));
        }
        legend(&mut c)?;
        root.present().map_err(plot_error)?;
    }
    Ok(svg)
}
