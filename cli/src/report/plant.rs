//! The plant for the report: each layout drawn to one scale, side by side, departments shaded by simulated utilisation, flows coloured by fleet, congested aisles marked.

use std::fmt::Write as _;

use layflow_models::analysis::{move_shares, StaticPicture};
use layflow_models::plant::{DepartmentRole, Plant};

use crate::render::palette::{mix, rgb, AISLE_IDLE, AMBER, BRICK, SLATE, TEAL};
use crate::render::plot::FONT_FAMILY;

use super::html::esc;

/// What the simulation says about one layout, for its drawing.
pub struct Shading {
    /// The layout's index in the plant.
    pub layout: usize,
    /// Simulated utilisation per department (`None` where the results have none).
    pub utilization: Vec<Option<f64>>,
    /// Simulated mean queue per department.
    pub queue: Vec<Option<f64>>,
    /// Simulated congestion delay per aisle segment, mover-s/h (empty without segment results).
    pub congestion: Vec<f64>,
}

const WHITE: (u8, u8, u8) = (255, 255, 255);
/// Width of one panel's drawing, px (the page scales it to the column).
const PANEL_PX: f64 = 600.0;
const PAD: f64 = 26.0;

/// The colour a fleet's flows are drawn in (the same in the replay's legend).
pub fn fleet_colour(f: usize) -> (u8, u8, u8) {
    crate::render::palette::FLEETS[f % crate::render::palette::FLEETS.len()]
}

/// Departments' fill: pale at 0% utilisation, full teal at 100%.
fn util_fill(u: Option<f64>) -> String {
    match u {
        Some(u) => rgb(mix(mix(TEAL, WHITE, 0.92), TEAL, u.clamp(0.0, 1.0))),
        None => rgb(mix(TEAL, WHITE, 0.9)),
    }
}

