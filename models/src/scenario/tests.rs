//! Positive checks: the hand-checked validation scenarios compile to the plant worked out by hand.

use std::path::{Path, PathBuf};

use super::{load_scenario, parse_scenario};
use crate::plant::{Demand, DepartmentRole, DispatchRule, DistanceRule, Handling, Home, IdleRule, MoverKind};

fn validation(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/validation").join(name)
}

#[test]
fn tiny_hand_checked_compiles_as_worked_out() {
    let p = load_scenario(&validation("tiny-hand-checked.yaml")).unwrap();
    assert_eq!(p.run.horizon_s, 10.0 * 86400.0);
    assert_eq!(p.run.warmup_s, 86400.0);
    assert_eq!((p.run.replications, p.run.seed), (5, 42));
    assert_eq!(p.distance_rule, DistanceRule::Rectilinear);
    // dock-in (0, 0) to bay-c (30, 10): 30 + 10 m, and symmetric.
    assert_eq!(p.distance(0, 3), 40.0);
    assert_eq!(p.distance(3, 0), 40.0);
    assert_eq!(p.distance(2, 2), 0.0);
    let names: Vec<&str> = p.layouts.iter().map(|l| l.name.as_str()).collect();
    assert_eq!(names, ["baseline", "swapped"], "YAML order kept; the first is the baseline");
    assert_eq!(p.layouts[0].location_of, [0, 1, 2, 3, 4]);
    assert_eq!(p.layouts[1].location_of, [0, 2, 1, 5, 4]);
    assert_eq!(p.departments[3].machines, 1, "machines defaults to 1");
    assert_eq!(p.departments[0].role, DepartmentRole::Receiving);
    let product = &p.products[0];
    assert_eq!(product.demand, Demand::Rate { per_s: 3.0 / 3600.0, profile: None });
    assert_eq!(product.enters_at, 0, "the only receiving dock");
    let r = &product.routing;
    assert_eq!(r.len(), 5);
    assert_eq!(r[0].next, [(1, 1.0)]);
    assert_eq!(r[2].next, [(4, 0.9), (3, 0.1)]);
    assert_eq!(r[3].next, [(2, 1.0)]);
    assert!(r[4].next.is_empty() && r[4].time.is_none());
    assert_eq!(r[0].time.as_ref().unwrap().mean(), 360.0);
    assert_eq!(r[1].time.as_ref().unwrap().mean(), 600.0);
    assert_eq!(r[2].time.as_ref().unwrap().mean(), 180.0);
    assert!(matches!(p.handling, Handling::Instant));
    assert_eq!(p.demand_factor, 1.0);
    assert_eq!(p.cost_per_load_metre, 0.0);
}

#[test]
fn tiny_forklift_compiles_its_fleet() {
    let p = load_scenario(&validation("tiny-forklift.yaml")).unwrap();
    assert_eq!(p.run.warmup_s, 0.0, "warmup defaults to 0 s");
    assert_eq!(p.run.seed, 1, "seed defaults to 1");
    assert_eq!(p.distance_rule, DistanceRule::Matrix { file: None });
    assert_eq!(p.distance(0, 3), 30.0);
    let f = &p.fleets()[0];
    assert_eq!(f.kind, MoverKind::Forklift);
    assert_eq!((f.speed_loaded, f.speed_empty), (1.5, 2.0));
    assert_eq!((f.load_s, f.unload_s), (30.0, 20.0));
    assert_eq!((f.cost_per_h, f.cost_per_km), (40.0, 0.5));
    assert_eq!(f.home, Home::Department(0));
    assert_eq!((f.dispatch, f.idle), (DispatchRule::FirstCome, IdleRule::GoHome));
    assert_eq!(f.carries, [true, true]);
    assert_eq!(p.fleet_for(1), Some(0));
    assert_eq!(p.cost_per_load_metre, 0.01);
    // Empirical 4, 6, 9 min with 0.2, 0.5, 0.3: mean 0.8 + 3 + 2.7 = 6.5 min.
    let m = p.products[1].routing[0].time.as_ref().unwrap().mean();
    assert!((m - 390.0).abs() < 1e-9, "{m}");
}

