//! Queue orders and due dates: product priority against Cobham's formula and the conservation law, and shortest-time, earliest-due and lateness on a schedule timed by hand.
//!
//! The statistical rows (`priorities_follow_cobham_and_conserve_work`) use
//! the tolerance derived in `tests/tests/queueing.rs`: K = 3 half-widths of
//! the 40-replication Student t interval (t(0.975, 39) = 2.023, docs/formulas.md
//! §6), so a correct model fails a row with probability about 4e-7; a bias
//! allowance of 1e-3 of theory (the warm-up of 200 h is over 30 relaxation
//! times 1/(μ(1−√ρ)²) ≈ 6 h of the pooled M/G/1, from memory of Morse's
//! M/M/1 relaxation time, so the start-up bias is below e⁻³⁰); and a power
//! limit: each tolerance must stay under 4% of theory, so a 5% error in a
//! class's wait is caught.
//!
//! The hand-timed rows are exact: constant times, an order trace and
//! instant moves leave nothing random, so starts and ends are compared to
//! 1e-9 s (the times are sums of a few whole minutes, exact in f64). The
//! lateness p95 comes from histograms of three significant digits, so it is
//! compared to 1e-3 relative (hdrhistogram's bucket width at 3 digits is
//! under 1e-3 of the value).

use std::collections::BTreeMap;

use layflow_models::metrics::{est, value, Id};
use layflow_models::plant::{Plant, QueueOrder};
use layflow_models::sim::RepStats;
use layflow_tests::{
    department, hw, load, run_layout, scaled, shifted, traced_replication, visit_times, Checks, HOUR,
};

const K: f64 = 3.0;
const BIAS_REL: f64 = 1e-3;
const POWER: f64 = 0.04;
/// Exact times, s.
const TOL: f64 = 1e-9;
const MIN: f64 = 60.0;

fn product(plant: &Plant, id: &str) -> usize {
    plant.products.iter().position(|p| p.id == id).unwrap_or_else(|| panic!("no product {id:?}"))
}

/// Cobham's formula (docs/formulas.md §24): the mean wait in queue of each
/// class of a non-preemptive priority M/G/1, classes in priority order, as
/// (λₖ per hour, E[Sₖ] h, E[Sₖ²] h²).
fn cobham(classes: &[(f64, f64, f64)]) -> Vec<f64> {
    let w0: f64 = classes.iter().map(|&(l, _, s2)| l * s2 / 2.0).sum();
    let mut sigma = 0.0;
    classes
        .iter()
        .map(|&(l, s, _)| {
            let before = sigma;
            sigma += l * s;
            w0 / ((1.0 - before) * (1.0 - sigma))
        })
        .collect()
}

#[test]
fn cobham_formula_matches_the_reference_values() {
    let mut c = Checks::new("Cobham's formula (docs/formulas.md §24)");
    // Exponential service: E[S²] = 2E[S]².
    let w = cobham(&[(1.2, 0.25, 2.0 * 0.25 * 0.25), (1.8, 0.2, 2.0 * 0.2 * 0.2)]);
    // The worked case of docs/formulas.md §24: Wq,1 = 0.21 h, Wq,2 = 21/34 h.
    c.relative("Wq,1 = 0.21 h", 0.21, w[0], 1e-12);
    c.relative("Wq,2 = 21/34 h", 21.0 / 34.0, w[1], 1e-12);
    // One class is M/G/1 first in first out (Pollaczek–Khinchine, §2): W₀/(1 − ρ).
    let fifo = cobham(&[(3.0, 0.22, 0.147 * 2.0 / 3.0)]);
    c.relative("one class: W₀/(1 − ρ) = 0.432353 h", 0.147 / 0.34, fifo[0], 1e-12);
    // Conservation (Kleinrock 1976): ρ₁Wq,1 + ρ₂Wq,2 = ρW₀/(1 − ρ) = 0.285353 h.
    c.relative("conservation 0.3·Wq,1 + 0.36·Wq,2", 0.66 * 0.147 / 0.34, 0.3 * w[0] + 0.36 * w[1], 1e-12);
    c.exact("conservation vs printed 0.285353", 0.285353, 0.3 * w[0] + 0.36 * w[1], 5e-7);
    c.finish();
}

