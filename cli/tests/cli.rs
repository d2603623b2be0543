//! End-to-end tests of the `layflow` binary: exit codes, output formats, reproducibility.
//!
//! They live beside the binary because Cargo builds a package's executable
//! for its own integration tests only (`CARGO_BIN_EXE_layflow`).

mod common;

use std::path::PathBuf;

use common::{layflow, root, text};

/// Every scenario shipped in `scenarios/` and `scenarios/validation/` (SimPy's
/// rule: every example is run by the tests).
fn example_scenarios() -> Vec<PathBuf> {
    let mut v = Vec::new();
    for dir in ["scenarios", "scenarios/validation"] {
        for e in std::fs::read_dir(root().join(dir)).expect("scenario folder") {
            let p = e.expect("entry").path();
            if p.extension().is_some_and(|x| x == "yaml") {
                v.push(p);
            }
        }
    }
    v.sort();
    assert!(v.len() >= 3, "expected the demo and validation scenarios, found {v:?}");
    v
}

#[test]
fn every_example_scenario_checks_and_runs() {
    for p in example_scenarios() {
        let p = p.to_str().expect("utf-8 path");
        let out = layflow(&["check", p]);
        assert!(out.status.success(), "check {p} failed:\n{}", text(&out.stderr));
        assert!(text(&out.stdout).contains("From-to chart"), "check {p} printed no from-to chart");
        // A short run of every example: it must finish and report every layout.
        let out = layflow(&[
            "run",
            p,
            "--replications",
            "2",
            "--horizon",
            "3 d",
            "--warmup",
            "1 d",
            "--format",
            "json",
        ]);
        assert!(out.status.success(), "run {p} failed:\n{}", text(&out.stderr));
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("run prints JSON");
        assert!(!v["layouts"].as_array().expect("layouts").is_empty());
        assert!(v["events"].as_u64().expect("events") > 0);
    }
}

#[test]
fn bad_scenarios_exit_with_code_2_and_name_the_file() {
    let dir = root().join("scenarios/bad");
    let mut n = 0;
    for e in std::fs::read_dir(&dir).expect("bad corpus") {
        let p = e.expect("entry").path();
        if p.extension().is_none_or(|x| x != "yaml") {
            continue;
        }
        n += 1;
        let name = p.file_name().unwrap().to_str().unwrap().to_string();
        for verb in ["check", "run"] {
            let out = layflow(&[verb, p.to_str().unwrap()]);
            let err = text(&out.stderr);
            assert_eq!(out.status.code(), Some(2), "{verb} {name}: expected exit 2, stderr:\n{err}");
            assert!(err.contains(&name), "{verb} {name}: message does not name the file:\n{err}");
            assert!(!err.contains("panicked"), "{verb} {name} panicked:\n{err}");
            assert!(err.lines().count() <= 25, "{verb} {name}: message longer than a screen:\n{err}");
        }
    }
    assert!(n >= 20, "the bad-input corpus has only {n} files");
}

#[test]
fn bad_arguments_exit_with_code_2() {
    let demo = "scenarios/demo.yaml";
    for (args, fragment) in [
        (vec!["run", demo, "--layout", "nowhere"], "no such layout"),
        (vec!["run", demo, "--horizon", "10"], "unit"),
        (vec!["run", demo, "--horizon", "1 d", "--warmup", "2 d"], "longer than the warm-up"),
        (vec!["run", demo, "--replications", "0"], "at least 1"),
        (vec!["run", demo, "--threads", "0"], "at least 1"),
        (vec!["run", demo, "--demand", "0"], "positive"),
        (vec!["check", "scenarios/no-such-file.yaml"], "no-such-file.yaml"),
        (vec!["run", demo, "--no-such-flag"], "unexpected argument"),
    ] {
        let out = layflow(&args);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: stderr:\n{err}");
        assert!(err.contains(fragment), "{args:?}: expected {fragment:?} in:\n{err}");
    }
}

#[test]
fn same_seed_gives_byte_identical_json_whatever_the_thread_count() {
    let run = |extra: &[&str]| {
        let mut args = vec![
            "run",
            "scenarios/demo.yaml",
            "--replications",
            "6",
            "--horizon",
            "4 d",
            "--warmup",
            "1 d",
            "--format",
            "json",
            "--no-wall-clock",
        ];
        args.extend_from_slice(extra);
        let out = layflow(&args);
        assert!(out.status.success(), "{}", text(&out.stderr));
        out.stdout
    };
    let one = run(&["--threads", "1"]);
    assert_eq!(one, run(&["--threads", "2"]), "--threads 2 changed the JSON");
    assert_eq!(one, run(&["--threads", "3"]), "--threads 3 changed the JSON");
    // And a different seed does change it (so the comparison can fail).
    assert_ne!(one, run(&["--seed", "7"]), "the seed has no effect");
}

