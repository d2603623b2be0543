//! The tables demo end to end: its seeded results are the YAML demo's, byte for byte, and a bad table exits 2.

mod common;
use common::{layflow, text};

/// `run --format json` of a scenario, with its own seed and no wall-clock fields.
fn run_json(scenario: &str) -> String {
    let o = layflow(&[
        "run",
        scenario,
        "--format",
        "json",
        "--quiet",
        "--no-wall-clock",
        "--replications",
        "4",
        "--horizon",
        "8 d",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    text(&o.stdout)
}

#[test]
fn the_tables_demo_gives_the_demo_results_byte_for_byte() {
    let yaml = run_json("scenarios/demo.yaml");
    let tables = run_json("scenarios/tables-demo/demo-tables.yaml");
    // The one line that differs is the scenario's own file name.
    let tables = tables.replace("scenarios/tables-demo/demo-tables.yaml", "scenarios/demo.yaml");
    assert!(yaml.len() > 1000, "{yaml}");
    assert_eq!(yaml, tables);
}

#[test]
fn a_bad_table_exits_2_naming_file_row_and_column() {
    let o = layflow(&["check", "scenarios/bad-tables/unknown-department/scenario.yaml"]);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o.stderr));
    let err = text(&o.stderr);
    assert!(err.contains("routings.csv"), "{err}");
    assert!(err.contains("row 3, column \"WorkCentre\""), "{err}");
    assert!(err.contains("(did you mean \"welding\"?)"), "{err}");
}
