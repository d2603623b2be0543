//! End-to-end tests of `layflow run --trace` and `--timeline`: the files, the refusals before anything runs, and output unchanged by tracing.

mod common;

use common::{layflow, render_png, resvg, text};

const DEMO: &str = "scenarios/demo.yaml";

#[test]
fn a_trace_writes_five_files_and_leaves_runs_output_unchanged() {
    let dir = tempfile::tempdir().expect("temp dir");
    let trace = dir.path().join("t");
    let svg = dir.path().join("day.svg");
    let plain = layflow(&[
        "run",
        DEMO,
        "--layout",
        "current",
        "--replications",
        "2",
        "--format",
        "json",
        "--no-wall-clock",
        "-q",
    ]);
    assert!(plain.status.success(), "{}", text(&plain.stderr));
    let traced = layflow(&[
        "run",
        DEMO,
        "--layout",
        "current",
        "--replications",
        "2",
        "--format",
        "json",
        "--no-wall-clock",
        "-q",
        "--trace",
        trace.to_str().unwrap(),
        "--trace-replications",
        "2,1",
        "--trace-window",
        "3 d..5 d",
        "--timeline",
        svg.to_str().unwrap(),
    ]);
    assert!(traced.status.success(), "{}", text(&traced.stderr));
    assert_eq!(plain.stdout, traced.stdout, "tracing changes no reported number");
    assert!(text(&traced.stderr).contains("drawing its first day"), "{}", text(&traced.stderr));
    for (file, header) in [
        ("lots.csv", "replication,lot,product,released,shipped,flow_time_s"),
        ("visits.csv", "replication,lot,product,step,department,arrival,start,end,waiting,blocked"),
        (
            "moves.csv",
            "replication,lot,fleet,mover,requested,assigned,picked_up,delivered,from,to,loaded_m,empty_m,congestion_s",
        ),
        ("mover_states.csv", "replication,fleet,mover,time,state"),
        ("machine_states.csv", "replication,department,machine,time,state"),
    ] {
        let body = std::fs::read_to_string(trace.join(file)).expect(file);
        let mut lines = body.lines();
        assert_eq!(lines.next(), Some(header), "{file}");
        let reps: std::collections::BTreeSet<&str> = lines.map(|l| l.split(',').next().unwrap()).collect();
        assert_eq!(reps.into_iter().collect::<Vec<_>>(), ["1", "2"], "{file}: both replications, numbered from 1");
    }
    // The manifest names the scenario by its text's hash, the layout, the replications and the window.
    let manifest: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(trace.join("trace.json")).expect("trace.json"))
            .unwrap();
    let demo_text = std::fs::read(common::root().join(DEMO)).unwrap();
    assert_eq!(manifest["scenario_sha256"].as_str().unwrap().len(), 64);
    assert_eq!(manifest["scenario_sha256"], layflow_models::results::folder::sha256_hex(&demo_text));
    assert_eq!(manifest["layout"], "current");
    assert_eq!(manifest["replications"], serde_json::json!([1, 2]));
    assert_eq!(manifest["window_s"], serde_json::json!([259_200.0, 432_000.0]));
    assert_eq!(manifest["horizon_s"], 20.0 * 86_400.0);
    assert_eq!(manifest["layflow_version"], env!("CARGO_PKG_VERSION"));
    // Every state row lies in the window (3 d..5 d = 259200..432000 s).
    for file in ["mover_states.csv", "machine_states.csv"] {
        let body = std::fs::read_to_string(trace.join(file)).unwrap();
        for l in body.lines().skip(1) {
            let t: f64 = l.split(',').nth(3).unwrap().parse().unwrap();
            assert!((259_200.0..=432_000.0).contains(&t), "{file}: {l}");
        }
    }
    let picture = std::fs::read_to_string(&svg).expect("the timeline");
    for words in ["day 4", "inspection 1", "forklifts 2", "WIP (plant)", "queue at", "busy", "loaded"] {
        assert!(picture.contains(words), "the timeline lacks {words:?}");
    }
    if let Some(resvg) = resvg("the timeline") {
        let png = render_png(&resvg, &svg);
        assert!(png.starts_with(b"\x89PNG"));
    }
}

#[test]
fn trace_mistakes_exit_2_before_anything_runs() {
    let dir = tempfile::tempdir().expect("temp dir");
    let t = dir.path().join("t");
    let t = t.to_str().unwrap();
    let busy = dir.path().join("busy");
    std::fs::create_dir(&busy).unwrap();
    std::fs::write(busy.join("notes.txt"), "mine").unwrap();
    let busy = busy.to_str().unwrap();
    let cases: [(&[&str], &str); 7] = [
        (&["--timeline", "x.svg"], "add --trace"),
        (&["--trace", t, "--trace-window", "2 d..30 d"], "the run ends at 20 d"),
        (&["--trace", t, "--trace-window", "3 d..2 d"], "TO must come after FROM"),
        (&["--trace", t, "--trace-window", "2 d"], "FROM..TO"),
        (&["--trace", t, "--replications", "2", "--trace-replications", "3"], "numbered 1 to 2"),
        (&["--trace", busy], "not empty"),
        (&["--trace", "/proc/no/such/folder"], "cannot create"),
    ];
    for (extra, says) in cases {
        let mut args = vec!["run", DEMO, "-q"];
        args.extend_from_slice(extra);
        let o = layflow(&args);
        assert_eq!(o.status.code(), Some(2), "{extra:?}: {}", text(&o.stderr));
        assert!(text(&o.stderr).contains(says), "{extra:?}: {}", text(&o.stderr));
        assert!(o.stdout.is_empty(), "{extra:?}: nothing ran");
    }
    assert!(!dir.path().join("t").exists(), "no folder made by a refused run");
    assert_eq!(std::fs::read_dir(busy).unwrap().count(), 1, "the busy folder is left alone");
    let o = layflow(&["run", "scenarios/shifts-setups-lots.yaml", "-q", "--trace", t]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains("cannot be traced yet"), "{}", text(&o.stderr));
}

#[test]
fn force_replaces_only_the_trace_files() {
    let dir = tempfile::tempdir().expect("temp dir");
    let t = dir.path().join("t");
    std::fs::create_dir(&t).unwrap();
    std::fs::write(t.join("notes.txt"), "mine").unwrap();
    std::fs::write(t.join("lots.csv"), "old").unwrap();
    std::fs::write(t.join("trace.json"), "old").unwrap();
    let args =
        ["run", DEMO, "-q", "--layout", "proposed", "--replications", "1", "--trace", t.to_str().unwrap()];
    let o = layflow(&[&args[..], &["--force"]].concat());
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert_eq!(std::fs::read_to_string(t.join("notes.txt")).unwrap(), "mine");
    assert!(std::fs::read_to_string(t.join("lots.csv")).unwrap().starts_with("replication,lot"));
    let manifest = std::fs::read_to_string(t.join("trace.json")).unwrap();
    assert!(manifest.contains("\"layout\": \"proposed\""), "trace.json replaced: {manifest}");
    // Without --force the folder, now full, is refused, and the message names the manifest too.
    let o = layflow(&args);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("machine_states.csv and trace.json"), "{}", text(&o.stderr));
}
