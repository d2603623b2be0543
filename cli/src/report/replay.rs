//! The report's replay of a day: one traced replication's movers, queues and machines over a window, as compact data and a canvas player.
//!
//! [`build`] reads a `run --trace` folder (its `trace.json` says which
//! scenario, layout and window it holds), picks the window (by default the
//! busiest whole day, see [`busiest_day`]), and turns the trace files into a
//! few step series and trips: per mover its trips as timed legs along the
//! path it drives, per department its queue and its machines' state counts.
//! Times are integer deciseconds from the window's start, delta-encoded, so a
//! day of the demo plant is about 60 kilobytes. The player (`replay.js`,
//! plain JavaScript, embedded) draws the plant once and the moving parts per
//! frame. The section depends on nothing else in the page.

use std::collections::HashMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use layflow_models::plant::{DepartmentRole, DistanceRule, Home, IdleRule, Plant};
use layflow_models::sim::trace::TRACE_FILES;
use layflow_models::units::format_duration;
use serde_json::{json, Value};

use crate::failure::Failure;
use crate::render::palette::{mix, rgb, AISLE_IDLE, AMBER, BRICK, SLATE, TEAL};
use crate::trace::{folder_name, parse_window, TraceManifest, TRACE_MANIFEST};

/// The player, embedded whole in every page that holds a replay.
const PLAYER_JS: &str = include_str!("replay.js");

/// Seconds in a day: the default window is one simulated day, 00:00 to 24:00.
const DAY_S: f64 = 86_400.0;
/// Time resolution of the replay data: ticks per simulated second (deciseconds:
/// finer than a frame at the slowest speed, 60 simulated s per real s).
const TICKS_PER_S: f64 = 10.0;
/// Machine states in the order of the data's count columns (and of the squares drawn).
pub(crate) const MACHINE_STATES: [&str; 6] = ["busy", "setup", "blocked", "down", "off_shift", "idle"];

/// What to replay.
pub struct ReplayRequest<'a> {
    /// A `run --trace` folder (or one layout's subfolder of it).
    pub trace: &'a Path,
    /// "FROM..TO" as run's `--trace-window`; `None`: the busiest day.
    pub window: Option<&'a str>,
    /// Which layout's subfolder, when the folder holds several.
    pub layout: Option<&'a str>,
}

/// A replay ready to insert into a page.
pub struct Replay {
    /// The whole `<section id="replay">` … `</section>`: its data and its script.
    pub html: String,
    /// The layout replayed.
    pub layout: String,
    /// The replication replayed (the first traced), numbered from 1.
    pub replication: u64,
    /// Simulated seconds replayed, [from, to].
    pub window: (f64, f64),
    /// Bytes the replay adds to the page (the whole fragment).
    pub data_bytes: usize,
}

/// Builds the replay of `req`'s trace of `plant`, whose scenario text has
/// SHA-256 `scenario_sha256`. Bad input (not a trace, a trace of another
/// scenario, no layout chosen among several, a window outside the trace) is
/// [`Failure::input`], naming the folder and what to do.
pub fn build(plant: &Plant, scenario_sha256: &str, req: &ReplayRequest) -> Result<Replay, Failure> {
    let (folder, manifest) = locate(req.trace, req.layout)?;
    if manifest.scenario_sha256 != scenario_sha256 {
        return Err(Failure::input(format!(
            "--replay {}: this is a trace of another scenario ({}, SHA-256 {}…), not of the one reported \
             (SHA-256 {}…); trace this scenario with `layflow run SCENARIO --trace DIR`, or report the \
             scenario the trace was made from",
            folder.display(),
            manifest.scenario,
            &manifest.scenario_sha256.get(..12).unwrap_or(&manifest.scenario_sha256),
            scenario_sha256.get(..12).unwrap_or(scenario_sha256)
        )));
    }
    let layout = plant.layouts.iter().position(|l| l.name == manifest.layout).ok_or_else(|| {
        Failure::input(format!(
            "--replay {}: the trace is of layout \"{}\", which the scenario does not have; trace it again",
            folder.display(),
            manifest.layout
        ))
    })?;
    let replication = *manifest.replications.first().ok_or_else(|| {
        Failure::input(format!(
            "--replay {}: trace.json names no replication; trace it again",
            folder.display()
        ))
    })?;
    let trace = Trace::read(&folder, replication)?;
    let (w0, w1) = manifest.window_s;
    let (window, why) = match req.window {
        Some(text) => {
            let (a, b) = parse_window("--replay-window", text, manifest.horizon_s)?;
            if a < w0 || b > w1 {
                return Err(Failure::input(format!(
                    "--replay-window {text:?}: outside the traced window, {} to {} ({}); choose a window \
                     inside it, or trace the stretch you want with `layflow run … --trace DIR --trace-window \
                     \"FROM..TO\"`",
                    format_duration(w0),
                    format_duration(w1),
                    folder.display()
                )));
            }
            ((a, b), "the window asked for".to_string())
        }
        None => match busiest_day(&trace.delivered, (w0, w1)) {
            Some((day, moves)) => (
                (day, day + DAY_S),
                format!("the busiest whole day of the trace (most moves delivered: {moves})"),
            ),
            None => (
                (w0, w1.min(w0 + DAY_S)),
                "the trace holds no whole day, so its window (at most 24 h of it)".to_string(),
            ),
        },
    };
    let data = data(plant, layout, replication, &trace, window, &why);
    let html = fragment(&data, &caption(&manifest.layout, replication, window, &why));
    Ok(Replay { data_bytes: html.len(), html, layout: manifest.layout, replication, window })
}

