//! `currency: EUR` in a scenario: every cost column and cost figure of `run`, `check`
//! and `compare` says it, the JSON carries it, and a plant without one prints as before.

mod common;

use common::{layflow, root, text};

#[test]
fn a_named_currency_labels_every_cost() {
    let demo = std::fs::read_to_string(root().join("scenarios/demo.yaml")).expect("the demo");
    let dir = tempfile::tempdir().unwrap();
    let eur = dir.path().join("demo-eur.yaml");
    std::fs::write(&eur, demo.replacen("\nrun:", "\ncurrency: EUR\nrun:", 1)).unwrap();
    let eur = eur.to_str().unwrap();

    let o = layflow(&["run", eur, "--replications", "2", "--quiet", "--wide"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    let table = text(&o.stdout);
    assert!(table.contains("cost (EUR/h)"), "{table}");
    assert!(table.contains("fleet cost (EUR/h)"), "{table}");
    assert!(table.contains(" EUR/h "), "{table}");
    assert!(!table.contains("cost/h"), "a cost column without its currency: {table}");

    let o = layflow(&["run", eur, "--replications", "2", "--quiet", "--format", "json", "--no-wall-clock"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("JSON");
    assert_eq!(v["currency"], "EUR");
    assert!(v["layouts"][0]["handling_cost_per_h"].is_object(), "metric names unchanged");

    let o = layflow(&["check", eur]);
    assert!(text(&o.stdout).contains("static cost (EUR/h)"), "{}", text(&o.stdout));

    // Ranked on a cost: the rank line and the report's answer name the currency.
    let page = dir.path().join("cost.html");
    let o = layflow(&[
        "compare",
        eur,
        "--replications",
        "2",
        "--horizon",
        "2 d",
        "--warmup",
        "1 d",
        "--metric",
        "handling_cost_per_h",
        "--quiet",
        "--report",
        page.to_str().unwrap(),
    ]);
    assert!(text(&o.stdout).contains("rank (on mean fleet cost (EUR/h))"), "{}", text(&o.stdout));
    assert!(std::fs::read_to_string(&page).unwrap().contains("mean fleet cost (EUR/h)"));

    let o = layflow(&["run", "scenarios/demo.yaml", "--replications", "2", "--quiet", "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("JSON");
    assert!(v.get("currency").is_none(), "no currency named, none printed");
}
