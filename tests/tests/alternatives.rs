//! Alternative departments and a random first operation against theory: first-free as M/M/2 (Erlang C), shortest-queue between M/M/2 and two M/M/1 queues, and the shares of the static picture and the simulation.
//!
//! Tolerances are derived as in tests/tests/queueing.rs (same constants and
//! reasons): 40 long replications (10⁵ services each) give Student t
//! intervals; we allow K = 3 half-widths (≈ 6 standard errors; a correct
//! model fails a row with probability about 4e-7) plus a bias of 1e-3 of the
//! theoretical value (warm-up of 500 h against an M/M/2 relaxation time of
//! about 1/(2μ(1−√ρ)²) ≈ 45 h at ρ = 0.8, from memory), and each row's
//! tolerance must stay under 4% of theory (waits, lengths) or 1%
//! (utilisations, throughputs), so a 5% error in a mean is caught.

use layflow_models::analysis::StaticPicture;
use layflow_models::plant::AltRule;
use layflow_tests::{department, hw, load, mmc, run_layout, scaled, shifted, Checks};

const K: f64 = 3.0;
const BIAS_REL: f64 = 1e-3;
const POWER: f64 = 0.04;
const POWER_TIGHT: f64 = 0.01;

/// Per replication, the machines busy in departments `a` and `b` together
/// (utilisation × machines, one machine each here), as an interval.
fn both(run: &layflow_tests::Run, a: usize, b: usize) -> layflow_models::metrics::Estimate {
    let per_rep: Vec<f64> = run.reps.iter().map(|r| r.utilization[a] + r.utilization[b]).collect();
    let iv = layflow_engine::interval(&per_rep, 0.95);
    layflow_models::metrics::Estimate { mean: iv.mean, half_width: iv.half_width, n: iv.n }
}

#[test]
fn first_free_between_two_identical_machines_is_mm2() {
    // Erlang C (docs/formulas.md §1; Gross and Harris, Fundamentals of
    // Queueing Theory, the M/M/c model): c = 2, λ = 1.6/h, μ = 1/h:
    // C(2, 1.6) = 32/45, Wq = 16/9 h, Lq = 128/45, W = 25/9 h, L = 200/45.
    let th = mmc(2, 1.6, 1.0);
    assert!((th.wq - 16.0 / 9.0).abs() < 1e-12 && (th.lq - 128.0 / 45.0).abs() < 1e-12);
    let file = "validation/alt-first-free-mm2.yaml";
    let plant = load(file);
    assert_eq!(plant.products[0].alternatives[0].rule, AltRule::FirstFree);
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let mut c = Checks::new(file);
    let b = |x: f64| BIAS_REL * x;
    let w = layflow_tests::hours(&s.flow_time_s);
    c.estimate("W, mean flow time (h)", th.w, &w, K, b(th.w), POWER);
    // Wq per replication = its flow time minus the known mean processing time (1 h).
    c.estimate("Wq = W − E[S] (h)", th.wq, &shifted(&w, -1.0), K, b(th.wq), POWER);
    c.estimate("L, lots in the plant", th.l, &s.wip_mean, K, b(th.l), POWER);
    // The shared queue is in the dock's outbound area: the dock's lots are Lq.
    let dock = &s.departments[department(&plant, "goods-in")];
    c.estimate("Lq, lots waiting at the dock for either saw", th.lq, &dock.wip_mean, K, b(th.lq), POWER);
    // The machines are busy 2ρ = λ/μ = 1.6 in all. How that splits between
    // the saws is the tie rule's (a lot finding both free takes the first
    // listed), which M/M/2 leaves open, so only the sum is checked.
    let (a, bb) = (department(&plant, "saw-a"), department(&plant, "saw-b"));
    c.estimate(
        "machines busy, saw-a + saw-b",
        2.0 * th.rho,
        &both(&run, a, bb),
        K,
        b(2.0 * th.rho),
        POWER_TIGHT,
    );
    for d in [a, bb] {
        // Nothing waits in either saw's own queue: the one queue is shared.
        c.exact(
            &format!("{}'s own queue is empty", plant.departments[d].id),
            0.0,
            s.departments[d].queue_mean.mean,
            0.0,
        );
    }
    c.estimate("throughput (lots/h)", 1.6, &s.throughput_per_h, K, b(1.6), POWER_TIGHT);
    // Static picture: equal capacities, so the estimated shares are ½ each.
    c.relative("estimated share of saw-a", 0.5, plant.products[0].alternatives[0].shares[0], 1e-12);
    c.relative(
        "static utilisation λ·½·E[S]",
        0.8,
        run.picture.utilization[department(&plant, "saw-a")],
        1e-12,
    );
    c.finish();
}

