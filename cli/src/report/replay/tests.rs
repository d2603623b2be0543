//! Tests of the replay data against the trace files it is read from, its refusals, and its size.

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use layflow_models::plant::Plant;
use layflow_models::results::folder::sha256_hex;
use layflow_models::sim::RunSpec;
use serde_json::Value;

use super::{build, busiest_day, Replay, ReplayRequest, DAY_S, TICKS_PER_S};
use crate::trace::TraceArgs;

/// The CSP every report page carries (docs/report contract): no request can leave the page.
const CSP: &str = "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; img-src data:";

fn scenario(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..").join("scenarios").join(name)
}

/// Traces replication 1 of `layouts` of `name` into `dir` as `run --trace` does (the scenario's
/// horizon, warm-up and seed; the default window, from the warm-up to the horizon).
fn trace(name: &str, layouts: &[&str], dir: &Path) -> (Plant, String) {
    let path = scenario(name);
    let plant = layflow_models::load_scenario(&path).expect("the scenario loads");
    let which: Vec<usize> =
        layouts.iter().map(|n| plant.layouts.iter().position(|l| l.name == *n).expect("layout")).collect();
    let args = TraceArgs { trace: Some(dir.to_path_buf()), ..TraceArgs::default() };
    let plan = args.prepare(&plant, &which, 1, plant.run.horizon_s).ok().flatten().expect("a trace plan");
    let spec = RunSpec {
        layout: which[0],
        horizon_s: plant.run.horizon_s,
        warmup_s: plant.run.warmup_s,
        demand_factor: plant.demand_factor,
        seed: plant.run.seed,
    };
    plan.write(&plant, &spec, &path).ok().expect("the trace is written");
    let sha = sha256_hex(&std::fs::read(&path).unwrap());
    (plant, sha)
}

fn request<'a>(dir: &'a Path, window: Option<&'a str>, layout: Option<&'a str>) -> ReplayRequest<'a> {
    ReplayRequest { trace: dir, window, layout }
}

/// The replay's embedded JSON.
fn data(r: &Replay) -> Value {
    let start = r.html.find("id=\"replay-data\">").expect("the data element") + "id=\"replay-data\">".len();
    let len = r.html[start..].find("</script>").expect("its end");
    serde_json::from_str(&r.html[start..start + len]).expect("the data is JSON")
}

/// Bytes of the replay's JSON data, as embedded (the rest of the fragment is the player and its controls).
fn data_len(r: &Replay) -> usize {
    let start = r.html.find("id=\"replay-data\">").unwrap() + "id=\"replay-data\">".len();
    r.html[start..].find("</script>").unwrap()
}

/// Bytes of the JSON data of a day of each demo plant (layout current, replication 1, the
/// busiest day): measured, and exact because the trace is seeded.
const DEMO_DATA_BYTES: usize = 59_811;
const AISLES_DATA_BYTES: usize = 63_853;

/// A delta-encoded array decoded to absolute values.
fn cumul(v: &Value) -> Vec<i64> {
    let mut s = 0;
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| {
            s += x.as_i64().unwrap();
            s
        })
        .collect()
}

/// The entry of a step series in force at tick `t`.
fn at(ts: &[i64], t: i64) -> Option<usize> {
    ts.iter().rposition(|&x| x <= t)
}

/// Rows of replication 1 of a trace file as maps of column → value.
fn rows(dir: &Path, file: &str) -> Vec<HashMap<String, String>> {
    let mut r = csv::Reader::from_path(dir.join(file)).unwrap();
    let h = r.headers().unwrap().clone();
    r.records()
        .map(|x| x.unwrap())
        .filter(|x| &x[0] == "1")
        .map(|x| h.iter().zip(x.iter()).map(|(a, b)| (a.to_string(), b.to_string())).collect())
        .collect()
}

fn num(row: &HashMap<String, String>, col: &str) -> Option<f64> {
    row[col].parse().ok()
}

/// A standalone page around the fragment, as the report will make it (doctype, charset, CSP).
fn page(r: &Replay) -> String {
    format!(
        "<!doctype html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n\
         <meta http-equiv=\"Content-Security-Policy\" content=\"{CSP}\">\n\
         <title>layflow replay</title></head>\n<body style=\"font-family:{};margin:1.5em\">\n{}\n\
         <script>document.body.dataset.ready = \"1\";</script>\n</body></html>\n",
        crate::render::plot::FONT_FAMILY,
        r.html
    )
}

