//! `layflow draw`: one layout of the plant as an SVG picture: locations, departments, docks, aisles and flows.
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

use std::path::{Path, PathBuf};

use clap::Args;
use layflow_models::analysis::StaticPicture;
use layflow_models::network::AisleNetwork;
use layflow_models::plant::{DepartmentRole, Plant};
use svg::node::element::path::Data;
use svg::node::element::{Circle, Group, Line, Path as SvgPath, Rectangle, Text, Title};
use svg::Document;

use crate::{load, Failure};

/// Arguments of `layflow draw`.
#[derive(Args, Debug)]
pub struct DrawArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// The layout to draw (default: the first).
    #[arg(long, value_name = "NAME")]
    pub layout: Option<String>,
    /// A results folder (`compare --out`, or an experiment's folder): the
    /// aisles are coloured by the simulated congestion delay per segment (or
    /// by simulated traffic where nobody waited) from its summary.csv.
    #[arg(long, value_name = "DIR")]
    pub results: Option<PathBuf>,
    /// Scale every product's demand by this factor (overrides the scenario's demand_factor).
    #[arg(long, value_name = "FACTOR")]
    pub demand: Option<f64>,
    /// The SVG file to write.
    #[arg(short = 'o', long = "out", value_name = "FILE.svg")]
    pub out: PathBuf,
}

// The project's colours (the same as the charts of `fleet --plot`).
const TEAL: (u8, u8, u8) = (27, 127, 121);
const AMBER: (u8, u8, u8) = (217, 140, 0);
const SLATE: (u8, u8, u8) = (61, 74, 92);
const BRICK: (u8, u8, u8) = (179, 64, 58);
/// An aisle that carries nothing: a pale slate.
const AISLE_IDLE: (u8, u8, u8) = (214, 219, 226);

/// Widest flow line, px: the largest flow gets it, the others in proportion.
const FLOW_MAX_PX: f64 = 16.0;
/// Thinnest flow line, px, so a small flow is still seen.
const FLOW_MIN_PX: f64 = 1.0;
/// Width of the plant drawing, px; the legend sits to its right.
const PLANT_PX: f64 = 1000.0;
const MARGIN: f64 = 40.0;
const TOP: f64 = 78.0;
const LEGEND_PX: f64 = 300.0;

/// Draw `args.layout` of `args.scenario` to `args.out`.
pub fn draw(args: &DrawArgs) -> Result<(), Failure> {
    let plant = load(&args.scenario)?;
    let layout = match &args.layout {
        None => 0,
        Some(name) => plant.layout_index(name).ok_or_else(|| {
            let names: Vec<&str> = plant.layouts.iter().map(|l| l.name.as_str()).collect();
            Failure::input(format!("--layout {name}: no such layout; the layouts are: {}", names.join(", ")))
        })?,
    };
    let factor = crate::check::demand_factor(&plant, args.demand)?;
    let sim = match &args.results {
        Some(dir) => {
            if !dir.is_dir() {
                return Err(Failure::input(format!("--results {}: not a directory", dir.display())));
            }
            let sim = simulated(dir, &plant, layout)?;
            if sim.is_none() {
                eprintln!(
                    "note: --results {}: no per-segment results there. They come from the segment-by-segment \
                     simulation, which runs when the scenario's aisles have a capacity, a speed limit or a zone; \
                     the aisles are coloured by static traffic (the from-to chart over the shortest paths) instead.",
                    dir.display()
                );
            }
            sim
        }
        None => None,
    };
    let pic = StaticPicture::new(&plant, factor);
    let doc = picture(&plant, layout, &pic, &args.scenario, sim.as_ref());
    let dir = match args.out.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let name = args
        .out
        .file_name()
        .ok_or_else(|| Failure::input(format!("-o {}: not a file name", args.out.display())))?
        .to_string_lossy()
        .into_owned();
    if !dir.is_dir() {
        return Err(Failure::input(format!(
            "-o {}: the folder {} does not exist",
            args.out.display(),
            dir.display()
        )));
    }
    crate::output::write_atomic(&dir, &name, doc.to_string().as_bytes())?;
    eprintln!("wrote {}", args.out.display());
    Ok(())
}

fn rgb(c: (u8, u8, u8)) -> String {
    format!("rgb({},{},{})", c.0, c.1, c.2)
}

/// Linear blend of two colours, `t` in [0, 1].
fn mix(a: (u8, u8, u8), b: (u8, u8, u8), t: f64) -> (u8, u8, u8) {
    let m = |x: u8, y: u8| (f64::from(x) + (f64::from(y) - f64::from(x)) * t.clamp(0.0, 1.0)).round() as u8;
    (m(a.0, b.0), m(a.1, b.1), m(a.2, b.2))
}

/// The traffic ramp: idle pale slate, through amber, to brick at the busiest aisle.
fn traffic_colour(share: f64) -> (u8, u8, u8) {
    if share <= 0.0 {
        AISLE_IDLE
    } else if share < 0.5 {
        mix(mix(AISLE_IDLE, AMBER, 0.35), AMBER, share / 0.5)
    } else {
        mix(AMBER, BRICK, (share - 0.5) / 0.5)
    }
}

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