#[test]
fn shortest_queue_lies_between_the_pooled_queue_and_random_splitting() {
    // Bounds (from memory): joining the shortest queue is optimal among rules
    // that must choose a queue on arrival for identical exponential servers
    // (Winston 1977, J. Appl. Prob. 14; Whitt 1986, Oper. Res. 34), so it is
    // no worse than random splitting, two M/M/1 queues at λ/2 = 0.8/h
    // (W = 5 h); and no rule that commits a lot to one queue beats the
    // pooled queue, M/M/2 (W = 25/9 h), where no server idles while a lot waits.
    let pooled = mmc(2, 1.6, 1.0);
    let split = mmc(1, 0.8, 1.0);
    assert!((split.w - 5.0).abs() < 1e-12);
    let file = "validation/alt-shortest-queue.yaml";
    let plant = load(file);
    assert_eq!(plant.products[0].alternatives[0].rule, AltRule::ShortestQueue);
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let mut c = Checks::new(file);
    let w = layflow_tests::hours(&s.flow_time_s);
    let tol = K * hw(&w) + BIAS_REL * pooled.w;
    c.holds(
        &format!("W = {:.4} h ≥ M/M/2's {:.4} h (tol {tol:.4})", w.mean, pooled.w),
        w.mean + tol >= pooled.w,
    );
    c.holds(
        &format!("W = {:.4} h < two M/M/1's {:.4} h (tol {tol:.4})", w.mean, split.w),
        w.mean + tol < split.w,
    );
    c.holds(&format!("the interval is tight enough to tell: hw {:.4} h", hw(&w)), tol < POWER * pooled.w);
    // Every lot is served once: the saws are busy λ/μ = 1.6 in all (ties go
    // to saw-a, so the split between them is not ½ each).
    let (a, bb) = (department(&plant, "saw-a"), department(&plant, "saw-b"));
    c.estimate("machines busy, saw-a + saw-b", 1.6, &both(&run, a, bb), K, BIAS_REL * 1.6, POWER_TIGHT);
    c.holds(
        "saw-a, listed first, is the busier",
        s.departments[a].utilization.mean > s.departments[bb].utilization.mean,
    );
    c.finish();
}

#[test]
fn random_first_operation_and_fixed_shares_split_exactly_and_in_simulation() {
    let file = "validation/alt-first-op-shares.yaml";
    let plant = load(file);
    let pic = StaticPicture::new(&plant, 1.0);
    let d = |id: &str| department(&plant, id);
    let mut c = Checks::new(file);
    // By hand (the scenario's header): branch probabilities multiply along the path.
    for (from, to, flow) in [
        ("goods-in", "laser", 1.4),
        ("goods-in", "punch", 0.6),
        ("laser", "press-1", 0.84),
        ("laser", "press-2", 0.56),
        ("punch", "press-1", 0.36),
        ("punch", "press-2", 0.24),
        ("press-1", "goods-out", 1.2),
        ("press-2", "goods-out", 0.8),
    ] {
        c.relative(&format!("from-to {from} → {to} (lots/h)"), flow, pic.from_to.get(d(from), d(to)), 1e-12);
    }
    c.relative("from-to total (lots/h)", 6.0, pic.from_to.total(), 1e-12);
    let predicted = [
        ("laser", 0.28, 0.2),
        ("punch", 0.2, 1.0 / 3.0),
        ("press-1", 0.3, 0.25),
        ("press-2", 1.0 / 3.0, 5.0 / 12.0),
    ];
    for (id, u, _) in predicted {
        c.relative(&format!("static utilisation of {id}"), u, pic.utilization[d(id)], 1e-12);
    }
    // Simulated: with constant times a department's utilisation is its share
    // of the lots × λ × its time, so utilisation ÷ (λ × time) estimates the
    // share; the division by a constant scales the interval alike.
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    for ((id, _, time_h), share) in predicted.iter().zip([0.7, 0.3, 0.6, 0.4]) {
        let u = &s.departments[d(id)].utilization;
        let e = scaled(u, 1.0 / (2.0 * time_h));
        c.estimate(&format!("simulated share of lots at {id}"), share, &e, K, BIAS_REL * share, 0.02);
    }
    c.estimate("throughput (lots/h)", 2.0, &s.throughput_per_h, K, BIAS_REL * 2.0, POWER_TIGHT);
    c.finish();
}

#[test]
fn every_rule_with_movers_conserves_lots_and_uses_every_alternative() {
    // No theory: a smoke check that first-free (held machines), shortest-queue
    // and least-work with a forklift fleet neither lose lots nor starve a department.
    let file = "validation/alt-movers.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let s = &run.summary;
    let mut c = Checks::new(file);
    // Throughput 5 lots/h (3 + 2) within 3 half-widths (3 replications, so
    // a loose check), allowing 2% for WIP at the window edges.
    let t = &s.throughput_per_h;
    c.holds(
        &format!("throughput {:.3} ± {:.3} lots/h holds 5", t.mean, hw(t)),
        (t.mean - 5.0).abs() <= K * hw(t) + 0.1,
    );
    for id in ["deburr-a", "deburr-b", "press-1", "press-2", "paint"] {
        let u = s.departments[department(&plant, id)].utilization.mean;
        c.holds(&format!("{id} works (utilisation {u:.3})"), u > 0.01 && u < 1.0);
    }
    // The static picture's shares: exact for `shares`, estimated (by capacity) otherwise.
    let frame = &plant.products[1];
    c.relative("paint's share", 0.75, frame.alternatives[1].shares[0], 1e-12);
    // least-work by capacity, machines ÷ mean: 1/8 and 2/12 → 3/7 and 4/7.
    c.relative("press-1's estimated share", 3.0 / 7.0, frame.alternatives[0].shares[0], 1e-12);
    c.finish();
}