/// Writes the page to a temp file, and to `$LAYFLOW_REPLAY_PAGES/NAME` when that is set (to look at it).
fn keep_page(r: &Replay, name: &str, dir: &Path) {
    let html = page(r);
    std::fs::write(dir.join(name), &html).unwrap();
    if let Some(out) = std::env::var_os("LAYFLOW_REPLAY_PAGES") {
        std::fs::write(Path::new(&out).join(name), &html).unwrap();
    }
}

#[test]
fn a_day_of_the_demo_plant_replays_what_the_trace_holds() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("trace");
    let (plant, sha) = trace("demo.yaml", &["current"], &dir);
    let r = build(&plant, &sha, &request(&dir, None, None)).ok().expect("the replay builds");
    keep_page(&r, "demo.html", tmp.path());
    let d = data(&r);
    assert_eq!((r.layout.as_str(), r.replication), ("current", 1));

    // The window: the busiest whole day of the traced window (2 d..20 d), computed here
    // from moves.csv alone: the day with the most `delivered` times in it, the earliest of equals.
    let moves = rows(&dir, "moves.csv");
    let mut per_day: HashMap<i64, usize> = HashMap::new();
    for m in &moves {
        if let Some(t) = num(m, "delivered") {
            *per_day.entry((t / DAY_S).floor() as i64).or_default() += 1;
        }
    }
    let best = (2..20).max_by_key(|k| (per_day.get(k).copied().unwrap_or(0), -k)).unwrap();
    assert_eq!(r.window, (best as f64 * DAY_S, (best + 1) as f64 * DAY_S), "the busiest day");
    assert!(
        r.html.contains("busiest whole day of the trace (most moves delivered: "),
        "the caption says what busiest means"
    );
    let w0 = r.window.0;

    // Queues: at times away from any event (by more than the data's rounding to 0.1 s), the
    // level equals the visits with arrival ≤ t < start (docs/traces.md, visits.csv).
    let visits = rows(&dir, "visits.csv");
    let tick = |t: f64| ((t - w0) * TICKS_PER_S).round() as i64;
    let mut checked = 0;
    let mut nonzero = 0;
    for (di, dep) in plant.departments.iter().enumerate() {
        let q = &d["queues"][di];
        let ts = cumul(&q["t"]);
        for k in 1..60 {
            let t = w0 + f64::from(k) * 1439.0;
            let near = visits
                .iter()
                .filter(|v| v["department"] == dep.id)
                .any(|v| [num(v, "arrival"), num(v, "start")].iter().flatten().any(|&e| (e - t).abs() < 0.1));
            if near {
                continue;
            }
            let want = visits
                .iter()
                .filter(|v| v["department"] == dep.id)
                .filter(|v| num(v, "arrival").unwrap() <= t && num(v, "start").is_none_or(|s| t < s))
                .count() as i64;
            let got = at(&ts, tick(t)).map_or(0, |i| q["n"][i].as_i64().unwrap());
            assert_eq!(got, want, "queue at {} at {t} s", dep.id);
            checked += 1;
            nonzero += usize::from(want > 0);
        }
    }
    assert!(checked > 500 && nonzero > 20, "{checked} checks, {nonzero} with a queue");
    // Lots in the plant: released ≤ t < shipped (lots.csv).
    let lots = rows(&dir, "lots.csv");
    let wt = cumul(&d["wip"]["t"]);
    for k in 1..60 {
        let t = w0 + f64::from(k) * 1439.0;
        if lots
            .iter()
            .any(|l| [num(l, "released"), num(l, "shipped")].iter().flatten().any(|&e| (e - t).abs() < 0.1))
        {
            continue;
        }
        let want = lots
            .iter()
            .filter(|l| num(l, "released").unwrap() <= t && num(l, "shipped").is_none_or(|s| t < s))
            .count() as i64;
        assert!(want > 5);
        assert_eq!(
            d["wip"]["n"][at(&wt, tick(t)).unwrap()].as_i64().unwrap(),
            want,
            "lots in the plant at {t} s"
        );
    }

    // Machines: the counts in each state add up to the department's machines, always, and
    // the busy count at a time equals the machines whose last state change before it is busy.
    let states = rows(&dir, "machine_states.csv");
    for (di, dep) in plant.departments.iter().enumerate().filter(|(_, d)| d.machines > 0) {
        let mc = &d["machines"][di];
        let ts = cumul(&mc["t"]);
        let c: Vec<i64> = mc["c"].as_array().unwrap().iter().map(|x| x.as_i64().unwrap()).collect();
        assert_eq!(c.len(), 6 * ts.len());
        for row in c.chunks(6) {
            assert_eq!(row.iter().sum::<i64>(), i64::from(dep.machines), "{}", dep.id);
        }
        for k in 1..40 {
            let t = w0 + f64::from(k) * 2111.0;
            let mut last: HashMap<&str, (f64, &str)> = HashMap::new();
            let mut near = false;
            for s in states.iter().filter(|s| s["department"] == dep.id) {
                let ts_ = num(s, "time").unwrap();
                near |= (ts_ - t).abs() < 0.1;
                if ts_ <= t && last.get(s["machine"].as_str()).is_none_or(|&(u, _)| u <= ts_) {
                    last.insert(s["machine"].as_str(), (ts_, s["state"].as_str()));
                }
            }
            if near {
                continue;
            }
            let busy = last.values().filter(|(_, s)| *s == "busy").count() as i64;
            let i = at(&ts, tick(t)).expect("a state at every time");
            assert_eq!(c[6 * i], busy, "busy machines of {} at {t} s", dep.id);
        }
    }

    // Movers: a single-load mover drives loaded exactly once in each move it picks up and
    // delivers inside the window (every demo move is between two places), between its
    // pick-up and its delivery; and every loaded drive lies in one of its moves.
    let n = d["n"].as_i64().unwrap();
    for (fi, fleet) in plant.fleets().iter().enumerate() {
        for k in 0..fleet.count as usize {
            let m = &d["fleets"][fi]["movers"][k];
            let starts = cumul(&m["t"]);
            let durs: Vec<i64> = m["d"].as_array().unwrap().iter().map(|x| x.as_i64().unwrap()).collect();
            let loaded: Vec<(i64, i64)> = m["p"]
                .as_array()
                .unwrap()
                .iter()
                .enumerate()
                .filter(|(_, p)| p.as_i64().unwrap() % 2 == 1)
                .map(|(i, _)| (starts[i], starts[i] + durs[i]))
                .collect();
            let mine: Vec<(i64, i64)> = moves
                .iter()
                .filter(|mv| mv["fleet"] == fleet.id && mv["mover"] == (k + 1).to_string())
                .filter_map(|mv| Some((tick(num(mv, "picked_up")?), tick(num(mv, "delivered")?))))
                .collect();
            let inside: Vec<&(i64, i64)> = mine.iter().filter(|(a, b)| *a > 0 && *b < n).collect();
            for (a, b) in &inside {
                let legs = loaded.iter().filter(|(s, e)| a <= s && e <= b).count();
                assert_eq!(legs, 1, "{} {}: the move picked up at tick {a}", fleet.id, k + 1);
            }
            for (s, e) in &loaded {
                assert!(
                    mine.iter().any(|(a, b)| a.max(&0) <= s && e <= b.min(&n)),
                    "{} {}: the loaded drive {s}..{e} lies in a move",
                    fleet.id,
                    k + 1
                );
            }
            assert!(inside.len() > 10, "{} {} moves {} loads in the day", fleet.id, k + 1, inside.len());
        }
    }

    // The size: well under the 3 MB for a day, and its data exactly as measured
    // (deterministic: a fixed seed; a change here means the data or the trace changed).
    assert!(r.data_bytes <= 3_000_000, "{} bytes", r.data_bytes);
    assert_eq!(r.data_bytes, r.html.len());
    assert_eq!(data_len(&r), DEMO_DATA_BYTES, "the demo's replay data, bytes");
}

