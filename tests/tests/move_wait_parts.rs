//! The wait for a mover in two parts, waiting to be assigned and the assigned mover's drive to the pick-up: they add up to the whole wait, and each part matches M/D/1 theory on a plant worked by hand.
//!
//! The sum is exact up to floating point: each pick-up records
//! `assigned − requested` and `now − assigned` beside `now − requested`, so
//! the means differ only by rounding, far below 1e-9 relative. The theory
//! rows follow `tests/tests/movers.rs` (K = 3 half-widths plus a bias
//! allowance, with a cap that keeps the check able to see a 4% error).

use layflow_models::metrics::{value, Id};
use layflow_tests::{load, pollaczek_khinchine, run_layout, Checks, HOUR};

/// Relative tolerance on the sum of the parts: floating-point rounding of
/// means of a few thousand values of at most a few hours (ulp ≈ 1e-12 s).
const SUM_REL: f64 = 1e-9;

#[test]
fn the_two_parts_add_up_to_the_whole_wait_on_the_demo_plant() {
    let file = "demo.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let mut c = Checks::new(file);
    for (r, rep) in run.reps.iter().enumerate() {
        for f in 0..plant.fleets().len() {
            let (w, a, d) = (&rep.move_wait[f], &rep.move_wait_assign[f], &rep.move_wait_drive[f]);
            c.exact(
                &format!("rep {r} fleet {f}: pick-ups counted in each part"),
                w.count() as f64,
                a.count() as f64,
                0.0,
            );
            c.exact(&format!("rep {r} fleet {f}: drive count"), w.count() as f64, d.count() as f64, 0.0);
            c.relative(
                &format!("rep {r} fleet {f}: assign + drive = wait"),
                w.mean(),
                a.mean() + d.mean(),
                SUM_REL,
            );
            c.holds(&format!("rep {r} fleet {f}: no part is negative"), a.mean() >= 0.0 && d.mean() >= 0.0);
            // The registry reads the same numbers.
            let (rw, ra, rd) = (
                value(Id::FleetMoveWait, &plant, rep, f),
                value(Id::FleetMoveWaitAssign, &plant, rep, f),
                value(Id::FleetMoveWaitDrive, &plant, rep, f),
            );
            c.relative(&format!("rep {r} fleet {f}: registry assign + drive = wait"), rw, ra + rd, SUM_REL);
        }
        let (w, a, d) = (
            value(Id::MoveWait, &plant, rep, 0),
            value(Id::MoveWaitAssign, &plant, rep, 0),
            value(Id::MoveWaitDrive, &plant, rep, 0),
        );
        c.relative(&format!("rep {r} plant: assign + drive = wait"), w, a + d, SUM_REL);
    }
    // And the summary `run` prints: means of the same per-replication values.
    let s = &run.summary;
    c.relative(
        "summary: assign + drive = wait",
        s.move_wait_s.mean,
        s.move_wait_assign_s.mean + s.move_wait_drive_s.mean,
        SUM_REL,
    );
    for f in &s.fleets {
        c.relative(
            &format!("summary {}: assign + drive = wait", f.fleet),
            f.move_wait_s.mean,
            f.move_wait_assign_s.mean + f.move_wait_drive_s.mean,
            SUM_REL,
        );
    }
    c.finish();
}

/// One mover that stays where it set its load down, every pick-up at the same
/// dock (scenarios/validation/mover-md1-stay.yaml, worked there by hand): it
/// is an M/D/1 server of move requests with τ = 180 s (docs/formulas.md §15,
/// Pollaczek–Khinchine of §2). The request waits Wq = λτ²/(2(1−ρ)) = 270 s for
/// the mover to be free and assigned, then the mover drives the 90 m from
/// shipping to receiving empty at 2.25 m/s: 40 s, every time (its first trip,
/// from its home at receiving, falls in the 50 h warm-up).
#[test]
fn a_staying_mover_s_drive_is_the_hand_computed_trip_and_its_assignment_wait_is_md1() {
    let file = "validation/mover-md1-stay.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    let fl = &plant.fleets()[0];
    let d = plant.distance(0, 1);
    let t_empty = d / fl.speed_empty;
    c.relative("empty trip 90 m ÷ 2.25 m/s = 40 s", 40.0, t_empty, 1e-12);
    let tau = fl.load_s + d / fl.speed_loaded + fl.unload_s + t_empty;
    let th = pollaczek_khinchine(15.0 / HOUR, tau, 0.0);
    c.relative("theory: Wq = 270 s", 270.0, th.wq, 1e-12);

    let run = run_layout(&plant, 0);
    for (r, rep) in run.reps.iter().enumerate() {
        let drive = &rep.move_wait_drive[0];
        // Every drive is the same deterministic trip: its mean is 40 s up to
        // rounding and its spread is nil.
        c.relative(&format!("rep {r}: mean drive = 40 s"), t_empty, drive.mean(), SUM_REL);
        c.holds(&format!("rep {r}: every drive alike"), drive.variance().sqrt() < 1e-6);
        // The drive's p95 from the millisecond histogram (3 significant digits: ±0.05 s at 40 s).
        let p95 = value(
            Id::FleetMoveWaitDriveQuantile(layflow_models::metrics::registry::Percentile::P95),
            &plant,
            rep,
            0,
        );
        c.exact(&format!("rep {r}: drive p95 = 40 s"), t_empty, p95, 0.05);
    }
    let f = &run.summary.fleets[0];
    // Bias allowance and power cap as in tests/tests/movers.rs.
    c.estimate("assignment wait = M/D/1 Wq", th.wq, &f.move_wait_assign_s, 3.0, 1e-3 * th.wq, 0.04);
    c.finish();
}
