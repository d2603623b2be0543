//! `compare --select`: name the best layout with a stated confidence (Kim–Nelson fully sequential procedure).
//!
//! S.-H. Kim and B. L. Nelson, "A fully sequential procedure for
//! indifference-zone selection in simulation", *ACM TOMACS* 11(3):251–273,
//! 2001. Every surviving layout gets replication r (with common random
//! numbers: the same lots in each), then layouts clearly behind another are
//! dropped; this repeats until one is left or the cap is reached. Replications
//! are simulated in parallel in blocks, but fed to the procedure one stage at
//! a time in order, so the outcome does not depend on the thread count.

use std::fmt::Write as _;

use clap::Args;
use layflow_engine::{Goal, KimNelson};
use layflow_models::compare::{self, Better, Kind, Metric};
use layflow_models::plant::Plant;
use layflow_models::sim::{simulate, Plan, RepStats, RunSpec};
use layflow_models::units::parse_duration;
use rayon::prelude::*;
use serde::Serialize;

use crate::progress::Progress;
use crate::table::{num, time_unit, Table};
use crate::Failure;

/// Where the procedure is published, for reports.
pub const SOURCE: &str =
    "Kim and Nelson (2001), \"A fully sequential procedure for indifference-zone selection in simulation\", \
     ACM TOMACS 11(3):251-273";

/// The flags of `--select`.
#[derive(Args, Debug, Clone)]
pub struct SelectArgs {
    /// Select the best layout on --metric with the Kim–Nelson fully sequential procedure:
    /// add replications, drop layouts clearly worse, stop when one is left.
    #[arg(long)]
    pub select: bool,
    /// The smallest difference in --metric worth acting on, in the metric's units,
    /// e.g. "5 min" for flow_time_s or 0.5 for throughput_per_h (required with --select).
    #[arg(long, value_name = "AMOUNT")]
    pub indifference: Option<String>,
    /// Probability of selecting the best layout (when it is better by at least the indifference amount).
    #[arg(long, value_name = "P", default_value_t = 0.95)]
    pub confidence: f64,
    /// Replications of every layout before the first elimination (n₀ ≥ 2).
    #[arg(long, value_name = "N", default_value_t = 10)]
    pub first_stage: usize,
    /// The most replications per layout --select may use before it stops undecided.
    #[arg(long, value_name = "N", default_value_t = 500)]
    pub max_replications: usize,
}

/// Validated selection settings.
#[derive(Debug, Clone)]
pub struct Settings {
    delta: f64,
    confidence: f64,
    n0: usize,
    max: usize,
    goal: Goal,
}

