//! Traces add up: from the trace files alone, one replication's mean flow time, mean move wait, department utilisations and time-average WIP come out as `run` computed them.
//!
//! The outside reference here is the definition of each metric, applied by
//! hand to the raw event record (a time-weighted mean is the area under the
//! step function over the window ÷ the window, from memory of any queueing
//! text), against the model's own accumulators
//! (`models/src/sim/model.rs`, `finish`): a lot's flow time counts when it
//! ships after the warm-up; a move's wait (request → pick-up) counts when it
//! is picked up in (warm-up, horizon). Strictly after: the handlers test
//! `now >= warm-up`, but `run_until(warm-up)` handles the events at exactly
//! the warm-up's end before the statistics are cleared, so those are
//! cleared too (it shows on plants with a warm-up of 0, whose trace orders
//! are picked up at time 0); utilisation is busy
//! machine-seconds in the window ÷ (machines × window); WIP is the area of
//! lots-in-plant over the window ÷ the window.
//!
//! Tolerance 1e-9 relative: both sides add the same few thousand f64 terms
//! in different orders (Welford's running mean and running areas against
//! plain sums here), so they differ by rounding only, about n·ε ≈ 1e4 × 1.1e-16
//! ≈ 1e-12 relative; the times round-trip exactly through the files (Rust's
//! `{}` for f64 is the shortest representation that reads back the same).

use std::collections::BTreeMap;
use std::path::Path;

use layflow_models::plant::Plant;
use layflow_models::sim::trace::{untraceable, TraceOptions, TraceSink};
use layflow_models::sim::{simulate, simulate_traced, Plan, RunSpec};
use layflow_tests::load;

const REL: f64 = 1e-9;

/// Rows of a trace file as maps column → value (the demo's names hold no commas).
fn read(dir: &Path, file: &str) -> Vec<BTreeMap<String, String>> {
    let text = std::fs::read_to_string(dir.join(file)).expect("trace file");
    let mut lines = text.lines();
    let head: Vec<&str> = lines.next().expect("header").split(',').collect();
    lines
        .map(|l| head.iter().zip(l.split(',')).map(|(h, v)| (h.to_string(), v.to_string())).collect())
        .collect()
}

fn f(row: &BTreeMap<String, String>, col: &str) -> Option<f64> {
    let v = &row[col];
    (!v.is_empty()).then(|| v.parse().expect("a number"))
}

fn close(what: &str, got: f64, want: f64) {
    let rel = (got - want).abs() / want.abs().max(f64::MIN_POSITIVE);
    assert!(rel <= REL, "{what}: from the trace {got}, from run {want} (relative difference {rel:e})");
}

#[test]
fn the_trace_of_the_demo_plant_adds_up_to_runs_numbers() {
    // Replication 2 (shown to users as replication 3) of the first layout.
    adds_up("demo.yaml", 2);
}

/// Plants that exercise what else the tracer follows: operators' shifts
/// (off_duty), idle rules (park, reserve, always home), nearest-idle fleet
/// choice and nearest-request dispatch, an order trace, a warm-up of 0, and
/// machines with breakdowns, calendars and setups (availability checked too).
#[test]
fn traces_of_the_other_traceable_validation_plants_add_up_too() {
    for file in [
        "validation/operators-shifts.yaml",
        "validation/idle-park.yaml",
        "validation/idle-reserve.yaml",
        "validation/mover-always-home.yaml",
        "validation/fleet-choice.yaml",
        "validation/dispatch-nearest-request.yaml",
        "validation/orders-trace.yaml",
        "validation/tiny-forklift.yaml",
        "orders-demo.yaml",
        // Tracked machines: breakdowns (down), calendars (off_shift, paused or finishing), setups.
        "validation/machine-availability.yaml",
        "validation/calendar-shifts-mg1.yaml",
        "validation/calendar-shifts-mg1-finish.yaml",
        "validation/calendar-week.yaml",
        "validation/setups-alternating.yaml",
        // Assembly: lots waiting for kits, components consumed (their rows end when consumed).
        "validation/assembly-hand-timed.yaml",
        "assembly-demo.yaml",
    ] {
        adds_up(file, 0);
    }
}

/// Forklifts that break down (clock time) and go on charge every 6 h of
/// work, with operators' shifts: the validation plant of `fleet` and `run`
/// agreeing, with its staging limits lifted here so that only the movers'
/// service is new. Their down and charging seconds are checked in `adds_up`;
/// here, that there are some in the window, so the check means something.
#[test]
fn the_trace_of_movers_that_break_down_and_charge_adds_up() {
    let mut plant = load("validation/fleet-run-agree.yaml");
    for d in &mut plant.departments {
        d.staging = Default::default();
    }
    let spent = adds_up_plant("fleet-run-agree.yaml without staging", &plant, 1);
    assert!(spent("down") > 0.0 && spent("charging") > 0.0, "repairs and charges in the window");
}

