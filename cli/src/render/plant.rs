//! The plant drawn as SVG for `layflow draw`: locations, departments, docks, aisles and flows.
//!
//! Flows between departments come from the static from-to chart and are drawn
//! as curves whose width is proportional to loads per hour. Each curve bends
//! to the right of its direction of travel, so the two directions between a
//! pair of departments never lie on top of each other, and lines between bays
//! in a row do not run over the bays between them. With an aisle network the
//! aisles are drawn too, coloured by static traffic: the from-to chart routed
//! over the shortest paths, or, with `--results`, by the simulated congestion
//! (or traffic) per segment read from a results folder. Every element carries a class and data attributes
//! (`class="flow" data-loads-per-h=...`), so tests and scripts can read the
//! picture back.

use std::path::Path;

use layflow_models::analysis::StaticPicture;
use layflow_models::network::AisleNetwork;
use layflow_models::plant::{DepartmentRole, Plant};
use layflow_models::results::segments::SegmentFigures;
use svg::node::element::path::Data;
use svg::node::element::{Circle, Group, Line, Path as SvgPath, Rectangle, Text, Title};
use svg::Document;

use super::palette::{mix, rgb, traffic_colour, AISLE_IDLE, AMBER, BRICK, SLATE, TEAL};

/// Widest flow line, px: the largest flow gets it, the others in proportion.
const FLOW_MAX_PX: f64 = 16.0;
/// Thinnest flow line, px, so a small flow is still seen.
const FLOW_MIN_PX: f64 = 1.0;
/// Width of the plant drawing, px; the legend sits to its right.
const PLANT_PX: f64 = 1000.0;
const MARGIN: f64 = 40.0;
const TOP: f64 = 78.0;
const LEGEND_PX: f64 = 300.0;

/// Plant metres to picture pixels (y up in the plant, down on screen).
struct Frame {
    x0: f64,
    y1: f64,
    scale: f64,
}

impl Frame {
    fn px(&self, x: f64, y: f64) -> (f64, f64) {
        (MARGIN + (x - self.x0) * self.scale, TOP + (self.y1 - y) * self.scale)
    }
}

/// A number with few digits and no trailing zeros, for labels.
fn short(x: f64) -> String {
    let s = if x >= 100.0 {
        format!("{x:.0}")
    } else if x >= 10.0 {
        format!("{x:.1}")
    } else {
        format!("{x:.2}")
    };
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// `n` of a rate per hour with its noun, singular at exactly 1: "1 load/h", "2.5 loads/h".
fn per_h(v: f64, one: &str, many: &str) -> String {
    let s = short(v);
    if s == "1" {
        format!("1 {one}/h")
    } else {
        format!("{s} {many}/h")
    }
}

/// A conservative average advance of a bold sans-serif letter, in em: DejaVu
/// Sans Bold, the widest of the listed fonts, averages about 0.63 em over
/// lower-case letters and 0.72 em over capitals (from memory of its metrics,
/// rounded up for mixed names with hyphens and digits).
const BOLD_EM: f64 = 0.68;
/// Smallest and largest department label, px.
const LABEL_MIN_PX: f64 = 9.0;
const LABEL_MAX_PX: f64 = 15.0;

/// Where a department's name goes and how big: inside its box when it fits
/// there at [`LABEL_MIN_PX`] or more, else below the box at a readable size.
/// Returns (font size px, placement).
fn label_fit(name: &str, box_px: f64) -> (f64, &'static str) {
    let letters = name.chars().count().max(1) as f64;
    let fitting = box_px / (BOLD_EM * letters);
    if fitting >= LABEL_MIN_PX {
        (fitting.min(LABEL_MAX_PX), "inside")
    } else {
        (11.0, "below")
    }
}

/// A text element with a white halo, so it stays readable over lines.
fn label(x: f64, y: f64, size: f64, content: &str) -> Text {
    Text::new(content)
        .set("x", x)
        .set("y", y)
        .set("font-size", size)
        .set("font-family", super::plot::FONT_FAMILY)
        .set("text-anchor", "middle")
        .set("stroke", "white")
        .set("stroke-width", size * 0.28)
        .set("stroke-linejoin", "round")
        .set("paint-order", "stroke")
}

/// The plant's extent in metres, (x0, x1, y0, y1): every location's box
/// (`half` m each side, or its own size where drawn to scale) and every
/// aisle node. The report's panels use the same, with bigger boxes.
pub fn bounds(plant: &Plant, half: f64) -> (f64, f64, f64, f64) {
    let mut pts: Vec<(f64, f64)> = plant.locations.iter().map(|l| (l.x, l.y)).collect();
    if let Some(n) = plant.aisles.as_ref() {
        pts.extend(n.nodes.iter().map(|n| (n.x, n.y)));
    }
    let (mut x0, mut x1, mut y0, mut y1) =
        (f64::INFINITY, f64::NEG_INFINITY, f64::INFINITY, f64::NEG_INFINITY);
    for &(x, y) in &pts {
        x0 = x0.min(x - half);
        x1 = x1.max(x + half);
        y0 = y0.min(y - half);
        y1 = y1.max(y + half);
    }
    // A location drawn to scale may reach past the default box.
    for loc in &plant.locations {
        if let Some((hw, hd)) = loc.half_extent_m() {
            x0 = x0.min(loc.x - hw);
            x1 = x1.max(loc.x + hw);
            y0 = y0.min(loc.y - hd);
            y1 = y1.max(loc.y + hd);
        }
    }
    (x0, x1, y0, y1)
}

/// The median distance from each location to its nearest neighbour, m.
pub(crate) fn typical_spacing(plant: &Plant) -> f64 {
    let mut nn: Vec<f64> = plant
        .locations
        .iter()
        .enumerate()
        .map(|(i, a)| {
            plant
                .locations
                .iter()
                .enumerate()
                .filter(|&(j, _)| j != i)
                .map(|(_, b)| (a.x - b.x).hypot(a.y - b.y))
                .filter(|&d| d > 0.0)
                .fold(f64::INFINITY, f64::min)
        })
        .filter(|d| d.is_finite())
        .collect();
    if nn.is_empty() {
        return 10.0;
    }
    nn.sort_by(f64::total_cmp);
    nn[nn.len() / 2]
}

/// How flows are drawn.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum FlowStyle {
    /// A curve from department to department, bent to the right of its direction.
    Curve,
    /// Along the aisles the flow uses (the network's shortest path), kept to
    /// the right of its direction so the two directions stay apart.
    Aisle,
}

