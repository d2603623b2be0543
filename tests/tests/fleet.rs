//! Fleet sizing: the analytic estimate against the simulation, and more movers never wait longer.

use layflow_engine::paired_difference;
use layflow_models::analysis::StaticPicture;
use layflow_models::plant::{Handling, Plant};
use layflow_models::sim::RunSpec;
use layflow_models::sizing::{fleet_estimate, EmptyRule};
use layflow_tests::{load, run_spec};

fn with_count(plant: &Plant, fleet: usize, n: u32) -> Plant {
    let mut p = plant.clone();
    if let Handling::Fleets(f) = &mut p.handling {
        f[fleet].count = n;
    }
    p
}

fn spec(plant: &Plant, replications_seed: u64) -> RunSpec {
    RunSpec {
        layout: 0,
        horizon_s: plant.run.horizon_s,
        warmup_s: plant.run.warmup_s,
        demand_factor: plant.demand_factor,
        seed: replications_seed,
    }
}

#[test]
fn analytic_utilisation_matches_a_deterministic_return_home_mover() {
    // One mover, one move per lot (receiving → shipping), fixed times, back
    // home after each delivery: its busy time per request is exactly
    // τ = load + loaded + unload + empty return = 180 s (docs/formulas.md §15), so
    // utilisation = λτ = 15/h × 180 s = 0.75. The facilities-planning formula
    // (docs/formulas.md §7, from-to chart form) gives the same busy time with either
    // empty-travel rule, because every empty trip is the loaded one reversed.
    let plant = load("validation/mover-md1.yaml");
    let pic = StaticPicture::new(&plant, 1.0);
    for rule in [EmptyRule::MinimumEmptyFlow, EmptyRule::SameAsLoaded] {
        let e = fleet_estimate(&plant, &pic, 0, 0, rule, 1.0).unwrap();
        assert!((e.busy_s_per_h - 2700.0).abs() < 1e-9, "{rule:?}: {}", e.busy_s_per_h);
        assert!((e.vehicles - 0.75).abs() < 1e-12);
        assert_eq!(e.vehicles_rounded_up, 1);
    }
    let run = run_spec(&plant, spec(&plant, plant.run.seed), 40);
    let u = &run.summary.fleets[0].utilization;
    // Within 3 of the simulation's own half-widths (40 replications), as every
    // queueing check in this suite.
    assert!(
        (u.mean - 0.75).abs() <= 3.0 * u.half_width.unwrap(),
        "simulated {} ± {:?}",
        u.mean,
        u.half_width
    );
}

#[test]
fn another_forklift_never_makes_the_demo_wait_longer() {
    // Under common random numbers every size sees the same lots, so the paired
    // difference wait(n+1) − wait(n) isolates the extra mover. More servers can
    // only help a work-conserving pool on average; we assert no increase
    // beyond noise: the paired 95% interval must not lie wholly above zero.
    let plant = load("demo.yaml");
    let f = plant.fleets().iter().position(|f| f.id == "forklifts").unwrap();
    let reps = 20;
    let waits: Vec<Vec<f64>> = (1..=4)
        .map(|n| {
            let p = with_count(&plant, f, n);
            let run = run_spec(&p, spec(&p, plant.run.seed), reps);
            run.reps.iter().map(|r| r.move_wait[f].mean()).collect()
        })
        .collect();
    for n in 0..waits.len() - 1 {
        let d = paired_difference(&waits[n + 1], &waits[n], 0.95);
        let hw = d.half_width.unwrap();
        eprintln!("forklifts {} → {}: wait change {:.2} ± {:.2} s", n + 1, n + 2, d.mean, hw);
        assert!(d.mean - hw <= 0.0, "adding a forklift raised the mean wait: {} ± {hw} s", d.mean);
    }
    // And the first extra forklift must help clearly (the demo runs 2; one is busy most of the time).
    let d = paired_difference(&waits[1], &waits[0], 0.95);
    assert!(d.excludes_zero() && d.mean < 0.0);
}
