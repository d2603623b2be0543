//! Batch machines: the bulk-service queue M/M^[K]/1 solved as its Markov chain, and the start rule (`min`, `max_wait`, `max`, `together`) on schedules timed by hand.
//!
//! Statistical rows use the tolerance derived in `tests/tests/queueing.rs`:
//! K = 3 half-widths of the 40-replication Student t interval
//! (t(0.975, 39) = 2.023, so about 6 standard errors: a correct model fails
//! a row with probability about 4e-7); a bias allowance of 1e-3 of theory
//! (the warm-up of 500 h is about 18 relaxation times 1/(μ(1 − √ρ)²) ≈ 28 h
//! at ρ = λ/(Kμ) = 0.75, from memory of Morse's M/M/1 relaxation time used
//! as a yardstick, so the start-up bias is below e⁻¹⁸); and a power limit:
//! each tolerance must stay under 4% of theory (1% for utilisation and
//! throughput), so a 5% error is caught.
//!
//! The hand-timed rows are exact: constant times, an order trace and instant
//! moves leave nothing random, and every time is a whole number of minutes
//! (exact in f64), so times are compared to 1e-9 s.

use std::collections::BTreeMap;

use layflow_models::metrics::{value, Id};
use layflow_models::plant::Plant;
use layflow_models::sim::RepStats;
use layflow_tests::{
    check_little, department, hours, hw, load, run_layout, shifted, traced_replication, visit_times, Checks,
};

const K: f64 = 3.0;
const BIAS_REL: f64 = 1e-3;
const POWER: f64 = 0.04;
const POWER_TIGHT: f64 = 0.01;
/// Exact times, s.
const TOL: f64 = 1e-9;
const MIN: f64 = 60.0;

/// Stationary means of the bulk-service queue M/M^[K]/1 with partial batches
/// (a free machine takes every waiting load up to `k` and starts at once
/// with one): Gross, Shortle, Thompson & Harris, Fundamentals of Queueing
/// Theory, bulk-service queues (from memory; docs/formulas.md §25).
struct Bulk {
    /// Loads waiting (not in the batch).
    lq: f64,
    /// Loads waiting or in the batch.
    l: f64,
    p_idle: f64,
    /// Mean loads per batch started.
    batch: f64,
    /// The chain's probabilities of 0, 1, 2, ... loads waiting.
    waiting: Vec<f64>,
}

/// Solves the continuous-time Markov chain of the bulk-service queue by
/// Gauss–Seidel on the balance equations π Q = 0. States: idle (0), and
/// (n waiting, s in the batch) for n = 0..=cap, s = 1..=k. Arrivals are
/// turned away at `cap` waiting, a truncation whose mass is the tail
/// beyond `cap` (geometric with ratio r₀ < 0.9 here, so below 1e-18 at 400).
fn bulk_chain(lambda: f64, mu: f64, k: usize, cap: usize) -> Bulk {
    let idx = |n: usize, s: usize| 1 + n * k + (s - 1);
    let states = 1 + (cap + 1) * k;
    // Incoming transitions per state: (from, rate); and each state's total out-rate.
    let mut incoming: Vec<Vec<(usize, f64)>> = vec![Vec::new(); states];
    let mut out = vec![0.0; states];
    let mut add = |from: usize, to: usize, rate: f64, out: &mut Vec<f64>| {
        incoming[to].push((from, rate));
        out[from] += rate;
    };
    add(0, idx(0, 1), lambda, &mut out);
    for n in 0..=cap {
        for s in 1..=k {
            if n < cap {
                add(idx(n, s), idx(n + 1, s), lambda, &mut out);
            }
            let to = if n == 0 { 0 } else { idx(n - n.min(k), n.min(k)) };
            add(idx(n, s), to, mu, &mut out);
        }
    }
    let mut pi = vec![1.0 / states as f64; states];
    for _sweep in 0..200_000 {
        let mut change: f64 = 0.0;
        for j in 0..states {
            let v: f64 = incoming[j].iter().map(|&(i, r)| pi[i] * r).sum::<f64>() / out[j];
            change = change.max((v - pi[j]).abs());
            pi[j] = v;
        }
        let total: f64 = pi.iter().sum();
        pi.iter_mut().for_each(|p| *p /= total);
        if change < 1e-15 {
            break;
        }
    }
    let mut waiting = vec![0.0; cap + 1];
    let (mut lq, mut in_batch) = (0.0, 0.0);
    for n in 0..=cap {
        for s in 1..=k {
            let p = pi[idx(n, s)];
            waiting[n] += p;
            lq += n as f64 * p;
            in_batch += s as f64 * p;
        }
    }
    waiting[0] += pi[0];
    // Batches start at rate λπ(idle) (size 1) and μπ(n, s) for n ≥ 1 (size min(n, k)).
    let (mut rate, mut loads) = (lambda * pi[0], lambda * pi[0]);
    for n in 1..=cap {
        for s in 1..=k {
            rate += mu * pi[idx(n, s)];
            loads += mu * pi[idx(n, s)] * n.min(k) as f64;
        }
    }
    Bulk { lq, l: lq + in_batch, p_idle: pi[0], batch: loads / rate, waiting }
}