/// The whole picture: plant, aisles, flows, names and legend. `style` is
/// [`FlowStyle::Aisle`] only when the plant has an aisle network.
pub fn picture(
    plant: &Plant,
    layout: usize,
    pic: &StaticPicture,
    scenario: &Path,
    sim: Option<&SegmentFigures>,
    style: FlowStyle,
) -> Document {
    let lay = &plant.layouts[layout];
    let net = plant.aisles.as_ref();
    let spacing = typical_spacing(plant);
    let half = 0.3 * spacing; // half the side of a location's box, m
    let (x0, x1, y0, y1) = bounds(plant, half);
    let scale = (PLANT_PX / (x1 - x0).max(1.0)).min(620.0 / (y1 - y0).max(1.0));
    let frame = Frame { x0, y1, scale };
    let plant_h = (y1 - y0) * scale;
    let width = MARGIN + (x1 - x0) * scale + MARGIN + LEGEND_PX;
    let height = (TOP + plant_h + 60.0).max(TOP + 560.0);

    let mut doc = Document::new()
        .set("viewBox", (0, 0, width.round(), height.round()))
        .set("width", width.round())
        .set("height", height.round())
        .add(Title::new(format!("{} — layout {}", plant.name, lay.name)))
        .add(Rectangle::new().set("width", "100%").set("height", "100%").set("fill", "white"));
    let ld = pic.layouts[layout].load_distance_m_per_h;
    doc = doc
        .add(
            Text::new(plant.name.clone())
                .set("x", MARGIN)
                .set("y", 30)
                .set("font-size", 20)
                .set("font-weight", "bold")
                .set("font-family", super::plot::FONT_FAMILY)
                .set("fill", rgb(SLATE))
                .set("class", "title"),
        )
        .add(
            Text::new(format!(
                "layout {} · load-distance {:.0} load-m/h · distances: {} · {}",
                lay.name,
                ld,
                plant.distance_rule.describe(),
                scenario.display()
            ))
            .set("x", MARGIN)
            .set("y", 52)
            .set("font-size", 13)
            .set("font-family", super::plot::FONT_FAMILY)
            .set("fill", rgb(SLATE)),
        );

    let nl = plant.locations.len();
    // Location-to-location flows, for the aisle traffic.
    let mut loc_flow = vec![0.0; nl * nl];
    for (i, j, f) in pic.from_to.iter() {
        loc_flow[lay.location_of[i] * nl + lay.location_of[j]] += f;
    }
    // Boxes first, then the aisles over them: an aisle that runs into a bay
    // (a drive-through bay) is seen to do so.
    doc = doc.add(locations(plant, layout, &frame, half * scale, net));
    let mut traffic_max = 0.0;
    if let Some(n) = net {
        let (g, m) = aisles(n, &frame, &loc_flow, sim);
        traffic_max = m;
        doc = doc.add(g);
    }
    let flow_max = pic.from_to.iter().map(|e| e.2).fold(0.0, f64::max);
    doc = doc.add(flows(plant, layout, pic, &frame, flow_max, net.filter(|_| style == FlowStyle::Aisle)));
    doc = doc.add(names(plant, layout, &frame, half * scale));
    let legend_x = MARGIN + (x1 - x0) * scale + MARGIN;
    doc.add(legend(legend_x, TOP, flow_max, net.map(|_| traffic_max), scale, net, sim))
}

