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

/// An experiment over the demo plant with `currency: EUR`, 2 design points × 2 replications.
fn eur_plan(dir: &std::path::Path) -> std::path::PathBuf {
    let demo = std::fs::read_to_string(root().join("scenarios/demo.yaml")).expect("the demo");
    let eur = dir.join("demo-eur.yaml");
    std::fs::write(&eur, demo.replacen("\nrun:", "\ncurrency: EUR\nrun:", 1)).unwrap();
    let plan = dir.join("plan.yaml");
    std::fs::write(
        &plan,
        format!(
            "scenario: {}\nreplications: 2\nseed: 5\nhorizon: 2 d\nwarmup: 1 d\nfactors:\n  fleets.forklifts.count: [1, 2]\n",
            eur.display()
        ),
    )
    .unwrap();
    plan
}

/// The units file as a layflow from before the currency was recorded wrote it.
fn forget_currency(dir: &std::path::Path) {
    let path = dir.join("units.jsonl");
    let body = std::fs::read_to_string(&path).unwrap();
    let (head, rest) = body.split_once('\n').unwrap();
    assert!(head.contains(r#","currency":"EUR""#), "the header records the currency: {head}");
    std::fs::write(&path, format!("{}\n{rest}", head.replace(r#","currency":"EUR""#, ""))).unwrap();
    // A whole run's summary.json then had none either.
    let summary = dir.join("summary.json");
    if let Ok(text) = std::fs::read_to_string(&summary) {
        let old: String =
            text.lines().filter(|l| !l.contains(r#""currency""#)).map(|l| format!("{l}\n")).collect();
        std::fs::write(&summary, old).unwrap();
    }
}

#[test]
fn an_experiment_names_the_currency_and_older_folders_still_read() {
    let t = tempfile::tempdir().unwrap();
    let plan = eur_plan(t.path());
    let (plan, dir) = (plan.to_str().unwrap(), t.path());
    let s = |p: &std::path::Path| p.to_str().unwrap().to_string();
    let whole = dir.join("whole");
    let o = layflow(&["experiment", plan, "--out", &s(&whole), "--quiet", "--wide"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(text(&o.stdout).contains("handling cost (EUR/h)"), "{}", text(&o.stdout));
    assert!(!text(&o.stdout).contains("(/h)"), "a cost column without its currency: {}", text(&o.stdout));
    let v: serde_json::Value =
        serde_json::from_slice(&std::fs::read(whole.join("summary.json")).unwrap()).expect("JSON");
    assert_eq!(v["currency"], "EUR");
    let o = layflow(&["summarize", &s(&whole), "--wide"]);
    assert!(text(&o.stdout).contains("handling cost (EUR/h)"), "{}", text(&o.stdout));
    let o = layflow(&["summarize", &s(&whole), "--format", "json"]);
    assert!(text(&o.stdout).contains(r#""currency": "EUR""#), "{}", text(&o.stdout));

    // Shards merged, one of them written before the currency was recorded:
    // they still merge, to the same bytes as the single run.
    for k in 1..=2 {
        let d = dir.join(format!("shard-{k}"));
        let o = layflow(&["experiment", plan, "--shard", &format!("{k}/2"), "--out", &s(&d), "--quiet"]);
        assert!(o.status.success(), "{}", text(&o.stderr));
    }
    forget_currency(&dir.join("shard-1"));
    let merged = dir.join("merged");
    let o = layflow(&[
        "merge",
        &s(&dir.join("shard-1")),
        &s(&dir.join("shard-2")),
        "--out",
        &s(&merged),
        "--wide",
    ]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(text(&o.stdout).contains("handling cost (EUR/h)"), "{}", text(&o.stdout));
    for f in ["units.jsonl", "summary.json", "summary.csv", "results.csv"] {
        assert!(
            std::fs::read(whole.join(f)).unwrap() == std::fs::read(merged.join(f)).unwrap(),
            "{f} differs"
        );
    }

    // An older folder summarizes (without a currency it never knew) and resumes (gaining it).
    forget_currency(&whole);
    let o = layflow(&["summarize", &s(&whole), "--wide"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(text(&o.stdout).contains("handling cost (/h)"), "{}", text(&o.stdout));
    let o = layflow(&["experiment", plan, "--out", &s(&whole), "--resume", "--quiet", "--wide"]);
    assert!(o.status.success(), "{}", text(&o.stderr));
    assert!(text(&o.stdout).contains("handling cost (EUR/h)"), "{}", text(&o.stdout));
    assert!(
        std::fs::read(whole.join("units.jsonl")).unwrap()
            == std::fs::read(merged.join("units.jsonl")).unwrap()
    );
}
