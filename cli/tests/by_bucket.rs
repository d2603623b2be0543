//! `--by`: results per time bucket in run and compare, and bad buckets refused before anything runs (issue 16).

mod common;

use common::{layflow, text};
use serde_json::Value;

fn json(args: &[&str]) -> Value {
    let out = layflow(args);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    serde_json::from_slice(&out.stdout).expect("JSON on stdout")
}

/// The entry of `list` whose `key` is `name`.
fn by_name<'a>(list: &'a Value, key: &str, name: &str) -> &'a Value {
    list.as_array().unwrap().iter().find(|x| x[key] == name).unwrap_or_else(|| panic!("no {key} {name}"))
}

/// The value of `metric` of `subject` in the tidy rows of one bucket (or the whole window).
fn row<'a>(rows: &'a [Value], bucket: &str, subject: &str, metric: &str) -> &'a Value {
    rows.iter()
        .find(|r| r["bucket"] == bucket && r["subject"] == subject && r["metric"] == metric)
        .unwrap_or_else(|| panic!("no row {bucket} {subject}/{metric}"))
}

/// With one replication each bucket's time average is its share of the
/// window's: the buckets partition the window, so the exposure-weighted mean
/// of the bucket values is the whole window's value (exact up to rounding;
/// 1e-9 relative leaves room for the sums of ~10⁵ terms).
#[test]
fn one_replication_s_buckets_average_back_to_the_whole_window() {
    let v = json(&[
        "run",
        "scenarios/orders-demo.yaml",
        "--layout",
        "proposed",
        "--by",
        "hour-of-day",
        "--replications",
        "1",
        "--format",
        "json",
        "--no-wall-clock",
        "-q",
    ]);
    let l = &v["layouts"][0];
    let b = &l["by_bucket"];
    assert_eq!(b["by"], "hour-of-day");
    assert_eq!(b["cyclic"], true);
    let buckets = b["buckets"].as_array().unwrap();
    assert_eq!(buckets.len(), 24);
    assert_eq!(buckets[10]["bucket"], "10:00–11:00");
    let window_h = (v["horizon_s"].as_f64().unwrap() - v["warmup_s"].as_f64().unwrap()) / 3600.0;
    let exposure: f64 = buckets.iter().map(|x| x["exposure_h"].as_f64().unwrap()).sum();
    assert!((exposure - window_h).abs() < 1e-9 * window_h, "{exposure} vs {window_h}");
    let rows = b["rows"].as_array().unwrap();
    for (subject, metric, whole) in [
        ("", "wip_mean", &l["wip_mean"]["mean"]),
        ("", "throughput_per_h", &l["throughput_per_h"]["mean"]),
        (
            "inspection",
            "utilization",
            &by_name(&l["departments"], "department", "inspection")["utilization"]["mean"],
        ),
        ("forklifts", "utilization", &by_name(&l["fleets"], "fleet", "forklifts")["utilization"]["mean"]),
    ] {
        let weighted: f64 = buckets
            .iter()
            .map(|x| {
                let name = x["bucket"].as_str().unwrap();
                row(rows, name, subject, metric)["mean"].as_f64().unwrap() * x["exposure_h"].as_f64().unwrap()
            })
            .sum::<f64>()
            / exposure;
        let whole = whole.as_f64().unwrap();
        assert!((weighted - whole).abs() <= 1e-9 * whole.abs(), "{subject}/{metric}: {weighted} vs {whole}");
        // The whole-window row beside the buckets is the run's own value.
        let w =
            row(b["whole"].as_array().unwrap(), "whole window", subject, metric)["mean"].as_f64().unwrap();
        assert_eq!(w.to_bits(), whole.to_bits(), "{subject}/{metric}");
    }
    // The peak names a bucket, and the recovery is a whole number of hours or says why not.
    let peak = &b["peak"];
    assert!(peak["wip_mean"]["bucket"].as_str().unwrap().contains(':'), "{peak}");
    assert!(peak["recovery_h"].is_number() || peak["recovery_note"].is_string(), "{peak}");
}