/// Aisle segments coloured by static traffic, one-way arrows, capacity and speed-limit marks.
/// Returns the group and the busiest segment's loads per hour.
fn aisles(net: &AisleNetwork, frame: &Frame, loc_flow: &[f64], sim: Option<&SegmentFigures>) -> (Group, f64) {
    let traffic = net.segment_loads_per_h(loc_flow);
    let colour_by: Vec<f64> = match sim {
        Some(s) => (0..net.segments.len()).map(|i| s.value(i)).collect(),
        None => traffic.clone(),
    };
    let max = colour_by.iter().copied().fold(0.0, f64::max);
    let mut g = Group::new().set("id", "aisles");
    for (i, s) in net.segments.iter().enumerate() {
        let (a, b) = (&net.nodes[s.from], &net.nodes[s.to]);
        let (ax, ay) = frame.px(a.x, a.y);
        let (bx, by) = (frame.px(b.x, b.y).0, frame.px(b.x, b.y).1);
        let share = if max > 0.0 { colour_by[i] / max } else { 0.0 };
        let simulated = sim.map_or(String::new(), |s| {
            format!(
                "; simulated {}, {} mover-s/h held up",
                per_h(s.traffic[i], "mover", "movers"),
                short(s.delay[i])
            )
        });
        let mut seg = Group::new()
            .set("class", "aisle")
            .set("data-segment", i)
            .set("data-from", a.id.clone())
            .set("data-to", b.id.clone())
            .set("data-loads-per-h", format!("{:.6}", traffic[i]));
        if let Some(s) = sim {
            seg = seg
                .set("data-sim-traversals-per-h", format!("{:.6}", s.traffic[i]))
                .set("data-congestion-s-per-h", format!("{:.6}", s.delay[i]));
        }
        seg = seg
            .add(Title::new(format!(
                "aisle {} – {}: {} m, {}{}{}{}{simulated}",
                a.id,
                b.id,
                short(s.length_m),
                per_h(traffic[i], "load", "loads"),
                if s.one_way { ", one-way" } else { "" },
                s.capacity.map_or(String::new(), |c| format!(", capacity {c}")),
                s.speed_limit_mps.map_or(String::new(), |v| format!(", limit {:.0} km/h", v * 3.6)),
            )))
            .add(
                Line::new()
                    .set("x1", ax)
                    .set("y1", ay)
                    .set("x2", bx)
                    .set("y2", by)
                    .set("stroke", rgb(traffic_colour(share)))
                    .set("stroke-width", 7)
                    .set("stroke-linecap", "round"),
            );
        if s.speed_limit_mps.is_some() {
            seg = seg.add(
                Line::new()
                    .set("x1", ax)
                    .set("y1", ay)
                    .set("x2", bx)
                    .set("y2", by)
                    .set("stroke", "white")
                    .set("stroke-width", 1.6)
                    .set("stroke-dasharray", "3 3"),
            );
        }
        let (mx, my) = ((ax + bx) / 2.0, (ay + by) / 2.0);
        let len = (bx - ax).hypot(by - ay).max(1e-9);
        let (ux, uy) = ((bx - ax) / len, (by - ay) / len);
        if s.one_way {
            // A chevron pointing from `from` to `to`.
            let k = 6.0;
            let d = Data::new()
                .move_to((mx - ux * k - uy * k, my - uy * k + ux * k))
                .line_to((mx + ux * k * 0.6, my + uy * k * 0.6))
                .line_to((mx - ux * k + uy * k, my - uy * k - ux * k));
            seg = seg.add(
                SvgPath::new()
                    .set("d", d)
                    .set("fill", "none")
                    .set("stroke", rgb(SLATE))
                    .set("stroke-width", 2.2)
                    .set("class", "one-way"),
            );
        }
        if let Some(c) = s.capacity {
            // Beside the aisle, off its middle, so a one-way chevron stays clear.
            let (cx, cy) = (mx + uy * 11.0 + ux * 14.0, my - ux * 11.0 + uy * 14.0);
            seg = seg
                .add(
                    Circle::new()
                        .set("cx", cx)
                        .set("cy", cy)
                        .set("r", 7.5)
                        .set("fill", "white")
                        .set("stroke", rgb(BRICK))
                        .set("stroke-width", 1.5)
                        .set("class", "capacity"),
                )
                .add(
                    label(cx, cy + 3.5, 10.0, &c.to_string()).set("fill", rgb(BRICK)).set("stroke-width", 0),
                );
        }
        g = g.add(seg);
    }
    for n in net.nodes.iter().filter(|n| n.zone) {
        let (x, y) = frame.px(n.x, n.y);
        g = g.add(
            Circle::new()
                .set("cx", x)
                .set("cy", y)
                .set("r", 6)
                .set("fill", "white")
                .set("stroke", rgb(SLATE))
                .set("stroke-width", 2)
                .set("class", "zone")
                .set("data-node", n.id.clone()),
        );
    }
    for n in &net.nodes {
        let (x, y) = frame.px(n.x, n.y);
        g = g.add(
            Circle::new()
                .set("cx", x)
                .set("cy", y)
                .set("r", 2.2)
                .set("fill", rgb(SLATE))
                .set("class", "node"),
        );
    }
    (g, max)
}

