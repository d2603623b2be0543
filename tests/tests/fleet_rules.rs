//! The movers a plant really has: acceleration, which fleet may serve a move, dispatch and idle rules, operators' shifts, and tow trains, each on a tiny plant whose every lot can be followed by hand.
//!
//! Nothing in these plants is random: lots come from order traces and every
//! time is constant, so each row is exact up to floating point (1e-6 s on
//! times, which covers the rounding of efficiency divisions). Each scenario
//! file spells out the timeline the numbers below come from.

use layflow_models::analysis::StaticPicture;
use layflow_models::plant::{DispatchRule, FleetChoice, Plant};
use layflow_models::sim::{simulate_releases, Plan, RepStats};
use layflow_tests::{load, run_layout, Checks};

/// Tolerance on times and distances, s or m.
const TOL: f64 = 1e-6;

/// The single replication of layout 0.
fn one_rep(plant: &Plant) -> RepStats {
    run_layout(plant, 0).reps.swap_remove(0)
}

fn product(plant: &Plant, id: &str) -> usize {
    plant.products.iter().position(|p| p.id == id).unwrap_or_else(|| panic!("no product {id:?}"))
}

/// Every product's lots: how many shipped and their mean flow time, against hand values.
fn flows(c: &mut Checks, plant: &Plant, rep: &RepStats, want: &[(&str, u64, f64)]) {
    for &(id, n, flow) in want {
        let p = product(plant, id);
        c.exact(&format!("{id}: lots shipped"), n as f64, rep.shipped[p] as f64, 0.0);
        c.exact(&format!("{id}: flow time (s)"), flow, rep.flow_time[p].mean(), TOL);
        c.holds(
            &format!("{id}: every lot alike (sd {:.1e} s)", rep.flow_time[p].variance().sqrt()),
            rep.flow_time[p].variance().sqrt() < TOL,
        );
    }
}

#[test]
fn acceleration_follows_the_trapezoidal_profile() {
    let file = "validation/mover-acceleration.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    let fl = &plant.fleets()[0];
    c.exact("acceleration 0.5 m/s2 in m/s²", 0.5, fl.accel.unwrap_or(f64::NAN), 0.0);
    // docs/formulas.md §8 (v = 2 m/s, a = 0.5 m/s²): 50 m takes 29 s (trapezoid),
    // 5 m takes 2·√(5/0.5) = 6.32456 s (triangle), 55 m takes 27.5 + 4 = 31.5 s.
    let (t50, t5, t55) = (29.0, 2.0 * 10f64.sqrt(), 31.5);
    c.exact("§8: 2·√10 s printed as 6.32456 s", 6.32456, t5, 5e-6);
    let flow = (10.0 + t50 + 10.0) + 600.0 + (t50 + 10.0 + t5 + 10.0);
    let rep = one_rep(&plant);
    // 201 lots: one at each whole hour from 0 to 200 h, all shipped by 200.5 h.
    flows(&mut c, &plant, &rep, &[("casting", 201, flow)]);
    let st = &rep.fleets[0];
    let lots = 201.0;
    c.exact("moves = 2 per lot", 2.0 * lots, st.moves as f64, 0.0);
    c.exact("loaded s = lots × (29 + 6.32456)", lots * (t50 + t5), st.loaded_s, TOL);
    c.exact("empty s = lots × (29 + 29 + 31.5)", lots * (t50 + t50 + t55), st.empty_s, TOL);
    c.exact("handling s = lots × 40", lots * 40.0, st.handling_s, TOL);
    // Distances do not depend on how the mover speeds up.
    c.exact("loaded m = lots × 55", lots * 55.0, st.distance_loaded_m, TOL);
    c.exact("empty m = lots × 155", lots * 155.0, st.distance_empty_m, TOL);
    // The static bound uses the same travel times: 1 lot/h × (29 + 6.32456 + 40) s.
    let pic = StaticPicture::new(&plant, 1.0);
    c.relative(
        "static bound = (29 + 6.32456 + 40) s per hour",
        (t50 + t5 + 40.0) / 3600.0,
        pic.layouts[0].fleet_utilization_lower_bound[0],
        1e-12,
    );
    c.finish();
}

