//! End-to-end tests of `layflow fleet`: the sweep, the named size, the picture and bad arguments.

mod common;

use std::process::Output;

use common::{layflow, render_png, resvg, svg_texts, text, without_text};

const SHORT: &[&str] = &["--replications", "5", "--horizon", "5 d", "--warmup", "1 d", "--quiet"];

fn fleet(extra: &[&str]) -> Output {
    let mut a = vec!["fleet", "scenarios/demo.yaml", "--fleet", "forklifts"];
    a.extend_from_slice(SHORT);
    a.extend_from_slice(extra);
    layflow(&a)
}

#[test]
fn names_the_smallest_size_that_meets_every_target() {
    let out = fleet(&[
        "--sizes",
        "1..4",
        "--target",
        "move_wait_p95 <= 2.5 min",
        "--format",
        "json",
        "--no-wall-clock",
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let sizes = v["sizes"].as_array().unwrap();
    assert_eq!(sizes.len(), 4);
    // One forklift leaves loads waiting tens of minutes; two keep the p95 near 2 min.
    assert_eq!(sizes[0]["meets_every_target"], false);
    let named = v["smallest_meeting_targets"].as_u64().unwrap();
    assert!(named >= 2, "{named}");
    let first_met = sizes.iter().position(|s| s["meets_every_target"] == true).unwrap();
    assert_eq!(sizes[first_met]["movers"].as_u64().unwrap(), named);
    assert!(v["analytic"]["minimum_empty_flow"]["vehicles"].as_f64().unwrap() > 0.0);
    // Utilisation falls as movers are added.
    let u: Vec<f64> = sizes.iter().map(|s| s["utilization"]["mean"].as_f64().unwrap()).collect();
    assert!(u.windows(2).all(|w| w[1] < w[0]), "{u:?}");
}

#[test]
fn says_plainly_when_no_size_in_the_range_will_do() {
    let out = fleet(&["--sizes", "1", "--target", "move_wait <= 1 s"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    assert!(s.contains("No size from 1 to 1 meets every target"), "{s}");
    assert!(s.contains("Analytic estimate"), "the analytic estimate comes first:\n{s}");
}

#[test]
fn draws_the_picture_as_svg() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("sizes.svg");
    let out = fleet(&["--sizes", "2,3", "--target", "utilization <= 85%", "--plot", p.to_str().unwrap()]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    // A second run does not overwrite the picture without --force (refused before anything runs).
    let again = fleet(&["--sizes", "2,3", "--plot", p.to_str().unwrap()]);
    assert_eq!(again.status.code(), Some(2), "{}", text(&again.stderr));
    assert!(text(&again.stderr).contains("already exists"), "{}", text(&again.stderr));
    let svg = std::fs::read_to_string(&p).unwrap();
    assert!(
        svg.starts_with("<svg")
            && svg.contains("movers in the fleet")
            && svg.contains("utilization &lt;= 85%")
    );
}

#[test]
fn bad_arguments_exit_2_with_a_reason() {
    for (args, needle) in [
        (vec!["--sizes", "4..2"], "backwards"),
        (vec!["--sizes", "3,2"], "increasing order"),
        (vec!["--sizes", "0..2"], "at least one mover"),
        (vec!["--sizes", "two"], "not a whole number"),
        (vec!["--sizes", "2", "--target", "wait_time <= 5 min"], "unknown metric"),
        (vec!["--sizes", "2", "--target", "move_wait_p95 <= 5"], "needs a unit"),
        (vec!["--sizes", "2", "--target", "utilization <= 5 min"], "is a share"),
        (vec!["--sizes", "2", "--plot", "out.png"], "SVG"),
        (vec!["--sizes", "2", "--layout", "nowhere"], "no such layout"),
    ] {
        let out = fleet(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {}", text(&out.stderr));
        assert!(text(&out.stderr).contains(needle), "{args:?}: expected {needle:?} in {}", text(&out.stderr));
    }
    let out = layflow(&["fleet", "scenarios/demo.yaml", "--fleet", "tuggers", "--sizes", "2"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("no such fleet"));
    // Two fleets and no --fleet: ask which.
    let out = layflow(&["fleet", "scenarios/demo.yaml", "--sizes", "2"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("--fleet is needed"));
    // Instant moves: nothing to size.
    let out = layflow(&["fleet", "scenarios/validation/mm1.yaml", "--sizes", "1..2"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("moves: instant"));
}

/// Issue "one home per concept": `fleet` at the scenario's own size and `run`
/// with the same seed once gave two utilisations for one fleet. Both now read
/// the metric registry, so every metric they share must agree, on a plant
/// with blocking (movers waiting at a full inbound area), machine and mover
/// breakdowns, charging and operators' shifts. 1e-12: the two commands
/// compute the same sums in the same order, so only the last bit may differ.
#[test]
fn fleet_at_the_scenarios_own_size_reports_what_run_reports() {
    let scenario = "scenarios/validation/fleet-run-agree.yaml";
    let common = ["--seed", "11", "--no-wall-clock", "--quiet", "--format", "json"];
    let mut a = vec!["run", scenario];
    a.extend_from_slice(&common);
    let run = layflow(&a);
    assert!(run.status.success(), "{}", text(&run.stderr));
    let mut a = vec!["fleet", scenario, "--sizes", "3"];
    a.extend_from_slice(&common);
    let fleet = layflow(&a);
    assert!(fleet.status.success(), "{}", text(&fleet.stderr));
    let run: serde_json::Value = serde_json::from_slice(&run.stdout).unwrap();
    let fleet: serde_json::Value = serde_json::from_slice(&fleet.stdout).unwrap();
    let layout = &run["layouts"][0];
    let run_fleet = &layout["fleets"][0];
    assert_eq!(run_fleet["movers"], 3, "the scenario's own size");
    let size = &fleet["sizes"][0];
    let close = |a: &serde_json::Value, b: &serde_json::Value| match (a.as_f64(), b.as_f64()) {
        (Some(x), Some(y)) => (x - y).abs() <= 1e-12 * x.abs().max(1.0),
        _ => a == b,
    };
    let mut shared = Vec::new();
    let fleet_keys = run_fleet.as_object().unwrap().keys().map(|k| (k.clone(), &run_fleet[k.as_str()]));
    let plant_keys = ["throughput_per_h", "wip_mean", "flow_time_s"].map(|k| (k.to_string(), &layout[k]));
    for (key, want) in fleet_keys.chain(plant_keys) {
        let got = &size[key.as_str()];
        if want.get("mean").is_none() || got.is_null() {
            continue; // not an estimate, or not a metric fleet reports (distances)
        }
        for part in ["mean", "half_width", "n"] {
            assert!(
                close(&want[part], &got[part]),
                "{key}.{part}: run {} but fleet {}",
                want[part],
                got[part]
            );
        }
        shared.push(key);
    }
    // The test means something only if the shares that once differed are among them.
    for key in ["utilization", "idle_share", "blocked_share", "availability", "utilization_scheduled"] {
        assert!(shared.iter().any(|k| k == key), "{key} is not reported by both: {shared:?}");
    }
    assert!(shared.len() >= 14, "{shared:?}");
}

/// Issue 14: the fleet chart drew the wait on a linear scale where one
/// forklift's hour-long queue flattened every size near the target, marked no
/// recommended size, drew only wait and share targets, and printed ticks such
/// as "30.00". Now: wait on a log scale, the recommended size on every panel,
/// a cost-per-hour panel, each target on the panel of its unit.
#[test]
fn the_chart_shows_the_wait_on_a_log_scale_the_recommended_size_and_every_target() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("sizes.svg");
    let out = fleet(&[
        "--sizes",
        "1..4",
        "--target",
        "move_wait_p95 <= 2.5 min",
        "--target",
        "utilization <= 85%",
        "--target",
        "handling_cost_per_h <= 400",
        "--target",
        "throughput_per_h >= 5",
        "--format",
        "json",
        "--plot",
        p.to_str().unwrap(),
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let named = v["smallest_meeting_targets"].as_u64().expect("a size meets every target");
    let svg = std::fs::read_to_string(&p).unwrap();
    for needle in [
        "wait for a mover (log scale)".to_string(),
        format!("recommended: {named} movers"),
        "handling cost per hour".into(),
        "target: forklifts/move_wait_p95_s &lt;= 2.5 min".into(),
        "target: forklifts/utilization &lt;= 85%".into(),
        "target: forklifts/handling_cost_per_h &lt;= 400".into(),
        "target: throughput_per_h &gt;= 5".into(),
    ] {
        assert!(svg.contains(&needle), "{needle:?} missing");
    }
    let texts = svg_texts(&svg);
    // The recommended size is marked on each of the four panels (wait, share, cost, throughput).
    let marks = texts.iter().filter(|t| t.1 == format!("recommended: {named} movers")).count();
    assert_eq!(marks, 4);
    for (_, content) in &texts {
        if content.parse::<f64>().is_ok() && content.contains('.') {
            assert!(!content.ends_with('0'), "tick label {content:?} has a useless decimal");
        }
    }
}

/// Issue 14: `resvg chart.svg chart.png` drew no text, because the charts
/// named only `sans-serif`, which resvg maps to Arial, absent on most Linux
/// machines. Every text now names DejaVu Sans, Liberation Sans, Noto Sans,
/// then sans-serif. Without a PNG decoder, "text is drawn" is checked by
/// rendering the chart with and without its `<text>` elements: the PNGs
/// differ only if resvg found a font.
#[test]
fn the_chart_names_open_fonts_and_resvg_draws_its_text() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("fonts.svg");
    let out = fleet(&["--sizes", "2,3", "--target", "utilization <= 85%", "--plot", p.to_str().unwrap()]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let svg = std::fs::read_to_string(&p).unwrap();
    let texts = svg_texts(&svg);
    assert!(texts.len() > 20);
    for (family, content) in &texts {
        assert_eq!(family, "DejaVu Sans, Liberation Sans, Noto Sans, sans-serif", "{content}");
    }
    let Some(resvg) = resvg("the fleet chart") else { return };
    let q = dir.path().join("bare.svg");
    std::fs::write(&q, without_text(&svg)).unwrap();
    let png = |svg: &std::path::Path| render_png(&resvg, svg);
    assert_ne!(png(&p), png(&q), "resvg drew no text: no font of the list was found");
}

fn runners(extra: &[&str]) -> Output {
    let mut a = vec!["fleet", "scenarios/demo.yaml", "--fleet", "runners"];
    a.extend_from_slice(SHORT);
    a.extend_from_slice(extra);
    layflow(&a)
}

/// The demo's runners walk home after every delivery and every pick-up is a
/// walk from there: the p95 of that walk alone is over a minute (62.5 s), so a
/// one-minute p95 wait cannot be met by any number of runners.
#[test]
fn a_wait_set_by_the_drive_to_the_pick_up_is_not_a_matter_of_size() {
    let args = ["--sizes", "2,4,8,16", "--target", "move_wait_p95_s <= 1 min"];
    let out = runners(&args);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    assert!(s.contains("cannot be met by fleet size alone"), "{s}");
    assert!(s.contains("runners/move_wait_drive_p95_s"), "the floor is named:\n{s}");
    assert!(s.contains("when_idle: park"), "the levers are named:\n{s}");
    assert!(!s.to_lowercase().contains("try larger sizes"), "{s}");
    assert!(s.contains("Analytic and simulation differ"), "{s}");

    let mut json = args.to_vec();
    json.extend(["--format", "json", "--no-wall-clock"]);
    let out = runners(&json);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["advice"]["kind"], "size_cannot_meet", "{}", v["advice"]);
    let floor = v["advice"]["floor_s"].as_f64().unwrap();
    assert!(floor > 60.0, "{floor}");
    assert!(!v["advice"]["levers"].as_array().unwrap().is_empty());
    assert_eq!(v["advice"]["failing"][0]["below_floor"], true);
    assert_eq!(v["advice"]["analytic"]["agree"], false);
    // Every size carries the two parts; they add up to the wait.
    for size in v["sizes"].as_array().unwrap() {
        let m = |k: &str| size[k]["mean"].as_f64().unwrap();
        let (w, a, d) = (m("move_wait_s"), m("move_wait_assign_s"), m("move_wait_drive_s"));
        assert!((a + d - w).abs() <= 1e-9 * w, "{a} + {d} vs {w}");
        assert!(size["move_wait_assign_p95_s"]["mean"].is_f64());
    }
}

/// Between 8 and 16 runners nothing changes (every lot already finds a free
/// runner), so a throughput target they miss is no reason to try more.
#[test]
fn never_advises_larger_sizes_when_the_last_ones_did_not_improve() {
    let out = runners(&["--sizes", "8,16", "--target", "throughput_per_h >= 100", "--format", "json"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(v["advice"]["kind"], "not_improving_with_size", "{}", v["advice"]);
    assert_eq!(v["advice"]["failing"][0]["improving"], false);
    let out = runners(&["--sizes", "8,16", "--target", "throughput_per_h >= 100"]);
    let s = text(&out.stdout);
    assert!(s.contains("Larger sizes are unlikely to help"), "{s}");
    assert!(!s.to_lowercase().contains("try larger sizes"), "{s}");
}

/// Busy share falls from one forklift to two: a busy-share target missed at
/// both is still improving, and only then are larger sizes suggested.
#[test]
fn advises_larger_sizes_only_while_the_metric_still_improves() {
    let out = fleet(&["--sizes", "1,2", "--target", "utilization <= 10%"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    assert!(s.contains("still improving"), "{s}");
    assert!(s.contains("try larger sizes"), "{s}");
}

/// The drive to the pick-up is a floor only once more movers stop shortening
/// it. With one size there is nothing to judge that by, and from one forklift
/// to two the drive still falls (an extra idle truck waits nearer), so neither
/// may be called "cannot be met by fleet size alone".
#[test]
fn a_drive_that_still_falls_with_size_is_not_called_a_floor() {
    let json = |sizes: &str, target: &str| {
        let out = fleet(&["--sizes", sizes, "--target", target, "--format", "json"]);
        assert!(out.status.success(), "{}", text(&out.stderr));
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        v["advice"]["kind"].as_str().unwrap().to_string()
    };
    assert_eq!(json("2", "move_wait_s <= 5 s"), "add_sizes");
    let drive = |sizes: &str| {
        let out = fleet(&["--sizes", sizes, "--format", "json"]);
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        v["sizes"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s["move_wait_drive_s"]["mean"].as_f64().unwrap())
            .collect::<Vec<_>>()
    };
    let d = drive("1,2");
    assert!(d[1] < d[0], "the drive falls from one forklift to two: {d:?}");
    assert_ne!(json("1,2", "move_wait_s <= 5 s"), "size_cannot_meet");
}

/// Issue 16: `fleet --by hour-of-day` carries every bucket of every size in
/// tidy rows, and the buckets add up to the whole window.
///
/// Why the sum holds exactly: a bucket's fleet utilisation is the fleet's
/// busy time inside the bucket ÷ (movers × the bucket's exposure), and the
/// buckets split the observation window (and every busy interval at their
/// boundaries) without gap or overlap. So Σ_b u_b·w_b ÷ Σ_b w_b =
/// Σ_b busy_b ÷ (movers·W) = the whole window's utilisation. With one
/// replication each mean is that replication's value, so the identity holds
/// to rounding: 24 products and a sum of doubles, far below 1e-9.
#[test]
fn by_hour_of_day_reports_every_bucket_of_every_size_and_adds_up() {
    let args = [
        "fleet",
        "scenarios/demo.yaml",
        "--fleet",
        "forklifts",
        "--sizes",
        "2,3",
        "--replications",
        "1",
        "--horizon",
        "3 d",
        "--warmup",
        "1 d",
        "--quiet",
        "--no-wall-clock",
        "--by",
        "hour-of-day",
        "--format",
        "json",
        "--target",
        "move_wait_p95_s <= 5 min",
    ];
    let out = layflow(&args);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let b = &v["by_bucket"];
    assert_eq!(b["by"], "hour-of-day");
    let buckets = b["buckets"].as_array().unwrap();
    assert_eq!(buckets.len(), 24);
    let rows = b["rows"].as_array().unwrap();
    for size in [2, 3] {
        let fleet_util: Vec<f64> = buckets
            .iter()
            .map(|k| {
                let r = rows
                    .iter()
                    .find(|r| {
                        r["movers"] == size
                            && r["bucket"] == k["bucket"]
                            && r["subject"] == "forklifts"
                            && r["metric"] == "utilization"
                    })
                    .unwrap_or_else(|| panic!("no utilisation row for {size} movers in {}", k["bucket"]));
                assert_eq!(r["n"], 1);
                r["mean"].as_f64().unwrap()
            })
            .collect();
        // Every metric of the size is in every bucket.
        let per_size = rows.iter().filter(|r| r["movers"] == size).count();
        assert_eq!(per_size % 24, 0);
        assert!(per_size / 24 > 20, "every bucketed metric, not a few: {per_size}");
        let w: Vec<f64> = buckets.iter().map(|k| k["exposure_h"].as_f64().unwrap()).collect();
        let weighted = fleet_util.iter().zip(&w).map(|(u, w)| u * w).sum::<f64>() / w.iter().sum::<f64>();
        let whole = v["sizes"].as_array().unwrap().iter().find(|s| s["movers"] == size).unwrap()
            ["utilization"]["mean"]
            .as_f64()
            .unwrap();
        assert!((weighted - whole).abs() < 1e-9, "{size} movers: buckets {weighted} vs whole {whole}");
        let peak = b["peaks"].as_array().unwrap().iter().find(|p| p["movers"] == size).unwrap();
        assert!(peak["fleet_move_wait_p95_s"]["bucket"].is_string());
    }
    // The table says what the buckets cannot tell, for the recommended size.
    // With three replications size 2 meets the target over the whole window.
    let mut a: Vec<&str> = args.iter().copied().filter(|x| !["json", "--format"].contains(x)).collect();
    a[7] = "3";
    let table = layflow(&a);
    assert!(table.status.success(), "{}", text(&table.stderr));
    let t = text(&table.stdout);
    assert!(t.contains("Fleet forklifts by hour of day"), "{t}");
    assert!(t.contains("size 2 meets the target 'move_wait_p95_s <= 5 min'"), "{t}");
    assert!(t.contains("peak at 3 movers: forklifts wait p95 highest at"), "{t}");
    // The bucket section fits 100 columns (the sweep's own lines above it are not this issue's).
    let section = &t[t.find("Fleet forklifts by hour of day").unwrap()..];
    assert!(section.lines().all(|l| l.chars().count() <= 100), "{section}");
}

/// Issue 16: when the recommended size meets a target over the whole window
/// but its worst bucket misses it on average, the table says so outright.
/// (Seeded: with these settings size 2's whole-window p95 wait meets 2.3 min
/// with 95% confidence while 09:00–10:00 averages above it; a change to the
/// simulation's draws may move that bucket, not the sentence's form.)
#[test]
fn by_hour_of_day_says_when_the_recommended_size_misses_at_its_peak() {
    let out = layflow(&[
        "fleet",
        "scenarios/demo.yaml",
        "--fleet",
        "forklifts",
        "--sizes",
        "2,3",
        "--replications",
        "8",
        "--horizon",
        "5 d",
        "--warmup",
        "1 d",
        "--quiet",
        "--no-wall-clock",
        "--by",
        "hour-of-day",
        "--target",
        "move_wait_p95_s <= 2.3 min",
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let t = text(&out.stdout);
    assert!(t.contains("Smallest size meeting every target with 95% confidence: 2 movers"), "{t}");
    assert!(
        t.contains("size 2 meets the target 'move_wait_p95_s <= 2.3 min' over the whole window but its"),
        "{t}"
    );
}