/// Location boxes: departments, docks, and empty locations.
fn locations(plant: &Plant, layout: usize, frame: &Frame, half_px: f64, net: Option<&AisleNetwork>) -> Group {
    let lay = &plant.layouts[layout];
    let mut holder = vec![None; plant.locations.len()];
    for (d, &l) in lay.location_of.iter().enumerate() {
        holder[l] = Some(d);
    }
    let mut g = Group::new().set("id", "locations");
    for (l, loc) in plant.locations.iter().enumerate() {
        let (x, y) = frame.px(loc.x, loc.y);
        let role = holder[l].map(|d| plant.departments[d].role);
        // A location with an area or size is drawn to scale; otherwise docks
        // are drawn narrower: a door in the wall, not a bay.
        let (hw, hh) = match (loc.half_extent_m(), role) {
            (Some((w, d)), _) => (w * frame.scale, d * frame.scale),
            (None, Some(DepartmentRole::Receiving | DepartmentRole::Shipping)) => {
                (half_px * 0.45, half_px * 0.9)
            }
            _ => (half_px, half_px),
        };
        if let (Some(n), Some(_)) = (net, role) {
            // The stub from the location to its pick-up/drop-off node.
            let node = &n.nodes[n.location_node[l]];
            let (nx, ny) = frame.px(node.x, node.y);
            if (nx - x).hypot(ny - y) > 0.5 {
                g = g.add(
                    Line::new()
                        .set("x1", x)
                        .set("y1", y)
                        .set("x2", nx)
                        .set("y2", ny)
                        .set("stroke", rgb(SLATE))
                        .set("stroke-width", 1.2)
                        .set("stroke-dasharray", "2 3"),
                );
            }
        }
        let (fill, stroke, dash) = match role {
            None => ("none".to_string(), rgb(mix(SLATE, (255, 255, 255), 0.55)), "4 3"),
            Some(DepartmentRole::Work) => (rgb(mix(TEAL, (255, 255, 255), 0.9)), rgb(SLATE), "none"),
            Some(_) => (rgb(mix(AMBER, (255, 255, 255), 0.75)), rgb(SLATE), "none"),
        };
        // A department that needs more floor than its location offers: a brick outline and a tooltip.
        let misfit = holder[l].and_then(|d| {
            let need = plant.departments[d].footprint?;
            let have = loc.footprint?;
            (!have.holds(&need)).then(|| {
                format!(
                    "{} needs {} but {} offers {}",
                    plant.departments[d].id,
                    layflow_models::areas::describe(&need),
                    loc.id,
                    layflow_models::areas::describe(&have)
                )
            })
        });
        let (stroke, width) = if misfit.is_some() { (rgb(BRICK), 3.0) } else { (stroke, 1.4) };
        let mut rect = Rectangle::new();
        if let Some(why) = misfit {
            rect = rect.set("data-misfit", "true").add(Title::new(why));
        }
        g = g.add(
            rect.set("x", x - hw)
                .set("y", y - hh)
                .set("width", 2.0 * hw)
                .set("height", 2.0 * hh)
                .set("rx", 3)
                .set("fill", fill)
                .set("stroke", stroke)
                .set("stroke-width", width)
                .set("stroke-dasharray", dash)
                .set("class", "location")
                .set("data-id", loc.id.clone()),
        );
    }
    g
}

