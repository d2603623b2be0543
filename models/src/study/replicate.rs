//! Replications of one layout on the worker pool, in replication order whatever the thread count.

use rayon::prelude::*;

use crate::sim::{simulate, Plan, RepStats, RunSpec};

/// Run `replications` replications of one layout, in parallel on the current
/// rayon pool, calling `done` with each as it finishes (for progress);
/// results come back in replication order, so the summary is the same
/// whatever the thread count.
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
    range
        .into_par_iter()
        .map(|r| {
            let s = simulate(plan, spec, r);
            done(&s);
            s
        })
        .collect()
}
