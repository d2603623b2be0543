//! Charts as SVG: fleet size against mover wait and utilisation, and layout-search cost over time.

use layflow_models::metrics::{Estimate, Unit};
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
        .draw()
        .map_err(plot_error)
}

/// Two panels over fleet size: wait (mean and p95, minutes) and utilisation
/// (simulated with its interval, and analytic), with each target as a dashed line.
pub fn fleet_svg(fleet: &str, sizes: &[SizeResult], targets: &[Target]) -> Result<String, Failure> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 720)).into_drawing_area();
        root.fill(&WHITE).map_err(plot_error)?;
        let (top, bottom) = root.split_vertically(360);
        let xs: Vec<f64> = sizes.iter().map(|r| f64::from(r.movers)).collect();
        let (x0, x1) = (xs.first().copied().unwrap_or(1.0) - 0.5, xs.last().copied().unwrap_or(1.0) + 0.5);

        let minutes = |e: Option<&Estimate>| e.map_or(f64::NAN, |e| e.mean / 60.0);
        let wait_targets: Vec<(&Target, f64)> = targets
            .iter()
            .filter(|t| t.unit == Unit::Seconds && t.name.contains("move_wait"))
            .map(|t| (t, t.value / 60.0))
            .collect();
        let ymax = sizes
            .iter()
            .flat_map(|r| [minutes(r.metrics.get("move_wait_s")), minutes(r.metrics.get("move_wait_p95_s"))])
            .chain(wait_targets.iter().map(|t| t.1))
            .filter(|v| v.is_finite())
            .fold(0.0f64, f64::max)
            .max(1e-3)
            * 1.15;
        let mut c = ChartBuilder::on(&top)
            .caption(format!("Fleet {fleet}: wait for a mover"), ("sans-serif", 22))
            .margin(14)
            .x_label_area_size(40)
            .y_label_area_size(60)
            .build_cartesian_2d(x0..x1, 0.0..ymax)
            .map_err(plot_error)?;
        c.configure_mesh()
            .x_desc("movers in the fleet")
            .y_desc("wait (min)")
            .x_labels(sizes.len().min(20))
            .x_label_formatter(&|x| format!("{x:.0}"))
            .light_line_style(GRID)
            .draw()
            .map_err(plot_error)?;
        for (label, color, pick) in [("mean wait", TEAL, 0usize), ("95th-percentile wait", AMBER, 1)] {
            let pts: Vec<(f64, f64)> = sizes
                .iter()
                .map(|r| {
                    (
                        f64::from(r.movers),
                        minutes(r.metrics.get(if pick == 0 { "move_wait_s" } else { "move_wait_p95_s" })),
                    )
                })
                .filter(|p| p.1.is_finite())
                .collect();
            c.draw_series(LineSeries::new(pts.clone(), color.stroke_width(3)))
                .map_err(plot_error)?
                .label(label)
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], color.stroke_width(3)));
            c.draw_series(pts.iter().map(|&p| Circle::new(p, 4, color.filled()))).map_err(plot_error)?;
        }
        for (t, v) in &wait_targets {
            c.draw_series(DashedLineSeries::new(vec![(x0, *v), (x1, *v)], 8, 6, BRICK.stroke_width(2)))
                .map_err(plot_error)?
                .label(format!("target: {}", t.describe()))
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], BRICK.stroke_width(2)));
        }
        legend(&mut c)?;

        let util_targets: Vec<(&Target, f64)> =
            targets.iter().filter(|t| t.unit == Unit::Share).map(|t| (t, t.value * 100.0)).collect();
        let mut c = ChartBuilder::on(&bottom)
            .caption(format!("Fleet {fleet}: utilisation"), ("sans-serif", 22))
            .margin(14)
            .x_label_area_size(40)
            .y_label_area_size(60)
            .build_cartesian_2d(x0..x1, 0.0..105.0)
            .map_err(plot_error)?;
        c.configure_mesh()
            .x_desc("movers in the fleet")
            .y_desc("busy share (%)")
            .x_labels(sizes.len().min(20))
            .x_label_formatter(&|x| format!("{x:.0}"))
            .light_line_style(GRID)
            .draw()
            .map_err(plot_error)?;
        let util = |r: &SizeResult| *r.metrics.get("utilization").expect("every size has its utilization");
        let sim: Vec<(f64, f64)> =
            sizes.iter().map(|r| (f64::from(r.movers), util(r).mean * 100.0)).collect();
        c.draw_series(LineSeries::new(sim.clone(), TEAL.stroke_width(3)))
            .map_err(plot_error)?
            .label("simulated (bars: 95% interval)")
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], TEAL.stroke_width(3)));
        c.draw_series(sizes.iter().filter_map(|r| {
            let h = util(r).half_width? * 100.0;
            let x = f64::from(r.movers);
            let m = util(r).mean * 100.0;
            Some(PathElement::new(vec![(x, m - h), (x, m + h)], TEAL.stroke_width(2)))
        }))
        .map_err(plot_error)?;
        c.draw_series(sim.iter().map(|&p| Circle::new(p, 4, TEAL.filled()))).map_err(plot_error)?;
        let analytic: Vec<(f64, f64)> = sizes
            .iter()
            .map(|r| (f64::from(r.movers), (r.utilization_analytic * 100.0).min(105.0)))
            .collect();
        c.draw_series(LineSeries::new(analytic, SLATE.stroke_width(2)))
            .map_err(plot_error)?
            .label("analytic estimate")
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], SLATE.stroke_width(2)));
        for (t, v) in &util_targets {
            c.draw_series(DashedLineSeries::new(vec![(x0, *v), (x1, *v)], 8, 6, BRICK.stroke_width(2)))
                .map_err(plot_error)?
                .label(format!("target: {}", t.describe()))
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], BRICK.stroke_width(2)));
        }
        legend(&mut c)?;
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

