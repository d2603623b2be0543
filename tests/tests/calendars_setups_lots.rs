//! Department calendars, setups and lots moved in unit loads, against hand counts, work conservation and hand-computed schedules.
//!
//! The statistical rows follow `staging_breakdowns.rs`: 40 long replications,
//! a row passes when |sim − theory| ≤ 3 half-widths + 1e-3 of theory (the
//! warm-up, 200 h, is many relaxation times of these small queues), and its
//! tolerance may not exceed 4% of theory (1% for throughput) so that a 5%
//! error would be caught. The deterministic rows (setups, lot splitting) run
//! one replication with fixed seeds; their tolerances are derived from the
//! one lot or one setup that can straddle the edge of the window.

use layflow_models::plant::{LoadStart, ShiftEnd};
use layflow_tests::{department, load, run_layout, Checks};

const K: f64 = 3.0;
const BIAS_REL: f64 = 1e-3;
const POWER: f64 = 0.04;
const POWER_TIGHT: f64 = 0.01;
const H: f64 = 3600.0;

#[test]
fn a_shift_calendar_of_known_hours_gives_exactly_its_scheduled_time() {
    // Two 8-hour shifts (6–14 h, 14–22 h) five days a week, each with a
    // 30-minute break: 5 × (16 − 2 × 0.5) = 75 h a week, by hand count (the
    // calendar arithmetic of any shift plan; no outside formula needed).
    let plant = load("validation/calendar-week.yaml");
    let mill = department(&plant, "mill");
    let cal = plant.departments[mill].calendar.as_ref().expect("the mill has a calendar");
    let mut c = Checks::new("shift calendar of known hours");
    c.holds("work under way pauses at shift end", cal.at_shift_end == ShiftEnd::Pause);
    c.exact("scheduled hours in one week", 75.0, cal.duty.on_duty_s(0.0, 7.0 * 24.0 * H) / H, 1e-9);
    c.exact("scheduled share 75/168", 75.0 / 168.0, cal.scheduled_share(), 1e-12);
    // The simulated window (1 week warm-up, then 4 weeks) holds 4 × 75 h.
    c.exact("static window hours", 300.0, cal.duty.on_duty_s(7.0 * 24.0 * H, 35.0 * 24.0 * H) / H, 1e-9);
    let run = run_layout(&plant, 0);
    for (i, r) in run.reps.iter().enumerate() {
        c.exact(
            &format!("replication {i}: simulated scheduled hours"),
            300.0,
            (r.window_s - r.off_shift_s[mill]) / H,
            1e-6,
        );
    }
    c.finish();
}

/// Runs a single machine that works only in shifts (6–22 h daily, share
/// 2/3), λ = 2 lots/h, E[S] = 15 min, and checks it against work conservation.
fn shifts_against_work_conservation(file: &str, title: &str) {
    // Derivation: the machine is work-conserving within its windows and
    // stable (λ·E[S] = 0.5 < 2/3), so in the long run it does all the work
    // that arrives: throughput = λ and busy time per hour of clock = λ·E[S]
    // (with `pause` all of it inside the windows; with `finish` a little
    // runs over, but the busy total is the same). Against scheduled time the
    // utilisation is λ·E[S]/share = 0.5/(2/3) = 0.75. (Little's law and the
    // work-conservation argument of Cooper, Introduction to Queueing
    // Theory, 2nd ed., ch. on M/G/1, from memory.)
    let plant = load(file);
    let g = department(&plant, "grinder");
    let (lambda, es, share) = (2.0, 0.25, 2.0 / 3.0);
    let mut c = Checks::new(title);
    c.relative("static scheduled share", share, plant.departments[g].scheduled_share(), 1e-12);
    let run = run_layout(&plant, 0);
    c.relative(
        "static load against scheduled time λ·E[S]/share",
        0.75,
        run.picture.utilization_available[g],
        1e-12,
    );
    let s = &run.summary;
    let d = &s.departments[g];
    c.estimate("throughput = λ, lots/h", lambda, &s.throughput_per_h, K, BIAS_REL * lambda, POWER_TIGHT);
    c.estimate(
        "utilisation against clock time λ·E[S]",
        lambda * es,
        &d.utilization,
        K,
        BIAS_REL * 0.5,
        POWER,
    );
    let u = d.utilization_scheduled.expect("reported with a calendar");
    c.estimate("utilisation against scheduled time λ·E[S]/share", 0.75, &u, K, BIAS_REL * 0.75, POWER);
    c.finish();
}

#[test]
fn a_machine_in_shifts_pausing_work_keeps_up_with_poisson_demand() {
    shifts_against_work_conservation("validation/calendar-shifts-mg1.yaml", "shifts, pause at shift end");
}

#[test]
fn a_machine_in_shifts_finishing_work_keeps_up_with_poisson_demand() {
    shifts_against_work_conservation(
        "validation/calendar-shifts-mg1-finish.yaml",
        "shifts, finish at shift end",
    );
}