/// The trace folder to read and its manifest: `dir` itself when it holds
/// `trace.json`, else its one layout subfolder, or the one named `layout`.
fn locate(dir: &Path, layout: Option<&str>) -> Result<(PathBuf, TraceManifest), Failure> {
    let how = "make one with `layflow run SCENARIO --layout NAME --trace DIR` (a trace written before \
               trace.json existed: run it again)";
    if !dir.is_dir() {
        return Err(Failure::input(format!("--replay {}: no such folder; {how}", dir.display())));
    }
    let (folder, manifest) = if dir.join(TRACE_MANIFEST).is_file() {
        let m = read_manifest(dir)?;
        if let Some(name) = layout {
            if m.layout != name {
                return Err(Failure::input(format!(
                    "--replay {}: the trace is of layout \"{}\", not \"{name}\"; choose its layout, or \
                     trace \"{name}\"",
                    dir.display(),
                    m.layout
                )));
            }
        }
        (dir.to_path_buf(), m)
    } else {
        let mut subs: Vec<(PathBuf, TraceManifest)> = Vec::new();
        let entries = std::fs::read_dir(dir).map_err(|e| {
            Failure::input(format!("--replay {}: cannot read the folder: {e}", dir.display()))
        })?;
        for e in entries.filter_map(Result::ok) {
            let p = e.path();
            if p.join(TRACE_MANIFEST).is_file() {
                subs.push((p.clone(), read_manifest(&p)?));
            }
        }
        subs.sort_by(|a, b| a.0.cmp(&b.0));
        let names = || subs.iter().map(|(_, m)| format!("\"{}\"", m.layout)).collect::<Vec<_>>().join(", ");
        match (layout, subs.len()) {
            (_, 0) => {
                return Err(Failure::input(format!(
                    "--replay {}: not a trace (no {TRACE_MANIFEST} in it or in a layout subfolder); {how}",
                    dir.display()
                )))
            }
            (None, 1) => subs.remove(0),
            (None, _) => {
                return Err(Failure::input(format!(
                    "--replay {}: the folder holds traces of several layouts ({}); choose one with \
                     --replay-layout NAME, or give its subfolder",
                    dir.display(),
                    names()
                )))
            }
            (Some(name), _) => {
                match subs.iter().position(|(p, m)| {
                    m.layout == name
                        || p.file_name().is_some_and(|f| f.to_string_lossy() == folder_name(name))
                }) {
                    Some(i) => subs.swap_remove(i),
                    None => {
                        return Err(Failure::input(format!(
                            "--replay {}: no trace of layout \"{name}\" in it; it holds {}",
                            dir.display(),
                            names()
                        )))
                    }
                }
            }
        }
    };
    for f in TRACE_FILES {
        if !folder.join(f).is_file() {
            return Err(Failure::input(format!(
                "--replay {}: not a whole trace: {f} is missing; trace it again with `layflow run SCENARIO \
                 --trace DIR --force`",
                folder.display()
            )));
        }
    }
    Ok((folder, manifest))
}

fn read_manifest(dir: &Path) -> Result<TraceManifest, Failure> {
    let path = dir.join(TRACE_MANIFEST);
    let text = std::fs::read_to_string(&path)
        .map_err(|e| Failure::input(format!("--replay {}: cannot read: {e}", path.display())))?;
    serde_json::from_str(&text).map_err(|e| {
        Failure::input(format!(
            "--replay {}: not a trace manifest ({e}); trace again with `layflow run SCENARIO --trace DIR --force`",
            path.display()
        ))
    })
}