#[test]
fn a_csv_matrix_may_list_rows_and_columns_in_any_order() {
    let dir = std::env::temp_dir().join(format!("layflow-csv-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(
        dir.join("d.csv"),
        "from,bay-b,dock-in,bay-a,dock-out\n\
         dock-out,10,30,20,0\n\
         bay-a,10,10,0,20\n\
         dock-in,20,0,10,30\n\
         bay-b,0,20,10,10\n",
    )
    .unwrap();
    let text = std::fs::read_to_string(validation("tiny-forklift.yaml"))
        .unwrap()
        .replace(
            "distance:\n  matrix:\n    - [0, 10, 20, 30]\n    - [10, 0, 10, 20]\n    - [20, 10, 0, 10]\n    - [30, 20, 10, 0]\n",
            "distance: { matrix: d.csv }\n",
        );
    let p = parse_scenario(&text, &dir.join("scenario.yaml"));
    std::fs::remove_dir_all(&dir).ok();
    let p = p.unwrap();
    let inline = load_scenario(&validation("tiny-forklift.yaml")).unwrap();
    assert_eq!(p.distance, inline.distance);
    assert_eq!(p.distance_rule, DistanceRule::Matrix { file: Some("d.csv".into()) });
}

#[test]
fn euclidean_distance_uses_the_straight_line() {
    let text = std::fs::read_to_string(validation("tiny-hand-checked.yaml"))
        .unwrap()
        .replace("distance: rectilinear", "distance: euclidean");
    let p = parse_scenario(&text, Path::new("t.yaml")).unwrap();
    // (0, 0) to (30, 10): sqrt(900 + 100).
    assert!((p.distance(0, 3) - 1000f64.sqrt()).abs() < 1e-12);
}

/// `tiny-hand-checked.yaml` with some of its text replaced.
fn tiny_with(edits: &[(&str, &str)]) -> Result<crate::plant::Plant, super::ScenarioError> {
    let path = validation("tiny-hand-checked.yaml");
    let mut text = std::fs::read_to_string(&path).unwrap();
    for (from, to) in edits {
        assert!(text.contains(from), "{from:?} not in the scenario");
        text = text.replacen(from, to, 1);
    }
    parse_scenario(&text, &path)
}

#[test]
fn probabilities_and_factors_accept_percentages() {
    let p = tiny_with(&[
        ("{ step: ship, p: 0.9 }", "{ step: ship, p: 90% }"),
        ("{ step: redrill, p: 0.1 }", "{ step: redrill, p: 10 % }"),
        ("plant:", "demand_factor: 120%\nplant:"),
        ("demand: { per_hour: 3 }", "demand: { per_hour: 3, profile: { every: 1 h, factors: [50%, 150%] } }"),
        ("time: 6 min }", "time: { empirical: [[4 min, 20%], [6 min, 80%]] } }"),
    ])
    .unwrap();
    // Percentages are hundredths: 90% is the 0.9 the file had, 120% is 1.2.
    assert_eq!(p.products[0].routing[2].next, [(4, 0.9), (3, 0.1)]);
    assert!((p.demand_factor - 1.2).abs() < 1e-15);
    match &p.products[0].demand {
        Demand::Rate { profile: Some(pr), .. } => assert_eq!(pr.factors, [0.5, 1.5]),
        other => panic!("expected a profiled rate, got {other:?}"),
    }
    // 4 min × 0.2 + 6 min × 0.8 = 5.6 min.
    assert!((p.products[0].routing[0].time.as_ref().unwrap().mean() - 336.0).abs() < 1e-9);
}

#[test]
fn a_branch_sum_off_by_rounding_only_is_accepted() {
    // 0.7 + 0.2 + 0.1 is 0.9999999999999999 in binary floating point: within 1e-9 of 1.
    assert_ne!(0.7 + 0.2 + 0.1, 1.0);
    let p = tiny_with(&[
        ("- { step: redrill, p: 0.1 }", "- { step: redrill, p: 0.1 }\n          - { step: cut, p: 0.2 }"),
        ("{ step: ship, p: 0.9 }", "{ step: ship, p: 0.7 }"),
    ]);
    assert!(p.is_ok(), "{}", p.unwrap_err());
}

#[test]
fn a_branch_sum_that_misses_is_printed_as_typed() {
    // 0.8 + 0.15 is 0.9500000000000001 in binary floating point.
    let e = tiny_with(&[("{ step: ship, p: 0.9 }", "{ step: ship, p: 0.8 }"), ("p: 0.1 }", "p: 0.15 }")])
        .unwrap_err();
    assert!(e.message().contains("sum to 0.95, not 1"), "{e}");
    let e = tiny_with(&[("p: 0.1 }", "p: 0.15 }")]).unwrap_err();
    assert!(e.message().contains("sum to 1.05, not 1"), "{e}");
}

#[test]
fn a_probability_in_words_is_refused_plainly() {
    let e = tiny_with(&[("p: 0.1 }", "p: ten percent }")]).unwrap_err();
    assert_eq!(e.path(), Some("products[0].routing[2].then[1].p"));
    assert_eq!(e.message(), "expected a probability, such as 0.9 or 90%, got \"ten percent\"");
}
