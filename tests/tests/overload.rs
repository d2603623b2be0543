//! The overload rule (docs/formulas.md §22) never fires on a stable, heavily
//! loaded plant, and stops or caps one that diverges (issue 15, class 6).
//!
//! The rule stops a replication when the plant holds
//! max(10,000, 50 × L̂ + cycle lots) lots, L̂ the expected WIP. The
//! stable checks here assert more than that the rule stayed quiet (the
//! 10,000-lot floor alone would keep them quiet): the peak WIP of every
//! replication stays below 50 × L̂, the part of the limit that theory sets.

use layflow_models::parse_scenario;
use layflow_models::plant::Plant;
use layflow_models::sim::overload::{expected_wip, wip_limit, WIP_FLOOR, WIP_MULTIPLE};
use layflow_models::sim::{simulate, Plan, RunSpec};
use layflow_tests::load;

/// A single machine fed at 4 lots/h (Poisson) with processing time `time`.
fn single_machine(time: &str) -> Plant {
    let yaml = format!(
        "plant: Overload check cell (invented)\n\
         run:\n  horizon: 100 h\n  warmup: 0 h\n  replications: 1\n  seed: 1\n\
         locations:\n  - {{ id: gate, at: [0, 0] }}\n  - {{ id: bay, at: [20, 0] }}\n  - {{ id: door, at: [40, 0] }}\n\
         distance: rectilinear\n\
         departments:\n  - {{ id: intake, dock: receiving }}\n  - {{ id: press, machines: 1 }}\n  - {{ id: outbound, dock: shipping }}\n\
         layouts:\n  only: {{ intake: gate, press: bay, outbound: door }}\n\
         products:\n  - id: washer\n    demand: {{ per_hour: 4 }}\n    routing:\n      \
         - {{ step: press, at: press, time: {time} }}\n      - {{ step: ship, at: outbound }}\n\
         moves: instant\n"
    );
    parse_scenario(&yaml, std::path::Path::new("overload-check.yaml")).expect("the test plant is valid")
}

/// Runs `reps` replications of `horizon_h` hours at `factor` and returns the highest peak WIP.
fn peak_wip(plant: &Plant, factor: f64, horizon_h: f64, reps: u64, seed: u64) -> f64 {
    let plan = Plan::new(plant, 0);
    let spec =
        RunSpec { layout: 0, horizon_s: horizon_h * 3600.0, warmup_s: 0.0, demand_factor: factor, seed };
    let mut peak: f64 = 0.0;
    for r in 0..reps {
        let s = simulate(&plan, &spec, r);
        assert!(s.overload.is_none(), "replication {r} stopped as overloaded: {:?}", s.overload);
        assert_eq!(s.capped, 0);
        peak = peak.max(s.wip_peak);
    }
    peak
}

#[test]
fn an_mm1_at_95_percent_never_trips_the_rule() {
    // scenarios/validation/mm1.yaml at rho = 0.8; × 1.1875 gives rho = 0.95,
    // L = rho/(1 - rho) = 19 lots (docs/formulas.md §1). P(N >= n) = rho^n,
    // so a peak of 50 L = 950 lots has probability 0.95^950 ≈ 6e-22 at each
    // arrival: over the 100 × 47,500 arrivals here, below 3e-15.
    let plant = load("validation/mm1.yaml");
    let factor = 0.95 / 0.8;
    let l = expected_wip(&plant, 0, factor);
    assert!((l - 19.0).abs() < 1e-9, "L̂ = {l}, M/M/1 gives 19");
    assert_eq!(wip_limit(&plant, 0, factor), WIP_FLOOR);
    let peak = peak_wip(&plant, factor, 10_000.0, 100, 9505);
    eprintln!("M/M/1 at 0.95: peak WIP {peak} lots over 100 replications, 50 L = {}", WIP_MULTIPLE * l);
    assert!(peak < WIP_MULTIPLE * l, "peak {peak} lots");
}

#[test]
fn a_highly_variable_single_machine_at_95_percent_never_trips_the_rule() {
    // Gamma processing with cv 3 (c_s² = 9) at rho = 0.95: Kingman's
    // heavy-traffic form gives Lq ≈ (1 + 9)/2 × rho²/(1 - rho) = 90.25, and
    // L̂ = 0.95 + 90.25 = 91.2 lots (docs/formulas.md §22). The number in the
    // system is then close to exponential with that mean, so a peak of 50 L̂
    // has probability about e⁻⁵⁰ each time.
    let plant = single_machine("{ gamma: { mean: 14.25 min, cv: 3 } }");
    let l = expected_wip(&plant, 0, 1.0);
    assert!((l - (0.95 + 5.0 * 0.95 * 0.95 / 0.05)).abs() < 1e-6, "L̂ = {l}");
    let peak = peak_wip(&plant, 1.0, 10_000.0, 40, 9506);
    eprintln!("gamma cv 3 at 0.95: peak WIP {peak} lots over 40 replications, 50 L̂ = {}", WIP_MULTIPLE * l);
    assert!(peak < WIP_MULTIPLE * l, "peak {peak} lots");
}

#[test]
fn an_overloaded_machine_stops_early_or_is_capped() {
    // rho = 1.2 (4 lots/h against 3.33/h): the queue grows by about 0.67 lots
    // an hour, so the 10,000-lot floor is passed after about 15,000 h (give or
    // take the sqrt(2 × 4/h × 15,000 h) ≈ 350 lots of noise, about 500 h),
    // whatever the horizon.
    let mut plant = single_machine("{ exponential: { mean: 18 min } }");
    let spec = RunSpec { layout: 0, horizon_s: 1e6 * 3600.0, warmup_s: 0.0, demand_factor: 1.0, seed: 12 };
    let s = simulate(&Plan::new(&plant, 0), &spec, 0);
    let o = s.overload.as_ref().expect("stopped as overloaded");
    assert_eq!(o.wip, WIP_FLOOR);
    assert!(o.time_s < 20_000.0 * 3600.0, "stopped only at {} h", o.time_s / 3600.0);
    // With --allow-overload it runs to the horizon (here 30,000 h) and never holds more than the cap.
    plant.run.allow_overload = true;
    let spec = RunSpec { horizon_s: 30_000.0 * 3600.0, ..spec };
    let s = simulate(&Plan::new(&plant, 0), &spec, 0);
    assert!(s.overload.is_none());
    assert!(s.wip_peak <= WIP_FLOOR, "peak {} lots", s.wip_peak);
    assert!(
        s.capped > 0 && s.turned_away[0] == s.capped,
        "{} capped, {:?} turned away",
        s.capped,
        s.turned_away
    );
    // The machine never starves once the cap is reached, so it ships at its
    // capacity, 1/(18 min) = 3.33 lots/h: about 100,000 lots in 30,000 h.
    assert!(s.shipped[0] > 90_000, "shipped {}", s.shipped[0]);
}
