//! Replications of one layout on the worker pool, in replication order whatever the thread count.
//!
//! Studies fold each replication's results into what they keep (a summary's
//! moments, a few per-replication values) and drop them: replications are
//! simulated in parallel a chunk at a time and folded in replication order,
//! so at most one chunk of [`RepStats`] is alive at once and nothing depends
//! on the thread count.

use rayon::prelude::*;

use crate::sim::{simulate, Plan, RepStats, RunSpec};

/// Replications simulated together before they are folded: enough to keep
/// every thread of the pool busy, few enough that their results (about
/// 170 KB each for the demo plant) stay small. Only memory and speed depend
/// on it, never a result.
pub fn chunk_len() -> u64 {
    (4 * rayon::current_num_threads() as u64).max(16)
}

/// Run `replications` replications of one layout, in parallel on the current
/// rayon pool, calling `done` with each as it finishes (for progress);
/// results come back in replication order, so the summary is the same
/// whatever the thread count. Holds every replication: for tests and small
/// studies; studies fold with [`replicate_fold`] instead.
pub fn replicate(
    plan: &Plan,
    spec: &RunSpec,
    replications: u32,
    done: impl Fn(&RepStats) + Sync,
) -> Vec<RepStats> {
    replicate_range(plan, spec, 0..u64::from(replications), done)
}

/// As [`replicate`], for replications `range` (replication numbers pick the
/// streams, so replications 10..20 are the same whether run alone or after 0..10).
pub fn replicate_range(
    plan: &Plan,
    spec: &RunSpec,
    range: std::ops::Range<u64>,
    done: impl Fn(&RepStats) + Sync,
) -> Vec<RepStats> {
    let mut out = Vec::with_capacity(range.end.saturating_sub(range.start).min(1 << 16) as usize);
    replicate_fold(plan, spec, range, done, |_, r| out.push(r));
    out
}

/// Simulate replications `range` on the current rayon pool and hand each to
/// `fold` with its number, in replication order, then drop it: memory holds
/// at most [`chunk_len`] replications' results whatever the range.
pub fn replicate_fold(
    plan: &Plan,
    spec: &RunSpec,
    range: std::ops::Range<u64>,
    done: impl Fn(&RepStats) + Sync,
    mut fold: impl FnMut(u64, RepStats),
) {
    let chunk = chunk_len();
    let mut start = range.start;
    while start < range.end {
        let end = start.saturating_add(chunk).min(range.end);
        let reps: Vec<RepStats> = (start..end)
            .into_par_iter()
            .map(|r| {
                let s = simulate(plan, spec, r);
                done(&s);
                s
            })
            .collect();
        for (r, s) in (start..end).zip(reps) {
            fold(r, s);
        }
        start = end;
    }
}
