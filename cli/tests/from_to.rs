//! `check --from-to` and `search --from-to`: a measured from-to chart in place of the routings' chart, for the static method.

mod common;

use std::path::Path;

use common::{layflow, text};

const THREE: &str = "scenarios/validation/from-to-three.yaml";
const THREE_CHART: &str = "scenarios/validation/from-to-three.tsv";

fn json(args: &[&str]) -> serde_json::Value {
    let o = layflow(args);
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    serde_json::from_slice(&o.stdout).expect("JSON")
}

#[test]
fn three_departments_give_the_hand_computed_load_distance() {
    // The tab-separated chart counts loads over 8 h: receiving→press 16, receiving→shipping 4,
    // press→receiving 2, press→shipping 8, i.e. 2, 0.5, 0.25 and 1 loads/h. Rectilinear
    // distances between dock-in (0, 0), bay (30, 40) and dock-out (100, 0): 70, 100, 70 and 110 m.
    // 2·70 + 0.5·100 + 0.25·70 + 1·110 = 317.5 load-m/h, every term exact in binary.
    let j = json(&["check", THREE, "--from-to", THREE_CHART, "--from-to-per", "8 h", "--format", "json"]);
    assert_eq!(j["layouts"][0]["load_distance_m_per_h"].as_f64(), Some(317.5));
    assert_eq!(j["from_to_source"]["measured"], true);
    // --demand scales the measured chart as it scales the routings' chart.
    let j = json(&[
        "check",
        THREE,
        "--from-to",
        THREE_CHART,
        "--from-to-per",
        "8 h",
        "--demand",
        "2",
        "--format",
        "json",
    ]);
    assert_eq!(j["layouts"][0]["load_distance_m_per_h"].as_f64(), Some(635.0));
}

#[test]
fn the_output_says_the_flows_are_measured_and_that_run_still_simulates_the_routings() {
    let o = layflow(&["check", THREE, "--from-to", THREE_CHART, "--from-to-per", "8 h"]);
    let s = text(&o.stdout);
    assert!(s.contains("MEASURED, read from scenarios/validation/from-to-three.tsv (loads per 8 h"), "{s}");
    assert!(s.contains("not derived from the routings"), "{s}");
    assert!(s.contains("`run` and `compare` still simulate the routings"), "{s}");
    let o = layflow(&["check", THREE, "--from-to", THREE_CHART]);
    assert_eq!(o.status.code(), Some(2), "--from-to without its period is refused");
}

/// The demo's own chart written as a measured one: `;`-separated with a
/// decimal comma, a byte-order mark and CRLF, loads counted over 8 h.
fn demo_chart(dir: &Path) -> std::path::PathBuf {
    let j = json(&["check", "scenarios/demo.yaml", "--format", "json"]);
    let ids: Vec<&str> =
        j["departments"].as_array().unwrap().iter().map(|d| d["department"].as_str().unwrap()).collect();
    let load = |a: &str, b: &str| {
        j["from_to"]
            .as_array()
            .unwrap()
            .iter()
            .find(|p| p["from"] == a && p["to"] == b)
            .map_or(0.0, |p| p["loads_per_h"].as_f64().unwrap())
    };
    let mut csv = format!("\u{feff}from\\to;{}\r\n", ids.join(";"));
    for a in &ids {
        // × 8 and later ÷ 8 are exact (a power of two), and `{}` prints the shortest
        // text that reads back to the same number, so the chart comes back bit for bit.
        let cells: Vec<String> =
            ids.iter().map(|b| format!("{}", load(a, b) * 8.0).replace('.', ",")).collect();
        csv.push_str(&format!("{a};{}\r\n", cells.join(";")));
    }
    let path = dir.join("demo-from-to.csv");
    std::fs::write(&path, csv).unwrap();
    path
}

#[test]
fn the_demos_own_chart_gives_the_same_load_distance_and_the_same_search_result() {
    let dir = tempfile::tempdir().unwrap();
    let chart = demo_chart(dir.path());
    let chart = chart.to_str().unwrap();
    let routed = json(&["check", "scenarios/demo.yaml", "--format", "json"]);
    let measured = json(&[
        "check",
        "scenarios/demo.yaml",
        "--from-to",
        chart,
        "--from-to-per",
        "8 h",
        "--format",
        "json",
    ]);
    for l in 0..2 {
        assert_eq!(
            routed["layouts"][l]["load_distance_m_per_h"], measured["layouts"][l]["load_distance_m_per_h"],
            "layout {l}"
        );
    }
    let search =
        ["search", "scenarios/demo.yaml", "--iterations", "3000", "--format", "json", "--no-wall-clock"];
    let routed = json(&search);
    let mut with = search.to_vec();
    with.extend(["--from-to", chart, "--from-to-per", "8 h"]);
    let measured = json(&with);
    assert_eq!(routed["layouts"], measured["layouts"]);
    assert_eq!(routed["start"], measured["start"]);
    assert_eq!(measured["from_to_source"]["measured"], true);
}

