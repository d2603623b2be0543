//! Selecting the best layout with a stated confidence (Kim–Nelson fully sequential procedure).
//!
//! S.-H. Kim and B. L. Nelson, "A fully sequential procedure for
//! indifference-zone selection in simulation", *ACM TOMACS* 11(3):251–273,
//! 2001. Every surviving layout gets replication r (with common random
//! numbers: the same lots in each), then layouts clearly behind another are
//! dropped; this repeats until one is left or the cap is reached. Replications
//! are simulated in parallel in blocks, but fed to the procedure one stage at
//! a time in order, so the outcome does not depend on the thread count.

use layflow_engine::{Goal, KimNelson};
use rayon::prelude::*;
use serde::Serialize;

use crate::metrics::list::{metrics, Metric};
use crate::metrics::registry::{Better, Kind};
use crate::plant::Plant;
use crate::sim::{simulate, Plan, RepStats, RunSpec};
use crate::text::num;
use crate::units::parse_duration;

use super::progress::{Progress, StudyError};

/// Where the procedure is published, for reports.
pub const SOURCE: &str =
    "Kim and Nelson (2001), \"A fully sequential procedure for indifference-zone selection in simulation\", \
     ACM TOMACS 11(3):251-273";

/// Validated selection settings.
#[derive(Debug, Clone)]
pub struct Settings {
    delta: f64,
    confidence: f64,
    n0: usize,
    max: usize,
    goal: Goal,
}

impl Settings {
    /// Check the selection settings for `metric`: `indifference` as the user
    /// wrote it (a duration for a duration metric), the probability of
    /// correct selection, the first-stage replications n₀ and the cap.
    pub fn new(
        metric: &Metric,
        indifference: Option<&str>,
        confidence: f64,
        first_stage: usize,
        max_replications: usize,
    ) -> Result<Settings, StudyError> {
        let input = |m: String| StudyError::Input(m);
        let goal = match metric.better {
            Better::Lower => Goal::Minimize,
            Better::Higher => Goal::Maximize,
            Better::Neither => {
                return Err(input(format!(
                    "--metric {}: neither a higher nor a lower value is better, so there is no best layout to \
                     select; select on flow_time_s, throughput_per_h, wip_mean, move_wait_s or handling_cost_per_h",
                    metric.label()
                )))
            }
        };
        let example = match metric.kind {
            Kind::Duration => "e.g. --indifference \"5 min\"",
            Kind::Number => "e.g. --indifference 0.5",
        };
        let text = indifference.ok_or_else(|| {
            input(format!(
                "--select needs --indifference: the smallest difference in {} worth acting on ({example})",
                metric.label()
            ))
        })?;
        let delta = match metric.kind {
            Kind::Duration => parse_duration(text).map_err(|e| {
                input(format!("--indifference {text:?}: {e} ({} is a duration)", metric.label()))
            })?,
            Kind::Number => text.trim().parse::<f64>().map_err(|_| {
                input(format!(
                    "--indifference {text:?}: not a number ({} is not a duration; {example})",
                    metric.label()
                ))
            })?,
        };
        if !(delta > 0.0 && delta.is_finite()) {
            return Err(input(format!("--indifference {text:?}: must be greater than zero")));
        }
        if !(confidence > 0.0 && confidence < 1.0) {
            return Err(input(format!("--confidence {confidence}: must lie between 0 and 1, e.g. 0.95")));
        }
        if first_stage < 2 {
            return Err(input("--first-stage must be at least 2 (variances need two replications)".into()));
        }
        if max_replications < first_stage {
            return Err(input(format!(
                "--max-replications {max_replications} is below --first-stage {first_stage}"
            )));
        }
        Ok(Settings { delta, confidence, n0: first_stage, max: max_replications, goal })
    }
}