/// Best-so-far cost against time (log scale: searches improve most in their
/// first milliseconds), one step line per method, with a reference level
/// (the start layout, or a known optimum) as a dashed line.
pub fn search_svg(
    title: &str,
    series: &[SearchSeries],
    unit: &str,
    reference: Option<(&str, f64)>,
) -> Result<String, Failure> {
    const EARLIEST_S: f64 = 1e-4;
    let t_end = series.iter().map(|s| s.end_s).fold(EARLIEST_S * 10.0, f64::max) * 1.2;
    let values = series.iter().flat_map(|s| s.points.iter().map(|p| p.1)).chain(reference.map(|r| r.1));
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
            .caption(format!("Layout search: {title}"), ("sans-serif", 22))
            .margin(14)
            .x_label_area_size(44)
            .y_label_area_size(80)
            .build_cartesian_2d((EARLIEST_S..t_end).log_scale(), y0..y1)
            .map_err(plot_error)?;
        c.configure_mesh()
            .x_desc("seconds since the search began (log scale)")
            .y_desc(format!("best so far ({unit})"))
            .y_label_formatter(&|y| super::table::num(*y))
            .x_label_formatter(&|x| {
                if *x >= 1.0 {
                    format!("{x:.0}")
                } else {
                    format!("{x}")
                }
            })
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
                let t = t.max(EARLIEST_S);
                if let Some(&(_, prev)) = pts.last() {
                    pts.push((t, prev));
                }
                pts.push((t, v));
            }
            if let Some(&(_, last)) = pts.last() {
                pts.push((s.end_s.max(EARLIEST_S), last));
            }
            c.draw_series(LineSeries::new(pts, colour.stroke_width(width)))
                .map_err(plot_error)?
                .label(s.label)
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 24, y)], colour.stroke_width(width))
                });
        }
        if let Some((name, v)) = reference {
            c.draw_series(DashedLineSeries::new(
                vec![(EARLIEST_S, v), (t_end, v)],
                8,
                6,
                BRICK.stroke_width(2),
            ))
            .map_err(plot_error)?
            .label(format!("{name}: {}", super::table::num(v)))
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], BRICK.stroke_width(2)));
        }
        legend(&mut c)?;
        root.present().map_err(plot_error)?;
    }
    Ok(svg)
}