/// The busiest whole simulated day (00:00 to 24:00) inside `window`: the one
/// with the most moves delivered (`delivered` times), the earliest of equals.
/// Returns its start, s, and its moves; `None` when no whole day fits.
pub(crate) fn busiest_day(delivered: &[f64], window: (f64, f64)) -> Option<(f64, usize)> {
    let first = (window.0 / DAY_S).ceil() as i64;
    let last = (window.1 / DAY_S).floor() as i64 - 1; // the last day that ends inside
    let mut best: Option<(f64, usize)> = None;
    for k in first..=last {
        let (a, b) = (k as f64 * DAY_S, (k + 1) as f64 * DAY_S);
        let n = delivered.iter().filter(|&&t| a <= t && t < b).count();
        if best.is_none_or(|(_, m)| n > m) {
            best = Some((a, n));
        }
    }
    best
}

/// One move of one mover, as the trace has it.
struct Move {
    fleet: String,
    mover: u32,
    picked_up: Option<f64>,
    delivered: Option<f64>,
    from: String,
    to: String,
}

/// The rows of one replication that the replay reads.
struct Trace {
    moves: Vec<Move>,
    /// Every move's delivery time, for the busiest day.
    delivered: Vec<f64>,
    /// (fleet, mover) → state changes (time, state) in time order (equal times in file order).
    mover_states: HashMap<(String, u32), Vec<(f64, String)>>,
    /// department → machine → state changes, as above.
    machine_states: HashMap<String, HashMap<u32, Vec<(f64, String)>>>,
    /// (department, arrival, start): the lot waits for a machine from arrival to start.
    visits: Vec<(String, f64, Option<f64>)>,
    /// (released, shipped): the lot is in the plant from release to shipping.
    lots: Vec<(f64, Option<f64>)>,
}

/// Reads `file`'s rows of `replication` as (header → column) and records.
fn read_rows(
    folder: &Path,
    file: &str,
    replication: u64,
) -> Result<(Columns, Vec<csv::StringRecord>), Failure> {
    let path = folder.join(file);
    let bad = |e: &dyn std::fmt::Display| {
        Failure::input(format!(
            "--replay {}: cannot read it as a trace file ({e}); trace again with --force",
            path.display()
        ))
    };
    let mut r = csv::Reader::from_path(&path).map_err(|e| bad(&e))?;
    let headers = r.headers().map_err(|e| bad(&e))?.clone();
    let rep = replication.to_string();
    let mut rows = Vec::new();
    for rec in r.records() {
        let rec = rec.map_err(|e| bad(&e))?;
        if rec.get(0) == Some(rep.as_str()) {
            rows.push(rec);
        }
    }
    Ok((Columns { path, headers }, rows))
}

/// A trace file's columns by name.
struct Columns {
    path: PathBuf,
    headers: csv::StringRecord,
}

impl Columns {
    fn index(&self, name: &str) -> Result<usize, Failure> {
        self.headers.iter().position(|h| h == name).ok_or_else(|| {
            Failure::input(format!(
                "--replay {}: no column \"{name}\": not a trace of this layflow; trace again with --force",
                self.path.display()
            ))
        })
    }
}

/// A time cell: empty means unknown.
fn time(rec: &csv::StringRecord, i: usize) -> Option<f64> {
    rec.get(i).filter(|s| !s.is_empty()).and_then(|s| s.parse().ok())
}