#[test]
fn moves_go_to_the_first_listed_fleet_allowed_by_serves_and_weight() {
    let file = "validation/fleet-assignment.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    // docs/formulas.md §10 (free walking 1.2–1.4 m/s) and common practice (10 s a
    // tote): the walkers' defaults, since the scenario gives neither.
    let w = &plant.fleets()[1];
    c.exact("walker default speed loaded", 1.2, w.speed_loaded, 0.0);
    c.exact("walker default speed empty", 1.2, w.speed_empty, 0.0);
    c.exact("walker default load + unload", 20.0, w.load_s + w.unload_s, 0.0);
    c.exact("billet weighs 1.5 t", 1500.0, plant.products[1].weight_kg.unwrap_or(0.0), 0.0);
    // Static trips (1 bar + 1 billet an hour): dock-truck 2, walkers 1, heavy 3.
    let pic = StaticPicture::new(&plant, 1.0);
    let trips = &pic.layouts[0].fleet_trips_per_h;
    for (f, want) in [(0, 2.0), (1, 1.0), (2, 3.0)] {
        c.relative(&format!("{}: static trips/h", plant.fleets()[f].id), want, trips[f], 1e-12);
    }
    let rep = one_rep(&plant);
    // 101 plays (0 h to 100 h), every lot shipped by 100.5 h.
    for (f, per_play) in [(0, 2.0), (1, 1.0), (2, 3.0)] {
        c.exact(
            &format!("{}: moves = {per_play} per play", plant.fleets()[f].id),
            101.0 * per_play,
            rep.fleets[f].moves as f64,
            0.0,
        );
    }
    c.exact("bars shipped", 101.0, rep.shipped[0] as f64, 0.0);
    c.exact("billets shipped", 101.0, rep.shipped[1] as f64, 0.0);
    c.finish();
}

#[test]
fn nearest_idle_fleet_choice_serves_a_shared_request_once() {
    let file = "validation/fleet-choice.yaml";
    let mut plant = load(file);
    let mut c = Checks::new(file);
    // Hand-computed timelines (constant speed, t = d/v) of the rule as
    // documented; the scenario file lists them. Common practice.
    let rep = one_rep(&plant);
    flows(&mut c, &plant, &rep, &[("a", 1, 120.0), ("b", 1, 220.0), ("c", 1, 340.0)]);
    c.exact("nearest-idle: north moves", 1.0, rep.fleets[0].moves as f64, 0.0);
    c.exact("nearest-idle: south moves (c served once)", 2.0, rep.fleets[1].moves as f64, 0.0);
    // The static picture shares each move by movers (one truck each): of the
    // 3 moves an hour (one lot of each product in the 1 h run), 1.5 each.
    let pic = StaticPicture::new(&plant, 1.0);
    for f in 0..2 {
        c.relative(
            "nearest-idle: static trips/h split by movers",
            1.5,
            pic.layouts[0].fleet_trips_per_h[f],
            1e-12,
        );
    }
    plant.fleet_choice = FleetChoice::FirstListed;
    let rep = one_rep(&plant);
    flows(&mut c, &plant, &rep, &[("a", 1, 220.0), ("b", 1, 440.0), ("c", 1, 660.0)]);
    c.exact("first-listed: north moves", 3.0, rep.fleets[0].moves as f64, 0.0);
    c.exact("first-listed: south moves", 0.0, rep.fleets[1].moves as f64, 0.0);
    c.finish();
}

#[test]
fn nearest_request_takes_the_closest_waiting_load() {
    let file = "validation/dispatch-nearest-request.yaml";
    let mut plant = load(file);
    let mut c = Checks::new(file);
    // Hand-computed timelines (t = d/v) of the rules as documented; common practice.
    let rep = one_rep(&plant);
    flows(&mut c, &plant, &rep, &[("first", 1, 20.0), ("near", 1, 38.0), ("far", 1, 439.0)]);
    if let layflow_models::plant::Handling::Fleets(f) = &mut plant.handling {
        f[0].dispatch = DispatchRule::NearestIdle;
    }
    let rep = one_rep(&plant);
    flows(&mut c, &plant, &rep, &[("first", 1, 20.0), ("far", 1, 419.0), ("near", 1, 438.0)]);
    c.finish();
}