/// Flow curves, widest first so the thin ones stay visible on top.
/// The flow from location `a` to `b` along the aisles, in pixels: the
/// location, its node, the shortest path's nodes, the far node and the far
/// location; each leg shifted `shift` px to the right of its direction.
fn aisle_route(
    net: &AisleNetwork,
    plant: &Plant,
    frame: &Frame,
    a: usize,
    b: usize,
    shift: f64,
) -> Vec<(f64, f64)> {
    let mut pts = vec![frame.px(plant.locations[a].x, plant.locations[a].y)];
    for n in net.path_nodes(a, b) {
        pts.push(frame.px(net.nodes[n].x, net.nodes[n].y));
    }
    pts.push(frame.px(plant.locations[b].x, plant.locations[b].y));
    pts.dedup_by(|p, q| (p.0 - q.0).hypot(p.1 - q.1) < 1e-6);
    // Each point moves by the mean of the right-hand normals of its legs.
    let normal = |p: (f64, f64), q: (f64, f64)| {
        let len = (q.0 - p.0).hypot(q.1 - p.1).max(1e-9);
        (-(q.1 - p.1) / len, (q.0 - p.0) / len)
    };
    let n = pts.len();
    (0..n)
        .map(|i| {
            let before = (i > 0).then(|| normal(pts[i - 1], pts[i]));
            let after = (i + 1 < n).then(|| normal(pts[i], pts[i + 1]));
            let (nx, ny) = match (before, after) {
                (Some(u), Some(v)) => ((u.0 + v.0) / 2.0, (u.1 + v.1) / 2.0),
                (Some(u), None) | (None, Some(u)) => u,
                (None, None) => (0.0, 0.0),
            };
            (pts[i].0 + nx * shift, pts[i].1 + ny * shift)
        })
        .collect()
}