#[test]
fn the_aisles_demo_drives_along_its_aisles() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("trace");
    let (plant, sha) = trace("aisles-demo.yaml", &["current"], &dir);
    let r = build(&plant, &sha, &request(&dir, None, None)).ok().expect("the replay builds");
    keep_page(&r, "aisles-demo.html", tmp.path());
    let d = data(&r);
    let net = plant.aisles.as_ref().expect("an aisle network");
    // Every path's inner points are nodes of the network (its ends are the locations).
    let paths = d["paths"].as_array().unwrap();
    assert!(!paths.is_empty());
    for p in paths {
        let xy: Vec<f64> = p.as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect();
        for pt in xy.chunks(2).skip(1).take(xy.len() / 2 - 2) {
            assert!(
                net.nodes.iter().any(|n| (n.x - pt[0]).abs() < 0.01 && (n.y - pt[1]).abs() < 0.01),
                "{pt:?} is an aisle node"
            );
        }
    }
    assert!(d["aisles"]["segs"].as_array().unwrap().len() == 2 * net.segments.len());
    assert!(r.data_bytes <= 3_000_000, "{} bytes", r.data_bytes);
    assert_eq!(data_len(&r), AISLES_DATA_BYTES, "the aisles demo's replay data, bytes");
}

#[test]
fn the_busiest_day_is_the_one_with_most_deliveries_inside_the_window() {
    let d = DAY_S;
    let times = [0.5 * d, 1.2 * d, 1.3 * d, 2.1 * d, 2.2 * d, 3.5 * d, 3.6 * d, 3.7 * d];
    // Day 4 (3 d..4 d) has the most, but the window ends at 3.9 d: days 1 to 3 (from 0.5 d: 1 d..3 d).
    assert_eq!(busiest_day(&times, (0.5 * d, 3.9 * d)), Some((d, 2)), "equals: the earliest");
    assert_eq!(busiest_day(&times, (0.0, 4.0 * d)), Some((3.0 * d, 3)));
    assert_eq!(busiest_day(&times, (0.5 * d, 1.9 * d)), None, "no whole day");
}