/// A text element with a white halo, so it stays readable over lines.
fn label(x: f64, y: f64, size: f64, content: &str) -> Text {
    Text::new(content)
        .set("x", x)
        .set("y", y)
        .set("font-size", size)
        .set("font-family", "DejaVu Sans, Verdana, sans-serif")
        .set("text-anchor", "middle")
        .set("stroke", "white")
        .set("stroke-width", size * 0.28)
        .set("stroke-linejoin", "round")
        .set("paint-order", "stroke")
}

/// The median distance from each location to its nearest neighbour, m.
fn typical_spacing(plant: &Plant) -> f64 {
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

/// The whole picture.
fn picture(
    plant: &Plant,
    layout: usize,
    pic: &StaticPicture,
    scenario: &Path,
    sim: Option<&Simulated>,
) -> Document {
    let lay = &plant.layouts[layout];
    let net = plant.aisles.as_ref();
    // Bounds over the locations and the aisle nodes.
    let mut pts: Vec<(f64, f64)> = plant.locations.iter().map(|l| (l.x, l.y)).collect();
    if let Some(n) = net {
        pts.extend(n.nodes.iter().map(|n| (n.x, n.y)));
    }
    let spacing = typical_spacing(plant);
    let half = 0.3 * spacing; // half the side of a location's box, m
    let (mut x0, mut x1, mut y0, mut y1) =
        (f64::INFINITY, f64::NEG_INFINITY, f64::INFINITY, f64::NEG_INFINITY);
    for &(x, y) in &pts {
        x0 = x0.min(x - half);
        x1 = x1.max(x + half);
        y0 = y0.min(y - half);
        y1 = y1.max(y + half);
    }
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
                .set("font-family", "DejaVu Sans, Verdana, sans-serif")
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
            .set("font-family", "DejaVu Sans, Verdana, sans-serif")
            .set("fill", rgb(SLATE)),
        );

    let nl = plant.locations.len();
    let nd = plant.departments.len();
    // Location-to-location flows, for the aisle traffic.
    let mut loc_flow = vec![0.0; nl * nl];
    for i in 0..nd {
        for j in 0..nd {
            loc_flow[lay.location_of[i] * nl + lay.location_of[j]] += pic.from_to[i * nd + j];
        }
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
    let flow_max = pic.from_to.iter().copied().fold(0.0, f64::max);
    doc = doc.add(flows(plant, layout, pic, &frame, flow_max));
    doc = doc.add(names(plant, layout, &frame, half * scale));
    let legend_x = MARGIN + (x1 - x0) * scale + MARGIN;
    doc.add(legend(legend_x, TOP, flow_max, net.map(|_| traffic_max), scale, net, sim))
}

/// Per-segment figures of a simulation, read from a results folder.
struct Simulated {
    /// Movers entering each segment per hour.
    traffic: Vec<f64>,
    /// Mover-seconds of congestion delay per hour at each segment.
    delay: Vec<f64>,
    /// Colour by delay (someone waited somewhere), else by traffic.
    by_delay: bool,
}

impl Simulated {
    /// The value each segment is coloured by.
    fn value(&self, s: usize) -> f64 {
        if self.by_delay {
            self.delay[s]
        } else {
            self.traffic[s]
        }
    }
}

/// Reads `summary.csv` of a `compare --out` or experiment folder: the rows of
/// scope `segment` for the drawn layout (where the file has a `layout`
/// column), at the first demand factor or design point listed. `None` when
/// the folder holds no per-segment results.
fn simulated(dir: &Path, plant: &Plant, layout: usize) -> Result<Option<Simulated>, Failure> {
    let Some(net) = plant.aisles.as_ref() else {
        return Ok(None);
    };
    let path = dir.join("summary.csv");
    if !path.is_file() {
        return Ok(None);
    }
    let bad = |e: String| Failure::input(format!("--results {}: {e}", path.display()));
    let mut r = csv::Reader::from_path(&path).map_err(|e| bad(e.to_string()))?;
    let head = r.headers().map_err(|e| bad(e.to_string()))?.clone();
    let col = |name: &str| head.iter().position(|h| h == name);
    let (Some(scope), Some(subject), Some(metric), Some(mean)) =
        (col("scope"), col("subject"), col("metric"), col("mean"))
    else {
        return Err(
            bad("not a results summary: it needs the columns scope, subject, metric and mean".into()),
        );
    };
    let layout_col = col("layout");
    // The first column tells demand factors (compare) or design points (experiment) apart.
    let group_col = col("demand_factor").or(col("point"));
    let mut group: Option<String> = None;
    let n = net.segments.len();
    let (mut traffic, mut delay) = (vec![f64::NAN; n], vec![f64::NAN; n]);
    for (i, row) in r.records().enumerate() {
        let row = row.map_err(|e| bad(format!("row {}: {e}", i + 2)))?;
        if row.get(scope) != Some("segment") {
            continue;
        }
        if layout_col.is_some_and(|c| row.get(c) != Some(plant.layouts[layout].name.as_str())) {
            continue;
        }
        if let Some(c) = group_col {
            let g = row.get(c).unwrap_or("").to_string();
            match &group {
                None => group = Some(g),
                Some(first) if *first != g => continue,
                Some(_) => {}
            }
        }
        let Some(k) =
            row.get(subject).and_then(|s| s.strip_prefix("segment-")).and_then(|s| s.parse::<usize>().ok())
        else {
            continue;
        };
        if k >= n {
            return Err(bad(format!(
                "row {}: {} does not exist in this scenario's network of {n} segments; was the folder made from another scenario?",
                i + 2,
                row.get(subject).unwrap_or("")
            )));
        }
        let v: f64 = row.get(mean).and_then(|m| m.parse().ok()).unwrap_or(f64::NAN);
        match row.get(metric) {
            Some("traversals_per_h") => traffic[k] = v,
            Some("congestion_delay_s_per_h") => delay[k] = v,
            _ => {}
        }
    }
    if traffic.iter().all(|x| x.is_nan()) {
        return Ok(None);
    }
    let clean = |v: Vec<f64>| v.into_iter().map(|x| if x.is_finite() { x } else { 0.0 }).collect::<Vec<_>>();
    let (traffic, delay) = (clean(traffic), clean(delay));
    let by_delay = delay.iter().any(|&d| d > 0.0);
    Ok(Some(Simulated { traffic, delay, by_delay }))
}

/// Aisle segments coloured by static traffic, one-way arrows, capacity and speed-limit marks.
/// Returns the group and the busiest segment's loads per hour.
fn aisles(net: &AisleNetwork, frame: &Frame, loc_flow: &[f64], sim: Option<&Simulated>) -> (Group, f64) {
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
            format!("; simulated {} movers/h, {} mover-s/h held up", short(s.traffic[i]), short(s.delay[i]))
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
                "aisle {} – {}: {} m, {} loads/h{}{}{}{simulated}",
                a.id,
                b.id,
                short(s.length_m),
                short(traffic[i]),
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
        // Docks are drawn narrower: a door in the wall, not a bay.
        let (hw, hh) = match role {
            Some(DepartmentRole::Receiving | DepartmentRole::Shipping) => (half_px * 0.45, half_px * 0.9),
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
        g = g.add(
            Rectangle::new()
                .set("x", x - hw)
                .set("y", y - hh)
                .set("width", 2.0 * hw)
                .set("height", 2.0 * hh)
                .set("rx", 3)
                .set("fill", fill)
                .set("stroke", stroke)
                .set("stroke-width", 1.4)
                .set("stroke-dasharray", dash)
                .set("class", "location")
                .set("data-id", loc.id.clone()),
        );
    }
    g
}

/// Flow curves, widest first so the thin ones stay visible on top.
fn flows(plant: &Plant, layout: usize, pic: &StaticPicture, frame: &Frame, max: f64) -> Group {
    let lay = &plant.layouts[layout];
    let nd = plant.departments.len();
    let mut list: Vec<(usize, usize, f64)> = Vec::new();
    for i in 0..nd {
        for j in 0..nd {
            let f = pic.from_to[i * nd + j];
            if i != j && f > 0.0 {
                list.push((i, j, f));
            }
        }
    }
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
        let (nx, ny) = (-(by - ay) / len, (bx - ax) / len);
        let bow = 0.16 * len + 6.0;
        let (cx, cy) = ((ax + bx) / 2.0 + nx * bow, (ay + by) / 2.0 + ny * bow);
        let d = Data::new().move_to((ax, ay)).quadratic_curve_to((cx, cy, bx, by));
        // The curve's midpoint and direction there (a quadratic Bézier at t = ½).
        let (mx, my) = (0.25 * ax + 0.5 * cx + 0.25 * bx, 0.25 * ay + 0.5 * cy + 0.25 * by);
        let (tx, ty) = ((bx - ax) / len, (by - ay) / len);
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
                .add(Title::new(format!("{from} → {to}: {} loads/h", short(f))))
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
        match holder[l] {
            Some(d) => {
                let name = &plant.departments[d].id;
                // Fit the name in about the box's width (DejaVu Sans is about 0.6 em a letter).
                let size = (2.1 * half_px / (0.62 * name.chars().count() as f64)).clamp(9.0, 15.0);
                // A dock's box is narrow: its name goes above it.
                let y = if plant.departments[d].role == DepartmentRole::Work {
                    y
                } else {
                    y - half_px * 0.9 - 20.0
                };
                g = g
                    .add(
                        label(x, y + size * 0.1, size, name)
                            .set("font-weight", "bold")
                            .set("fill", rgb(SLATE))
                            .set("class", "department-label")
                            .set("data-department", name.clone()),
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
        .set("font-family", "DejaVu Sans, Verdana, sans-serif")
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
    sim: Option<&Simulated>,
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
            .add(legend_text(x + 74.0, y + 4.0, 12.0, &format!("{} loads/h", short(v))));
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