/// The root in (0, 1) of μz^{K+1} − (λ + μ)z + λ = 0 (z = 1 is the other
/// positive root), by bisection: the polynomial is positive at 0 (λ) and
/// negative just below 1 when λ < Kμ, since its slope at 1 is Kμ − λ > 0.
fn r0(lambda: f64, mu: f64, k: i32) -> f64 {
    let f = |z: f64| mu * z.powi(k + 1) - (lambda + mu) * z + lambda;
    let (mut lo, mut hi) = (0.0, 1.0 - 1e-9);
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if f(mid) > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    0.5 * (lo + hi)
}

#[test]
fn bulk_service_chain_matches_the_reference_values() {
    // λ = 6/h, μ = 2 batches/h, K = 4 (docs/formulas.md §25 worked case; the
    // printed values have 6 significant figures: half a unit in the last place).
    let (lambda, mu) = (6.0, 2.0);
    let b = bulk_chain(lambda, mu, 4, 400);
    let mut c = Checks::new("bulk-service chain M/M^[4]/1 (docs/formulas.md §25)");
    c.exact("Lq vs printed 7.65750", 7.65750, b.lq, 5e-5);
    c.exact("Wq = Lq/λ vs printed 1.27625 h", 1.27625, b.lq / lambda, 5e-6);
    c.exact("L vs printed 10.6575", 10.6575, b.l, 5e-5);
    c.exact("W = L/λ vs printed 1.77625 h", 1.77625, b.l / lambda, 5e-6);
    c.exact("P(idle) vs printed 0.0359341", 0.0359341, b.p_idle, 5e-8);
    c.exact("mean batch size vs printed 3.11182", 3.11182, b.batch, 5e-6);
    // Flow balance: loads per batch × batches per hour = λ, batches per hour = μ(1 − P(idle)).
    c.relative("batch size = λ/(μ(1 − P(idle)))", lambda / (mu * (1.0 - b.p_idle)), b.batch, 1e-9);
    // Every load spends one exponential batch time in the machine: W − Wq = 1/μ.
    c.relative("W − Wq = 1/μ", 1.0 / mu, (b.l - b.lq) / lambda, 1e-9);
    // The second, independent check: the root r₀ of the characteristic
    // equation (Gross et al., bulk service, from memory) is printed as
    // 0.888180, and the chain's distribution of loads waiting decays
    // geometrically with exactly that ratio.
    let r = r0(lambda, mu, 4);
    c.exact("r₀ vs printed 0.888180", 0.888180, r, 5e-7);
    for n in [5, 20, 60] {
        c.relative(
            &format!("P(n+1 waiting)/P(n waiting) at n = {n} is r₀"),
            r,
            b.waiting[n + 1] / b.waiting[n],
            1e-7,
        );
    }
    c.finish();
}

