//! Simulated annealing over swaps of two departments, with geometric cooling from a sampled start temperature.
//!
//! Simulated annealing (S. Kirkpatrick, C. D. Gelatt and M. P. Vecchi,
//! "Optimization by simulated annealing", *Science* 220:671–680, 1983),
//! applied to the quadratic assignment problem as by R. E. Burkard and
//! F. Rendl (*European J. Operational Research* 17:169–174, 1984) and
//! D. T. Connolly (*EJOR* 46:93–100, 1990), cited from memory: propose a
//! random swap, accept it if it does not raise the objective, and otherwise
//! with probability exp(−Δ/T).
//!
//! Schedule. `samples` random swaps from the start layout give the mean
//! uphill change Δ̄ (flows and fixed costs only, so a huge rule penalty does
//! not set the scale). The start temperature T₀ = −Δ̄/ln χ₀ accepts a mean
//! uphill move with probability χ₀ = `initial_acceptance`; the final one
//! Tₑ = −Δ̄/ln χₑ with χₑ = `final_acceptance`. Cooling is geometric in
//! the fraction f of the budget used (iterations, or time when only a time
//! limit is set, whichever is further along): T = T₀·(Tₑ/T₀)^f, updated every
//! 256 proposals. So the same schedule fits any budget.
//!
//! One iteration is one proposed swap. A swap's Δ is computed from scratch
//! in O(n) (an [`Assignment`] keeps the distances in facility order); at low
//! temperature most proposals are refused, so a maintained delta matrix,
//! O(n·m) per accepted swap, would cost more. With `polish` the best layout
//! is finished by steepest descent, so the result is a local optimum of the
//! swap neighbourhood (those few swaps are not counted as iterations).

use rand::RngExt;

use super::delta::{Assignment, DeltaMatrix};
use super::driver::{keys, Outcome, Settings, Tracker};
use super::exchange::descend;
use super::qap::Problem;
use layflow_engine::Stream;

/// The cooling schedule and its options.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AnnealParams {
    /// χ₀: probability of accepting the mean uphill swap at the start, in (0, 1).
    pub initial_acceptance: f64,
    /// χₑ: probability of accepting the mean uphill swap at the end, in (0, χ₀).
    pub final_acceptance: f64,
    /// Random swaps sampled at the start to measure the mean uphill change.
    pub samples: usize,
    /// Finish with a steepest descent from the best layout.
    pub polish: bool,
}

impl Default for AnnealParams {
    /// χ₀ = 0.5, χₑ = 1e-6 (measured on QAPLIB nug20/nug30 against other
    /// end points), 1000 samples, polish on.
    fn default() -> AnnealParams {
        AnnealParams { initial_acceptance: 0.5, final_acceptance: 1e-6, samples: 1000, polish: true }
    }
}

/// Draws a uniformly random pair {r, s} a search may swap: r a movable
/// department, s any other movable facility, each unordered pair equally likely.
struct PairDraw {
    real: Vec<usize>,
    all: Vec<usize>,
    n: usize,
}

impl PairDraw {
    fn new(q: &Problem) -> PairDraw {
        let real: Vec<usize> = (0..q.n).filter(|&i| q.movable[i]).collect();
        let all: Vec<usize> = (0..q.m).filter(|&i| q.movable[i]).collect();
        PairDraw { real, all, n: q.n }
    }

    fn possible(&self) -> bool {
        !self.real.is_empty() && self.all.len() >= 2
    }

    #[inline]
    fn draw(&self, rng: &mut Stream) -> (usize, usize) {
        loop {
            let r = self.real[rng.random_range(0..self.real.len())];
            let s = self.all[rng.random_range(0..self.all.len())];
            // Two departments could be drawn either way round; keep one
            // order so that no pair is twice as likely as a department–empty pair.
            if s != r && (s >= self.n || s > r) {
                return (r, s);
            }
        }
    }
}

/// Simulated annealing from `settings.start` (or a random start); needs an
/// iteration or time limit. `progress(elapsed_s, best)` is called at each new best.
pub fn anneal(
    problem: &Problem,
    settings: &Settings,
    params: &AnnealParams,
    mut progress: impl FnMut(f64, f64),
) -> Result<Outcome, String> {
    let q = problem;
    let (c0, ce) = (params.initial_acceptance, params.final_acceptance);
    if !(c0 > 0.0 && c0 < 1.0 && ce > 0.0 && ce < c0) {
        return Err(format!(
            "annealing needs 0 < final_acceptance < initial_acceptance < 1, got {ce} and {c0}"
        ));
    }
    let (mut t, perm) = Tracker::start(q, settings, true, &mut progress)?;
    let mut rng = Tracker::rng(settings.seed, keys::ANNEAL);
    let draw = PairDraw::new(q);
    let mut asg = Assignment::new(q, perm);
    if draw.possible() {
        let (mut sum, mut count) = (0.0, 0usize);
        for _ in 0..params.samples {
            let (r, s) = draw.draw(&mut rng);
            if q.restricted && !q.swap_allowed(asg.perm(), r, s) {
                continue;
            }
            let d = asg.delta(q, r, s);
            if d > q.tolerance {
                sum += d;
                count += 1;
            }
        }
        // No uphill swap seen (a flat objective): any positive scale will do.
        let mean = if count > 0 { sum / count as f64 } else { 1.0 };
        let (t0, te) = (-mean / c0.ln(), -mean / ce.ln());
        let log_ratio = (te / t0).ln();
        let mut temp = t0;
        let mut cur = t.best;
        let mut accepted = 0usize;
        while !t.done(1023) {
            if t.iteration & 255 == 0 {
                temp = t0 * (log_ratio * t.progress_fraction()).exp();
            }
            t.iteration += 1;
            let (r, s) = draw.draw(&mut rng);
            let p = asg.perm();
            if q.restricted && !q.swap_allowed(p, r, s) {
                continue;
            }
            let mut d = asg.delta(q, r, s);
            if q.has_rules() && (q.has_rules_for(r) || q.has_rules_for(s)) {
                d += q.penalty_delta(p, r, s);
            }
            if d <= 0.0 || rng.random::<f64>() < (-d / temp).exp() {
                asg.swap(r, s);
                cur += d;
                accepted += 1;
                if !q.exact && accepted.is_multiple_of(64 * q.m) {
                    // Bound the drift of the running sum on inexact data.
                    cur = q.objective_of(asg.perm());
                }
                cur = t.consider(asg.perm(), cur);
                if cur < t.top_threshold {
                    t.offer(asg.perm(), cur);
                }
            }
        }
    }
    if params.polish {
        let mut asg = Assignment::new(q, t.best_perm.clone());
        let mut dm = DeltaMatrix::new(q, &asg);
        let best = t.best;
        descend(q, &mut t, &mut asg, &mut dm, best, false);
    }
    Ok(t.finish())
}