fn flows(
    plant: &Plant,
    layout: usize,
    pic: &StaticPicture,
    frame: &Frame,
    max: f64,
    along: Option<&AisleNetwork>,
) -> Group {
    let lay = &plant.layouts[layout];
    let mut list: Vec<(usize, usize, f64)> =
        pic.from_to.iter().filter(|&(i, j, f)| i != j && f > 0.0).collect();
    list.sort_by(|a, b| b.2.total_cmp(&a.2).then((a.0, a.1).cmp(&(b.0, b.1))));
    let mut g = Group::new().set("id", "flows");
    for (i, j, f) in list {
        let a = &plant.locations[lay.location_of[i]];
        let b = &plant.locations[lay.location_of[j]];
        let (ax, ay) = frame.px(a.x, a.y);
        let (bx, by) = frame.px(b.x, b.y);
        let w = flow_width(f, max);
        let len = (bx - ax).hypot(by - ay).max(1e-9);
        // Bend to the right of the direction of travel (screen coordinates).
        let (mut nx, mut ny) = (-(by - ay) / len, (bx - ax) / len);
        let bow = 0.16 * len + 6.0;
        let (cx, cy) = ((ax + bx) / 2.0 + nx * bow, (ay + by) / 2.0 + ny * bow);
        let mut d = Data::new().move_to((ax, ay)).quadratic_curve_to((cx, cy, bx, by));
        // The curve's midpoint and direction there (a quadratic Bézier at t = ½).
        let (mut mx, mut my) = (0.25 * ax + 0.5 * cx + 0.25 * bx, 0.25 * ay + 0.5 * cy + 0.25 * by);
        let (mut tx, mut ty) = ((bx - ax) / len, (by - ay) / len);
        if let Some(net) = along {
            // Along the aisles: a polyline, its arrow on the middle of its longest leg.
            let route = aisle_route(net, plant, frame, lay.location_of[i], lay.location_of[j], w / 2.0 + 1.5);
            d = Data::new().move_to(route[0]);
            for &p in &route[1..] {
                d = d.line_to(p);
            }
            let longest = route
                .windows(2)
                .max_by(|p, q| {
                    let l = |w: &[(f64, f64)]| (w[1].0 - w[0].0).hypot(w[1].1 - w[0].1);
                    l(p).total_cmp(&l(q))
                })
                .map_or([(ax, ay), (bx, by)], |w| [w[0], w[1]]);
            let [p, q] = longest;
            let l = (q.0 - p.0).hypot(q.1 - p.1).max(1e-9);
            (mx, my) = ((p.0 + q.0) / 2.0, (p.1 + q.1) / 2.0);
            (tx, ty) = ((q.0 - p.0) / l, (q.1 - p.1) / l);
            (nx, ny) = (-ty, tx);
        }
        let k = 4.0 + 0.7 * w;
        let arrow = Data::new()
            .move_to((mx + tx * k, my + ty * k))
            .line_to((mx - tx * k * 0.7 + nx * k * 0.8, my - ty * k * 0.7 + ny * k * 0.8))
            .line_to((mx - tx * k * 0.7 - nx * k * 0.8, my - ty * k * 0.7 - ny * k * 0.8))
            .close();
        let (from, to) = (&plant.departments[i].id, &plant.departments[j].id);
        g = g.add(
            Group::new()
                .set("class", "flow")
                .set("data-from", from.clone())
                .set("data-to", to.clone())
                .set("data-loads-per-h", format!("{f:.6}"))
                .set("data-route", if along.is_some() { "aisle" } else { "curve" })
                .add(Title::new(format!("{from} → {to}: {}", per_h(f, "load", "loads"))))
                .add(
                    SvgPath::new()
                        .set("d", d)
                        .set("fill", "none")
                        .set("stroke", rgb(TEAL))
                        .set("stroke-opacity", 0.72)
                        .set("stroke-width", format!("{w:.3}"))
                        .set("stroke-linecap", "round"),
                )
                .add(SvgPath::new().set("d", arrow).set("fill", rgb(mix(TEAL, SLATE, 0.5)))),
        );
    }
    g
}

/// Line width for a flow of `f` loads per hour when the largest is `max`.
fn flow_width(f: f64, max: f64) -> f64 {
    if max > 0.0 {
        (FLOW_MAX_PX * f / max).max(FLOW_MIN_PX)
    } else {
        FLOW_MIN_PX
    }
}

/// Department names (and location ids) on top of everything, with a halo.
fn names(plant: &Plant, layout: usize, frame: &Frame, half_px: f64) -> Group {
    let lay = &plant.layouts[layout];
    let mut holder = vec![None; plant.locations.len()];
    for (d, &l) in lay.location_of.iter().enumerate() {
        holder[l] = Some(d);
    }
    let mut g = Group::new().set("id", "labels");
    for (l, loc) in plant.locations.iter().enumerate() {
        let (x, y) = frame.px(loc.x, loc.y);
        // The label fits the box the location is drawn as (to scale, or the default square).
        let half_px = loc.half_extent_m().map_or(half_px, |(w, _)| w * frame.scale);
        match holder[l] {
            Some(d) => {
                let name = &plant.departments[d].id;
                // The box is 2 × half_px wide; keep a small margin on each side.
                let box_px = 2.0 * half_px * 0.92;
                let (size, placement) = if plant.departments[d].role == DepartmentRole::Work {
                    label_fit(name, box_px)
                } else {
                    // A dock's box is narrow: its name goes above it.
                    let letters = name.chars().count().max(1) as f64;
                    ((2.1 * half_px / (0.62 * letters)).clamp(LABEL_MIN_PX, LABEL_MAX_PX), "above")
                };
                let y = match placement {
                    "inside" => y,
                    "below" => y + half_px + size + 4.0,
                    _ => y - half_px * 0.9 - 20.0,
                };
                g = g
                    .add(
                        label(x, y + size * 0.1, size, name)
                            .set("font-weight", "bold")
                            .set("fill", rgb(SLATE))
                            .set("class", "department-label")
                            .set("data-department", name.clone())
                            .set("data-placement", placement)
                            .set("data-box-px", format!("{box_px:.1}")),
                    )
                    .add(
                        label(x, y + size * 0.1 + 13.0, 10.0, &loc.id)
                            .set("fill", rgb(mix(SLATE, (255, 255, 255), 0.3))),
                    );
            }
            None => {
                g = g.add(
                    label(x, y + 4.0, 10.0, &loc.id).set("fill", rgb(mix(SLATE, (255, 255, 255), 0.35))),
                );
            }
        }
    }
    g
}