impl Trace {
    fn read(folder: &Path, rep: u64) -> Result<Trace, Failure> {
        let (c, rows) = read_rows(folder, "moves.csv", rep)?;
        let (fl, mv, pu, de, fr, to) = (
            c.index("fleet")?,
            c.index("mover")?,
            c.index("picked_up")?,
            c.index("delivered")?,
            c.index("from")?,
            c.index("to")?,
        );
        let moves: Vec<Move> = rows
            .iter()
            .map(|r| Move {
                fleet: r[fl].to_string(),
                mover: r[mv].parse().unwrap_or(0),
                picked_up: time(r, pu),
                delivered: time(r, de),
                from: r[fr].to_string(),
                to: r[to].to_string(),
            })
            .collect();
        let delivered = moves.iter().filter_map(|m| m.delivered).collect();
        let mut mover_states: HashMap<(String, u32), Vec<(f64, String)>> = HashMap::new();
        let (c, rows) = read_rows(folder, "mover_states.csv", rep)?;
        let (fl, mv, tm, st) = (c.index("fleet")?, c.index("mover")?, c.index("time")?, c.index("state")?);
        for r in &rows {
            if let Some(t) = time(r, tm) {
                let key = (r[fl].to_string(), r[mv].parse().unwrap_or(0));
                mover_states.entry(key).or_default().push((t, r[st].to_string()));
            }
        }
        for v in mover_states.values_mut() {
            // Decision order to time order; a stable sort keeps the later decision last at equal times.
            v.sort_by(|a, b| a.0.total_cmp(&b.0));
        }
        let mut machine_states: HashMap<String, HashMap<u32, Vec<(f64, String)>>> = HashMap::new();
        let (c, rows) = read_rows(folder, "machine_states.csv", rep)?;
        let (de, ma, tm, st) =
            (c.index("department")?, c.index("machine")?, c.index("time")?, c.index("state")?);
        for r in &rows {
            if let Some(t) = time(r, tm) {
                machine_states
                    .entry(r[de].to_string())
                    .or_default()
                    .entry(r[ma].parse().unwrap_or(0))
                    .or_default()
                    .push((t, r[st].to_string()));
            }
        }
        for d in machine_states.values_mut() {
            for v in d.values_mut() {
                v.sort_by(|a, b| a.0.total_cmp(&b.0));
            }
        }
        let (c, rows) = read_rows(folder, "visits.csv", rep)?;
        let (de, ar, stt) = (c.index("department")?, c.index("arrival")?, c.index("start")?);
        let visits =
            rows.iter().filter_map(|r| Some((r[de].to_string(), time(r, ar)?, time(r, stt)))).collect();
        let (c, rows) = read_rows(folder, "lots.csv", rep)?;
        let (re, sh) = (c.index("released")?, c.index("shipped")?);
        let lots = rows.iter().filter_map(|r| Some((time(r, re)?, time(r, sh)))).collect();
        Ok(Trace { moves, delivered, mover_states, machine_states, visits, lots })
    }
}

/// Seconds to ticks from the window's start, clamped into the window.
fn tick(t: f64, window: (f64, f64)) -> i64 {
    ((t.clamp(window.0, window.1) - window.0) * TICKS_PER_S).round() as i64
}

/// Absolute values to differences from the previous one (the first from 0).
fn delta(v: &[i64]) -> Vec<i64> {
    let mut prev = 0;
    v.iter()
        .map(|&x| {
            let d = x - prev;
            prev = x;
            d
        })
        .collect()
}

/// Metres rounded to centimetres, so the JSON stays short.
fn m(x: f64) -> f64 {
    (x * 100.0).round() / 100.0
}

/// A step series (tick, level) with one entry per tick (the last level at a tick holds).
fn push_step<T: PartialEq + Clone>(ts: &mut Vec<i64>, vs: &mut Vec<T>, t: i64, v: T) {
    if ts.last() == Some(&t) {
        *vs.last_mut().expect("same length") = v;
        if vs.len() >= 2 && vs[vs.len() - 2] == vs[vs.len() - 1] {
            ts.pop();
            vs.pop();
        }
    } else if vs.last() != Some(&v) {
        ts.push(t);
        vs.push(v);
    }
}

/// A count over time from +1/−1 events, as a step series {t: delta ticks, n: levels} from tick 0.
/// At equal times a −1 comes first: a lot that starts (or ships) the moment it arrives was
/// never counted (`arrival ≤ t < start`).
fn counts(mut ev: Vec<(f64, i64)>, window: (f64, f64)) -> Value {
    ev.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    let (mut ts, mut ns) = (Vec::new(), Vec::new());
    let mut level = 0i64;
    for (t, d) in ev {
        if t >= window.1 {
            break;
        }
        level += d;
        push_step(&mut ts, &mut ns, tick(t, window), level);
    }
    if ts.first() != Some(&0) {
        ts.insert(0, 0);
        ns.insert(0, 0);
    }
    json!({ "t": delta(&ts), "n": ns })
}

/// Paths movers drive, each once: a polyline of metres, keyed by (from, to) location.
#[derive(Default)]
struct Paths {
    index: HashMap<(usize, usize), usize>,
    lines: Vec<Vec<f64>>,
}