/// Every panel, one per shading, all to the scale of the widest.
pub fn panels(plant: &Plant, pic: &StaticPicture, shadings: &[Shading]) -> String {
    let net = plant.aisles.as_ref();
    let spacing = crate::render::plant::typical_spacing(plant);
    let half = 0.4 * spacing;
    let (x0, x1, y0, y1) = crate::render::plant::bounds(plant, half);
    let scale = (PANEL_PX - 2.0 * PAD) / (x1 - x0).max(1.0);
    let height = (y1 - y0) * scale + 2.0 * PAD + 24.0;
    let px = |x: f64, y: f64| (PAD + (x - x0) * scale, PAD + (y1 - y) * scale);
    let hp = half * scale;

    // Loads per hour by (from, to, fleet), the same for every layout.
    let nf = plant.fleets().len();
    let nd = plant.departments.len();
    let mut by_fleet = vec![0.0; nd * nd * nf.max(1)];
    for (p, chart) in pic.from_to_by_product.iter().enumerate() {
        for (i, j, f) in chart.iter() {
            if i == j {
                continue;
            }
            for (fl, w) in move_shares(plant, p, i, j) {
                by_fleet[(i * nd + j) * nf + fl] += w * f;
            }
        }
    }
    let flow_max = by_fleet.iter().copied().fold(0.0, f64::max);

    let mut out = String::from(if shadings.len() == 1 {
        "<div class=\"panels one\">"
    } else {
        "<div class=\"panels\">"
    });
    for sh in shadings {
        let lay = &plant.layouts[sh.layout];
        let mut s = String::new();
        let _ = write!(
            s,
            "<div class=\"panel\" data-layout=\"{name}\"><h3>{name}</h3><svg xmlns=\"http://www.w3.org/2000/svg\" \
             viewBox=\"0 0 {PANEL_PX} {height:.0}\" font-family=\"{FONT_FAMILY}\" role=\"img\" class=\"plant\">\
             <title>Layout {name}: departments shaded by simulated utilisation</title>\
             <rect width=\"100%\" height=\"100%\" fill=\"white\"/>",
            name = esc(&lay.name)
        );
        // Aisles under everything; congested ones marked.
        if let Some(n) = net {
            let worst = sh.congestion.iter().copied().fold(0.0, f64::max);
            for (k, seg) in n.segments.iter().enumerate() {
                let (ax, ay) = px(n.nodes[seg.from].x, n.nodes[seg.from].y);
                let (bx, by) = px(n.nodes[seg.to].x, n.nodes[seg.to].y);
                let delay = sh.congestion.get(k).copied().unwrap_or(0.0);
                let congested = worst > 0.0 && delay >= 0.25 * worst;
                let (c, w) = if congested { (rgb(BRICK), 7.0) } else { (rgb(AISLE_IDLE), 5.0) };
                let _ = write!(
                    s,
                    "<line class=\"aisle{}\" data-segment=\"segment-{k}\" x1=\"{ax:.1}\" y1=\"{ay:.1}\" \
                     x2=\"{bx:.1}\" y2=\"{by:.1}\" stroke=\"{c}\" stroke-width=\"{w}\" stroke-linecap=\"round\">\
                     <title>segment-{k}: congestion {delay:.0} mover-s/h</title></line>",
                    if congested { " congested" } else { "" }
                );
            }
        }
        // Flows: one curve per (from, to, fleet), widest first.
        let mut list: Vec<(usize, usize, usize, f64)> = Vec::new();
        for i in 0..nd {
            for j in 0..nd {
                for f in 0..nf {
                    let v = by_fleet[(i * nd + j) * nf + f];
                    if v > 0.0 {
                        list.push((i, j, f, v));
                    }
                }
            }
        }
        list.sort_by(|a, b| b.3.total_cmp(&a.3));
        for (i, j, f, v) in list {
            let a = &plant.locations[lay.location_of[i]];
            let b = &plant.locations[lay.location_of[j]];
            let (ax, ay) = px(a.x, a.y);
            let (bx, by) = px(b.x, b.y);
            let len = (bx - ax).hypot(by - ay).max(1e-9);
            // Bent to the right of travel, fleets apart.
            let bow = 0.14 * len + 5.0 + 5.0 * f as f64;
            let (nx, ny) = (-(by - ay) / len, (bx - ax) / len);
            let (cx, cy) = ((ax + bx) / 2.0 + nx * bow, (ay + by) / 2.0 + ny * bow);
            let w = if flow_max > 0.0 { (9.0 * v / flow_max).max(1.0) } else { 1.0 };
            let _ = write!(
                s,
                "<path class=\"flow\" data-fleet=\"{fl}\" d=\"M{ax:.1},{ay:.1} Q{cx:.1},{cy:.1} {bx:.1},{by:.1}\" \
                 fill=\"none\" stroke=\"{c}\" stroke-opacity=\"0.75\" stroke-width=\"{w:.2}\" \
                 stroke-linecap=\"round\"><title>{from} → {to}: {v:.2} loads/h by {fl}</title></path>",
                fl = esc(&plant.fleets()[f].id),
                c = rgb(fleet_colour(f)),
                from = esc(&plant.departments[i].id),
                to = esc(&plant.departments[j].id)
            );
        }
        // Departments on top, every name in one size: the largest that fits the longest.
        let longest = plant
            .departments
            .iter()
            .filter(|d| d.role == DepartmentRole::Work)
            .map(|d| d.id.chars().count())
            .max()
            .unwrap_or(1)
            .max(1) as f64;
        let name_px = (2.0 * hp * 0.9 / (0.68 * longest)).clamp(9.0, 15.0);
        for (d, dep) in plant.departments.iter().enumerate() {
            let loc = &plant.locations[lay.location_of[d]];
            let (x, y) = px(loc.x, loc.y);
            let dock = matches!(dep.role, DepartmentRole::Receiving | DepartmentRole::Shipping);
            // To scale where the location gives an area or size.
            let (hw, hh) = match loc.half_extent_m() {
                Some((w, d)) => (w * scale, d * scale),
                None if dock => (hp * 0.45, hp * 0.9),
                None => (hp, hp),
            };
            let u = sh.utilization.get(d).copied().flatten();
            let q = sh.queue.get(d).copied().flatten();
            let fill = if dock { rgb(mix(AMBER, WHITE, 0.72)) } else { util_fill(u) };
            let text_colour = if u.unwrap_or(0.0) > 0.6 && !dock { "white".to_string() } else { rgb(SLATE) };
            let tip = match (u, q) {
                (Some(u), Some(q)) => {
                    format!("{}: utilisation {:.1}%, mean queue {q:.2} lots", dep.id, u * 100.0)
                }
                _ => dep.id.clone(),
            };
            let _ = write!(
                s,
                "<g class=\"department\" data-department=\"{id}\"{attr}><title>{tip}</title>\
                 <rect x=\"{:.1}\" y=\"{:.1}\" width=\"{:.1}\" height=\"{:.1}\" rx=\"3\" fill=\"{fill}\" \
                 stroke=\"{sl}\" stroke-width=\"1.2\"/>",
                x - hw,
                y - hh,
                2.0 * hw,
                2.0 * hh,
                id = esc(&dep.id),
                attr = u.map_or(String::new(), |u| format!(" data-utilization=\"{u}\"")),
                tip = esc(&tip),
                sl = rgb(SLATE)
            );
            let size = if dock { 11.0 } else { name_px };
            let (ty, tc) = if dock {
                (y - hh - 5.0, rgb(SLATE))
            } else if u.is_some() {
                (y - 2.0, text_colour.clone())
            } else {
                (y + size * 0.35, text_colour.clone())
            };
            let _ = write!(
                s,
                "<text x=\"{x:.1}\" y=\"{ty:.1}\" font-size=\"{size:.1}\" font-weight=\"bold\" \
                 text-anchor=\"middle\" fill=\"{tc}\">{}</text>",
                esc(&dep.id)
            );
            if let (Some(u), false) = (u, dock) {
                let _ = write!(
                    s,
                    "<text x=\"{x:.1}\" y=\"{:.1}\" font-size=\"{:.1}\" text-anchor=\"middle\" \
                     fill=\"{text_colour}\">{:.0}%</text>",
                    y + size + 2.0,
                    size,
                    u * 100.0
                );
            }
            s.push_str("</g>");
        }
        // A scale bar: a round length near a sixth of the panel.
        let bar_m = nice_length((PANEL_PX - 2.0 * PAD) / scale / 6.0);
        let (bx, by) = (PAD, height - 12.0);
        let _ = write!(
            s,
            "<g class=\"scale-bar\"><line x1=\"{bx}\" y1=\"{by:.1}\" x2=\"{:.1}\" y2=\"{by:.1}\" stroke=\"{sl}\" \
             stroke-width=\"3\"/><text x=\"{:.1}\" y=\"{:.1}\" font-size=\"12\" fill=\"{sl}\">{} m</text></g></svg></div>",
            bx + bar_m * scale,
            bx + bar_m * scale + 8.0,
            by + 4.0,
            bar_m,
            sl = rgb(SLATE)
        );
        out.push_str(&s);
    }
    out.push_str("</div>");
    // The legend once, below the panels.
    let mut legend = String::from("<div class=\"legend\">");
    for (f, fleet) in plant.fleets().iter().enumerate() {
        let _ = write!(
            legend,
            "<span><span class=\"key\" style=\"background:{}\"></span>flows carried by {}</span>",
            rgb(fleet_colour(f)),
            esc(&fleet.id)
        );
    }
    if shadings.iter().any(|sh| sh.utilization.iter().any(Option::is_some)) {
        let _ = write!(
            legend,
            "<span><span class=\"key\" style=\"background:linear-gradient(90deg,{},{})\"></span>department \
             utilisation 0 → 100% (simulated; the number in each box)</span>",
            util_fill(Some(0.0)),
            util_fill(Some(1.0))
        );
    }
    let _ = write!(
        legend,
        "<span><span class=\"key\" style=\"background:{}\"></span>receiving and shipping docks</span>",
        rgb(mix(AMBER, WHITE, 0.72))
    );
    if net.is_some() {
        let _ = write!(
            legend,
            "<span><span class=\"key\" style=\"background:{}\"></span>congested aisle (a quarter or more of the \
             worst segment's delay)</span>",
            rgb(BRICK)
        );
    }
    legend.push_str("</div>");
    out + &legend
}

/// A round length (1, 2 or 5 × a power of ten metres) at or below `m`.
fn nice_length(m: f64) -> f64 {
    if !(m > 0.0) || !m.is_finite() {
        return 1.0;
    }
    let p = 10f64.powf(m.log10().floor());
    [5.0, 2.0, 1.0].into_iter().map(|k| k * p).find(|&v| v <= m).unwrap_or(p)
}