/// Staging limits: machines blocked after service (instant moves in the
/// two-station line; forklifts with machine breakdowns, an overflow yard
/// and movers waiting at a full inbound area in the demo and in the
/// fleet/run agreement plant, which adds mover breakdowns and charging).
/// `adds_up` checks each department's blocked share from visits.csv, the
/// fleets' blocked seconds and the overflow moves; here, that they are
/// there to check.
#[test]
fn traces_of_plants_with_staging_limits_add_up() {
    // (file, replication, movers wait at a full inbound area, loads go to an overflow area)
    for (file, rep, wait, overflow) in [
        ("validation/two-station-blocking.yaml", 0, false, false),
        ("staging-breakdowns.yaml", 0, false, true),
        ("validation/fleet-run-agree.yaml", 0, true, false),
    ] {
        let spent = adds_up_plant(file, &load(file), rep);
        assert!(spent("blocked machine") > 0.0, "{file}: machines blocked in the window");
        assert_eq!(spent("blocked") > 0.0, wait, "{file}: movers blocked in the window");
        assert_eq!(spent("overflow moves") > 0.0, overflow, "{file}: overflow moves in the window");
    }
}

/// The aisle network simulated segment by segment: movers held up at full
/// segments and busy zones (state `congestion`, checked in `adds_up`
/// against the fleets' congestion seconds), and each move's congestion
/// delay, which is its mover's `congestion` spells from assignment to
/// delivery (checked in `adds_up` for the moves made inside the window).
#[test]
fn traces_over_simulated_aisles_add_up() {
    for file in [
        "aisles-demo.yaml",
        "validation/aisles-one-way.yaml",
        "validation/aisles-single-lane.yaml",
        "validation/aisles-two-way-lane.yaml",
    ] {
        let plant = load(file);
        let spent = adds_up_plant(file, &plant, 0);
        if file == "aisles-demo.yaml" {
            assert!(spent("congestion") > 0.0, "{file}: movers held up in the window");
            assert!(spent("moves' congestion") > 0.0, "{file}: moves held up in the window");
        }
    }
}

/// Tow trains: several loads per trip, one move row per load (written at
/// its drop), the train's states as any mover's.
#[test]
fn traces_of_tow_trains_add_up() {
    for file in TRAINS {
        adds_up(file, 0);
    }
}

/// Plants with tow trains (capacity above 1).
const TRAINS: [&str; 2] = ["validation/tow-train.yaml", "validation/all-fleet-rules.yaml"];

/// Trace replication `replication` of the first layout of `file` over its
/// observation window and recompute its numbers from the files alone.
fn adds_up(file: &str, replication: u64) {
    let _ = adds_up_plant(file, &load(file), replication);
}

