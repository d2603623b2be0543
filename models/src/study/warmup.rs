//! Choosing the warm-up: MSER-5 on the WIP series of pilot runs.
//!
//! MSER (White 1997) picks the truncation point that minimises the squared
//! standard error of the remaining mean; MSER-5 (Spratt 1998) applies it to
//! means of batches of five observations. We apply it to the plant's WIP,
//! averaged over fixed intervals, from a few pilot replications of every
//! layout at the highest demand level (the slowest to settle), and delete the
//! largest point found. Pilot replications use their own replication numbers,
//! so the runs that are reported never reuse the pilot's random numbers.

use layflow_engine::warmup::mser5;
use rayon::prelude::*;
use serde::Serialize;

use crate::plant::Plant;
use crate::sim::{simulate_wip_series, Plan, RunSpec};
use crate::units::format_duration;

/// Pilot replications per layout.
pub const PILOT_REPLICATIONS: u64 = 5;
/// The pilot's WIP series has this many intervals over the horizon.
pub const SERIES_POINTS: usize = 1000;
/// Pilot runs use replication numbers from here up, apart from reported runs.
const PILOT_BASE: u64 = 1 << 40;

/// What the warm-up rule chose and why, for the report.
#[derive(Debug, Clone, Serialize)]
pub struct WarmupChoice {
    /// "MSER-5".
    pub method: &'static str,
    /// The chosen deletion point, s.
    pub warmup_s: f64,
    /// Layout whose series needed the longest deletion.
    pub decided_by: String,
    /// Demand factor of the pilot runs.
    pub demand_factor: f64,
    /// Pilot replications per layout.
    pub pilot_replications: u64,
    /// Length of one WIP interval, s.
    pub interval_s: f64,
    /// True when MSER-5 chose the largest point it may (half the horizon):
    /// the WIP had not settled, so the horizon is too short to trust the result.
    pub at_limit: bool,
}

impl WarmupChoice {
    /// The warning to give when the choice cannot be trusted.
    pub fn warning(&self) -> Option<String> {
        self.at_limit.then(|| {
            format!(
                "WARNING: MSER-5 deleted the largest share it may (half the horizon, {}) for layout {}: the \
                 plant's WIP had not settled. Lengthen the horizon (--horizon) or check the plant is not \
                 overloaded before trusting these results.",
                format_duration(self.warmup_s),
                self.decided_by
            )
        })
    }
}

/// Run the pilots (on the current rayon pool) and choose the warm-up.
/// `None` when the horizon is too short for a series MSER-5 can read (fewer than two batches).
pub fn choose(
    plant: &Plant,
    layouts: &[usize],
    horizon_s: f64,
    demand_factor: f64,
    seed: u64,
) -> Option<WarmupChoice> {
    let step = horizon_s / SERIES_POINTS as f64;
    let mut best: Option<WarmupChoice> = None;
    for &l in layouts {
        let plan = Plan::new(plant, l);
        let spec = RunSpec { layout: l, horizon_s, warmup_s: 0.0, demand_factor, seed };
        let series: Vec<Vec<f64>> = (PILOT_BASE..PILOT_BASE + PILOT_REPLICATIONS)
            .into_par_iter()
            .map(|r| simulate_wip_series(&plan, &spec, r, step))
            .collect();
        // Average the replications point by point (as Welch's method does),
        // which lowers the noise MSER-5 has to see through.
        let n = series.iter().map(Vec::len).min().unwrap_or(0);
        let mean: Vec<f64> =
            (0..n).map(|i| series.iter().map(|s| s[i]).sum::<f64>() / series.len() as f64).collect();
        let t = mser5(&mean)?;
        let choice = WarmupChoice {
            method: "MSER-5",
            warmup_s: t.observations_deleted as f64 * step,
            decided_by: plant.layouts[l].name.clone(),
            demand_factor,
            pilot_replications: PILOT_REPLICATIONS,
            interval_s: step,
            at_limit: t.at_limit,
        };
        if best.as_ref().is_none_or(|b| choice.warmup_s > b.warmup_s) {
            best = Some(choice);
        }
    }
    best
}
