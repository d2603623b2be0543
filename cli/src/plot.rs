//! Pictures as SVG: fleet size against mover wait and utilisation, with the target lines.

use layflow_models::report::Estimate;
use plotters::prelude::*;

use crate::fleet::SizeResult;
use crate::target::{Target, Unit, TARGET_METRICS};
use crate::Failure;

/// Our palette: teal for means, amber for tails, slate for the analytic line, brick for targets.
const TEAL: RGBColor = RGBColor(27, 127, 121);
const AMBER: RGBColor = RGBColor(217, 140, 0);
const SLATE: RGBColor = RGBColor(61, 74, 92);
const BRICK: RGBColor = RGBColor(179, 64, 58);

fn plot_error(e: impl std::fmt::Display) -> Failure {
    Failure::run(format!("cannot draw the picture: {e}"))
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

        let minutes = |e: &Estimate| e.mean / 60.0;
        let wait_targets: Vec<(&Target, f64)> = targets
            .iter()
            .filter(|t| TARGET_METRICS[t.metric].1 == Unit::Duration && t.name.starts_with("move_wait"))
            .map(|t| (t, t.value / 60.0))
            .collect();
        let ymax = sizes
            .iter()
            .flat_map(|r| [minutes(&r.move_wait_s), minutes(&r.move_wait_p95_s)])
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
            .light_line_style(RGBColor(235, 235, 235))
            .draw()
            .map_err(plot_error)?;
        for (label, color, pick) in [("mean wait", TEAL, 0usize), ("95th-percentile wait", AMBER, 1)] {
            let pts: Vec<(f64, f64)> = sizes
                .iter()
                .map(|r| {
                    (
                        f64::from(r.movers),
                        if pick == 0 { minutes(&r.move_wait_s) } else { minutes(&r.move_wait_p95_s) },
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
        c.configure_series_labels()
            .background_style(WHITE.mix(0.9))
            .border_style(RGBColor(200, 200, 200))
            .position(SeriesLabelPosition::UpperRight)
            .draw()
            .map_err(plot_error)?;

        let util_targets: Vec<(&Target, f64)> = targets
            .iter()
            .filter(|t| TARGET_METRICS[t.metric].1 == Unit::Share)
            .map(|t| (t, t.value * 100.0))
            .collect();
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
            .light_line_style(RGBColor(235, 235, 235))
            .draw()
            .map_err(plot_error)?;
        let sim: Vec<(f64, f64)> =
            sizes.iter().map(|r| (f64::from(r.movers), r.utilization.mean * 100.0)).collect();
        c.draw_series(LineSeries::new(sim.clone(), TEAL.stroke_width(3)))
            .map_err(plot_error)?
            .label("simulated (bars: 95% interval)")
            .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], TEAL.stroke_width(3)));
        c.draw_series(sizes.iter().filter_map(|r| {
            let h = r.utilization.half_width? * 100.0;
            let x = f64::from(r.movers);
            let m = r.utilization.mean * 100.0;
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
        c.configure_series_labels()
            .background_style(WHITE.mix(0.9))
            .border_style(RGBColor(200, 200, 200))
            .position(SeriesLabelPosition::UpperRight)
            .draw()
            .map_err(plot_error)?;
        root.present().map_err(plot_error)?;
    }
    Ok(svg)
}