/// As [`adds_up`], for a plant built in the test; returns the mover-seconds
/// in each state in the window, over every fleet.
fn adds_up_plant(file: &str, plant: &Plant, replication: u64) -> impl Fn(&str) -> f64 {
    let layout = 0;
    let plan = Plan::new(plant, layout);
    assert!(untraceable(&plan).is_none());
    let spec = RunSpec {
        layout,
        horizon_s: plant.run.horizon_s,
        warmup_s: plant.run.warmup_s,
        demand_factor: 1.0,
        seed: plant.run.seed,
    };
    let (w0, w1) = (spec.warmup_s, spec.horizon_s);
    let dir = tempfile::tempdir().expect("temp dir");
    let mut sink = TraceSink::create(dir.path()).expect("trace files");
    let opts = TraceOptions::new(plant, (w0, w1));
    let traced = simulate_traced(&plan, &spec, replication, &mut sink, &opts).expect("trace written");
    sink.flush().expect("flushed");
    let rep = simulate(&plan, &spec, replication);
    // Tracing reads the model, never changes it.
    assert_eq!(traced.events, rep.events);
    assert_eq!(traced.flow_time_all.mean().to_bits(), rep.flow_time_all.mean().to_bits());
    assert_eq!(traced.wip_total.to_bits(), rep.wip_total.to_bits());

    // Mean flow time of the lots shipped in the window.
    let lots = read(dir.path(), "lots.csv");
    let shown = (replication + 1).to_string();
    assert!(lots.iter().all(|r| r["replication"] == shown), "{file}: replications are numbered from 1");
    let flows: Vec<f64> = lots
        .iter()
        .filter(|r| f(r, "shipped").is_some_and(|s| s >= w0))
        .map(|r| f(r, "flow_time_s").unwrap())
        .collect();
    assert_eq!(flows.len() as u64, rep.flow_time_all.count(), "{file}: lots shipped in the window");
    if !flows.is_empty() {
        close(
            &format!("{file}: mean flow time"),
            flows.iter().sum::<f64>() / flows.len() as f64,
            rep.flow_time_all.mean(),
        );
    }

    // Time-average WIP: each lot's stay clipped to the window.
    let area: f64 = lots
        .iter()
        .map(|r| {
            let (a, b) = (f(r, "released").unwrap(), f(r, "shipped").unwrap_or(w1));
            (b.min(w1) - a.max(w0)).max(0.0)
        })
        .sum();
    close(&format!("{file}: time-average WIP"), area / (w1 - w0), rep.wip_total);

    // Mean move wait, request to pick-up, of the loads picked up in the window.
    let moves = read(dir.path(), "moves.csv");
    // A load taken on to an overflow area is a move with no request.
    let overflow = moves
        .iter()
        .filter(|r| r["requested"].is_empty() && f(r, "picked_up").is_some_and(|p| p >= w0 && p < w1))
        .count();
    assert_eq!(overflow as u64, rep.overflow_moves, "{file}: overflow moves");
    let waits: Vec<f64> = moves
        .iter()
        .filter(|r| !r["requested"].is_empty() && f(r, "picked_up").is_some_and(|p| p > w0 && p < w1))
        .map(|r| f(r, "picked_up").unwrap() - f(r, "requested").unwrap())
        .collect();
    assert_eq!(waits.len() as u64, rep.move_wait_all.count(), "{file}: moves picked up in the window");
    if !waits.is_empty() {
        close(
            &format!("{file}: mean move wait"),
            waits.iter().sum::<f64>() / waits.len() as f64,
            rep.move_wait_all.mean(),
        );
    }

    // Utilisation: busy machine-seconds in the window ÷ (machines × window).
    let mut lanes: BTreeMap<(String, String), Vec<(f64, String)>> = BTreeMap::new();
    for r in read(dir.path(), "machine_states.csv") {
        lanes
            .entry((r["department"].clone(), r["machine"].clone()))
            .or_default()
            .push((f(&r, "time").unwrap(), r["state"].clone()));
    }
    // (busy or setting up, down) machine-seconds and lanes, per department.
    let mut busy: BTreeMap<String, (f64, f64, u32)> = BTreeMap::new();
    for ((dept, _), mut changes) in lanes {
        // File order is decision order; a stable sort by time keeps the later decision last.
        changes.sort_by(|a, b| a.0.total_cmp(&b.0));
        assert_eq!(changes[0].0, w0, "{file}: every lane starts with its state at the window's start");
        let (mut s, mut down) = (0.0, 0.0);
        for (i, (t, state)) in changes.iter().enumerate() {
            let span = changes.get(i + 1).map_or(w1, |c| c.0).min(w1) - t.max(w0);
            // A setup holds the machine for its lot: `run` counts it busy (and reports it apart too).
            if state == "busy" || state == "setup" {
                s += span;
            } else if state == "down" {
                down += span;
            }
        }
        let e = busy.entry(dept).or_insert((0.0, 0.0, 0));
        e.0 += s;
        e.1 += down;
        e.2 += 1;
    }
    for (d, dep) in plant.departments.iter().enumerate() {
        if let Some(&(s, down, machines)) = busy.get(&dep.id) {
            assert_eq!(machines, dep.machines, "{file}: {}: a lane per machine", dep.id);
            let capacity = f64::from(machines) * (w1 - w0);
            close(&format!("{file}: utilisation of {}", dep.id), s / capacity, rep.utilization[d]);
            close(&format!("{file}: availability of {}", dep.id), 1.0 - down / capacity, rep.availability[d]);
        } else {
            assert_eq!(dep.machines, 0, "{file}: {}: a work department has lanes", dep.id);
        }
    }

    // Mover-seconds loaded, empty and handling in the window, against the fleet's activity times.
    let mut movers: BTreeMap<(String, String), Vec<(f64, String)>> = BTreeMap::new();
    for r in read(dir.path(), "mover_states.csv") {
        movers
            .entry((r["fleet"].clone(), r["mover"].clone()))
            .or_default()
            .push((f(&r, "time").unwrap(), r["state"].clone()));
    }
    let mut spent: BTreeMap<(String, String), f64> = BTreeMap::new();
    let mut lanes_of = BTreeMap::new();
    for ((fleet, mover), mut changes) in movers {
        changes.sort_by(|a, b| a.0.total_cmp(&b.0));
        lanes_of.insert((fleet.clone(), mover), changes.clone());
        assert_eq!(changes[0].0, w0, "{file}: every mover lane starts at the window's start");
        for (i, (t, state)) in changes.iter().enumerate() {
            let end = changes.get(i + 1).map_or(w1, |c| c.0);
            *spent.entry((fleet.clone(), state.clone())).or_default() += end.min(w1) - t.max(w0);
        }
    }
    for (k, fleet) in plant.fleets().iter().enumerate() {
        let got = |state: &str| spent.get(&(fleet.id.clone(), state.to_string())).copied().unwrap_or(0.0);
        let acc = &rep.fleets[k];
        close(&format!("{file}: {} loaded s", fleet.id), got("loaded"), acc.loaded_s);
        close(&format!("{file}: {} empty s", fleet.id), got("empty"), acc.empty_s);
        close(&format!("{file}: {} handling s", fleet.id), got("handling"), acc.handling_s);
        // `run`'s down time holds the charging time too (models/src/sim/stats.rs, `FleetStats`).
        close(&format!("{file}: {} down s", fleet.id), got("down") + got("charging"), acc.down_s);
        close(&format!("{file}: {} charging s", fleet.id), got("charging"), acc.charging_s);
        close(&format!("{file}: {} blocked s", fleet.id), got("blocked"), acc.blocked_s);
        close(&format!("{file}: {} congestion s", fleet.id), got("congestion"), acc.congestion_s);
    }

    // Every visit row's waiting column is start − arrival; a lot is held on
    // its machine from `end` for `blocked` seconds (to the end of the run if
    // empty), and those spells clipped to the window, ÷ (machines × window),
    // are the department's blocked share.
    let mut held: BTreeMap<String, f64> = BTreeMap::new();
    for r in read(dir.path(), "visits.csv") {
        if let (Some(a), Some(s)) = (f(&r, "arrival"), f(&r, "start")) {
            assert_eq!(f(&r, "waiting").unwrap(), s - a);
        }
        if let Some(end) = f(&r, "end") {
            let until = f(&r, "blocked").map_or(w1, |b| end + b);
            *held.entry(r["department"].clone()).or_default() += (until.min(w1) - end.max(w0)).max(0.0);
        }
    }
    for (d, dep) in plant.departments.iter().enumerate() {
        if dep.machines > 0 {
            let h = held.get(&dep.id).copied().unwrap_or(0.0);
            let share = h / (f64::from(dep.machines) * (w1 - w0));
            close(&format!("{file}: blocked share of {}", dep.id), share, rep.blocked[d]);
        }
    }
    spent.insert((String::new(), "blocked machine".into()), held.values().sum());
    spent.insert((String::new(), "overflow moves".into()), overflow as f64);
    // A move's congestion delay: its mover's congestion spells from its
    // assignment to its delivery, for the moves made inside the window.
    // Absolute tolerance 1e-6 s: the same time differences summed in
    // another grouping, about 1e-16 × 1e6 s of clock each.
    let mut congestion = 0.0;
    for r in &moves {
        let (Some(a), Some(d)) = (f(r, "assigned"), f(r, "delivered")) else { continue };
        if a < w0 || d > w1 {
            continue;
        }
        let lane = &lanes_of[&(r["fleet"].clone(), r["mover"].clone())];
        let mut held = 0.0;
        // From the spell under way at the assignment to the delivery.
        let first = lane.partition_point(|c| c.0 <= a).saturating_sub(1);
        for (i, (t, state)) in lane.iter().enumerate().skip(first).take_while(|(_, c)| c.0 < d) {
            if state == "congestion" {
                let end = lane.get(i + 1).map_or(w1, |c| c.0);
                held += (end.min(d) - t.max(a)).max(0.0);
            }
        }
        let c = f(r, "congestion_s").unwrap();
        assert!((c - held).abs() <= 1e-6, "{file}: a move's congestion {c} s, its mover's spells {held} s");
        congestion += c;
    }
    spent.insert((String::new(), "moves' congestion".into()), congestion);
    let mut by_state: BTreeMap<String, f64> = BTreeMap::new();
    for ((_, state), s) in spent {
        *by_state.entry(state).or_default() += s;
    }
    move |state: &str| by_state.get(state).copied().unwrap_or(0.0)
}

#[test]
fn plants_with_states_the_tracer_does_not_follow_are_refused() {
    let plant = load("shifts-setups-lots.yaml");
    assert!(untraceable(&Plan::new(&plant, 0)).is_some());
}
