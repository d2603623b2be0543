//! Pairwise exchange, steepest descent: make the best improving swap of two departments until none is left, optionally restarting.
//!
//! The classic improvement method for process layouts (pairwise exchange of
//! departments, 1960s): from a layout, evaluate every swap of two
//! departments (or of a department and an empty location), make the one
//! that lowers the objective most, and repeat until no swap improves it — a
//! local optimum of the swap neighbourhood. The deltas are kept in a
//! [`DeltaMatrix`], so a step costs O(n·m) rather than O(n²·m).
//!
//! One iteration is one swap made, or one restart.

use super::delta::{Assignment, DeltaMatrix};
use super::driver::{keys, Outcome, Settings, Tracker};
use super::qap::Problem;

/// The admissible swap with the lowest objective change (flows, fixed costs
/// and penalties), or `None` when no swap is admissible. Ties go to the first
/// pair in (r, s) order.
pub(crate) fn best_swap(q: &Problem, dm: &DeltaMatrix, asg: &Assignment) -> Option<(usize, usize, f64)> {
    let p = asg.perm();
    let mut best: Option<(usize, usize, f64)> = None;
    for r in 0..q.n {
        let row = dm.row(r);
        for (s, &delta) in row.iter().enumerate().skip(r + 1) {
            if !q.pair_movable(r, s) || (q.restricted && !q.swap_allowed(p, r, s)) {
                continue;
            }
            let mut d = delta;
            if q.has_rules() && (q.has_rules_for(r) || q.has_rules_for(s)) {
                d += q.penalty_delta(p, r, s);
            }
            if best.is_none_or(|b| d < b.2) {
                best = Some((r, s, d));
            }
        }
    }
    best
}

/// Descend from `asg` until no swap improves the objective by more than the
/// problem's rounding tolerance, or the limits say stop. `cur` is the
/// objective of `asg`; returns the objective reached.
pub(crate) fn descend(
    q: &Problem,
    t: &mut Tracker<'_>,
    asg: &mut Assignment,
    dm: &mut DeltaMatrix,
    mut cur: f64,
    counted: bool,
) -> f64 {
    loop {
        if counted && t.done(15) {
            return cur;
        }
        let Some((r, s, d)) = best_swap(q, dm, asg) else { return cur };
        // The tolerance keeps rounding noise from passing for an improvement
        // (which could cycle between two layouts of equal cost).
        if !(d < -q.tolerance) {
            return cur;
        }
        dm.swap(q, asg, r, s);
        cur += d;
        if counted {
            t.iteration += 1;
        }
        cur = t.consider(asg.perm(), cur);
        if cur < t.top_threshold {
            t.offer(asg.perm(), cur);
        }
    }
}

/// Steepest-descent pairwise exchange from `settings.start` (or a random
/// start). Without `restarts` it stops at the first local optimum (the
/// limits may stop it sooner); with `restarts` it starts again from random
/// layouts until the limits say stop, which then must include an iteration
/// or time limit. `progress(elapsed_s, best)` is called at each new best.
pub fn steepest_descent(
    problem: &Problem,
    settings: &Settings,
    restarts: bool,
    mut progress: impl FnMut(f64, f64),
) -> Result<Outcome, String> {
    let q = problem;
    let (mut t, perm) = Tracker::start(q, settings, restarts, &mut progress)?;
    let mut rng = Tracker::rng(settings.seed, keys::EXCHANGE);
    let mut asg = Assignment::new(q, perm);
    let mut dm = DeltaMatrix::new(q, &asg);
    let mut cur = t.best;
    loop {
        descend(q, &mut t, &mut asg, &mut dm, cur, true);
        if !restarts || t.done(0) {
            break;
        }
        // A restart counts as an iteration, so a run whose every start is
        // already a local optimum still ends under an iteration limit.
        t.iteration += 1;
        asg = Assignment::new(q, q.random_permutation(&mut rng));
        dm.refresh(q, &asg);
        cur = q.objective_of(asg.perm());
        cur = t.consider(asg.perm(), cur);
        if cur < t.top_threshold {
            t.offer(asg.perm(), cur);
        }
    }
    Ok(t.finish())
}