impl Paths {
    fn get(&mut self, plant: &Plant, a: usize, b: usize) -> usize {
        if let Some(&i) = self.index.get(&(a, b)) {
            return i;
        }
        let (la, lb) = (&plant.locations[a], &plant.locations[b]);
        let mut pts = vec![(la.x, la.y)];
        match (&plant.aisles, &plant.distance_rule) {
            (Some(net), _) => {
                // Location, its node, the shortest path's nodes, the far location.
                for n in net.path_nodes(a, b) {
                    pts.push((net.nodes[n].x, net.nodes[n].y));
                }
            }
            // Along x, then along y: the rectilinear distance the simulation drives.
            (None, DistanceRule::Rectilinear) => pts.push((lb.x, la.y)),
            _ => {}
        }
        pts.push((lb.x, lb.y));
        pts.dedup();
        let line = pts.iter().flat_map(|&(x, y)| [m(x), m(y)]).collect();
        self.lines.push(line);
        self.index.insert((a, b), self.lines.len() - 1);
        self.lines.len() - 1
    }
}

/// Where an idle mover of `fleet` drives after a delivery, from `at`.
fn idle_target(plant: &Plant, layout: usize, fleet: usize, at: usize) -> usize {
    let f = &plant.fleets()[fleet];
    let n = plant.locations.len();
    match f.idle {
        IdleRule::Stay => at,
        IdleRule::GoHome | IdleRule::AlwaysHome => home(plant, layout, fleet),
        IdleRule::Park => f
            .parking
            .iter()
            .copied()
            .min_by(|&a, &b| plant.distance[at * n + a].total_cmp(&plant.distance[at * n + b]))
            .unwrap_or(at),
    }
}

fn home(plant: &Plant, layout: usize, fleet: usize) -> usize {
    match plant.fleets()[fleet].home {
        Home::Location(l) => l,
        Home::Department(d) => plant.layouts[layout].location_of[d],
    }
}

/// Whether a mover state is driving (held up in the aisles counts: it is on its way).
fn travelling(state: &str) -> bool {
    matches!(state, "empty" | "loaded" | "congestion")
}

/// One mover's replay: its legs and when it has a load on board.
struct MoverTrips {
    /// Where it is before its first leg.
    start: usize,
    /// (start tick, duration ticks, path index, loaded), in time order.
    legs: Vec<(i64, i64, usize, bool)>,
    /// Ticks at which it takes on its first load or sets down its last, alternately,
    /// starting from `loaded_at_start`.
    board: Vec<i64>,
    loaded_at_start: bool,
}

/// One mover's legs, from its drives (runs of travelling states) and its stops (pick-ups and deliveries).
fn mover_legs(
    plant: &Plant,
    layout: usize,
    fleet: usize,
    (states, moves): (&[(f64, String)], &[&Move]),
    place: &HashMap<&str, usize>,
    paths: &mut Paths,
    window: (f64, f64),
) -> MoverTrips {
    // Stops: where the mover is at a pick-up (it has reached the lot) and a
    // delivery (it has set the load down), with the change of loads on board.
    let mut stops: Vec<(f64, usize, i32)> = Vec::new();
    for mv in moves {
        if let (Some(t), Some(&l)) = (mv.picked_up, place.get(mv.from.as_str())) {
            stops.push((t, l, 1));
        }
        if let (Some(t), Some(&l)) = (mv.delivered, place.get(mv.to.as_str())) {
            stops.push((t, l, -1));
        }
    }
    // At equal times a delivery comes before the next pick-up.
    stops.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.2.cmp(&b.2)));
    // Drives: maximal runs of travelling states, [start, end).
    let mut drives: Vec<(f64, f64)> = Vec::new();
    let mut open: Option<f64> = None;
    for (t, s) in states {
        match (travelling(s), open) {
            (true, None) => open = Some(*t),
            (false, Some(a)) => {
                if *t > a {
                    drives.push((a, *t));
                }
                open = None;
            }
            _ => {}
        }
    }
    if let Some(a) = open {
        if window.1 > a {
            drives.push((a, window.1));
        }
    }
    // Before its first stop the mover is where its first stop is when it
    // drives there from outside the window, else at home.
    let eps = 1e-6;
    let mut at = home(plant, layout, fleet);
    let mut on_board = 0;
    let mut next = 0; // the first stop not yet reached
    let mut legs = Vec::new();
    let mut start = None;
    for (i, &(a, b)) in drives.iter().enumerate() {
        if a >= window.1 {
            break;
        }
        while next < stops.len() && stops[next].0 <= a + eps {
            at = stops[next].1;
            on_board += stops[next].2;
            next += 1;
        }
        // This drive leads to the next stop when no other drive starts before it; otherwise
        // it is an idle drive (home, to parking) and the next drive goes on to the stop.
        let to = match stops.get(next) {
            Some(&(t, l, _)) if t >= b - eps && drives.get(i + 1).is_none_or(|d| d.0 >= t - eps) => l,
            _ => idle_target(plant, layout, fleet, at),
        };
        // A drive over before the window only moves the mover.
        if to != at && b > window.0 {
            let p = paths.get(plant, at, to);
            let (t0, t1) = (tick(a, window), tick(b, window));
            start.get_or_insert(at);
            legs.push((t0, t1 - t0, p, on_board > 0));
        }
        at = to;
    }
    // Loads on board over time, from the stops alone.
    let mut on_board = 0;
    let mut loaded_at_start = false;
    let mut board = Vec::new();
    for &(t, _, d) in &stops {
        let was = on_board > 0;
        on_board += d;
        if t <= window.0 {
            loaded_at_start = on_board > 0;
        } else if (on_board > 0) != was && t < window.1 {
            board.push(tick(t, window));
        }
    }
    MoverTrips { start: start.unwrap_or(at), legs, board, loaded_at_start }
}