/// Product priority at one machine: each class's wait against Cobham's
/// formula (A. Cobham, Operations Research 2(1):70–76, 1954), and the
/// work-weighted wait Σρₖ Wq,ₖ equal to first in first out's (Kleinrock's
/// conservation law, Queueing Systems vol. 2, Wiley 1976), both against
/// theory and paired against a FIFO run of the same plant (common random
/// numbers: each lot draws its time from its own stream).
#[test]
fn priorities_follow_cobham_and_conserve_work() {
    let file = "validation/priority-cobham.yaml";
    let plant = load(file);
    let mut c = Checks::new(file);
    let (rivet, stud) = (product(&plant, "rivet"), product(&plant, "stud"));
    let theory = cobham(&[(1.2, 0.25, 0.125), (1.8, 0.2, 0.08)]);
    let prio = run_layout(&plant, 0);
    // Wait in queue = flow time − the class's mean processing time (instant moves).
    for (p, s, wq) in [(rivet, 0.25, theory[0]), (stud, 0.2, theory[1])] {
        let flow = scaled(&prio.summary.products[p].flow_time_s, 1.0 / HOUR);
        let e = shifted(&flow, -s);
        c.estimate(&format!("{}: Wq (h)", plant.products[p].id), wq, &e, K, BIAS_REL * wq, POWER);
    }
    let mut fifo_plant = plant.clone();
    fifo_plant.departments[department(&plant, "press")].queue_order = QueueOrder::Fifo;
    let fifo = run_layout(&fifo_plant, 0);
    let fifo_wq = 0.147 / 0.34;
    for (p, s) in [(rivet, 0.25), (stud, 0.2)] {
        let e = shifted(&scaled(&fifo.summary.products[p].flow_time_s, 1.0 / HOUR), -s);
        c.estimate(
            &format!("fifo {}: Wq (h)", plant.products[p].id),
            fifo_wq,
            &e,
            K,
            BIAS_REL * fifo_wq,
            POWER,
        );
    }
    // Σρₖ Wq,ₖ per replication.
    let conserved = |r: &RepStats| {
        0.3 * (r.flow_time[rivet].mean() / HOUR - 0.25) + 0.36 * (r.flow_time[stud].mean() / HOUR - 0.2)
    };
    let level = 0.66 * 0.147 / 0.34;
    let by_prio = est(prio.reps.iter().map(conserved));
    let by_fifo = est(fifo.reps.iter().map(conserved));
    c.estimate("priority: Σρₖ Wq,ₖ (h)", level, &by_prio, K, BIAS_REL * level, POWER);
    c.estimate("fifo: Σρₖ Wq,ₖ (h)", level, &by_fifo, K, BIAS_REL * level, POWER);
    let diff = est(prio.reps.iter().zip(&fifo.reps).map(|(a, b)| conserved(a) - conserved(b)));
    let tol = K * hw(&diff) + 2.0 * BIAS_REL * level;
    c.holds(
        &format!(
            "paired priority − fifo of Σρₖ Wq,ₖ: {:.6} ± {:.6} h, |mean| ≤ {tol:.6} (and tol ≤ {POWER} of the level)",
            diff.mean,
            hw(&diff)
        ),
        diff.mean.abs() <= tol && tol <= POWER * level,
    );
    // The order changes who waits, never what is done: throughputs agree to the lot.
    for p in [rivet, stud] {
        let (a, b): (u64, u64) =
            (prio.reps.iter().map(|r| r.shipped[p]).sum(), fifo.reps.iter().map(|r| r.shipped[p]).sum());
        let gap = (a as f64 - b as f64).abs() / a as f64;
        c.holds(&format!("{}: lots shipped {a} vs fifo {b} (within 0.1%)", plant.products[p].id), gap < 1e-3);
    }
    c.finish();
}

/// One replication of `plant` traced; each lot's (start, end) at the press, by trace lot number.
fn starts_and_ends(plant: &Plant) -> (BTreeMap<u32, (String, f64, f64)>, RepStats) {
    let (dir, rep) = traced_replication(plant);
    (visit_times(dir.path()), rep)
}

/// The schedules of scenarios/validation/queue-order-hand.yaml, worked by
/// hand in its comment: lots 1–4 arrive at 0 (anvil), 1 (cam), 2 (bolt) and
/// 3 min (anvil); the trace numbers lots in release order.
#[test]
fn shortest_time_and_earliest_due_give_the_hand_timed_schedules() {
    let file = "validation/queue-order-hand.yaml";
    let plant = load(file);
    let press = department(&plant, "press");
    let mut c = Checks::new(file);
    // (order, [(lot, product, start min, end min)]).
    let cases = [
        (
            QueueOrder::ShortestTime,
            [(1, "anvil", 0.0, 5.0), (2, "cam", 6.0, 9.0), (3, "bolt", 5.0, 6.0), (4, "anvil", 9.0, 14.0)],
        ),
        (
            QueueOrder::EarliestDue,
            [
                (1, "anvil", 0.0, 5.0),
                (2, "cam", 11.0, 14.0),
                (3, "bolt", 10.0, 11.0),
                (4, "anvil", 5.0, 10.0),
            ],
        ),
        (
            QueueOrder::Fifo,
            [(1, "anvil", 0.0, 5.0), (2, "cam", 5.0, 8.0), (3, "bolt", 8.0, 9.0), (4, "anvil", 9.0, 14.0)],
        ),
        // Priority with no product ranked: every key equal, so first in first out.
        (
            QueueOrder::Priority,
            [(1, "anvil", 0.0, 5.0), (2, "cam", 5.0, 8.0), (3, "bolt", 8.0, 9.0), (4, "anvil", 9.0, 14.0)],
        ),
    ];
    for (order, want) in cases {
        let mut p = plant.clone();
        p.departments[press].queue_order = order;
        let (got, _) = starts_and_ends(&p);
        c.exact(&format!("{}: lots at the press", order.word()), 4.0, got.len() as f64, 0.0);
        for (lot, prod, start, end) in want {
            let (gp, gs, ge) = got.get(&lot).cloned().unwrap_or_else(|| (String::new(), f64::NAN, f64::NAN));
            c.holds(&format!("{}: lot {lot} is a {prod} (got {gp})", order.word()), gp == prod);
            c.exact(&format!("{}: lot {lot} starts (s)", order.word()), start * MIN, gs, TOL);
            c.exact(&format!("{}: lot {lot} ends (s)", order.word()), end * MIN, ge, TOL);
        }
    }
    c.finish();
}

