//! `run --timeline`: one traced replication over (at most a day of) its trace window as an SVG, drawn from the trace files alone.
//!
//! A lane per machine and per mover, coloured by state; below them the
//! plant's WIP and the queues of the busiest departments as step lines over
//! the same clock axis (day N hh:mm, the run starting at 00:00 of day 1).
//! Hand-written SVG: rectangles and polylines are all it needs.

use std::collections::HashMap;
use std::fmt::Write as _;
use std::path::Path;

use super::palette::{mix, rgb, AISLE_IDLE, AMBER, BRICK, GRID, SLATE, TEAL};

const WHITE: (u8, u8, u8) = (255, 255, 255);
/// Page width, px; about A4 landscape with the height below.
const WIDTH: f64 = 1400.0;
const LEFT: f64 = 150.0;
const RIGHT: f64 = 40.0;

/// A step line: (time, level from then on), the first at the window's start.
type Series = Vec<(f64, f64)>;

/// A state's fill; `None`: not drawn (idle shows the lane's background).
fn fill(state: &str) -> Option<(u8, u8, u8)> {
    Some(match state {
        "busy" => TEAL,
        "loaded" => SLATE,
        "empty" => mix(TEAL, WHITE, 0.6),
        "handling" | "setup" => AMBER,
        "blocked" => mix(BRICK, WHITE, 0.35),
        "congestion" => mix(AMBER, BRICK, 0.5),
        "down" => BRICK,
        "charging" => mix(SLATE, AMBER, 0.5),
        "off_duty" | "off_shift" => mix(SLATE, WHITE, 0.7),
        _ => return None,
    })
}

/// One lane: its label and its state changes (time, state) in file order.
#[derive(Default)]
struct Lane {
    label: String,
    changes: Vec<(f64, String)>,
}

/// Reads a trace file's rows of `replication` as maps of column → value.
fn rows(folder: &Path, file: &str, replication: u64) -> Result<Vec<HashMap<String, String>>, String> {
    let path = folder.join(file);
    let mut r = csv::Reader::from_path(&path)
        .map_err(|e| format!("--timeline: cannot read {}: {e}", path.display()))?;
    let headers = r.headers().map_err(|e| format!("--timeline: {}: {e}", path.display()))?.clone();
    let rep = replication.to_string();
    let mut out = Vec::new();
    for rec in r.records() {
        let rec = rec.map_err(|e| format!("--timeline: {}: {e}", path.display()))?;
        if rec.get(0) != Some(rep.as_str()) {
            continue;
        }
        out.push(headers.iter().zip(rec.iter()).map(|(h, v)| (h.to_string(), v.to_string())).collect());
    }
    Ok(out)
}

fn time(row: &HashMap<String, String>, col: &str) -> Option<f64> {
    row.get(col).and_then(|v| v.parse().ok())
}

/// Lanes of a states file, in order of first appearance (the trace writes every lane at the window's start).
fn lanes(
    folder: &Path,
    file: &str,
    replication: u64,
    owner: &str,
    number: &str,
) -> Result<Vec<Lane>, String> {
    let mut out: Vec<Lane> = Vec::new();
    let mut index: HashMap<(String, String), usize> = HashMap::new();
    for row in rows(folder, file, replication)? {
        let key = (row[owner].clone(), row[number].clone());
        let i = *index.entry(key.clone()).or_insert_with(|| {
            out.push(Lane { label: format!("{} {}", key.0, key.1), changes: Vec::new() });
            out.len() - 1
        });
        if let Some(t) = time(&row, "time") {
            out[i].changes.push((t, row["state"].clone()));
        }
    }
    for l in &mut out {
        // Decision order to time order; equal times keep decision order (the later decision holds).
        l.changes.sort_by(|a, b| a.0.total_cmp(&b.0));
    }
    // Owners in order of first appearance, and within each its machines or
    // movers by number (the first rows come in decision order: mover 2 may
    // be written before mover 1).
    let mut owners: Vec<String> = Vec::new();
    for k in index.keys() {
        if !owners.contains(&k.0) {
            owners.push(k.0.clone());
        }
    }
    let first = |o: &str| index.iter().filter(|(k, _)| k.0 == o).map(|(_, &i)| i).min().unwrap_or(usize::MAX);
    owners.sort_by_key(|o| first(o));
    let mut keyed: Vec<((usize, u64, String), Lane)> = index
        .into_iter()
        .map(|(k, i)| {
            let owner = owners.iter().position(|o| *o == k.0).unwrap_or(usize::MAX);
            ((owner, k.1.parse().unwrap_or(u64::MAX), k.1), std::mem::take(&mut out[i]))
        })
        .collect();
    keyed.sort_by(|a, b| a.0.cmp(&b.0));
    Ok(keyed.into_iter().map(|(_, l)| l).collect())
}