/// Validate the `--select` flags; `None` without `--select`.
pub fn settings(
    a: &SelectArgs,
    metric: &Metric,
    replications_given: Option<u32>,
) -> Result<Option<Settings>, Failure> {
    if !a.select {
        if a.indifference.is_some() {
            return Err(Failure::input("--indifference is for --select; add --select or leave it out"));
        }
        return Ok(None);
    }
    if replications_given.is_some() {
        return Err(Failure::input(
            "with --select the procedure decides how many replications to run; cap them with \
             --max-replications instead of --replications",
        ));
    }
    let goal = match metric.better {
        Better::Lower => Goal::Minimize,
        Better::Higher => Goal::Maximize,
        Better::Neither => {
            return Err(Failure::input(format!(
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
    let text = a.indifference.as_deref().ok_or_else(|| {
        Failure::input(format!(
            "--select needs --indifference: the smallest difference in {} worth acting on ({example})",
            metric.label()
        ))
    })?;
    let delta = match metric.kind {
        Kind::Duration => parse_duration(text).map_err(|e| {
            Failure::input(format!("--indifference {text:?}: {e} ({} is a duration)", metric.label()))
        })?,
        Kind::Number => text.trim().parse::<f64>().map_err(|_| {
            Failure::input(format!(
                "--indifference {text:?}: not a number ({} is not a duration; {example})",
                metric.label()
            ))
        })?,
    };
    if !(delta > 0.0 && delta.is_finite()) {
        return Err(Failure::input(format!("--indifference {text:?}: must be greater than zero")));
    }
    if !(a.confidence > 0.0 && a.confidence < 1.0) {
        return Err(Failure::input(format!(
            "--confidence {}: must lie between 0 and 1, e.g. 0.95",
            a.confidence
        )));
    }
    if a.first_stage < 2 {
        return Err(Failure::input("--first-stage must be at least 2 (variances need two replications)"));
    }
    if a.max_replications < a.first_stage {
        return Err(Failure::input(format!(
            "--max-replications {} is below --first-stage {}",
            a.max_replications, a.first_stage
        )));
    }
    Ok(Some(Settings { delta, confidence: a.confidence, n0: a.first_stage, max: a.max_replications, goal }))
}

/// What the selection did, for the report.
#[derive(Debug, Clone, Serialize)]
pub struct Selection {
    procedure: &'static str,
    source: &'static str,
    metric: String,
    goal: &'static str,
    /// The indifference zone δ in the metric's units (seconds for durations).
    indifference: f64,
    confidence: f64,
    first_stage: usize,
    max_replications: usize,
    eta: f64,
    h2: f64,
    /// Stages (replications of each surviving layout) fed.
    stages: usize,
    layouts: Vec<SelectedLayout>,
    /// The selected layout; `None` when the cap was reached first.
    best: Option<String>,
    /// The survivors gave identical results in every replication (a tie no replication can break).
    identical: bool,
    /// The guarantee (or why there is none) in plain words.
    statement: String,
}

/// One layout's part in the selection.
#[derive(Debug, Clone, Serialize)]
struct SelectedLayout {
    layout: String,
    replications: usize,
    mean: f64,
    /// The replication after which it was dropped; `None` for the best or a survivor.
    eliminated_after: Option<usize>,
}

/// Run the procedure on layouts `which` (their `plans`), returning each
/// layout's replications (as many as the procedure used) and the outcome.
#[allow(clippy::too_many_arguments)]
pub fn run(
    plant: &Plant,
    which: &[usize],
    plans: &[Plan],
    spec: &(dyn Fn(usize) -> RunSpec + Sync),
    metric: usize,
    s: &Settings,
    demand_factor: f64,
    progress: &Progress,
) -> Result<(Vec<Vec<RepStats>>, Selection), Failure> {
    let k = which.len();
    let mut kn = KimNelson::new(k, s.n0, s.confidence, s.delta, s.goal)
        .map_err(|e| Failure::input(format!("--select: {e}")))?;
    let label = compare::metrics(plant)[metric].label();
    let mut reps: Vec<Vec<RepStats>> = (0..k).map(|_| Vec::new()).collect();
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
        for ((i, _), st) in jobs.iter().zip(done) {
            reps[*i].push(st);
        }
        let mut values = vec![f64::NAN; k];
        while stage < upto && !kn.is_done() {
            let r = stage;
            values.fill(f64::NAN);
            for &i in kn.survivors() {
                let v = compare::values(plant, &reps[i][r])[metric];
                if !v.is_finite() {
                    return Err(Failure::run(format!(
                        "--select: replication {r} of layout {} observed no {label} (no lot shipped in the \
                         window?); lengthen the horizon or select on another metric",
                        plant.layouts[which[i]].name
                    )));
                }
                values[i] = v;
            }
            kn.observe(&values).map_err(|e| Failure::run(format!("--select: {e}")))?;
            stage += 1;
        }
        let alive = kn.survivors();
        identical = stage >= s.n0
            && alive.len() > 1
            && (0..stage).all(|r| {
                let v = |i: usize| compare::values(plant, &reps[i][r])[metric];
                alive.iter().all(|&i| v(i) == v(alive[0]))
            });
    }
    // Keep only the replications the procedure used.
    for (i, r) in reps.iter_mut().enumerate() {
        r.truncate(kn.observations(i));
    }
    let name = |i: usize| plant.layouts[which[i]].name.clone();
    let m = &compare::metrics(plant)[metric];
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
    Ok((reps, selection))
}

fn amount(m: &Metric, x: f64) -> String {
    match m.kind {
        Kind::Duration => {
            let (u, s) = time_unit(x);
            format!("{} {u}", num(x / s).trim_end_matches('0').trim_end_matches('.'))
        }
        Kind::Number => num(x),
    }
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
    let what = format!("mean {}", crate::compare::human(m));
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

/// The selection as a table and the guarantee.
pub fn render(sel: &Selection, metric: &Metric) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "  Selecting the best layout on mean {} (the {} wins): {} procedure, Kim and Nelson 2001; indifference {}, confidence {:.0}%, \
         n₀ = {}, h² = {:.4}",
        crate::compare::human(metric),
        sel.goal,
        sel.procedure,
        amount(metric, sel.indifference),
        sel.confidence * 100.0,
        sel.first_stage,
        sel.h2
    );
    let mut t = Table::new(&[
        "layout",
        "replications",
        &format!("mean {}", crate::compare::human(metric)),
        "outcome",
    ]);
    for l in &sel.layouts {
        let outcome = match (l.eliminated_after, &sel.best) {
            (Some(r), _) => format!("dropped after replication {r}"),
            (None, Some(b)) if *b == l.layout => "BEST".to_string(),
            (None, _) if sel.identical => "tied: identical results".to_string(),
            (None, _) => "still in at the cap".to_string(),
        };
        t.row(vec![l.layout.clone(), l.replications.to_string(), amount(metric, l.mean), outcome]);
    }
    s.push_str(&t.render(2));
    let _ = writeln!(s, "  {}", sel.statement);
    s
}
