//! An overloaded plant stops early with exit code 1 and names its bottleneck;
//! `--allow-overload` runs it with a WIP cap and says so loudly (issue 15, class 6).

mod common;

use common::{layflow, text};

#[test]
fn the_demo_at_100_times_its_demand_stops_early_naming_the_bottleneck() {
    // At × 100 the demo releases 570 lots an hour; the 10,000-lot limit is
    // reached within a simulated day, so this fails in well under a second
    // (before the rule it ran until memory ran out).
    let out = layflow(&[
        "run",
        "scenarios/demo.yaml",
        "--demand",
        "100",
        "--horizon",
        "36500 d",
        "--replications",
        "2",
        "-q",
    ]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(err.contains("the plant is overloaded"), "{err}");
    // Inspection is the busiest department of the demo (80.0% at × 1, `layflow check`).
    assert!(
        err.contains(
            "the bottleneck is department \"inspection\" (1 machine), predicted at 7997.7% utilisation"
        ),
        "{err}"
    );
    assert!(err.contains("limit of 10000 lots"), "{err}");
    assert!(err.contains("--allow-overload"), "{err}");
    assert!(!err.contains("panicked"), "{err}");
    // compare reaches the same stop through the same message.
    let out = layflow(&[
        "compare",
        "scenarios/demo.yaml",
        "--demand",
        "100",
        "--horizon",
        "36500 d",
        "--replications",
        "2",
        "-q",
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    assert!(text(&out.stderr).contains("the plant is overloaded"), "{}", text(&out.stderr));
}

#[test]
fn allow_overload_runs_with_a_reported_cap() {
    let out = layflow(&[
        "run",
        "scenarios/demo.yaml",
        "--demand",
        "100",
        "--horizon",
        "20 d",
        "--replications",
        "2",
        "--layout",
        "current",
        "--allow-overload",
        "-q",
    ]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "{err}");
    assert!(err.contains("WARNING: --allow-overload"), "{err}");
    assert!(err.contains("OVERLOADED (--allow-overload): the WIP cap of 10000 lots turned away"), "{err}");
    assert!(err.contains("describes a plant that turns work away"), "{err}");
    let report = text(&out.stdout);
    assert!(report.contains("turned away"), "{report}");
}