/// A step series from (time, change) events: its level at `from` and its steps inside the window.
fn steps(mut events: Series, from: f64, to: f64) -> Series {
    events.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut level = 0.0;
    let mut out = Vec::new();
    for &(t, d) in &events {
        if t > to {
            break;
        }
        level += d;
        if t <= from {
            continue;
        }
        out.push((t, level));
    }
    let start: f64 = events.iter().filter(|e| e.0 <= from).map(|e| e.1).sum();
    let mut v = vec![(from, start)];
    v.extend(out);
    v
}

/// Time-average of a step series over [from, to].
fn average(series: &[(f64, f64)], to: f64) -> f64 {
    let mut area = 0.0;
    for w in series.windows(2) {
        area += w[0].1 * (w[1].0 - w[0].0);
    }
    let last = series.last().expect("a series starts with its level at the window's start");
    area += last.1 * (to - last.0);
    area / (to - series[0].0).max(f64::MIN_POSITIVE)
}

/// Clock label of simulated second `t`: (hh:mm, day N).
fn clock(t: f64) -> (String, String) {
    let day = (t / 86_400.0).floor();
    let s = t - day * 86_400.0;
    let (h, m) = ((s / 3600.0).floor(), ((s % 3600.0) / 60.0).round());
    let (h, m) = if m >= 60.0 { (h + 1.0, 0.0) } else { (h, m) };
    (format!("{:02}:{:02}", h as u32, m as u32), format!("day {}", day as u64 + 1))
}

fn esc(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;")
}