/// What the selection did, for the report.
#[derive(Debug, Clone, Serialize)]
pub struct Selection {
    /// The procedure's name.
    pub procedure: &'static str,
    /// Where it is published.
    pub source: &'static str,
    /// The metric selected on (its label).
    pub metric: String,
    /// "lowest" or "highest".
    pub goal: &'static str,
    /// The indifference zone δ in the metric's units (seconds for durations).
    pub indifference: f64,
    /// Probability of correct selection asked for.
    pub confidence: f64,
    /// Replications of every layout before the first elimination (n₀).
    pub first_stage: usize,
    /// The cap on replications per layout.
    pub max_replications: usize,
    /// Kim–Nelson's η.
    pub eta: f64,
    /// h2
    pub h2: f64,
    /// Stages (replications of each surviving layout) fed.
    pub stages: usize,
    /// Each layout's part.
    pub layouts: Vec<SelectedLayout>,
    /// The selected layout; `None` when the cap was reached first.
    pub best: Option<String>,
    /// The survivors gave identical results in every replication (a tie no replication can break).
    pub identical: bool,
    /// The guarantee (or why there is none) in plain words.
    pub statement: String,
}

/// One layout's part in the selection.
#[derive(Debug, Clone, Serialize)]
pub struct SelectedLayout {
    /// Layout name.
    pub layout: String,
    /// Replications it received.
    pub replications: usize,
    /// Its mean on the metric over them.
    pub mean: f64,
    /// The replication after which it was dropped; `None` for the best or a survivor.
    pub eliminated_after: Option<usize>,
}

/// Run the procedure on layouts `which` (their `plans`), handing `fold` each
/// replication the procedure used, as (position in `which`, results), in
/// replication order for each layout, and returning the outcome. Layout `i`
/// gets replications 0..`observations(i)`; those simulated ahead in a block
/// but never fed (the procedure stopped first) are dropped unseen.
#[allow(clippy::too_many_arguments)]
pub fn run(
    plant: &Plant,
    which: &[usize],
    plans: &[Plan],
    spec: &(dyn Fn(usize) -> RunSpec + Sync),
    metric: usize,
    s: &Settings,
    demand_factor: f64,
    progress: &dyn Progress,
    fold: &mut dyn FnMut(usize, &RepStats),
) -> Result<Selection, StudyError> {
    let k = which.len();
    let mut kn = KimNelson::new(k, s.n0, s.confidence, s.delta, s.goal)
        .map_err(|e| StudyError::Input(format!("--select: {e}")))?;
    let list = metrics(plant);
    let label = list[metric].label();
    // Each layout's value of the selection metric in every replication fed
    // (8 bytes a replication): the identical-results check reads them.
    let mut seen: Vec<Vec<f64>> = (0..k).map(|_| Vec::new()).collect();
    // Stages simulated per block after the first: enough to keep every core busy.
    let block = (2 * rayon::current_num_threads()).max(4);
    let mut stage = 0usize;
    progress.stage(format!("selecting on {label}, demand ×{}", num(demand_factor)));
    // Survivors that gave exactly the same value in every replication (mirror
    // images of one layout, say) can never be told apart: stop rather than run to the cap.
    let mut identical = false;
    while !kn.is_done() && stage < s.max && !identical {
        let upto = if stage < s.n0 { s.n0 } else { (stage + block).min(s.max) };
        let alive: Vec<usize> = kn.survivors().to_vec();
        progress.add_total((alive.len() * (upto - stage)) as u64);
        let jobs: Vec<(usize, u64)> =
            alive.iter().flat_map(|&i| (stage..upto).map(move |r| (i, r as u64))).collect();
        let done: Vec<RepStats> = jobs
            .par_iter()
            .map(|&(i, r)| {
                let st = simulate(&plans[i], &spec(which[i]), r);
                progress.done(&st);
                st
            })
            .collect();
        // This block's results: block[i][r − first stage of the block].
        let first = stage;
        let mut block: Vec<Vec<RepStats>> = (0..k).map(|_| Vec::new()).collect();
        for ((i, _), st) in jobs.iter().zip(done) {
            block[*i].push(st);
        }
        let mut values = vec![f64::NAN; k];
        while stage < upto && !kn.is_done() {
            let r = stage;
            values.fill(f64::NAN);
            for &i in kn.survivors() {
                let rep = &block[i][r - first];
                let v = list[metric].value(plant, rep);
                if !v.is_finite() {
                    return Err(StudyError::Run(format!(
                        "--select: replication {r} of layout {} observed no {label} (no lot shipped in the \
                         window?); lengthen the horizon or select on another metric",
                        plant.layouts[which[i]].name
                    )));
                }
                values[i] = v;
            }
            // The survivors of this stage are the layouts it observes.
            for &i in kn.survivors() {
                fold(i, &block[i][r - first]);
                seen[i].push(values[i]);
            }
            kn.observe(&values).map_err(|e| StudyError::Run(format!("--select: {e}")))?;
            stage += 1;
        }
        let alive = kn.survivors();
        identical = stage >= s.n0
            && alive.len() > 1
            && (0..stage).all(|r| alive.iter().all(|&i| seen[i][r] == seen[alive[0]][r]));
    }
    let name = |i: usize| plant.layouts[which[i]].name.clone();
    let m = &list[metric];
    let best = kn.winner().map(name);
    let statement = statement(&kn, m, s, k, &best, &name, identical);
    let selection = Selection {
        procedure: "Kim–Nelson fully sequential",
        source: SOURCE,
        metric: label,
        goal: match s.goal {
            Goal::Minimize => "lowest",
            Goal::Maximize => "highest",
        },
        indifference: s.delta,
        confidence: s.confidence,
        first_stage: s.n0,
        max_replications: s.max,
        eta: layflow_engine::kn_eta(k, s.n0, s.confidence).expect("validated by KimNelson::new"),
        h2: kn.h2(),
        stages: kn.stage(),
        layouts: (0..k)
            .map(|i| SelectedLayout {
                layout: name(i),
                replications: kn.observations(i),
                mean: kn.mean(i).unwrap_or(f64::NAN),
                eliminated_after: kn.eliminated_at(i),
            })
            .collect(),
        best,
        identical,
        statement,
    };
    Ok(selection)
}