#[test]
fn bad_traces_and_windows_are_refused_with_what_to_do() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("both");
    let (plant, sha) = trace("demo.yaml", &["current", "proposed"], &dir);
    let refused = |req: ReplayRequest, sha: &str, fragments: &[&str]| {
        let f = build(&plant, sha, &req).err().expect("refused");
        assert_eq!(f.code, 2, "{}", f.message());
        for frag in fragments {
            assert!(f.message().contains(frag), "{:?} lacks {frag:?}", f.message());
        }
    };
    let dirs = dir.display().to_string();
    refused(
        request(&dir, None, None),
        &sha,
        &[&dirs, "several layouts", "\"current\", \"proposed\"", "choose one"],
    );
    refused(request(&dir, None, Some("nope")), &sha, &["no trace of layout \"nope\"", "\"proposed\""]);
    refused(request(&tmp.path().join("none"), None, None), &sha, &["no such folder", "--trace DIR"]);
    let empty = tmp.path().join("empty");
    std::fs::create_dir(&empty).unwrap();
    refused(request(&empty, None, None), &sha, &["not a trace", "trace.json", "layflow run"]);
    let proposed = dir.join("proposed");
    refused(
        request(&proposed, None, None),
        "00ff",
        &["trace of another scenario", "demo.yaml", "--trace DIR"],
    );
    refused(request(&proposed, None, Some("current")), &sha, &["layout \"proposed\", not \"current\""]);
    refused(request(&proposed, Some("1 d..2 d"), None), &sha, &["outside the traced window", "2 d to 20 d"]);
    refused(request(&proposed, Some("19 d..21 d"), None), &sha, &["--replay-window", "the run ends at 20 d"]);
    refused(request(&proposed, Some("5 d"), None), &sha, &["--replay-window", "FROM..TO"]);
    // A window asked for, inside the trace: replayed as asked.
    let ok = build(&plant, &sha, &request(&dir, Some("3 d..3.5 d"), Some("proposed"))).ok().expect("builds");
    assert_eq!((ok.layout.as_str(), ok.window), ("proposed", (3.0 * DAY_S, 3.5 * DAY_S)));
    assert!(ok.html.contains("the window asked for"));
    std::fs::remove_file(proposed.join("visits.csv")).unwrap();
    refused(request(&proposed, None, None), &sha, &["not a whole trace", "visits.csv is missing", "--force"]);
}