/// A round number near `x` (1, 2 or 5 × a power of ten), for legend samples and the scale bar.
fn nice(x: f64) -> f64 {
    if !(x > 0.0) {
        return 1.0;
    }
    let p = 10f64.powf(x.log10().floor());
    let m = x / p;
    let n = if m >= 5.0 {
        5.0
    } else if m >= 2.0 {
        2.0
    } else {
        1.0
    };
    n * p
}

fn legend_text(x: f64, y: f64, size: f64, content: &str) -> Text {
    Text::new(content)
        .set("x", x)
        .set("y", y)
        .set("font-size", size)
        .set("font-family", super::plot::FONT_FAMILY)
        .set("fill", rgb(SLATE))
}

/// The legend: flow widths, aisle traffic, symbols, and a scale bar.
fn legend(
    x: f64,
    top: f64,
    flow_max: f64,
    traffic_max: Option<f64>,
    scale: f64,
    net: Option<&AisleNetwork>,
    sim: Option<&SegmentFigures>,
) -> Group {
    let mut g = Group::new().set("id", "legend");
    let mut y = top + 4.0;
    g = g.add(legend_text(x, y, 14.0, "Flows (from-to chart)").set("font-weight", "bold"));
    y += 18.0;
    g = g.add(legend_text(x, y, 11.0, "width ∝ loads per hour; a flow bends"));
    y += 14.0;
    g = g.add(legend_text(x, y, 11.0, "to the right of its direction (arrow)"));
    y += 20.0;
    let top_sample = nice(flow_max);
    for v in [top_sample, top_sample / 2.0, top_sample / 5.0] {
        let w = flow_width(v, flow_max);
        g = g
            .add(
                Line::new()
                    .set("x1", x)
                    .set("y1", y)
                    .set("x2", x + 60.0)
                    .set("y2", y)
                    .set("stroke", rgb(TEAL))
                    .set("stroke-opacity", 0.72)
                    .set("stroke-width", format!("{w:.3}"))
                    .set("stroke-linecap", "round")
                    .set("class", "legend-flow"),
            )
            .add(legend_text(x + 74.0, y + 4.0, 12.0, &per_h(v, "load", "loads")));
        y += 24.0;
    }
    if let (Some(tmax), Some(net)) = (traffic_max, net) {
        y += 10.0;
        let (title, l1, l2) = match sim {
            Some(s) if s.by_delay => {
                ("Aisle congestion, mover-s/h", "simulated: waiting to enter each", "segment (--results)")
            }
            Some(_) => ("Aisle traffic, movers/h", "simulated: movers entering each", "segment (--results)"),
            None => (
                "Aisle traffic, loads/h",
                "static: the from-to chart over the",
                "shortest paths, both directions",
            ),
        };
        g = g.add(legend_text(x, y, 14.0, title).set("font-weight", "bold"));
        y += 16.0;
        g = g.add(legend_text(x, y, 11.0, l1));
        y += 14.0;
        g = g.add(legend_text(x, y, 11.0, l2));
        y += 16.0;
        let steps = 24;
        for k in 0..steps {
            let t = k as f64 / (steps - 1) as f64;
            g = g.add(
                Rectangle::new()
                    .set("x", x + 200.0 * k as f64 / steps as f64)
                    .set("y", y)
                    .set("width", 200.0 / steps as f64 + 0.5)
                    .set("height", 10)
                    .set("fill", rgb(traffic_colour(if k == 0 { 0.0 } else { t }))),
            );
        }
        y += 24.0;
        g = g
            .add(legend_text(x, y, 11.0, "0"))
            .add(legend_text(x + 200.0, y, 11.0, &short(tmax)).set("text-anchor", "end"));
        y += 22.0;
        let any = |f: &dyn Fn(&layflow_models::network::Segment) -> bool| net.segments.iter().any(f);
        let sample = |g: Group, y: f64, extra: Group, text: &str| {
            g.add(
                Line::new()
                    .set("x1", x)
                    .set("y1", y)
                    .set("x2", x + 40.0)
                    .set("y2", y)
                    .set("stroke", rgb(mix(AISLE_IDLE, AMBER, 0.35)))
                    .set("stroke-width", 7)
                    .set("stroke-linecap", "round"),
            )
            .add(extra)
            .add(legend_text(x + 54.0, y + 4.0, 11.0, text))
        };
        if any(&|s| s.one_way) {
            let d =
                Data::new().move_to((x + 14.0, y - 6.0)).line_to((x + 23.6, y)).line_to((x + 14.0, y + 6.0));
            let chevron = Group::new().add(
                SvgPath::new()
                    .set("d", d)
                    .set("fill", "none")
                    .set("stroke", rgb(SLATE))
                    .set("stroke-width", 2.2),
            );
            g = sample(g, y, chevron, "one-way");
            y += 22.0;
        }
        if any(&|s| s.capacity.is_some()) {
            let mark = Group::new()
                .add(
                    Circle::new()
                        .set("cx", x + 20.0)
                        .set("cy", y)
                        .set("r", 7.5)
                        .set("fill", "white")
                        .set("stroke", rgb(BRICK))
                        .set("stroke-width", 1.5),
                )
                .add(label(x + 20.0, y + 3.5, 10.0, "1").set("fill", rgb(BRICK)).set("stroke-width", 0));
            g = sample(g, y, mark, "capacity: movers at once");
            y += 14.0;
            g = g.add(legend_text(x + 54.0, y + 4.0, 10.0, "(both directions together)"));
            y += 22.0;
        }
        if any(&|s| s.speed_limit_mps.is_some()) {
            let dash = Group::new().add(
                Line::new()
                    .set("x1", x)
                    .set("y1", y)
                    .set("x2", x + 40.0)
                    .set("y2", y)
                    .set("stroke", "white")
                    .set("stroke-width", 1.6)
                    .set("stroke-dasharray", "3 3"),
            );
            g = sample(g, y, dash, "speed limit");
            y += 22.0;
        }
        if net.nodes.iter().any(|n| n.zone) {
            let ring = Circle::new()
                .set("cx", x + 20.0)
                .set("cy", y)
                .set("r", 6)
                .set("fill", "white")
                .set("stroke", rgb(SLATE))
                .set("stroke-width", 2);
            g = g.add(ring).add(legend_text(x + 54.0, y + 4.0, 11.0, "zone: one mover in the intersection"));
            y += 22.0;
        }
    }
    y += 10.0;
    g = g.add(legend_text(x, y, 14.0, "Locations").set("font-weight", "bold"));
    y += 14.0;
    for (fill, stroke, dash, w, text) in [
        (rgb(mix(TEAL, (255, 255, 255), 0.9)), rgb(SLATE), "none", 22.0, "department"),
        (rgb(mix(AMBER, (255, 255, 255), 0.75)), rgb(SLATE), "none", 10.0, "dock"),
        ("none".to_string(), rgb(mix(SLATE, (255, 255, 255), 0.55)), "4 3", 22.0, "empty location"),
    ] {
        g = g
            .add(
                Rectangle::new()
                    .set("x", x + 11.0 - w / 2.0)
                    .set("y", y)
                    .set("width", w)
                    .set("height", 18)
                    .set("rx", 3)
                    .set("fill", fill)
                    .set("stroke", stroke)
                    .set("stroke-width", 1.4)
                    .set("stroke-dasharray", dash),
            )
            .add(legend_text(x + 34.0, y + 13.0, 12.0, text));
        y += 24.0;
    }
    if net.is_some() {
        g = g
            .add(
                Line::new()
                    .set("x1", x + 2.0)
                    .set("y1", y + 6.0)
                    .set("x2", x + 22.0)
                    .set("y2", y + 6.0)
                    .set("stroke", rgb(SLATE))
                    .set("stroke-width", 1.2)
                    .set("stroke-dasharray", "2 3"),
            )
            .add(legend_text(x + 34.0, y + 10.0, 12.0, "to its pick-up/drop-off node"));
        y += 24.0;
    }
    // Scale bar: a round number of metres about 120 px long.
    y += 12.0;
    let metres = nice(120.0 / scale);
    let len = metres * scale;
    g = g
        .add(
            SvgPath::new()
                .set(
                    "d",
                    Data::new()
                        .move_to((x, y - 5.0))
                        .line_to((x, y))
                        .line_to((x + len, y))
                        .line_to((x + len, y - 5.0)),
                )
                .set("fill", "none")
                .set("stroke", rgb(SLATE))
                .set("stroke-width", 1.5)
                .set("class", "scale-bar"),
        )
        .add(legend_text(x + len + 8.0, y + 4.0, 12.0, &format!("{metres:.0} m")));
    g
}