/// An amount of metric `m` in its unit, e.g. `5 min`.
pub fn amount(m: &Metric, x: f64) -> String {
    crate::text::amount(m.kind == Kind::Duration, x)
}

fn statement(
    kn: &KimNelson,
    m: &Metric,
    s: &Settings,
    k: usize,
    best: &Option<String>,
    name: &dyn Fn(usize) -> String,
    identical: bool,
) -> String {
    let goal = match s.goal {
        Goal::Minimize => "lowest",
        Goal::Maximize => "highest",
    };
    let what = format!("mean {}", m.human());
    match best {
        Some(b) => format!(
            "With probability at least {:.0}%, layout {b} has the {goal} {what} of these {k} layouts, or is \
             within {} of the one that has. This holds when replication results are roughly normal (means over \
             a long run are) and the same with or without common random numbers (Kim and Nelson 2001).",
            s.confidence * 100.0,
            amount(m, s.delta)
        ),
        None if identical => {
            let left: Vec<String> = kn.survivors().iter().map(|&i| name(i)).collect();
            format!(
                "No single layout can be named: {} gave the same {what} in every one of {} replications (the \
                 same simulated outcome, as mirror-image layouts give), so no number of replications can tell \
                 them apart. Treat them as equally good.",
                left.join(", "),
                kn.stage()
            )
        }
        None => {
            let left: Vec<String> = kn.survivors().iter().map(|&i| name(i)).collect();
            format!(
                "No layout could be named: after {} replications (the cap) {} are still in. Their {what} differ \
                 by less than the procedure can resolve at this indifference ({}): treat them as equally good, \
                 or raise --max-replications or lower --indifference.",
                kn.stage(),
                left.join(", "),
                amount(m, s.delta)
            )
        }
    }
}