/// Lateness and tardiness by hand, from the trace's due column and from a
/// product allowance, through the registry's computation (`metrics::value`).
#[test]
fn lateness_and_tardiness_are_exact_by_hand() {
    let file = "validation/queue-order-hand.yaml";
    let plant = load(file);
    let press = department(&plant, "press");
    let mut c = Checks::new(file);
    let check = |c: &mut Checks, what: &str, plant: &Plant, rep: &RepStats, want: [f64; 4]| {
        let names = ["late_share", "tardiness_s", "lateness_s", "lateness_p95_s"];
        let ids = [Id::LateShare, Id::Tardiness, Id::Lateness, Id::LatenessP95];
        for k in 0..4 {
            let got = value(ids[k], plant, rep, 0);
            // p95 from the histograms (see the file comment); the rest exact.
            let tol = if k == 3 { 1e-3 * want[k].abs() } else { TOL };
            c.exact(&format!("{what}: {}", names[k]), want[k], got, tol);
        }
    };
    // Shortest time (the file's own order): ships anvil 5, bolt 6, cam 9,
    // anvil 14 min against due 4, 12, 13, 10: lateness +1, −6, −4, +4 min.
    let (_, rep) = starts_and_ends(&plant);
    check(&mut c, "shortest-time, trace due dates", &plant, &rep, [0.5, 1.25 * MIN, -1.25 * MIN, 4.0 * MIN]);
    // Per product: anvil +1 and +4 (late share 1, mean 2.5 min); bolt −6; cam −4.
    let anvil = product(&plant, "anvil");
    c.exact("anvil: late share", 1.0, value(Id::ProductLateShare, &plant, &rep, anvil), TOL);
    c.exact("anvil: tardiness", 2.5 * MIN, value(Id::ProductTardiness, &plant, &rep, anvil), TOL);
    let bolt = product(&plant, "bolt");
    c.exact("bolt: lateness", -6.0 * MIN, value(Id::ProductLateness, &plant, &rep, bolt), TOL);
    c.exact("bolt: tardiness", 0.0, value(Id::ProductTardiness, &plant, &rep, bolt), TOL);
    c.exact(
        "bolt: lateness p95 (one lot, early)",
        -6.0 * MIN,
        value(Id::ProductLatenessP95, &plant, &rep, bolt),
        1e-3 * 6.0 * MIN,
    );
    // Earliest due: anvil 5, anvil 10, bolt 11, cam 14 min against 4, 10, 12, 13: +1, 0, −1, +1.
    let mut edd = plant.clone();
    edd.departments[press].queue_order = QueueOrder::EarliestDue;
    let (_, rep) = starts_and_ends(&edd);
    check(&mut c, "earliest-due", &edd, &rep, [0.5, 0.5 * MIN, 0.25 * MIN, 1.0 * MIN]);
    // First in first out with an allowance of 6 min on every product and no
    // due column: ships 5, 8, 9, 14 min, released 0, 1, 2, 3, due 6, 7, 8, 9:
    // lateness −1, +1, +1, +5 min.
    let mut within = plant.clone();
    within.departments[press].queue_order = QueueOrder::Fifo;
    for p in &mut within.products {
        p.due_within_s = Some(6.0 * MIN);
    }
    for o in &mut within.orders.as_mut().expect("the trace").orders {
        o.due_s = None;
    }
    let (_, rep) = starts_and_ends(&within);
    check(&mut c, "fifo, due within 6 min", &within, &rep, [0.75, 1.75 * MIN, 1.5 * MIN, 5.0 * MIN]);
    c.finish();
}

/// A plant without due dates keeps none, and reports none of the due-date metrics.
#[test]
fn plants_without_due_dates_have_no_lateness_metrics() {
    let plant = load("validation/priority-cobham.yaml");
    assert!(!plant.has_due_dates());
    let names: Vec<String> =
        layflow_models::metrics::every_metric(&plant).iter().map(|m| m.label()).collect();
    assert!(!names.iter().any(|n| n.contains("late")), "{names:?}");
    let with = load("validation/queue-order-hand.yaml");
    let names: Vec<String> = layflow_models::metrics::every_metric(&with).iter().map(|m| m.label()).collect();
    for n in [
        "late_share",
        "tardiness_s",
        "lateness_s",
        "lateness_p95_s",
        "anvil/late_share",
        "cam/lateness_p95_s",
    ] {
        assert!(names.iter().any(|m| m == n), "{n} missing from {names:?}");
    }
}
