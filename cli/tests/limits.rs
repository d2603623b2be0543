//! Ceilings on command-line values (docs/limits.md): a value beyond one exits 2 with a message
//! that names the flag and the ceiling, before anything is allocated or run; a large count that
//! is legitimate (a staging area of 4,294,967,295 loads, "practically unlimited") runs.

mod common;

use common::{layflow, text};

#[test]
fn values_beyond_a_ceiling_exit_2_naming_the_ceiling() {
    let demo = "scenarios/demo.yaml";
    for (args, fragment) in [
        (vec!["run", demo, "--replications", "4294967295"], "ceiling of 1,000,000"),
        (vec!["fleet", demo, "--fleet", "forklifts", "--sizes", "4000000000"], "ceiling of 10,000"),
        (vec!["fleet", demo, "--fleet", "forklifts", "--sizes", "1..4000000000"], "more than 200 sizes"),
        (vec!["run", demo, "--horizon", "1e308 d"], "ceiling of 100 years"),
        (vec!["run", demo, "--warmup", "1e308 d"], "ceiling of 100 years"),
        (vec!["run", demo, "--demand", "1e300"], "ceiling of 1e6"),
        (vec!["run", demo, "--horizon", "36000 d", "--demand", "1000"], "ceiling of 1e9"),
        (vec!["compare", demo, "--demand", "1,1e300"], "ceiling of 1e6"),
        (vec!["run", demo, "--threads", "100000000"], "ceiling of 4096"),
        (vec!["compare", demo, "--select", "--max-replications", "4294967295"], "ceiling of 1,000,000"),
        (vec!["search", demo, "--iterations", "18446744073709551615"], "ceiling of 1e12"),
        (vec!["search", demo, "--time-limit", "1e308 d"], "ceiling of 100 years"),
    ] {
        let out = layflow(&args);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: stderr:\n{err}");
        assert!(err.contains(fragment), "{args:?}: expected {fragment:?} in:\n{err}");
        assert!(!err.contains("panicked") && !err.contains("memory allocation"), "{args:?}: {err}");
    }
}

/// A staging capacity of u32::MAX means "practically unlimited": nothing is
/// allocated in proportion to it, so a short run finishes like any other.
#[test]
fn a_practically_unlimited_staging_area_runs() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("unlimited-staging.yaml");
    std::fs::write(
        &path,
        r#"plant: unlimited staging (invented)
run: { horizon: 1 d, warmup: 1 h, replications: 2 }
locations:
  - { id: a, at: [0, 0] }
  - { id: b, at: [10, 0] }
  - { id: c, at: [20, 0] }
departments:
  - { id: in, dock: receiving }
  - { id: work, machines: 2, staging: { inbound: 4294967295, outbound: 4294967295 } }
  - { id: out, dock: shipping }
layouts:
  l: { in: a, work: b, out: c }
products:
  - id: part
    demand: { per_hour: 3 }
    lot: { quantity: 4000000000 }
    routing:
      - { step: w, at: work, time: { exponential: { mean: 15 min } } }
      - { step: s, at: out }
fleets:
  - { id: f, kind: forklift, count: 2, speed: { loaded: 1.5 m/s, empty: 2 m/s }, home: a }
"#,
    )
    .unwrap();
    let out = layflow(&["run", path.to_str().unwrap(), "-q"]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "stderr:\n{err}");
    assert!(text(&out.stdout).contains("work"), "{}", text(&out.stdout));
}

/// An experiment plan gets the same ceilings: on its replications, and on
/// the lots of each design point once the plan's horizon and demand apply.
#[test]
fn an_experiment_plan_beyond_a_ceiling_exits_2() {
    let dir = tempfile::tempdir().unwrap();
    let demo = common::root().join("scenarios/demo.yaml");
    std::fs::copy(demo, dir.path().join("demo.yaml")).unwrap();
    for (plan, fragment) in [
        ("replications: 4294967295\nfactors: { demand: [1] }\n", "ceiling of 1,000,000"),
        ("replications: 2\nhorizon: 36000 d\nfactors: { demand: [1, 1000] }\n", "design point 2"),
    ] {
        let path = dir.path().join("plan.yaml");
        std::fs::write(&path, format!("scenario: demo.yaml\n{plan}")).unwrap();
        let out_dir = dir.path().join("out");
        let out = layflow(&["experiment", path.to_str().unwrap(), "--out", out_dir.to_str().unwrap(), "-q"]);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{plan}: stderr:\n{err}");
        assert!(err.contains(fragment), "{plan}: expected {fragment:?} in:\n{err}");
    }
}