#[test]
fn staging_and_breakdowns_show_down_machines_and_drives_to_the_overflow_yard() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path().join("trace");
    let plant = layflow_models::load_scenario(&scenario("staging-breakdowns.yaml")).unwrap();
    let first = plant.layouts[0].name.clone();
    let (plant, sha) = trace("staging-breakdowns.yaml", &[&first], &dir);
    let r = build(&plant, &sha, &request(&dir, None, None)).ok().expect("the replay builds");
    keep_page(&r, "staging-breakdowns.html", tmp.path());
    let d = data(&r);
    // Counts per state (busy, setup, blocked, down, off_shift, idle) add up to the machines,
    // and the day shows some down machine time (blocking is rare here: once in the run).
    let mut seen = [false; 6];
    for (di, dep) in plant.departments.iter().enumerate().filter(|(_, d)| d.machines > 0) {
        let c: Vec<i64> =
            d["machines"][di]["c"].as_array().unwrap().iter().map(|x| x.as_i64().unwrap()).collect();
        for row in c.chunks(6) {
            assert_eq!(row.iter().sum::<i64>(), i64::from(dep.machines), "{}", dep.id);
            for (s, &n) in row.iter().enumerate() {
                seen[s] |= n > 0;
            }
        }
    }
    assert!(seen[0] && seen[3], "busy and down machines appear: {seen:?}");
    // Loads taken on to the overflow yard (moves to "<department> overflow") are driven there.
    let yard = plant.departments.iter().find_map(|d| d.staging.overflow).expect("an overflow area");
    let (yx, yy) = (plant.locations[yard].x, plant.locations[yard].y);
    let to_yard = d["paths"].as_array().unwrap().iter().any(|p| {
        let xy = p.as_array().unwrap();
        let n = xy.len();
        (xy[n - 2].as_f64().unwrap() - yx).abs() < 0.01 && (xy[n - 1].as_f64().unwrap() - yy).abs() < 0.01
    });
    assert!(to_yard, "a path ends at the overflow yard");
    assert!(r.data_bytes <= 3_000_000);
}

#[test]
fn tow_trains_and_every_fleet_rule_replay_inside_their_moves() {
    for name in ["validation/tow-train.yaml", "validation/all-fleet-rules.yaml"] {
        let tmp = tempfile::tempdir().unwrap();
        let dir = tmp.path().join("trace");
        let plant = layflow_models::load_scenario(&scenario(name)).unwrap();
        let first = plant.layouts[0].name.clone();
        let (plant, sha) = trace(name, &[&first], &dir);
        let r = build(&plant, &sha, &request(&dir, None, None)).ok().expect("the replay builds");
        let d = data(&r);
        let (w0, n) = (r.window.0, d["n"].as_i64().unwrap());
        let tick = |t: f64| ((t - w0) * TICKS_PER_S).round() as i64;
        let moves = rows(&dir, "moves.csv");
        let mut loaded_legs = 0;
        // Every loaded drive lies inside one of its mover's moves (a tow train's drive between two
        // pick-ups lies inside the first load's move), and a mover is drawn loaded only then.
        for (fi, fleet) in plant.fleets().iter().enumerate() {
            for k in 0..fleet.count as usize {
                let m = &d["fleets"][fi]["movers"][k];
                let starts = cumul(&m["t"]);
                let mine: Vec<(i64, i64)> = moves
                    .iter()
                    .filter(|mv| mv["fleet"] == fleet.id && mv["mover"] == (k + 1).to_string())
                    .filter_map(|mv| Some((tick(num(mv, "picked_up")?), tick(num(mv, "delivered")?))))
                    .collect();
                for (i, p) in m["p"].as_array().unwrap().iter().enumerate() {
                    if p.as_i64().unwrap() % 2 == 1 {
                        let (s, e) = (starts[i], starts[i] + m["d"][i].as_i64().unwrap());
                        assert!(
                            mine.iter().any(|(a, b)| *a.max(&0) <= s && e <= *b.min(&n)),
                            "{name}: {} {}: the loaded drive {s}..{e} lies in a move",
                            fleet.id,
                            k + 1
                        );
                        loaded_legs += 1;
                    }
                }
            }
        }
        // The tow-train check has four lots: out to bay-a with three, on to bay-b, and out again with one.
        assert!(loaded_legs >= 3, "{name}: {loaded_legs} loaded drives");
        if name.contains("tow") {
            assert_eq!(loaded_legs, 3);
            // A one-hour run holds no whole day: the replay is of the traced window.
            assert_eq!(r.window, (0.0, 3600.0));
            assert!(r.html.contains("holds no whole day"));
        }
    }
}