#[test]
fn a_reserve_waits_at_the_busiest_pick_up_and_parking_takes_the_first_nearest() {
    // Hand-computed timelines (t = d/v) of the rules as documented; common practice.
    let file = "validation/idle-reserve.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    let pic = StaticPicture::new(&plant, 1.0);
    c.exact("receiving: 1 pick-up/h (the default reserve)", 1.0, pic.fleet_pickups_per_h[0][0], 1e-12);
    let rep = one_rep(&plant);
    // The window (30 min to 50.5 h) holds the lots of 1 h to 50 h.
    flows(&mut c, &plant, &rep, &[("crate", 50, 120.0)]);
    let st = &rep.fleets[0];
    c.exact("empty m = 100 per lot (back to the reserve)", 5000.0, st.distance_empty_m, TOL);
    c.exact("mean move wait = 0 (a truck waits at the reserve)", 0.0, rep.move_wait[0].mean(), TOL);

    let file = "validation/idle-park.yaml";
    let plant = load(file);
    let rep = one_rep(&plant);
    flows(&mut c, &plant, &rep, &[("crate", 50, 230.0)]);
    let st = &rep.fleets[0];
    c.exact("park: empty m = 10 + 110 per lot", 50.0 * 120.0, st.distance_empty_m, TOL);
    c.exact("park: move wait = 110 s from p-east", 110.0, rep.move_wait[0].mean(), TOL);
    c.finish();
}

#[test]
fn requests_are_served_only_on_duty_and_scheduled_time_is_the_calendar() {
    let file = "validation/operators-shifts.yaml";
    let mut plant = load(file);
    let mut c = Checks::new(file);
    // Efficiency divides every time (docs/formulas.md §7, the efficiency factor of
    // the fleet-size formulas): a move of 24 + 60 + 24 s at 0.8 takes 135 s.
    let fl = &plant.fleets()[0];
    let duty = fl.operators.duty.as_ref().expect("a duty calendar");
    c.exact("efficiency", 0.8, fl.operators.efficiency, 0.0);
    // Common practice: shifts 6–22 h less two half-hour breaks = 15 h a day.
    c.exact("on duty per day (s)", 15.0 * 3600.0, duty.on_duty_s(0.0, 86400.0), TOL);
    let h = 3600.0;
    let rep = one_rep(&plant);
    flows(
        &mut c,
        &plant,
        &rep,
        &[
            ("at-3h", 1, 3.0 * h + 135.0),
            ("at-8h", 1, 135.0),
            ("at-10h10", 1, 1200.0 + 135.0),
            ("at-21h58", 1, 135.0),
            ("at-23h", 1, 7.0 * h + 75.0 + 135.0),
        ],
    );
    // Scheduled time: 2 days × 9 h off = 64800 mover-seconds off duty.
    let st = &rep.fleets[0];
    c.exact("off duty, 2 d (mover-s)", 18.0 * h, st.off_s, TOL);
    c.exact("scheduled = window − off = 30 h", 30.0 * h, rep.window_s - st.off_s, TOL);
    c.exact("busy: 5 × 135 s of moves", 5.0 * 135.0, st.loaded_s + st.handling_s, TOL);
    // The window clips the calendar: from 7 h, day 1 leaves 3 h off and day 2 9 h;
    // three movers count three times.
    if let layflow_models::plant::Handling::Fleets(f) = &mut plant.handling {
        f[0].count = 3;
    }
    let mut spec = layflow_tests::run_layout(&plant, 0).spec;
    spec.warmup_s = 7.0 * h;
    let run = layflow_tests::run_spec(&plant, spec, 1);
    c.exact("off duty from 7 h, 3 movers", 3.0 * 12.0 * h, run.reps[0].fleets[0].off_s, TOL);
    // A calendar whose window starts the period (on 0–8 h): on duty at time
    // 0, so the 3 h lot is served at once; 16 h a day off over 2 days.
    if let layflow_models::plant::Handling::Fleets(f) = &mut plant.handling {
        f[0].count = 1;
        f[0].operators.duty = Some(layflow_models::plant::DutyCalendar {
            period_s: 24.0 * h,
            on: vec![(0.0, 8.0 * h)],
            shifts: vec![(0.0, 8.0 * h)],
        });
    }
    let rep = one_rep(&plant);
    c.exact("on 0–8 h: the 3 h lot waits for nobody", 135.0, rep.flow_time[0].mean(), TOL);
    c.exact("on 0–8 h: off duty, 2 d", 32.0 * h, rep.fleets[0].off_s, TOL);
    c.finish();
}