/// The replay's data, as the player reads it.
fn data(
    plant: &Plant,
    layout: usize,
    replication: u64,
    trace: &Trace,
    window: (f64, f64),
    why: &str,
) -> Value {
    let lay = &plant.layouts[layout];
    // Where each name in moves.csv is: departments, and their overflow areas.
    let mut place: HashMap<&str, usize> = HashMap::new();
    let overflow_names: Vec<String> =
        plant.departments.iter().map(|d| format!("{} overflow", d.id)).collect();
    for (d, dep) in plant.departments.iter().enumerate() {
        place.insert(dep.id.as_str(), lay.location_of[d]);
        if let Some(l) = dep.staging.overflow {
            place.insert(overflow_names[d].as_str(), l);
        }
    }
    let mut paths = Paths::default();
    let mut fleets = Vec::new();
    for (f, fleet) in plant.fleets().iter().enumerate() {
        let mut movers = Vec::new();
        for k in 1..=fleet.count {
            let key = (fleet.id.clone(), k);
            let states = trace.mover_states.get(&key).map_or(&[][..], Vec::as_slice);
            let moves: Vec<&Move> =
                trace.moves.iter().filter(|mv| mv.fleet == fleet.id && mv.mover == k).collect();
            let trips = mover_legs(plant, layout, f, (states, &moves), &place, &mut paths, window);
            let starts: Vec<i64> = trips.legs.iter().map(|l| l.0).collect();
            movers.push(json!({
                "s": trips.start,
                "t": delta(&starts),
                "d": trips.legs.iter().map(|l| l.1).collect::<Vec<_>>(),
                // Path index × 2, + 1 when loaded.
                "p": trips.legs.iter().map(|l| l.2 * 2 + usize::from(l.3)).collect::<Vec<_>>(),
                "b0": u8::from(trips.loaded_at_start),
                "b": delta(&trips.board),
            }));
        }
        fleets.push(json!({ "name": fleet.id, "movers": movers }));
    }
    // Queues: +1 at arrival, −1 at the start of the operation; the level at
    // the window's start from the visits that span it.
    let dept_index: HashMap<&str, usize> =
        plant.departments.iter().enumerate().map(|(d, dep)| (dep.id.as_str(), d)).collect();
    let nd = plant.departments.len();
    let mut queue_events: Vec<Vec<(f64, i64)>> = vec![Vec::new(); nd];
    for (dep, arrival, start) in &trace.visits {
        let Some(&d) = dept_index.get(dep.as_str()) else { continue };
        queue_events[d].push((*arrival, 1));
        if let Some(s) = start {
            queue_events[d].push((*s, -1));
        }
    }
    let queues: Vec<Value> = queue_events.into_iter().map(|ev| counts(ev, window)).collect();
    // Work in process: lots from release to shipping.
    let mut wip_events = Vec::with_capacity(2 * trace.lots.len());
    for &(released, shipped) in &trace.lots {
        wip_events.push((released, 1));
        if let Some(s) = shipped {
            wip_events.push((s, -1));
        }
    }
    let wip = counts(wip_events, window);
    // Machines: count of machines in each state, after every change.
    let machines: Vec<Value> = plant
        .departments
        .iter()
        .map(|dep| {
            let Some(lanes) = trace.machine_states.get(&dep.id) else {
                return json!({ "t": [], "c": [] });
            };
            let mut ev: Vec<(f64, u32, usize)> = Vec::new();
            for (&k, changes) in lanes {
                for (t, s) in changes {
                    ev.push((*t, k, MACHINE_STATES.iter().position(|x| x == s).unwrap_or(5)));
                }
            }
            // Per machine the changes are in time order already; sort by time, then machine, stably.
            ev.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
            let mut state: HashMap<u32, usize> = HashMap::new();
            let mut counts = [0i64; 6];
            let (mut ts, mut cs): (Vec<i64>, Vec<[i64; 6]>) = (Vec::new(), Vec::new());
            for (t, k, s) in ev {
                if t >= window.1 {
                    break;
                }
                if let Some(old) = state.insert(k, s) {
                    counts[old] -= 1;
                }
                counts[s] += 1;
                push_step(&mut ts, &mut cs, tick(t, window), counts);
            }
            json!({ "t": delta(&ts), "c": cs.concat() })
        })
        .collect();
    let depts: Vec<Value> = plant
        .departments
        .iter()
        .enumerate()
        .map(|(d, dep)| {
            let role = match dep.role {
                DepartmentRole::Work => "w",
                DepartmentRole::Receiving => "r",
                DepartmentRole::Shipping => "s",
            };
            json!([dep.id, lay.location_of[d], role, dep.machines])
        })
        .collect();
    let aisles = plant.aisles.as_ref().map(|net| {
        json!({
            "nodes": net.nodes.iter().flat_map(|n| [m(n.x), m(n.y)]).collect::<Vec<_>>(),
            "segs": net.segments.iter().flat_map(|s| [s.from, s.to]).collect::<Vec<_>>(),
            "loc_node": net.location_node,
        })
    });
    let half = 0.3 * crate::render::plant::typical_spacing(plant);
    let c = |x| rgb(x);
    json!({
        "v": 1,
        "plant": plant.name,
        "layout": lay.name,
        "replication": replication,
        "from": window.0,
        "to": window.1,
        "ticks_per_s": TICKS_PER_S,
        "n": tick(window.1, window),
        "why": why,
        "half": m(half),
        "locs": plant.locations.iter().flat_map(|l| [m(l.x), m(l.y)]).collect::<Vec<_>>(),
        "loc_names": plant.locations.iter().map(|l| l.id.as_str()).collect::<Vec<_>>(),
        "depts": depts,
        "aisles": aisles,
        "paths": paths.lines,
        "fleets": fleets,
        "queues": queues,
        "wip": wip,
        "machines": machines,
        "states": MACHINE_STATES,
        "colours": {
            "teal": c(TEAL), "amber": c(AMBER), "slate": c(SLATE), "brick": c(BRICK),
            "aisle": c(AISLE_IDLE),
            "dept_fill": c(mix(TEAL, (255, 255, 255), 0.9)),
            "dock_fill": c(mix(AMBER, (255, 255, 255), 0.75)),
            "empty_loc": c(mix(SLATE, (255, 255, 255), 0.55)),
            "idle": c(mix(TEAL, (255, 255, 255), 0.75)),
            "off_shift": c(mix(SLATE, (255, 255, 255), 0.6)),
            "blocked": c(mix(BRICK, (255, 255, 255), 0.45)),
            // Lots waiting: a dark amber square, apart from a fleet's amber circle.
            "queue": c(mix(AMBER, SLATE, 0.5)),
            "fleets": crate::render::palette::FLEETS.map(c),
        },
        "font": crate::render::plot::FONT_FAMILY,
    })
}