#[test]
fn json_has_the_documented_keys_and_units() {
    let out = layflow(&[
        "run",
        "scenarios/demo.yaml",
        "--replications",
        "3",
        "--horizon",
        "3 d",
        "--format",
        "json",
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["wall_s"].as_f64().unwrap() > 0.0);
    assert_eq!(v["replications"], 3);
    let l = &v["layouts"][0];
    for key in [
        "throughput_per_h",
        "wip_mean",
        "wip_in_transit_mean",
        "distance_loaded_m_per_h",
        "handling_cost_per_h",
    ] {
        let m = &l[key];
        assert!(m["mean"].is_number() && m["half_width"].is_number(), "{key}: {m}");
        assert_eq!(m["n"], 3, "{key}");
    }
    for key in ["flow_time_s", "move_wait_s"] {
        for q in ["mean", "half_width", "n", "p50", "p90", "p95", "p99"] {
            assert!(l[key][q].is_number(), "{key}.{q} missing: {}", l[key]);
        }
        let (p50, p99) = (l[key]["p50"].as_f64().unwrap(), l[key]["p99"].as_f64().unwrap());
        assert!(p50 <= p99, "{key}: p50 {p50} above p99 {p99}");
    }
    let f = &l["fleets"][0];
    let shares: f64 = ["loaded_travel_share", "empty_travel_share", "handling_share", "idle_share"]
        .iter()
        .map(|k| f[k]["mean"].as_f64().unwrap())
        .sum();
    assert!((shares - 1.0).abs() < 1e-9, "fleet time shares sum to {shares}");
    assert!(l["departments"][1]["utilization"]["mean"].as_f64().unwrap() > 0.0);
}

#[test]
fn table_output_is_readable() {
    let out = layflow(&["run", "scenarios/demo.yaml", "--replications", "3", "--horizon", "3 d"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let t = text(&out.stdout);
    for fragment in [
        "== layout current ==",
        "== layout proposed ==",
        "throughput",
        "lots/h",
        "flow time",
        "p95",
        "wait for a mover",
        "static load-distance",
        "utilisation",
        "forklifts",
        "runners",
        "layouts side by side",
    ] {
        assert!(t.contains(fragment), "table lacks {fragment:?}:\n{t}");
    }
    assert!(!t.contains("NaN") && !t.contains("-0.0"), "odd numbers in the table:\n{t}");
}

#[test]
fn overloaded_plant_warns_loudly() {
    let out = layflow(&["check", "scenarios/demo.yaml", "--demand", "1.5"]);
    assert!(out.status.success());
    let err = text(&out.stderr);
    assert!(err.contains("WARNING") && err.contains("inspection") && err.contains("cannot keep up"), "{err}");
    let out = layflow(&["check", "scenarios/demo.yaml"]);
    assert!(!text(&out.stderr).contains("WARNING"), "the demo plant itself should not be overloaded");
}

#[test]
fn extreme_but_valid_parameters_run_without_panicking() {
    // Valid values at the ceilings of docs/limits.md: a location 1,000 km
    // away crossed at 1 mm/s (a travel time of 31 years), a near-zero demand
    // rate, heavy-tailed times with the largest spread allowed. The run must
    // finish (exit 0) and warn, not panic on a huge event time. (Beyond the
    // ceilings the same plant is refused: `scenarios/bad/ceiling-*.yaml`.)
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("extreme.yaml");
    std::fs::write(
        &path,
        r#"plant: extreme values (invented)
run: { horizon: 2 h, replications: 2 }
locations:
  - { id: a, at: [0, 0] }
  - { id: b, at: [1e6, 0] }
  - { id: c, at: [5, 5] }
departments:
  - { id: in, dock: receiving }
  - { id: work, machines: 1 }
  - { id: out, dock: shipping }
layouts:
  l: { in: a, work: b, out: c }
products:
  - id: rare
    demand: { per_hour: 1e-300 }
    routing:
      - { step: w, at: work, time: { lognormal: { mean: 1e9 s, cv: 3 } } }
      - { step: s, at: out }
  - id: busy
    demand: { per_hour: 100 }
    routing:
      - { step: w, at: work, time: { weibull: { scale: 1 s, shape: 0.1 } } }
      - { step: s, at: out }
fleets:
  - { id: f, kind: walker, count: 1, speed: { loaded: 0.001 m/s, empty: 100 m/s }, home: a }
"#,
    )
    .unwrap();
    let out = layflow(&["run", path.to_str().unwrap(), "--format", "json"]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "stderr:\n{err}");
    assert!(!err.contains("panicked"), "{err}");
    assert!(err.contains("WARNING"), "expected an overload warning:\n{err}");
}

/// Issue "answers a plant can act on": default tables fit 100 columns and say
/// what they hid; `--wide` shows every column; a column of durations has one
/// unit (here the fleet table's waits, from a few seconds to many minutes).
#[test]
fn tables_fit_100_columns_with_one_unit_per_column_and_wide_shows_all() {
    let args = [
        "fleet",
        "scenarios/demo.yaml",
        "--fleet",
        "forklifts",
        "--sizes",
        "1..3",
        "--replications",
        "3",
        "--horizon",
        "3 d",
        "--warmup",
        "12 h",
        "--quiet",
    ];
    let out = layflow(&args);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    let lines: Vec<&str> = s.lines().collect();
    let head = lines.iter().position(|l| l.trim_start().starts_with("movers")).expect("the size table");
    let table: Vec<&str> = lines[head..].iter().take_while(|l| !l.trim().is_empty()).copied().collect();
    let rows: Vec<&str> =
        table.iter().copied().filter(|l| l.trim_start().starts_with(char::is_numeric)).collect();
    assert_eq!(rows.len(), 3, "{s}");
    assert!(table[0].chars().count() <= 100 && rows.iter().all(|l| l.chars().count() <= 100), "{s}");
    assert!(s.contains("shown by --wide") && !table[0].contains("load/unload"), "{s}");
    // The wait column: every cell ends in the same unit.
    let units: Vec<&str> = rows
        .iter()
        .map(|r| {
            let cells: Vec<&str> = r.split("  ").map(str::trim).filter(|c| !c.is_empty()).collect();
            cells[3].rsplit(' ').next().unwrap()
        })
        .collect();
    assert!(units.windows(2).all(|w| w[0] == w[1]), "wait units {units:?}\n{s}");
    let mut wide = args.to_vec();
    wide.push("--wide");
    let out = layflow(&wide);
    let s = text(&out.stdout);
    assert!(s.contains("load/unload") && !s.contains("shown by --wide"), "{s}");
}

/// The statistical working of a selection is behind `--verbose`; the default
/// states the conclusion and its guarantee in words.
#[test]
fn selection_constants_only_with_verbose() {
    let args = [
        "compare",
        "scenarios/demo.yaml",
        "--select",
        "--indifference",
        "10 min",
        "--max-replications",
        "12",
        "--horizon",
        "3 d",
        "--warmup",
        "12 h",
        "--quiet",
    ];
    let out = layflow(&args);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    assert!(s.contains("to within 10 min with 95% confidence") && !s.contains("h² ="), "{s}");
    let mut verbose = args.to_vec();
    verbose.push("--verbose");
    let s = text(&layflow(&verbose).stdout);
    assert!(s.contains("h² =") && s.contains("n₀ = 10"), "{s}");
}

#[test]
fn check_lists_queue_orders_priorities_and_due_dates_only_when_given() {
    // The priority plant of the Cobham check: every department by priority, two ranked products.
    let out = layflow(&["check", "scenarios/validation/priority-cobham.yaml"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let table = text(&out.stdout);
    assert!(table.contains("Queue orders: which waiting lot is served first"), "{table}");
    assert!(table.contains("departments: all priority"), "{table}");
    assert!(
        table.lines().any(|l| l.split_whitespace().collect::<Vec<_>>() == ["rivet", "1", "-"]),
        "{table}"
    );
    let json = layflow(&["check", "scenarios/validation/priority-cobham.yaml", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&json.stdout).unwrap();
    assert_eq!(v["queue_orders"]["products"][1]["priority"], 2, "{v}");
    assert_eq!(v["queue_orders"]["departments"][1]["queue_order"], "priority", "{v}");
    // A plant that orders nothing says nothing of it, in the table or the JSON.
    let demo = layflow(&["check", "scenarios/demo.yaml"]);
    assert!(!text(&demo.stdout).contains("Queue orders"));
    let v: serde_json::Value =
        serde_json::from_slice(&layflow(&["check", "scenarios/demo.yaml", "--format", "json"]).stdout)
            .unwrap();
    assert!(v.get("queue_orders").is_none());
}

#[test]
fn a_fleet_serves_waiting_requests_in_its_request_order_timed_by_hand() {
    // scenarios/validation/request-order-hand.yaml gives the schedule of each
    // order, derived by hand there; every move takes 10 min, so the flow
    // times are exact (to the float's last digit).
    let src = std::fs::read_to_string(root().join("scenarios/validation/request-order-hand.yaml")).unwrap();
    let t = tempfile::tempdir().unwrap();
    std::fs::copy(
        root().join("scenarios/validation/request-order-hand.csv"),
        t.path().join("request-order-hand.csv"),
    )
    .unwrap();
    for (order, want) in [
        ("fifo", [40.0, 49.0, 58.0]),
        ("priority", [50.0, 59.0, 38.0]),
        ("earliest-due", [30.0, 59.0 + 1.0 / 60.0, 38.0]),
    ] {
        let path = t.path().join(format!("{order}.yaml"));
        std::fs::write(&path, src.replace("requests: fifo", &format!("requests: {order}"))).unwrap();
        let out = layflow(&["run", path.to_str().unwrap(), "--format", "json"]);
        assert!(out.status.success(), "{order}: {}", text(&out.stderr));
        let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let got: Vec<f64> = v["layouts"][0]["products"]
            .as_array()
            .unwrap()
            .iter()
            .map(|p| p["flow_time_s"]["mean"].as_f64().unwrap() / 60.0)
            .collect();
        for (g, w) in got.iter().zip(want) {
            assert!(
                (g - w).abs() < 1e-9,
                "{order}: flow times (first, routine, rush) {got:?} min, by hand {want:?}"
            );
        }
    }
}
