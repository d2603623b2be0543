//! `layflow generate`: a plant of real size that `check` and `run` accept, the same for the same seed; bad sizes exit 2.

mod common;

use common::{layflow, text};

#[test]
fn the_generated_plant_checks_runs_and_repeats() {
    let dir = tempfile::tempdir().unwrap();
    let a = dir.path().join("a.yaml");
    let b = dir.path().join("b.yaml");
    for f in [&a, &b] {
        let o = layflow(&["generate", "--seed", "3", "-o", f.to_str().unwrap()]);
        assert!(o.status.success(), "{}", text(&o.stderr));
    }
    assert_eq!(std::fs::read(&a).unwrap(), std::fs::read(&b).unwrap(), "the same seed, the same plant");
    let o = layflow(&["check", a.to_str().unwrap(), "--format", "json"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    // No department over capacity: the generator sizes machines for 75% utilisation.
    assert!(!text(&o.stderr).contains("cannot keep up"), "{}", text(&o.stderr));
    let o = layflow(&[
        "run",
        a.to_str().unwrap(),
        "--replications",
        "1",
        "--horizon",
        "2 d",
        "--warmup",
        "1 d",
        "-q",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    // The table form: a folder with plant.yaml and its CSV tables, the same plant.
    let t = dir.path().join("tables");
    let o = layflow(&["generate", "--seed", "3", "--tables", "-o", t.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let json = |p: &std::path::Path| {
        let o = layflow(&["check", p.to_str().unwrap(), "--format", "json"]);
        assert!(o.status.success(), "{}", text(&o.stderr));
        o.stdout
    };
    assert_eq!(json(&t.join("plant.yaml")), json(&a), "the table form checks as the YAML form");
    // Never overwritten without --force.
    let o = layflow(&["generate", "-o", a.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    let o = layflow(&["generate", "--departments", "1", "-o", dir.path().join("c.yaml").to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(text(&o.stderr).contains("--departments"), "{}", text(&o.stderr));
}