/// `day N HH:MM` for simulated time `t` (the run starts at 00:00 of day 1).
pub(crate) fn clock(t: f64) -> String {
    let day = (t / DAY_S).floor() as i64 + 1;
    let min = ((t - (day - 1) as f64 * DAY_S) / 60.0).floor() as i64;
    format!("day {day} {:02}:{:02}", min / 60, min % 60)
}

fn caption(layout: &str, replication: u64, window: (f64, f64), why: &str) -> String {
    format!(
        "Layout {}, replication {replication}, {} to {} \u{2014} {}.",
        esc(layout),
        clock(window.0),
        clock(window.1),
        esc(why)
    )
}

/// Text for HTML.
fn esc(s: &str) -> String {
    s.replace('&', "&amp;").replace('<', "&lt;").replace('>', "&gt;").replace('"', "&quot;")
}

/// The section: heading, caption, controls, canvas, legend, data and script.
fn fragment(data: &Value, caption: &str) -> String {
    // `<` written as \u003c inside the JSON, so no name can close the script element.
    let json = serde_json::to_string(data).expect("replay data serialise").replace('<', "\\u003c");
    let col = |k: &str| data["colours"][k].as_str().unwrap_or("").to_string();
    let mut legend = String::new();
    let swatch = |fill: &str, stroke: &str, round: bool| {
        format!(
            "<svg width=\"14\" height=\"14\" aria-hidden=\"true\"><{} fill=\"{fill}\" stroke=\"{stroke}\" \
             stroke-width=\"2\"/></svg>",
            if round {
                "circle cx=\"7\" cy=\"7\" r=\"5\""
            } else {
                "rect x=\"1.5\" y=\"1.5\" width=\"11\" height=\"11\""
            }
        )
    };
    for (i, f) in data["fleets"].as_array().into_iter().flatten().enumerate() {
        let c = data["colours"]["fleets"][i % 4].as_str().unwrap_or("").to_string();
        let _ = write!(
            legend,
            "<span class=\"replay-key\">{}{} {} (filled: loaded, hollow: empty)</span>",
            swatch(&c, &c, true),
            swatch("#fff", &c, true),
            esc(f["name"].as_str().unwrap_or(""))
        );
    }
    for (state, key) in [
        ("busy", "teal"),
        ("setting up", "amber"),
        ("blocked", "blocked"),
        ("down", "brick"),
        ("off shift", "off_shift"),
        ("idle", "idle"),
    ] {
        let c = col(key);
        let _ = write!(legend, "<span class=\"replay-key\">{} machine {state}</span>", swatch(&c, &c, false));
    }
    let q = col("queue");
    let _ = write!(
        legend,
        "<span class=\"replay-key\">{} lots waiting for a machine</span>",
        swatch(&q, &q, false)
    );
    let speeds: String = [(60, false), (300, false), (1200, true), (3600, false)]
        .iter()
        .map(|&(s, sel)| {
            format!("<option value=\"{s}\"{}>{s}\u{d7}</option>", if sel { " selected" } else { "" })
        })
        .collect();
    let n = data["n"].as_i64().unwrap_or(0);
    let from = data["from"].as_f64().unwrap_or(0.0);
    format!(
        "<section id=\"replay\" data-frames=\"0\" data-frame-ms-mean=\"0\" data-frame-ms-p95=\"0\" \
         data-interval-ms-mean=\"0\">\n\
         <style>\n{STYLE}</style>\n\
         <h2>Replay of a day</h2>\n\
         <p class=\"replay-caption\">{caption}</p>\n\
         <div class=\"replay-controls\">\
         <button id=\"replay-play\" type=\"button\">Play</button>\
         <label>Speed <select id=\"replay-speed\" title=\"simulated seconds per second\">{speeds}</select></label>\
         <input id=\"replay-slider\" type=\"range\" min=\"0\" max=\"{n}\" step=\"10\" value=\"0\" \
         aria-label=\"time in the replay\">\
         <span id=\"replay-clock\">{}</span></div>\n\
         <canvas id=\"replay-canvas\" role=\"img\" aria-label=\"the plant, its movers, queues and machines over \
         time\"></canvas>\n\
         <div class=\"replay-legend\">{legend}</div>\n\
         <script type=\"application/json\" id=\"replay-data\">{json}</script>\n\
         <script>\n{PLAYER_JS}</script>\n\
         </section>\n",
        clock(from)
    )
}

/// The section's own style, scoped to it.
const STYLE: &str = "#replay{max-width:1400px}\n\
#replay .replay-caption{margin:.2em 0 .6em;color:rgb(61,74,92)}\n\
#replay .replay-controls{display:flex;gap:1em;align-items:center;flex-wrap:wrap;margin:.4em 0}\n\
#replay #replay-play{min-width:5.5em;padding:.3em .8em;border:1px solid rgb(61,74,92);border-radius:4px;\
background:rgb(27,127,121);color:#fff;font:inherit;cursor:pointer}\n\
#replay #replay-slider{flex:1;min-width:12em}\n\
#replay #replay-clock{font-variant-numeric:tabular-nums;font-weight:bold;min-width:7em;color:rgb(61,74,92)}\n\
#replay canvas{display:block;width:100%;border:1px solid rgb(214,219,226);border-radius:4px;background:#fff}\n\
#replay .replay-legend{display:flex;flex-wrap:wrap;gap:.4em 1.4em;margin:.5em 0;font-size:.9em;color:rgb(61,74,92)}\n\
#replay .replay-key{display:inline-flex;align-items:center;gap:.3em}\n";

#[cfg(test)]
mod tests;
