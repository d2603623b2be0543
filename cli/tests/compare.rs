//! End-to-end tests of `layflow compare`: formats, files, selection, sweeps and bad arguments.

mod common;

use std::process::Output;

use common::{layflow, text};

/// A short demo comparison: 4 replications of 4 days, 1 day warm-up.
const SHORT: &[&str] = &["--replications", "4", "--horizon", "4 d", "--warmup", "1 d"];

fn compare(extra: &[&str]) -> Output {
    let mut args = vec!["compare", "scenarios/demo.yaml"];
    args.extend_from_slice(SHORT);
    args.extend_from_slice(extra);
    layflow(&args)
}

#[test]
fn table_shows_paired_differences_and_both_ranks() {
    let out = compare(&[]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    for needle in ["== demand ×1 ==", "static rank", "simulated rank", "proposed − current", "flow time", "*"]
    {
        assert!(s.contains(needle), "missing {needle:?} in:\n{s}");
    }
}

#[test]
fn json_has_a_difference_for_every_metric_and_the_ranking() {
    let out = compare(&["--format", "json", "--no-wall-clock"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON");
    assert_eq!(v["baseline"], "current");
    let lv = &v["levels"][0];
    assert_eq!(lv["layouts"].as_array().unwrap().len(), 2);
    let diffs = lv["differences"].as_array().unwrap();
    assert!(diffs.iter().any(|d| d["metric"] == "flow_time_s" && d["scope"] == "plant"));
    assert!(diffs.iter().all(|d| d["layout"] == "proposed"));
    assert_eq!(lv["ranking"].as_array().unwrap().len(), 2);
    // Same seed, same bytes.
    let again = compare(&["--format", "json", "--no-wall-clock", "--threads", "1"]);
    assert_eq!(out.stdout, again.stdout, "compare JSON must not depend on the thread count");
}

#[test]
fn out_dir_gets_tidy_csv_summary_and_json() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path().join("results");
    let out = compare(&["--out", d.to_str().unwrap(), "--quiet", "--format", "csv"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let tidy = std::fs::read_to_string(d.join("replications.csv")).unwrap();
    let mut lines = tidy.lines();
    assert_eq!(lines.next(), Some("demand_factor,layout,replication,scope,subject,metric,value"));
    // 2 layouts × 4 replications × every metric.
    let rows = lines.count();
    let per = tidy.lines().filter(|l| l.starts_with("1,current,0,")).count();
    assert_eq!(rows, 2 * 4 * per);
    let summary = std::fs::read_to_string(d.join("summary.csv")).unwrap();
    assert_eq!(summary, text(&out.stdout), "--format csv prints summary.csv");
    assert!(summary
        .starts_with("demand_factor,layout,scope,subject,metric,mean,half_width,n,baseline,difference"));
    let _: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.join("summary.json")).unwrap()).unwrap();
    // No temporary file is left behind: the three results and the manifest that says a comparison wrote them.
    let names: Vec<String> = std::fs::read_dir(&d)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names.len(), 4, "{names:?}");
    let manifest = std::fs::read_to_string(d.join("layflow-results.json")).unwrap();
    assert!(manifest.contains("\"kind\": \"compare\""), "{manifest}");
}

#[test]
fn a_demand_sweep_reports_every_layout_at_every_level() {
    let out = compare(&["--demand", "0.8,1.2", "--format", "json", "--no-wall-clock"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let levels = v["levels"].as_array().unwrap();
    assert_eq!(levels.len(), 2);
    let ft = |i: usize| levels[i]["layouts"][0]["flow_time_s"]["mean"].as_f64().unwrap();
    assert!(ft(1) > ft(0), "more demand, longer flow time: {} vs {}", ft(1), ft(0));
    let table = compare(&["--demand", "0.8,1.2"]);
    assert!(text(&table.stdout).contains("== demand sweep =="));
}

#[test]
fn select_names_a_best_layout_and_states_the_guarantee() {
    let out = layflow(&[
        "compare",
        "scenarios/demo.yaml",
        "--horizon",
        "4 d",
        "--warmup",
        "1 d",
        "--select",
        "--indifference",
        "3 min",
        "--max-replications",
        "60",
        "--format",
        "json",
        "--no-wall-clock",
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let sel = &v["levels"][0]["selection"];
    assert_eq!(sel["procedure"], "Kim–Nelson fully sequential");
    let statement = sel["statement"].as_str().unwrap();
    assert!(
        statement.contains("With probability at least 95%") || statement.contains("No layout could be named")
    );
    // The replications each layout reports are those the procedure used.
    for (l, s) in v["levels"][0]["layouts"].as_array().unwrap().iter().zip(sel["layouts"].as_array().unwrap())
    {
        assert_eq!(l["flow_time_s"]["n"], s["replications"]);
    }
}

#[test]
fn warmup_auto_reports_its_choice() {
    let out = layflow(&[
        "compare",
        "scenarios/demo.yaml",
        "--replications",
        "3",
        "--horizon",
        "6 d",
        "--warmup",
        "auto",
        "--format",
        "json",
        "--no-wall-clock",
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let w = &v["warmup_auto"];
    assert_eq!(w["method"], "MSER-5");
    let chosen = w["warmup_s"].as_f64().unwrap();
    assert_eq!(v["warmup_s"].as_f64().unwrap(), chosen);
    assert!((0.0..=3.0 * 86400.0).contains(&chosen), "at most half the horizon: {chosen}");
}

#[test]
fn bad_arguments_exit_2_with_a_reason() {
    for (args, needle) in [
        (vec!["--layouts", "current,nowhere"], "no such layout"),
        (vec!["--layouts", "current,current"], "twice"),
        (vec!["--layouts", "current"], "at least two layouts"),
        (vec!["--baseline", "nowhere"], "not among the layouts compared"),
        (vec!["--layouts", "proposed,current", "--baseline", "elsewhere"], "not among"),
        (vec!["--demand", "1,-2"], "positive"),
        (vec!["--metric", "flow_tme_s"], "Did you mean \"flow_time_s\""),
        (vec!["--select"], "needs --indifference"),
        (vec!["--select", "--indifference", "5"], "needs a unit"),
        (vec!["--select", "--indifference", "5 min", "--metric", "saw/utilization"], "neither"),
        (vec!["--select", "--indifference", "5 min", "--confidence", "1.5"], "between 0 and 1"),
        (vec!["--indifference", "5 min"], "is for --select"),
        (vec!["--warmup", "soon"], "--warmup"),
    ] {
        let mut a = vec!["compare", "scenarios/demo.yaml"];
        a.extend(args.iter().copied());
        let out = layflow(&a);
        assert_eq!(out.status.code(), Some(2), "{a:?}: {}", text(&out.stderr));
        let err = text(&out.stderr);
        assert!(err.contains(needle), "{a:?}: expected {needle:?} in {err}");
    }
    // --replications with --select is refused: the procedure decides.
    let out = compare(&["--select", "--indifference", "5 min"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("--max-replications"));
}

#[test]
fn check_json_names_each_products_demand() {
    let out = layflow(&["check", "scenarios/orders-demo.yaml", "--format", "json"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let kinds: Vec<&str> =
        v["products"].as_array().unwrap().iter().map(|p| p["demand"].as_str().unwrap()).collect();
    assert_eq!(kinds, ["profile", "orders", "constant"]);
    // The trace holds 302 lots a week (the file's header says so): 302 / 168 h.
    let shaft = v["products"][1]["mean_lots_per_h"].as_f64().unwrap();
    assert!((shaft - 302.0 / 168.0).abs() < 1e-9, "{shaft}");
}

#[test]
fn layouts_from_a_layout_file_are_compared_too() {
    let dir = tempfile::tempdir().unwrap();
    let base =
        std::fs::read_to_string(common::root().join("scenarios/validation/tiny-hand-checked.yaml")).unwrap();
    let scenario = dir.path().join("plant.yaml");
    std::fs::write(&scenario, format!("{base}\nlayout_files: [more/extra.yaml]\n")).unwrap();
    std::fs::create_dir(dir.path().join("more")).unwrap();
    std::fs::write(
        dir.path().join("more/extra.yaml"),
        "layouts:\n  mirrored: { receiving: dock-in, cutting: bay-c, drilling: bay-b, inspection: bay-a, shipping: dock-out }\n",
    )
    .unwrap();
    let out = layflow(&[
        "compare",
        scenario.to_str().unwrap(),
        "--replications",
        "2",
        "--quiet",
        "--format",
        "json",
    ]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let names: Vec<&str> =
        v["levels"][0]["layouts"].as_array().unwrap().iter().map(|l| l["layout"].as_str().unwrap()).collect();
    assert_eq!(names, ["baseline", "swapped", "mirrored"]);
}

/// The names in a folder, sorted.
fn names_in(d: &std::path::Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(d)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

#[test]
fn a_folder_holding_any_study_is_refused_and_force_replaces_only_our_files() {
    let dir = tempfile::tempdir().unwrap();
    // An experiment's files without a manifest (an older folder, or files a user put there).
    let d = dir.path().join("old");
    std::fs::create_dir(&d).unwrap();
    std::fs::write(d.join("units.jsonl"), "{\"layflow_experiment\":1}\n").unwrap();
    std::fs::write(d.join("results.csv"), "point,layout\n").unwrap();
    std::fs::write(d.join("notes.txt"), "mine").unwrap();
    let out = compare(&["--out", d.to_str().unwrap(), "--quiet"]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("units.jsonl") && err.contains("results.csv") && err.contains("--force"), "{err}");
    assert_eq!(names_in(&d), ["notes.txt", "results.csv", "units.jsonl"], "nothing was touched");

    // A previous comparison (of any scenario) is refused too: a rerun replaces it only with --force.
    let c = dir.path().join("cmp");
    let out = compare(&["--out", c.to_str().unwrap(), "--quiet"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    std::fs::write(c.join("notes.txt"), "mine").unwrap();
    let out = compare(&["--out", c.to_str().unwrap(), "--quiet", "--demand", "1.2"]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("layflow compare --out") && err.contains("summary.json"), "{err}");
    let out = compare(&["--out", c.to_str().unwrap(), "--quiet", "--demand", "1.2", "--force"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(std::fs::read_to_string(c.join("summary.csv")).unwrap().contains("\n1.2,"));

    // --force on the experiment's folder: its study files go, the user's file stays, nothing is mixed.
    let out = compare(&["--out", d.to_str().unwrap(), "--quiet", "--force"]);
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert_eq!(
        names_in(&d),
        ["layflow-results.json", "notes.txt", "replications.csv", "summary.csv", "summary.json"]
    );
    assert_eq!(std::fs::read_to_string(d.join("notes.txt")).unwrap(), "mine");
}