/// The SVG of replication `replication` (1-based) traced in `folder`, over `window` (s).
pub fn draw(folder: &Path, replication: u64, window: (f64, f64), title: &str) -> Result<String, String> {
    let (from, to) = window;
    let machines = lanes(folder, "machine_states.csv", replication, "department", "machine")?;
    let movers = lanes(folder, "mover_states.csv", replication, "fleet", "mover")?;
    let n = machines.len() + movers.len();
    let lane_h = (560.0 / n.max(1) as f64).clamp(6.0, 18.0);
    let plot_w = WIDTH - LEFT - RIGHT;
    let x = |t: f64| LEFT + (t - from) / (to - from) * plot_w;
    let top = 60.0;
    let lanes_h = n as f64 * lane_h + if movers.is_empty() || machines.is_empty() { 0.0 } else { lane_h };
    let chart_top = top + lanes_h + 60.0;
    let chart_h = 220.0;
    let height = chart_top + chart_h + 90.0;
    let mut s = String::new();
    let _ = write!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{height:.0}" viewBox="0 0 {WIDTH} {height:.0}" font-family="DejaVu Sans, Liberation Sans, Noto Sans, sans-serif" font-size="11">"#
    );
    let _ = write!(s, r#"<rect width="100%" height="100%" fill="white"/>"#);
    let _ =
        write!(s, r#"<text x="{LEFT}" y="24" font-size="16" fill="{}">{}</text>"#, rgb(SLATE), esc(title));
    let (c0, d0) = clock(from);
    let (c1, d1) = clock(to);
    let _ = write!(
        s,
        r#"<text x="{LEFT}" y="42" fill="{}">{d0} {c0} to {d1} {c1}; lanes coloured by state, idle left blank</text>"#,
        rgb(SLATE)
    );

    // Lanes.
    // The states drawn, per group (machines, movers), for the legend.
    let mut used: [Vec<&str>; 2] = [Vec::new(), Vec::new()];
    let mut y = top;
    let groups: [&[Lane]; 2] = [&machines, &movers];
    for (g, group) in groups.iter().enumerate() {
        if g == 1 && !machines.is_empty() && !movers.is_empty() {
            y += lane_h;
        }
        for lane in group.iter() {
            let _ = write!(
                s,
                r#"<rect x="{LEFT}" y="{y:.1}" width="{plot_w}" height="{:.1}" fill="{}"/>"#,
                lane_h - 1.0,
                rgb(mix(GRID, WHITE, 0.3))
            );
            let _ = write!(
                s,
                r#"<text x="{:.0}" y="{:.1}" text-anchor="end" font-size="{:.0}" fill="{}">{}</text>"#,
                LEFT - 6.0,
                y + lane_h * 0.75,
                (lane_h * 0.8).min(11.0),
                rgb(SLATE),
                esc(&lane.label)
            );
            for (i, (t, state)) in lane.changes.iter().enumerate() {
                let end = lane.changes.get(i + 1).map_or(to, |c| c.0);
                let (a, b) = (t.max(from), end.min(to));
                if b <= a {
                    continue;
                }
                let Some(c) = fill(state) else { continue };
                if !used[g].contains(&state.as_str()) {
                    used[g].push(state);
                }
                let _ = write!(
                    s,
                    r#"<rect x="{:.2}" y="{y:.1}" width="{:.2}" height="{:.1}" fill="{}"/>"#,
                    x(a),
                    (x(b) - x(a)).max(0.4),
                    lane_h - 1.0,
                    rgb(c)
                );
            }
            y += lane_h;
        }
    }

    // The time axis, under the lanes and under the chart.
    let span = to - from;
    let step = [900.0, 1800.0, 3600.0, 7200.0, 14_400.0, 21_600.0, 43_200.0, 86_400.0]
        .into_iter()
        .find(|&st| span / st <= 14.0)
        .unwrap_or(86_400.0 * (span / 86_400.0 / 14.0).ceil());
    let mut t = (from / step).ceil() * step;
    let mut last_day = String::new();
    while t <= to + 1e-9 {
        let px = x(t);
        let _ = write!(
            s,
            r#"<line x1="{px:.1}" y1="{top}" x2="{px:.1}" y2="{:.1}" stroke="{}" stroke-width="0.6"/>"#,
            chart_top + chart_h,
            rgb(AISLE_IDLE)
        );
        let (c, d) = clock(t);
        for base in [y + 14.0, chart_top + chart_h + 16.0] {
            let _ = write!(
                s,
                r#"<text x="{px:.1}" y="{base:.1}" text-anchor="middle" fill="{}">{c}</text>"#,
                rgb(SLATE)
            );
            if d != last_day || base > y + 14.0 && t == (from / step).ceil() * step {
                let _ = write!(
                    s,
                    r#"<text x="{px:.1}" y="{:.1}" text-anchor="middle" font-weight="bold" fill="{}">{d}</text>"#,
                    base + 13.0,
                    rgb(SLATE)
                );
            }
        }
        last_day = d;
        t += step;
    }

    // WIP and the queues of the three departments with the longest average queue in the window.
    let lots = rows(folder, "lots.csv", replication)?;
    let mut wip = Vec::with_capacity(2 * lots.len());
    for r in &lots {
        if let Some(a) = time(r, "released") {
            wip.push((a, 1.0));
        }
        if let Some(b) = time(r, "shipped") {
            wip.push((b, -1.0));
        }
    }
    let wip = steps(wip, from, to);
    let mut queues: HashMap<String, Vec<(f64, f64)>> = HashMap::new();
    for r in rows(folder, "visits.csv", replication)? {
        let q = queues.entry(r["department"].clone()).or_default();
        if let Some(a) = time(&r, "arrival") {
            q.push((a, 1.0));
        }
        if let Some(b) = time(&r, "start") {
            q.push((b, -1.0));
        }
    }
    let mut qs: Vec<(String, Series, f64)> = queues
        .into_iter()
        .map(|(d, e)| {
            let st = steps(e, from, to);
            let avg = average(&st, to);
            (d, st, avg)
        })
        .collect();
    qs.sort_by(|a, b| b.2.total_cmp(&a.2).then(a.0.cmp(&b.0)));
    qs.truncate(3);
    let peak = wip.iter().chain(qs.iter().flat_map(|q| q.1.iter())).map(|p| p.1).fold(1.0, f64::max);
    let nice = [1.0, 2.0, 5.0, 10.0, 20.0, 25.0, 50.0, 100.0, 200.0, 500.0, 1000.0]
        .into_iter()
        .find(|&k| peak / k <= 6.0)
        .unwrap_or((peak / 6.0).ceil());
    let ymax = (peak / nice).ceil() * nice;
    let yp = |v: f64| chart_top + chart_h - v / ymax * chart_h;
    let _ = write!(
        s,
        r#"<text x="{LEFT}" y="{:.1}" font-size="12" fill="{}">lots in the plant (WIP) and waiting for a machine at the busiest departments</text>"#,
        chart_top - 10.0,
        rgb(SLATE)
    );
    let mut v = 0.0;
    while v <= ymax + 1e-9 {
        let py = yp(v);
        let _ = write!(
            s,
            r#"<line x1="{LEFT}" y1="{py:.1}" x2="{:.1}" y2="{py:.1}" stroke="{}" stroke-width="0.6"/><text x="{:.0}" y="{:.1}" text-anchor="end" fill="{}">{v}</text>"#,
            LEFT + plot_w,
            rgb(GRID),
            LEFT - 6.0,
            py + 4.0,
            rgb(SLATE)
        );
        v += nice;
    }
    let line = |s: &mut String, series: &[(f64, f64)], colour: (u8, u8, u8), width: f64| {
        let mut pts = String::new();
        let mut prev: Option<f64> = None;
        for &(t, v) in series {
            if let Some(p) = prev {
                let _ = write!(pts, "{:.2},{:.2} ", x(t), yp(p));
            }
            let _ = write!(pts, "{:.2},{:.2} ", x(t), yp(v));
            prev = Some(v);
        }
        if let Some(p) = prev {
            let _ = write!(pts, "{:.2},{:.2}", x(to), yp(p));
        }
        let _ = write!(
            s,
            r#"<polyline points="{pts}" fill="none" stroke="{}" stroke-width="{width}" stroke-linejoin="round"/>"#,
            rgb(colour)
        );
    };
    let queue_colours = [TEAL, AMBER, BRICK];
    line(&mut s, &wip, SLATE, 1.6);
    for (q, c) in qs.iter().zip(queue_colours) {
        line(&mut s, &q.1, c, 1.2);
    }

    // Legends: the states seen, then the chart's lines.
    let mut lx = LEFT;
    let ly = height - 28.0;
    for (g, states) in used.iter().enumerate() {
        if states.is_empty() {
            continue;
        }
        let head = if g == 0 { "machines:" } else { "movers:" };
        let _ = write!(
            s,
            r#"<text x="{lx:.0}" y="{ly:.0}" font-weight="bold" fill="{}">{head}</text>"#,
            rgb(SLATE)
        );
        lx += 8.0 * head.len() as f64;
        for state in states {
            let c = fill(state).expect("only drawn states are listed");
            let _ = write!(
                s,
                r#"<rect x="{lx:.0}" y="{:.0}" width="14" height="10" fill="{}"/><text x="{:.0}" y="{ly:.0}" fill="{}">{}</text>"#,
                ly - 9.0,
                rgb(c),
                lx + 18.0,
                rgb(SLATE),
                state.replace('_', " ")
            );
            lx += 30.0 + 7.0 * state.len() as f64;
        }
        lx += 14.0;
    }
    // The chart's lines on a row of their own: with every state in use the
    // state legends alone fill the width.
    let (mut lx, ly) = (LEFT, ly + 18.0);
    let mut entries = vec![("WIP (plant)".to_string(), SLATE)];
    for (q, c) in qs.iter().zip(queue_colours) {
        entries.push((format!("queue at {}", q.0), c));
    }
    for (label, c) in entries {
        let _ = write!(
            s,
            r#"<line x1="{lx:.0}" y1="{:.0}" x2="{:.0}" y2="{:.0}" stroke="{}" stroke-width="2"/><text x="{:.0}" y="{ly:.0}" fill="{}">{}</text>"#,
            ly - 4.0,
            lx + 18.0,
            ly - 4.0,
            rgb(c),
            lx + 22.0,
            rgb(SLATE),
            esc(&label)
        );
        lx += 40.0 + 6.5 * label.len() as f64;
    }
    s.push_str("</svg>\n");
    Ok(s)
}