/// scenarios/validation/bulk-service.yaml against the chain.
#[test]
fn bulk_service_queue_matches_its_markov_chain() {
    let file = "validation/bulk-service.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let th = bulk_chain(6.0, 2.0, 4, 400);
    let s = &run.summary;
    let d = &s.departments[department(&plant, "oven")];
    let mut c = Checks::new(file);
    let b = |x: f64| BIAS_REL * x;
    c.estimate("Lq, loads waiting", th.lq, &d.queue_mean, K, b(th.lq), POWER);
    c.estimate("L, loads at the oven", th.l, &d.wip_mean, K, b(th.l), POWER);
    let w = hours(&s.flow_time_s);
    c.estimate("W, flow time (h)", th.l / 6.0, &w, K, b(th.l / 6.0), POWER);
    // Each load is in the oven for one batch time, exponential 30 min whatever the size.
    let wq = shifted(&w, -0.5);
    c.estimate("Wq = W − 0.5 h", th.lq / 6.0, &wq, K, b(th.lq / 6.0), POWER);
    c.estimate("1 − utilisation = P(idle)", 1.0 - th.p_idle, &d.utilization, K, b(1.0), POWER_TIGHT);
    let size = d.batch_size_mean.as_ref().expect("a batch department reports its batch size");
    c.estimate("batch_size_mean", th.batch, size, K, b(th.batch), POWER_TIGHT);
    let fill = d.batch_fill_share.as_ref().expect("and its fill");
    c.estimate("batch_fill_share = size/4", th.batch / 4.0, fill, K, b(th.batch / 4.0), POWER_TIGHT);
    c.estimate("throughput (lots/h)", 6.0, &s.throughput_per_h, K, b(6.0), POWER_TIGHT);
    // The static picture: full batches, λE[T]/(K·machines) = 6 × 0.5/4 (docs/formulas.md §25).
    c.relative("predicted utilisation with full batches", 0.75, d.utilization_predicted, 1e-12);
    c.holds(
        &format!(
            "the prediction is a lower bound: {:.4} < {:.4}",
            d.utilization_predicted, d.utilization.mean
        ),
        d.utilization_predicted < d.utilization.mean - K * hw(&d.utilization),
    );
    check_little(&mut c, file, &run, layflow_tests::little_edge_bound(&run));
    c.finish();
}

/// One replication of `plant` traced: each lot's (product, start, end) at
/// its batch department, by trace lot number, and the replication.
fn starts_and_ends(plant: &Plant) -> (BTreeMap<u32, (String, f64, f64)>, RepStats) {
    let (dir, rep) = traced_replication(plant);
    (visit_times(dir.path()), rep)
}

/// Little's law exactly (docs/formulas.md §4): every lot is released and
/// shipped inside the window, so ∫WIP dt = Σ flow times.
fn little_exact(c: &mut Checks, rep: &RepStats) {
    let shipped: u64 = rep.shipped.iter().sum();
    c.relative(
        "Little: WIP × window = Σ flow times",
        rep.flow_time_all.mean() * shipped as f64,
        rep.wip_total * rep.window_s,
        1e-12,
    );
}

#[test]
fn min_max_wait_and_max_give_the_hand_timed_schedule() {
    let file = "validation/batch-hand.yaml";
    let plant = load(file);
    let oven = department(&plant, "oven");
    let (got, rep) = starts_and_ends(&plant);
    let mut c = Checks::new(file);
    // (lots, start min, end min), worked in the scenario's header.
    let batches: [(&[u32], f64, f64); 8] = [
        (&[1, 2], 4.0, 29.0),
        (&[3, 4], 31.0, 56.0),
        (&[5, 6], 56.0, 81.0),
        (&[7], 81.0, 101.0),
        (&[8], 105.0, 125.0),
        (&[9, 10], 131.0, 156.0),
        (&[11, 12, 13], 156.0, 186.0),
        (&[14], 186.0, 206.0),
    ];
    c.exact("lots at the oven", 14.0, got.len() as f64, 0.0);
    for (lots, start, end) in batches {
        for lot in lots {
            let (_, s, e) = got.get(lot).cloned().unwrap_or((String::new(), f64::NAN, f64::NAN));
            c.exact(&format!("lot {lot} starts (s)"), start * MIN, s, TOL);
            c.exact(&format!("lot {lot} ends (s)"), end * MIN, e, TOL);
        }
    }
    c.exact("batch_size_mean = 14/8", 1.75, value(Id::DepartmentBatchSize, &plant, &rep, oven), TOL);
    c.exact("batch_fill_share = 14/24", 14.0 / 24.0, value(Id::DepartmentBatchFill, &plant, &rep, oven), TOL);
    c.exact(
        "utilisation = 190/240 min",
        190.0 / 240.0,
        value(Id::DepartmentUtilization, &plant, &rep, oven),
        TOL,
    );
    little_exact(&mut c, &rep);
    c.finish();
}

