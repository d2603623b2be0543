//! Lots held at a receiving dock cost the same per event however long their
//! line grows (issue 15, class 3).
//!
//! `scenarios/validation/held-at-dock.yaml` is overloaded on purpose: the
//! line of crates held at its dock grows by about 90 an hour, while panels
//! wait upstream at a cutter with one outbound place. Deadlock detection
//! once looked at every lot waiting anywhere each time a wait began, so the
//! work per event grew with the line (about 10,000 entries per event after
//! a week) and a run's time with the square of its horizon. The work is
//! counted, not timed (no timed tests): entries looked at by the staging
//! rules' searches, per event, must stay below a bound set by the plant's
//! size alone.

use layflow_models::sim::{simulate_scan_steps, Plan, RunSpec};
use layflow_tests::load;

#[test]
fn work_per_event_does_not_grow_with_the_line_at_the_dock() {
    let mut plant = load("validation/held-at-dock.yaml");
    // The plant is overloaded: the rule of docs/formulas.md §22 would stop it
    // at 10,000 lots (after about 110 h). Capped instead, the line holds
    // there for the rest of the week: the worst case for a rescan.
    plant.run.allow_overload = true;
    let plan = Plan::new(&plant, 0);
    let steps_per_event = |hours: f64| {
        let spec =
            RunSpec { layout: 0, horizon_s: hours * 3600.0, warmup_s: 0.0, demand_factor: 1.0, seed: 15 };
        let (events, steps) = simulate_scan_steps(&plan, &spec, 0);
        eprintln!("{hours} h: {events} events, {steps} scan steps");
        (events, steps as f64 / events as f64)
    };
    let (short_events, short) = steps_per_event(12.0);
    let (long_events, long) = steps_per_event(168.0);
    assert!(long_events > 10 * short_events, "{long_events} vs {short_events} events");
    // The bound from the plant's size: one deadlock check looks at the 4
    // departments, then peels at most 4 + 1 times through the stuck ones,
    // each with at most 1 held lot and 1 outbound destination: 4 + 5 × 4 × 2
    // = 44 entries; letting a lot in looks at most at 1 blocked machine. A
    // wait begins at most a few times per event, so 100 per event is far
    // above what the plant allows and far below the old scan (the line at
    // the dock holds 10,000 lots for the last 60 h).
    assert!(long <= 100.0, "{long} scan steps per event after a week: a search over waiting lots is back");
    // And it does not grow with the line: a week costs per event about what 12 h do
    // (the factor 2 leaves room for the share of events that begin a wait to drift).
    assert!(long <= 2.0 * short + 1.0, "scan steps per event grew from {short} (12 h) to {long} (168 h)");
}