/// `check` of the three-department plant with this chart (counted per hour) must fail with exit 2 and say `want`.
fn refused(chart: &str, want: &[&str]) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("chart.csv");
    std::fs::write(&path, chart).unwrap();
    let o = layflow(&["check", THREE, "--from-to", path.to_str().unwrap(), "--from-to-per", "1 h"]);
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("chart.csv"), "the file is named: {err}");
    assert!(err.contains("receiving,saw,shipping"), "an example is given: {err}");
    for w in want {
        assert!(err.contains(w), "{w:?} missing from: {err}");
    }
    assert!(!err.contains("panicked"), "{err}");
}

#[test]
fn bad_charts_are_refused_with_file_row_column_and_an_example() {
    let head = "from\\to,receiving,press,shipping\n";
    refused(
        &format!("{head}receiving,0,1,0\npres,0,0,1\nshipping,0,0,0\n"),
        &["row 3, column 1", "unknown department \"pres\"", "did you mean \"press\""],
    );
    refused(
        &format!("{head}receiving,0,two,0\npress,0,0,1\nshipping,0,0,0\n"),
        &["row 2, column 3", "\"two\" is not a number"],
    );
    refused(
        &format!("{head}receiving,0,-1,0\npress,0,0,1\nshipping,0,0,0\n"),
        &["row 2, column 3", "negative load"],
    );
    refused(&format!("{head}receiving,0,1,0\nshipping,0,0,0\n"), &["\"press\" has a column but no row"]);
    refused(
        &format!("{head}receiving,0,1\npress,0,0,1\nshipping,0,0,0\n"),
        &["row 2, column 4", "the cell for \"shipping\" is missing"],
    );
    refused(
        "from\\to,receiving,shipping\nreceiving,0,1\npress,0,0\nshipping,0,0\n",
        &["row 3, column 1", "\"press\" has a row but no column"],
    );
    refused(
        &format!("{head}receiving,0,1,0\npress,0,3,1\nshipping,0,0,0\n"),
        &["row 3, column 3", "to itself"],
    );
}

/// `measured_from_to: { file, per }` in the scenario does what the flags do, its file
/// relative to the scenario; the flags override it (and say so); run says it simulates
/// the routings; a missing file or a zero period is an error naming where it is set.
#[test]
fn the_scenario_field_names_the_chart_and_the_flags_override_it() {
    let root = common::root();
    let dir = tempfile::tempdir().unwrap();
    let base = std::fs::read_to_string(root.join(THREE)).unwrap();
    std::fs::copy(root.join(THREE_CHART), dir.path().join("flows.tsv")).unwrap();
    let scenario = dir.path().join("three.yaml");
    let with = |field: &str| {
        std::fs::write(&scenario, format!("{base}\n{field}\n")).unwrap();
        scenario.to_str().unwrap().to_string()
    };
    let s = with("measured_from_to: { file: flows.tsv, per: 8 h }");
    // The same hand-computed 317.5 load-m/h as the flags give (see above).
    let j = json(&["check", &s, "--format", "json"]);
    assert_eq!(j["layouts"][0]["load_distance_m_per_h"].as_f64(), Some(317.5));
    assert_eq!(j["from_to_source"]["measured"], true);
    let o = layflow(&["check", &s]);
    assert!(text(&o.stdout).contains("MEASURED, read from "), "{}", text(&o.stdout));

    // The flags win: a 16 h period halves every load.
    let o = layflow(&["check", &s, "--from-to", THREE_CHART, "--from-to-per", "16 h", "--format", "json"]);
    let j: serde_json::Value = serde_json::from_slice(&o.stdout).expect("JSON");
    assert_eq!(j["layouts"][0]["load_distance_m_per_h"].as_f64(), Some(158.75));
    assert!(text(&o.stderr).contains("overrides the scenario's measured_from_to"), "{}", text(&o.stderr));

    let o = layflow(&["run", &s, "--replications", "1", "--horizon", "1 d", "--warmup", "0 s", "--quiet"]);
    assert!(text(&o.stderr).contains("this command simulates the routings"), "{}", text(&o.stderr));

    let s = with("measured_from_to: { file: nowhere.csv, per: 8 h }");
    let o = layflow(&["check", &s]);
    assert_eq!(o.status.code(), Some(2));
    let e = text(&o.stderr);
    let line = std::fs::read_to_string(&scenario).unwrap().lines().count();
    assert!(e.contains("nowhere.csv") && e.contains(&format!("`measured_from_to` at line {line}")), "{e}");

    let s = with("measured_from_to: { file: flows.tsv, per: 0 h }");
    let o = layflow(&["check", &s]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("`per` must be longer than 0"), "{}", text(&o.stderr));
    assert!(text(&o.stderr).contains(&format!("line {line}")), "{}", text(&o.stderr));
}