#[test]
fn incompatible_products_never_share_a_batch() {
    let file = "validation/batch-together.yaml";
    let plant = load(file);
    let wash = department(&plant, "wash");
    let mut c = Checks::new(file);
    let (got, rep) = starts_and_ends(&plant);
    // Worked in the scenario's header: {1} 0–20, {2, 4} 20–40, {3, 5} 40–60 min.
    let want = [
        (1, "casting", 0.0, 20.0),
        (2, "seal", 20.0, 40.0),
        (3, "casting", 40.0, 60.0),
        (4, "seal", 20.0, 40.0),
        (5, "casting", 40.0, 60.0),
    ];
    for (lot, prod, start, end) in want {
        let (p, s, e) = got.get(&lot).cloned().unwrap_or((String::new(), f64::NAN, f64::NAN));
        c.holds(&format!("lot {lot} is a {prod} (got {p})"), p == prod);
        c.exact(&format!("lot {lot} starts (s)"), start * MIN, s, TOL);
        c.exact(&format!("lot {lot} ends (s)"), end * MIN, e, TOL);
    }
    // No batch (lots with the same start) mixes products.
    for (a, (pa, sa, _)) in &got {
        for (b, (pb, sb, _)) in &got {
            if sa == sb {
                c.holds(&format!("lots {a} and {b} share a batch only if of one product"), pa == pb);
            }
        }
    }
    c.exact("batch_size_mean = 5/3", 5.0 / 3.0, value(Id::DepartmentBatchSize, &plant, &rep, wash), TOL);
    c.exact("batch_fill_share = 5/12", 5.0 / 12.0, value(Id::DepartmentBatchFill, &plant, &rep, wash), TOL);
    little_exact(&mut c, &rep);
    // The same plant with any mix allowed: the four waiting loads go together at 20 min.
    let mut mixed = plant.clone();
    let b = mixed.departments[wash].batch.as_mut().expect("a batch department");
    b.group_of.iter_mut().for_each(|g| *g = 0);
    b.groups = 1;
    let (got, rep) = starts_and_ends(&mixed);
    for lot in 2..=5 {
        let (_, s, e) = got.get(&lot).cloned().unwrap_or((String::new(), f64::NAN, f64::NAN));
        c.exact(&format!("any mix: lot {lot} starts (s)"), 20.0 * MIN, s, TOL);
        c.exact(&format!("any mix: lot {lot} ends (s)"), 40.0 * MIN, e, TOL);
    }
    c.exact("any mix: batch_size_mean = 5/2", 2.5, value(Id::DepartmentBatchSize, &mixed, &rep, wash), TOL);
    c.finish();
}

/// The batch demo (two batch departments, compatibility groups, `min` and
/// `max_wait`, a rework loop back to a batch machine, forklifts): Little's
/// law (docs/formulas.md §4; Little 1961) per replication, with the edge
/// bound that needs no steady state, and flow balance at the batch machines:
/// every load released reaches the oven, so loads in batches per hour match
/// the static arrivals there within the run's own interval.
#[test]
fn batch_demo_keeps_littles_law_and_flow_balance() {
    let file = "batches-demo.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let mut c = Checks::new(file);
    check_little(&mut c, file, &run, layflow_tests::little_edge_bound(&run));
    let oven = department(&plant, "oven");
    // Loads per hour through the oven in each replication: batches × size ÷ window.
    let per_h: Vec<f64> = run.reps.iter().map(|r| r.batch[oven].1 as f64 / r.window_s * 3600.0).collect();
    let iv = layflow_engine::interval(&per_h, 0.95);
    let e = layflow_models::metrics::Estimate { mean: iv.mean, half_width: iv.half_width, n: iv.n };
    // The static arrivals at the oven (6.5/h plus the rewashed tenth of housings);
    // K = 3 half-widths of 10 replications (t(0.975, 9) = 2.26, so about 7 standard
    // errors), and 1% for loads inside the plant at the window's edges (a few
    // dozen loads against about 3 300 in a 480 h window); the tolerance must stay
    // under 6% of theory, so a 6% error in the flow through the oven is caught.
    let want = run.picture.arrivals_per_h[oven];
    c.estimate("loads cured per hour vs static arrivals", want, &e, K, 0.01 * want, 0.06);
    c.finish();
}