#[test]
fn a_press_alternating_two_products_runs_at_its_hand_computed_capacity() {
    // Hand computation: A, B, A, B, … with 10 min a lot and setups 5 min
    // (A→B) and 2 min (B→A): 27 min per pair, 2/27 lots per minute =
    // 4.44444 lots/h; setups take 7/27 = 0.259259 of the time; the press is
    // never idle (the queue grows at 6 − 4.444 lots/h). Over the 90 h window
    // at most one lot and one setup straddle each end, so the tolerances
    // are 2 lots/90 h and 2 × 5 min/90 h.
    let plant = load("validation/setups-alternating.yaml");
    let press = department(&plant, "press");
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let d = &s.departments[press];
    let mut c = Checks::new("setups, two products in turn");
    c.exact("throughput = 2 lots per 27 min, lots/h", 120.0 / 27.0, s.throughput_per_h.mean, 2.0 / 90.0);
    c.exact(
        "setup share 7/27",
        7.0 / 27.0,
        d.setup_share.expect("reported with setups").mean,
        2.0 * 5.0 / 60.0 / 90.0,
    );
    c.exact("utilisation (setups count as busy)", 1.0, d.utilization.mean, 1e-9);
    // The static estimate takes each lot's predecessor to be a random lot of
    // the mix (½, ½): per lot ¼·5 + ¼·2 = 1.75 min, × 6 lots/h = 10.5 min/h.
    c.relative("static setup share of a random mix", 10.5 / 60.0, run.picture.setup_share[press], 1e-12);
    c.finish();
}

#[test]
fn lots_split_into_loads_follow_the_hand_computed_overlap_schedule() {
    // Hand-computed schedules (moves take no time, one lot in the plant at a
    // time, load i of u units worked for T·u/Q):
    // - first-load, T1 = 40, T2 = 20 min, 4 loads: cutting ends loads at
    //   10, 20, 30, 40; drilling works each for 5 min as it comes: the last
    //   ends at 45 min (= T1 + T2/4).
    // - last-load, same times: T1 + T2 = 60 min.
    // - first-load, T1 = 20, T2 = 40 min: cutting ends loads at 5, 10, 15,
    //   20; drilling, 10 min each, runs 5–45 without a gap: 45 min (= T1/4 + T2).
    // - first-load, loads of 3 and 1 units: cutting ends them at 30 and 40;
    //   drilling 30–45 and 45–50: 50 min.
    let plant = load("validation/lot-splitting.yaml");
    let mut c = Checks::new("lot splitting: overlap schedules");
    let p = |id: &str| plant.products.iter().position(|p| p.id == id).expect("product");
    c.holds(
        "starts_on is read",
        plant.products[p("last-40-20")].lot.is_some_and(|l| l.start == LoadStart::LastLoad),
    );
    let run = run_layout(&plant, 0);
    for (id, minutes) in
        [("first-40-20", 45.0), ("last-40-20", 60.0), ("first-20-40", 45.0), ("first-batch-3", 50.0)]
    {
        let got = run.summary.products[p(id)].flow_time_s.mean / 60.0;
        c.exact(&format!("{id}: flow time, min"), minutes, got, 1e-6);
    }
    // Every move of a lot is one move per unit load: the from-to chart
    // counts 4 (or 2) loads per lot from cutting to drilling.
    let (cut, drill) = (department(&plant, "cutting"), department(&plant, "drilling"));
    let per_h = 1.0 / 12.0;
    c.relative(
        "from-to cutting → drilling, loads/h",
        per_h * (4.0 + 4.0 + 4.0 + 2.0),
        run.picture.from_to.get(cut, drill),
        1e-12,
    );
    // Little's law on lots: WIP = throughput × flow time.
    let s = &run.summary;
    c.relative(
        "Little's law on lots",
        s.throughput_per_h.mean / H * s.flow_time_s.mean,
        s.wip_mean.mean,
        0.01,
    );
    c.finish();
}

#[test]
fn the_shifts_setups_and_lots_demo_runs_and_reports_its_figures() {
    let plant = load("shifts-setups-lots.yaml");
    let mut c = Checks::new("scenarios/shifts-setups-lots.yaml");
    for l in 0..plant.layouts.len() {
        let run = run_layout(&plant, l);
        let s = &run.summary;
        let press = &s.departments[department(&plant, "press")];
        c.holds(&format!("layout {l}: press setup share reported"), press.setup_share.is_some());
        c.holds(
            &format!("layout {l}: press scheduled utilisation reported"),
            press.utilization_scheduled.is_some(),
        );
        c.holds(
            &format!("layout {l}: forklifts' on-duty utilisation reported"),
            s.fleets[0].utilization_scheduled.is_some(),
        );
        // Every lot released is shipped or still in the plant: throughput ≈
        // demand 0.75/h. The demo's 10 replications give about 3.4% for the
        // half-width (measured); 4 half-widths stay under the 15% bar, which
        // a plant losing a sixth of its lots would fail.
        c.estimate(
            &format!("layout {l}: throughput ≈ demand 0.75/h"),
            0.75,
            &s.throughput_per_h,
            4.0,
            0.0,
            0.15,
        );
    }
    c.finish();
}
