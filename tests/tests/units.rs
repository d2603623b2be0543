//! The units plants use, read from scenarios: lengths in feet and millimetres, speeds in
//! mph and ft/min, percentages for branch probabilities, and demand per shift, day, week
//! or month spread over the scenario's `working_time`.
//!
//! Sources: the unit definitions are NIST Special Publication 811 (2008 edition),
//! appendix B.8 and B.9: 1 ft = 0.3048 m, 1 mi = 1609.344 m, so 1 mph = 0.44704 m/s,
//! 1 ft/min = 0.00508 m/s and 1 km/h = 1/3.6 m/s, all exact. Tolerance 1e-12 relative:
//! one multiplication of doubles rounds by at most 1.1e-16 relative, so only a wrong
//! factor can miss it. The demand rates are computed by hand in each test's comment.

use std::path::Path;

use layflow_models::parse_scenario;
use layflow_models::plant::{Demand, Plant};

/// A small plant; `{LOC}`, `{SPEED}`, `{DEMAND}` and `{EXTRA}` are filled in per test.
const BASE: &str = "plant: Units test (invented)
run: { horizon: 2 d, warmup: 1 h }
{EXTRA}
locations:
  - { id: dock-in, at: [0, 0] }
  - { id: bay-a, at: {LOC} }
  - { id: bay-b, at: [10, 10] }
  - { id: dock-out, at: [20, 0] }
departments:
  - { id: receiving, dock: receiving }
  - { id: cutting, machines: 1 }
  - { id: bending, machines: 1 }
  - { id: shipping, dock: shipping }
layouts:
  current: { receiving: dock-in, cutting: bay-a, bending: bay-b, shipping: dock-out }
products:
  - id: bracket
    demand: {DEMAND}
    routing:
      - { step: cut, at: cutting, time: 5 min, then: [{ step: bend, p: 35% }, { step: ship, p: 65% }] }
      - { step: bend, at: bending, time: 4 min }
      - { step: ship, at: shipping }
fleets:
  - { id: trucks, kind: forklift, count: 1, speed: {SPEED}, home: receiving }
";

fn plant(loc: &str, speed: &str, demand: &str, extra: &str) -> Plant {
    let text = BASE
        .replace("{LOC}", loc)
        .replace("{SPEED}", speed)
        .replace("{DEMAND}", demand)
        .replace("{EXTRA}", extra);
    parse_scenario(&text, Path::new("units-test.yaml")).unwrap_or_else(|e| panic!("{e}"))
}

fn close(what: &str, got: f64, want: f64) {
    assert!((got - want).abs() <= 1e-12 * want.abs().max(1.0), "{what}: got {got}, want {want}");
}

#[test]
fn lengths_and_speeds_convert_by_their_definitions() {
    let p = plant("[\"50 ft\", \"1500 mm\"]", "{ loaded: 5 mph, empty: 600 ft/min }", "{ per_hour: 1 }", "");
    close("50 ft", p.locations[1].x, 50.0 * 0.3048);
    close("1500 mm", p.locations[1].y, 1.5);
    close("5 mph", p.fleets()[0].speed_loaded, 5.0 * 0.44704);
    close("600 ft/min", p.fleets()[0].speed_empty, 600.0 * 0.00508);
    let m = plant("[15.24, 1.5]", "{ loaded: 8 km/h, empty: 3.048 m/s }", "{ per_hour: 1 }", "");
    close("15.24 m", m.locations[1].x, 15.24);
    close("8 km/h", m.fleets()[0].speed_loaded, 8.0 / 3.6);
    close("600 ft/min is 3.048 m/s", p.fleets()[0].speed_empty, m.fleets()[0].speed_empty);
}

#[test]
fn branch_probabilities_take_percentages() {
    let pct = plant("[10, 0]", "{ loaded: 2 m/s, empty: 2 m/s }", "{ per_hour: 1 }", "");
    let text = format!("{:?}", pct.products[0]);
    let decimal = BASE
        .replace("35%", "0.35")
        .replace("65%", "0.65")
        .replace("{LOC}", "[10, 0]")
        .replace("{SPEED}", "{ loaded: 2 m/s, empty: 2 m/s }")
        .replace("{DEMAND}", "{ per_hour: 1 }")
        .replace("{EXTRA}", "");
    let dec = parse_scenario(&decimal, Path::new("units-test.yaml")).unwrap();
    assert_eq!(text, format!("{:?}", dec.products[0]), "35% reads as 0.35");
}

/// Two 8 h shifts (06:00–14:00, 14:00–22:00), Monday to Friday: 16 h a day,
/// 80 h a week. By hand:
/// - 800 lots per week → 800 / 80 = 10 lots per working hour;
/// - 50 lots per shift → 50 × 2 shifts × 5 days = 500 a week → 6.25 an hour;
/// - 120 lots per day → 600 a week → 7.5 an hour;
/// - 2600 lots per month, a month 52/12 weeks → 600 a week → 7.5 an hour.
///   Lots arrive in working time only, so the long-run mean over the whole clock is
///   800 / 168 lots per hour for the weekly case (the profile's mean factor 80/168).
#[test]
fn demand_periods_follow_the_working_time() {
    let working = "working_time: { shifts: { every: 1 d, on: [[6 h, 14 h], [14 h, 22 h]] }, days: 5 }";
    let per_hour = |demand: &str| {
        let p = plant("[10, 0]", "{ loaded: 2 m/s, empty: 2 m/s }", demand, working);
        match &p.products[0].demand {
            Demand::Rate { per_s, profile } => {
                (per_s * 3600.0, profile.clone().expect("working-time profile"))
            }
            other => panic!("{other:?}"),
        }
    };
    let (rate, profile) = per_hour("{ per_week: 800 }");
    close("per_week 800", rate, 10.0);
    // Steps of 2 h (the gcd of 6 h, 14 h, 22 h, 24 h): 84 in a week, 40 of them working.
    assert_eq!(profile.every_s, 7200.0);
    assert_eq!(profile.factors.len(), 84);
    assert_eq!(profile.factors.iter().sum::<f64>(), 40.0);
    assert_eq!(&profile.factors[..12], &[0., 0., 0., 1., 1., 1., 1., 1., 1., 1., 1., 0.], "Monday");
    assert!(profile.factors[60..].iter().all(|&f| f == 0.0), "Saturday and Sunday");
    close("long-run lots a clock hour", rate * profile.mean_factor(), 800.0 / 168.0);
    close("per_shift 50", per_hour("{ per_shift: 50 }").0, 6.25);
    close("per_day 120", per_hour("{ per_day: 120 }").0, 7.5);
    close("per_month 2600", per_hour("{ per_month: 2600 }").0, 7.5);
    // per_hour keeps its meaning: around the clock, no profile, even with a working time.
    let p = plant("[10, 0]", "{ loaded: 2 m/s, empty: 2 m/s }", "{ per_hour: 3 }", working);
    assert!(matches!(p.products[0].demand, Demand::Rate { profile: None, .. }));
}

#[test]
fn demand_periods_need_a_working_time() {
    let text = BASE
        .replace("{LOC}", "[10, 0]")
        .replace("{SPEED}", "{ loaded: 2 m/s, empty: 2 m/s }")
        .replace("{DEMAND}", "{ per_week: 800 }")
        .replace("{EXTRA}", "");
    let e = parse_scenario(&text, Path::new("units-test.yaml")).unwrap_err().to_string();
    assert!(e.contains("products[0].demand.per_week"), "{e}");
    assert!(e.contains("needs the scenario's `working_time`"), "{e}");
}