#[test]
fn the_table_shows_the_busiest_buckets_the_whole_window_and_the_peak() {
    let out =
        layflow(&["run", "scenarios/orders-demo.yaml", "--layout", "proposed", "--by", "hour-of-day", "-q"]);
    let s = text(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(s.contains("by hour of day (every cycle folded onto one"), "{s}");
    assert!(s.contains("the 8 busiest of 24 buckets by WIP"), "{s}");
    assert!(s.contains("whole window"), "{s}");
    assert!(s.contains("peak WIP "), "{s}");
    let section = &s[s.find("by hour of day").unwrap()..];
    assert!(section.lines().all(|l| l.chars().count() <= 100), "{section}");
    // --wide shows every bucket.
    let out = layflow(&[
        "run",
        "scenarios/orders-demo.yaml",
        "--layout",
        "proposed",
        "--by",
        "hour-of-day",
        "--wide",
        "-q",
    ]);
    let s = text(&out.stdout);
    assert!(s.contains("03:00–04:00") && s.contains("16:00–17:00") && !s.contains("busiest of"), "{s}");
}

#[test]
fn compare_differences_every_bucket_and_its_csv_gains_a_bucket_column_only_with_by() {
    let args = ["compare", "scenarios/demo.yaml", "--horizon", "8 d", "--replications", "3", "-q"];
    let plain = layflow(&[&args[..], &["--format", "csv"]].concat());
    let header = text(&plain.stdout).lines().next().unwrap().to_string();
    assert!(!header.contains("bucket"), "{header}");
    let by = layflow(&[&args[..], &["--format", "csv", "--by", "day-of-week"]].concat());
    let csv = text(&by.stdout);
    assert!(csv.starts_with("demand_factor,layout,bucket,scope"), "{csv}");
    // Whole-window rows are the plain summary's rows with the bucket column added.
    let plain_rows: Vec<String> = text(&plain.stdout).lines().skip(1).map(String::from).collect();
    let whole_rows: Vec<String> = csv
        .lines()
        .filter(|l| l.contains(",whole window,"))
        .map(|l| l.replacen(",whole window,", ",", 1))
        .collect();
    assert_eq!(plain_rows, whole_rows);
    // Day 2 (a Tuesday) lies in the 2 d warm-up: that bucket saw nothing, which is left empty, not 0.
    let tue = csv.lines().find(|l| l.starts_with("1,proposed,Tue,plant,,wip_mean,")).expect("a Tuesday row");
    assert_eq!(tue, "1,proposed,Tue,plant,,wip_mean,,,0,current,,,0,false");
    let wed =
        csv.lines().find(|l| l.starts_with("1,proposed,Wed,plant,,wip_mean,")).expect("a Wednesday row");
    assert!(wed.ends_with(",3,true") || wed.ends_with(",3,false"), "{wed}");
    let v = json(&[&args[..], &["--format", "json", "--by", "day-of-week"]].concat());
    let diffs = v["levels"][0]["bucket_differences"].as_array().unwrap();
    assert!(diffs.iter().any(|d| d["bucket"] == "Sun" && d["metric"] == "flow_time_s" && d["subject"] == ""));
    let table = text(&layflow(&[&args[..], &["--by", "day-of-week"]].concat()).stdout);
    assert!(table.contains("by day of week: flow time"), "{table}");
}

/// Bad buckets exit 2 with one line, before any simulation (no warm-up
/// pilots, no progress).
#[test]
fn bad_buckets_are_refused_before_anything_runs() {
    for (args, expect) in [
        (&["--by", "hour-of-week"][..], "did you mean \"hour-of-day\"?"),
        (&["--by", "shift"], "the scenario has no calendar"),
        (&["--by", "shift=saw"], "the scenario has no calendar"),
        (&["--by", "period=40 d", "--warmup", "auto"], "is longer than the observation window"),
        (&["--by", "period=1 h", "--horizon", "60 d"], "buckets is more than the ceiling of 1,000"),
        (&["--by", "period"], "--by period needs a length"),
        (&["--by", "period=10 s"], "at least 1 min"),
    ] {
        let out = layflow(&[&["run", "scenarios/demo.yaml"][..], args].concat());
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains(expect), "{args:?}: {err}");
        assert!(!err.contains("choosing the warm-up") && !err.contains("layout current"), "{args:?}: {err}");
    }
    let out = layflow(&["search", "scenarios/demo.yaml", "--by", "hour-of-day"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("goes with --validate"), "{}", text(&out.stderr));
}

#[test]
fn shifts_come_from_the_named_calendar() {
    let v = json(&[
        "run",
        "scenarios/shifts-setups-lots.yaml",
        "--by",
        "shift=press",
        "--replications",
        "2",
        "--format",
        "json",
        "-q",
    ]);
    let labels: Vec<&str> = v["layouts"][0]["by_bucket"]["buckets"]
        .as_array()
        .unwrap()
        .iter()
        .map(|b| b["bucket"].as_str().unwrap())
        .collect();
    assert_eq!(labels, ["off shift", "06:00–14:00", "14:00–22:00"]);
    let out = layflow(&["run", "scenarios/shifts-setups-lots.yaml", "--by", "shift=saw", "-q"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(
        text(&out.stderr).contains("no department or fleet \"saw\" has a calendar"),
        "{}",
        text(&out.stderr)
    );
    let out = layflow(&["run", "scenarios/shifts-setups-lots.yaml", "--by", "shift", "-q"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("name the one to slice by"), "{}", text(&out.stderr));
}