#[test]
fn a_tow_train_collects_waiting_loads_and_drops_the_nearest_first() {
    let file = "validation/tow-train.yaml";
    let mut plant = load(file);
    let mut c = Checks::new(file);
    // Hand-computed timeline (t = d/v) of the train rule as documented; common practice.
    let rep = one_rep(&plant);
    flows(&mut c, &plant, &rep, &[("a", 1, 140.0), ("b", 1, 200.0), ("d", 1, 185.0), ("c", 1, 260.0)]);
    let st = &rep.fleets[0];
    c.exact("moves", 4.0, st.moves as f64, 0.0);
    c.exact("mean wait = (0 + 30 + 15 + 180)/4", 56.25, rep.move_wait[0].mean(), TOL);
    c.exact("loaded m", 140.0, st.distance_loaded_m, TOL);
    c.exact("loaded s", 70.0, st.loaded_s, TOL);
    c.exact("empty m", 140.0, st.distance_empty_m, TOL);
    c.exact("empty s", 70.0, st.empty_s, TOL);
    c.exact("handling s", 240.0, st.handling_s, TOL);
    // Capacity 2: full after b and a, it leaves at 60 s: a by 110, b by 170;
    // then d (oldest, 100 m empty: 220–250) and c (waiting at the dock: 250–280),
    // c to ship-a by 330 (flow 230), d to ship-b by 390 (flow 345).
    if let layflow_models::plant::Handling::Fleets(f) = &mut plant.handling {
        f[0].capacity = 2;
    }
    let rep = one_rep(&plant);
    flows(&mut c, &plant, &rep, &[("a", 1, 110.0), ("b", 1, 170.0), ("d", 1, 345.0), ("c", 1, 230.0)]);
    c.finish();
}

#[test]
fn every_rule_at_once_keeps_littles_law_and_repeats_exactly() {
    let file = "validation/all-fleet-rules.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    let run = run_layout(&plant, 0);
    // Little (docs/formulas.md §4): L = λW on every run, with the edge bound 2W/T.
    layflow_tests::check_little(&mut c, file, &run, layflow_tests::little_edge_bound(&run));
    // Every product still ships at its demand (nothing piles up for good):
    // 9 lots/h in all, within 3 half-widths (common practice).
    let x = &run.summary.throughput_per_h;
    c.estimate("throughput = 9 lots/h", 9.0, x, 3.0, 0.0, 0.05);
    // The same replication again gives the same numbers (no state leaks
    // between replications; nothing depends on timing).
    let again = run_layout(&plant, 0);
    let same = run
        .reps
        .iter()
        .zip(&again.reps)
        .all(|(a, b)| a.flow_time_all == b.flow_time_all && a.fleets == b.fleets);
    c.holds("every replication repeats exactly", same);
    // Common random numbers (Law, as in docs/formulas.md §13): the fleet rules draw
    // nothing, so the lots released are the same with plain fleets.
    let mut plain = plant.clone();
    plain.fleet_choice = FleetChoice::FirstListed;
    if let layflow_models::plant::Handling::Fleets(fleets) = &mut plain.handling {
        for f in fleets {
            f.capacity = 1;
            f.accel = None;
            f.operators = layflow_models::plant::Operators { efficiency: 1.0, duty: None };
        }
    }
    let spec = run.spec;
    let (a, b) = (Plan::new(&plant, 0), Plan::new(&plain, 0));
    c.holds(
        "the same lots are released with and without the fleet rules",
        simulate_releases(&a, &spec, 3) == simulate_releases(&b, &spec, 3),
    );
    // Every fleet did some work, and the shift fleets record off-duty time.
    for (f, st) in run.reps[0].fleets.iter().enumerate() {
        c.holds(&format!("{}: moves > 0", plant.fleets()[f].id), st.moves > 0);
    }
    // heavy: 2 movers × 30 min a day × 28 d; walkers: 2 × 9 h × 28 d.
    c.exact("heavy off duty (mover-s)", 2.0 * 1800.0 * 28.0, run.reps[0].fleets[1].off_s, TOL);
    c.exact("walkers off duty (mover-s)", 2.0 * 9.0 * 3600.0 * 28.0, run.reps[0].fleets[2].off_s, TOL);
    c.finish();
}
