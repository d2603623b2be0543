//! `layflow compare`: layouts side by side under common random numbers, with paired differences.

use std::fmt::Write as _;
use std::path::PathBuf;
use std::time::Instant;

use clap::{Args, ValueEnum};
use layflow_models::analysis::StaticPicture;
use layflow_models::compare::{self, find_metric, metrics, paired, ranks, Better, Kind, Metric, Scope};
use layflow_models::plant::Plant;
use layflow_models::report::{replicate, summarize, Estimate, LayoutSummary, CONFIDENCE};
use layflow_models::sim::{Plan, RepStats, RunSpec};
use serde::Serialize;

use crate::check::warn_overload;
use crate::progress::Progress;
use crate::run::{layouts, SimOptions};
use crate::select::{self, SelectArgs, Selection};
use crate::table::{dur, dur_plain, num, pm, time_unit, whole, Table};
use crate::warmup::{self, WarmupChoice};
use crate::{load, output, Failure};

/// Arguments of `layflow compare`.
#[derive(Args, Debug)]
pub struct CompareArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// Layouts to compare (separate by commas); default: every layout in the scenario.
    #[arg(long, visible_alias = "layout", value_name = "A,B,...", value_delimiter = ',')]
    pub layouts: Vec<String>,
    /// The layout every other is compared against; default: the first compared.
    #[arg(long, value_name = "NAME")]
    pub baseline: Option<String>,
    /// Demand factor, or several separated by commas for a sweep, e.g. 0.8,1.0,1.2
    /// (overrides demand_factor).
    #[arg(long, value_name = "F,...", value_delimiter = ',')]
    pub demand: Vec<f64>,
    /// The metric that ranks layouts (and that --select selects on), e.g. flow_time_s,
    /// throughput_per_h, wip_mean, move_wait_s, handling_cost_per_h, or PRODUCT/flow_time_s.
    #[arg(long, value_name = "METRIC", default_value = "flow_time_s")]
    pub metric: String,
    #[command(flatten)]
    pub select: SelectArgs,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t = CompareFormat::Table)]
    pub format: CompareFormat,
    /// Also write replications.csv (one row per layout × replication × metric), summary.csv
    /// and summary.json into this directory (created if missing).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub sim: SimOptions,
}

/// Output formats of `compare`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum CompareFormat {
    /// Aligned tables for people.
    Table,
    /// JSON for programs (the same as summary.json).
    Json,
    /// The summary as CSV (the same as summary.csv).
    Csv,
}

/// Everything `compare` found, as written to JSON.
#[derive(Serialize)]
pub struct CompareOutput {
    plant: String,
    scenario: String,
    horizon_s: f64,
    warmup_s: f64,
    /// Present when `--warmup auto` chose the warm-up.
    warmup_auto: Option<WarmupChoice>,
    replications: u32,
    seed: u64,
    confidence: f64,
    common_random_numbers: bool,
    baseline: String,
    ranked_on: String,
    levels: Vec<Level>,
    events: u64,
    #[serde(skip_serializing_if = "Option::is_none")]
    wall_s: Option<f64>,
}

/// The layouts at one demand level.
#[derive(Serialize)]
pub struct Level {
    demand_factor: f64,
    /// Departments predicted at or over capacity at this level (queues grow without bound).
    overloaded: Vec<String>,
    layouts: Vec<LayoutSummary>,
    differences: Vec<Difference>,
    ranking: Vec<Rank>,
    #[serde(skip_serializing_if = "Option::is_none")]
    selection: Option<Selection>,
    /// `values[layout][replication][metric]`, for the tidy CSV.
    #[serde(skip)]
    values: Vec<Vec<Vec<f64>>>,
}

/// A paired difference `layout − baseline` of one metric.
#[derive(Serialize)]
struct Difference {
    layout: String,
    scope: Scope,
    subject: String,
    metric: &'static str,
    mean: f64,
    half_width: Option<f64>,
    n: usize,
    excludes_zero: bool,
}

/// Static and simulated rank of one layout.
#[derive(Serialize)]
struct Rank {
    layout: String,
    load_distance_static_m_per_h: f64,
    static_rank: usize,
    simulated_mean: f64,
    simulated_rank: usize,
}

/// Run the comparison and report it.
pub fn compare(args: &CompareArgs) -> Result<(), Failure> {
    let plant = load(&args.scenario)?;
    compare_plant(&plant, args)
}

/// Run the comparison on an already loaded plant (`search --validate` adds
/// its layouts to the plant in memory first).
pub fn compare_plant(plant: &Plant, args: &CompareArgs) -> Result<(), Failure> {
    let crate::run::RunBasics { horizon_s, replications, seed } = args.sim.basics(plant)?;
    let which = compared_layouts(plant, &args.layouts)?;
    let baseline = match &args.baseline {
        None => 0,
        Some(b) => which.iter().position(|&l| plant.layouts[l].name == *b).ok_or_else(|| {
            let listed: Vec<&str> = which.iter().map(|&l| plant.layouts[l].name.as_str()).collect();
            Failure::input(format!(
                "--baseline {b:?} is not among the layouts compared ({}); name one of them or add it to \
                 --layouts",
                listed.join(", ")
            ))
        })?,
    };
    let levels = demand_levels(plant, &args.demand)?;
    let metric_list = metrics(plant);
    let ranked_on =
        find_metric(&metric_list, &args.metric).ok_or_else(|| unknown_metric(&args.metric, &metric_list))?;
    let selection = select::settings(&args.select, &metric_list[ranked_on], args.sim.replications)?;
    let pool = crate::run::pool(args.sim.threads)?;
    if let Some(dir) = &args.out {
        output::prepare_dir(dir)?;
    }

    let started = Instant::now();
    let top = levels.iter().copied().fold(f64::MIN, f64::max);
    let (warmup_s, warmup_auto) =
        warmup::resolve(&args.sim.warmup, plant, &which, horizon_s, top, seed, &pool, args.sim.quiet)?;
    if !(horizon_s > warmup_s) {
        return Err(Failure::input(format!(
            "the horizon ({}) must be longer than the warm-up ({})",
            dur_plain(horizon_s),
            dur_plain(warmup_s)
        )));
    }

    let per_level = if selection.is_some() { 0 } else { which.len() as u64 * u64::from(replications) };
    let progress = Progress::new(per_level * levels.len() as u64, args.sim.quiet);
    let mut out_levels = Vec::with_capacity(levels.len());
    for &factor in &levels {
        let pic = StaticPicture::new(plant, factor);
        warn_overload(plant, &pic);
        let spec = |l: usize| RunSpec { layout: l, horizon_s, warmup_s, demand_factor: factor, seed };
        let plans: Vec<Plan> = which.iter().map(|&l| Plan::new(plant, l)).collect();
        let (reps, chosen): (Vec<Vec<RepStats>>, Option<Selection>) = match &selection {
            Some(sel) => {
                let (reps, s) = pool.install(|| {
                    select::run(plant, &which, &plans, &spec, ranked_on, sel, factor, &progress)
                })?;
                (reps, Some(s))
            }
            None => {
                let reps = which
                    .iter()
                    .zip(&plans)
                    .map(|(&l, plan)| {
                        progress.stage(format!("layout {}, demand ×{}", plant.layouts[l].name, num(factor)));
                        pool.install(|| replicate(plan, &spec(l), replications, |r| progress.done(r)))
                    })
                    .collect();
                (reps, None)
            }
        };
        for (&l, r) in which.iter().zip(&reps) {
            if let Some(why) = layflow_models::report::deadlock_message(plant, r) {
                return Err(Failure::run(format!("layout {}: {why}", plant.layouts[l].name)));
            }
        }
        out_levels.push(level(
            plant,
            &which,
            baseline,
            &pic,
            factor,
            &spec,
            reps,
            chosen,
            &metric_list,
            ranked_on,
        ));
    }
    progress.finish();
    let wall_s = started.elapsed().as_secs_f64();

    let out = CompareOutput {
        plant: plant.name.clone(),
        scenario: args.scenario.display().to_string(),
        horizon_s,
        warmup_s,
        warmup_auto,
        replications,
        seed,
        confidence: CONFIDENCE,
        common_random_numbers: true,
        baseline: plant.layouts[which[baseline]].name.clone(),
        ranked_on: metric_list[ranked_on].label(),
        events: out_levels.iter().flat_map(|l| &l.layouts).map(|s| s.events).sum(),
        levels: out_levels,
        wall_s: (!args.sim.no_wall_clock).then_some(wall_s),
    };
    let json = serde_json::to_string_pretty(&out).expect("summaries serialise") + "\n";
    let summary_csv = summary_csv(&out, &metric_list)?;
    if let Some(dir) = &args.out {
        output::write_atomic(dir, "summary.json", json.as_bytes())?;
        output::write_atomic(dir, "summary.csv", &summary_csv)?;
        output::write_atomic(dir, "replications.csv", &replications_csv(&out, &metric_list)?)?;
    }
    match args.format {
        CompareFormat::Json => print!("{json}"),
        CompareFormat::Csv => print!("{}", String::from_utf8_lossy(&summary_csv)),
        CompareFormat::Table => print!("{}", render(plant, &out, &metric_list, wall_s)),
    }
    if let Some(dir) = &args.out {
        if !args.sim.quiet {
            eprintln!("wrote summary.json, summary.csv and replications.csv to {}", dir.display());
        }
    }
    Ok(())
}

/// The layouts to compare: at least two, none twice.
fn compared_layouts(plant: &Plant, names: &[String]) -> Result<Vec<usize>, Failure> {
    let which =
        layouts(plant, names).map_err(|f| Failure::input(f.message().replace("--layout ", "--layouts ")))?;
    for (i, &l) in which.iter().enumerate() {
        if which[..i].contains(&l) {
            return Err(Failure::input(format!("--layouts names {:?} twice", plant.layouts[l].name)));
        }
    }
    if which.len() < 2 {
        let hint = if plant.layouts.len() < 2 {
            "the scenario has only one layout; add another under `layouts:`, or use `layflow run`"
        } else {
            "name at least two in --layouts, or leave it out to compare them all"
        };
        return Err(Failure::input(format!("compare needs at least two layouts: {hint}")));
    }
    Ok(which)
}

fn demand_levels(plant: &Plant, given: &[f64]) -> Result<Vec<f64>, Failure> {
    if given.is_empty() {
        return Ok(vec![plant.demand_factor]);
    }
    for (i, &f) in given.iter().enumerate() {
        if !(f > 0.0 && f.is_finite()) {
            return Err(Failure::input(format!(
                "--demand {f}: every demand factor must be a positive number, e.g. --demand 0.8,1.0,1.2"
            )));
        }
        if given[..i].contains(&f) {
            return Err(Failure::input(format!("--demand lists {f} twice")));
        }
    }
    Ok(given.to_vec())
}

fn unknown_metric(name: &str, list: &[Metric]) -> Failure {
    let labels: Vec<String> = list.iter().map(Metric::label).collect();
    let near = labels
        .iter()
        .map(|l| (strsim::jaro_winkler(l, name), l))
        .filter(|(s, _)| *s > 0.8)
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, l)| format!(" Did you mean {l:?}?"))
        .unwrap_or_default();
    let plant_level: Vec<&str> = list.iter().filter(|m| m.scope == Scope::Plant).map(|m| m.name).collect();
    Failure::input(format!(
        "--metric {name:?}: no such metric.{near} Plant metrics: {}; per product, department or fleet \
         write NAME/METRIC, e.g. {}",
        plant_level.join(", "),
        labels.iter().find(|l| l.contains('/')).map_or("", String::as_str)
    ))
}

#[allow(clippy::too_many_arguments)]
fn level(
    plant: &Plant,
    which: &[usize],
    baseline: usize,
    pic: &StaticPicture,
    factor: f64,
    spec: &(dyn Fn(usize) -> RunSpec + Sync),
    reps: Vec<Vec<RepStats>>,
    selection: Option<Selection>,
    metric_list: &[Metric],
    ranked_on: usize,
) -> Level {
    let values: Vec<Vec<Vec<f64>>> =
        reps.iter().map(|rs| rs.iter().map(|r| compare::values(plant, r)).collect()).collect();
    let column = |li: usize, m: usize| -> Vec<f64> { values[li].iter().map(|v| v[m]).collect() };
    let mut differences = Vec::new();
    for (li, &l) in which.iter().enumerate() {
        if li == baseline {
            continue;
        }
        for (m, metric) in metric_list.iter().enumerate() {
            let iv = paired(&column(li, m), &column(baseline, m));
            differences.push(Difference {
                layout: plant.layouts[l].name.clone(),
                scope: metric.scope,
                subject: metric.subject.clone(),
                metric: metric.name,
                mean: iv.mean,
                half_width: iv.half_width,
                n: iv.n,
                excludes_zero: iv.excludes_zero(),
            });
        }
    }
    let summaries: Vec<LayoutSummary> =
        which.iter().zip(&reps).map(|(&l, rs)| summarize(plant, &spec(l), pic, rs)).collect();
    let static_ld: Vec<f64> = summaries.iter().map(|s| s.load_distance_static_m_per_h).collect();
    let sim_mean: Vec<f64> =
        (0..which.len()).map(|li| compare::values_mean(&values[li], ranked_on).unwrap_or(f64::NAN)).collect();
    let static_rank = ranks(&static_ld, Better::Lower);
    let sim_rank = ranks(&sim_mean, metric_list[ranked_on].better);
    let ranking = which
        .iter()
        .enumerate()
        .map(|(li, &l)| Rank {
            layout: plant.layouts[l].name.clone(),
            load_distance_static_m_per_h: static_ld[li],
            static_rank: static_rank[li],
            simulated_mean: sim_mean[li],
            simulated_rank: sim_rank[li],
        })
        .collect();
    Level {
        demand_factor: factor,
        overloaded: pic.overloaded().map(|d| plant.departments[d].id.clone()).collect(),
        layouts: summaries,
        differences,
        ranking,
        selection,
        values,
    }
}

/// One row per demand level × layout × metric: the layout's mean and the
/// paired difference against the baseline.
fn summary_csv(out: &CompareOutput, metric_list: &[Metric]) -> Result<Vec<u8>, Failure> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let header = [
        "demand_factor",
        "layout",
        "scope",
        "subject",
        "metric",
        "mean",
        "half_width",
        "n",
        "baseline",
        "difference",
        "difference_half_width",
        "difference_n",
        "difference_excludes_zero",
    ];
    w.write_record(header).map_err(csv_failure)?;
    let opt = |x: Option<f64>| x.map_or(String::new(), |v| v.to_string());
    for lv in &out.levels {
        for (li, s) in lv.layouts.iter().enumerate() {
            let mut diffs = lv.differences.iter().filter(|d| d.layout == s.layout);
            for (m, metric) in metric_list.iter().enumerate() {
                let col: Vec<f64> = lv.values[li].iter().map(|v| v[m]).filter(|x| x.is_finite()).collect();
                let e: Estimate = layflow_engine::interval(&col, CONFIDENCE).into();
                let d = if s.layout == out.baseline { None } else { diffs.next() };
                w.write_record([
                    lv.demand_factor.to_string(),
                    s.layout.clone(),
                    metric.scope.as_str().to_string(),
                    metric.subject.clone(),
                    metric.name.to_string(),
                    if e.n == 0 { String::new() } else { e.mean.to_string() },
                    opt(e.half_width),
                    e.n.to_string(),
                    out.baseline.clone(),
                    d.map_or(String::new(), |d| if d.n == 0 { String::new() } else { d.mean.to_string() }),
                    d.map_or(String::new(), |d| opt(d.half_width)),
                    d.map_or(String::new(), |d| d.n.to_string()),
                    d.map_or(String::new(), |d| d.excludes_zero.to_string()),
                ])
                .map_err(csv_failure)?;
            }
        }
    }
    w.into_inner().map_err(|e| Failure::run(format!("cannot write CSV: {e}")))
}

/// Tidy data: one row per demand level × layout × replication × metric.
fn replications_csv(out: &CompareOutput, metric_list: &[Metric]) -> Result<Vec<u8>, Failure> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(["demand_factor", "layout", "replication", "scope", "subject", "metric", "value"])
        .map_err(csv_failure)?;
    for lv in &out.levels {
        for (li, s) in lv.layouts.iter().enumerate() {
            for (r, vals) in lv.values[li].iter().enumerate() {
                for (metric, v) in metric_list.iter().zip(vals) {
                    w.write_record([
                        lv.demand_factor.to_string(),
                        s.layout.clone(),
                        r.to_string(),
                        metric.scope.as_str().to_string(),
                        metric.subject.clone(),
                        metric.name.to_string(),
                        // Nothing observed (no lot shipped): an empty cell, read as missing.
                        if v.is_finite() { v.to_string() } else { String::new() },
                    ])
                    .map_err(csv_failure)?;
                }
            }
        }
    }
    w.into_inner().map_err(|e| Failure::run(format!("cannot write CSV: {e}")))
}

fn csv_failure(e: csv::Error) -> Failure {
    Failure::run(format!("cannot write CSV: {e}"))
}

/// A signed difference in the metric's unit, with its half-width and a mark
/// when the interval excludes zero.
fn diff_cell(d: &Difference, kind: Kind) -> String {
    if d.n == 0 {
        return "-".to_string();
    }
    // A plus only on a difference that prints as non-zero.
    let sign = |x: f64| if x > 0.0 && num(x) != "0" { "+" } else { "" };
    let mark = if d.excludes_zero { " *" } else { "" };
    let e = Estimate { mean: d.mean, half_width: d.half_width, n: d.n };
    let body = match kind {
        Kind::Duration => {
            // The unit that suits the difference itself: minutes for a few minutes' gain.
            let (u, s) = time_unit(d.mean.abs().max(d.half_width.unwrap_or(0.0)));
            format!("{}{} {u}", sign(d.mean), pm(&e, 1.0 / s))
        }
        Kind::Number => format!("{}{}", sign(d.mean), pm(&e, 1.0)),
    };
    format!("{}{mark}", body.replace('-', "−"))
}

/// A metric in words for tables: "flow time", "pump-housing flow time".
pub fn human(m: &Metric) -> String {
    let words = SHOWN.iter().find(|(n, _)| *n == m.name).map_or(m.name, |(_, w)| *w);
    if m.subject.is_empty() {
        words.to_string()
    } else {
        format!("{} {words}", m.subject)
    }
}

/// Plant metrics shown in the differences table, with their labels.
const SHOWN: &[(&str, &str)] = &[
    ("throughput_per_h", "throughput (lots/h)"),
    ("flow_time_s", "flow time"),
    ("wip_mean", "WIP (lots)"),
    ("wip_in_transit_mean", "WIP on movers (lots)"),
    ("move_wait_s", "wait for a mover"),
    ("distance_loaded_m_per_h", "distance loaded (m/h)"),
    ("distance_empty_m_per_h", "distance empty (m/h)"),
    ("handling_cost_per_h", "fleet cost (/h)"),
    // Only where the aisle network is travelled segment by segment.
    ("congestion_delay_s_per_h", "aisle congestion (mover-s/h)"),
];

fn render(plant: &Plant, out: &CompareOutput, metric_list: &[Metric], wall_s: f64) -> String {
    let mut s = String::new();
    let fleets = !plant.fleets().is_empty();
    let _ = writeln!(s, "{}", out.plant);
    let n_layouts = out.levels.first().map_or(0, |l| l.layouts.len());
    let reps = match out.levels.first().and_then(|l| l.selection.as_ref()) {
        Some(_) => "replications as the selection needed".to_string(),
        None => format!("{} replications", out.replications),
    };
    let _ = writeln!(
        s,
        "{n_layouts} layouts × {reps} × {} ({} warm-up), seed {}; common random numbers: replication i of every \
         layout sees the same lots, times and routing choices",
        dur_plain(out.horizon_s),
        dur_plain(out.warmup_s),
        out.seed
    );
    if let Some(w) = &out.warmup_auto {
        let _ = writeln!(s, "{}", w.describe());
    }
    let _ = writeln!(s, "{}; ± is the 95% confidence half-width", crate::table::speed(out.events, wall_s));
    let ranked = &metric_list[find_metric(metric_list, &out.ranked_on).expect("ranked metric exists")];
    for lv in &out.levels {
        let _ = writeln!(s, "\n== demand ×{} ==", lv.demand_factor);
        if !lv.overloaded.is_empty() {
            let _ = writeln!(
                s,
                "  OVERLOADED: {} predicted at or over capacity; queues grow without bound at this demand",
                lv.overloaded.join(", ")
            );
        }
        let mut header = crate::run::headline_header(fleets);
        header.extend(["static load-distance (load-m/h)", "static rank", "simulated rank"]);
        let mut t = Table::new(&header);
        for (l, r) in lv.layouts.iter().zip(&lv.ranking) {
            let mut row = crate::run::headline_cells(l, fleets);
            row.extend([
                whole(l.load_distance_static_m_per_h),
                r.static_rank.to_string(),
                r.simulated_rank.to_string(),
            ]);
            t.row(row);
        }
        s.push_str(&t.render(2));
        // A layout disagrees when some other layout is ordered the opposite
        // way by the two ranks; a tie on either side is no contradiction.
        let disagree: Vec<&str> = lv
            .ranking
            .iter()
            .filter(|a| {
                lv.ranking.iter().any(|b| {
                    (a.static_rank < b.static_rank && a.simulated_rank > b.simulated_rank)
                        || (a.static_rank > b.static_rank && a.simulated_rank < b.simulated_rank)
                })
            })
            .map(|r| r.layout.as_str())
            .collect();
        let _ = if !fleets {
            writeln!(
                s,
                "  Moves are instant in this scenario (moves: instant), so the layout cannot change the \
                 simulated results; only the static picture differs."
            )
        } else if disagree.is_empty() {
            writeln!(
                s,
                "  Simulated rank (on mean {}) agrees with the static load-distance rank.",
                human(ranked)
            )
        } else {
            writeln!(
                s,
                "  Simulated rank (on mean {}) DISAGREES with the static load-distance rank for {}: queues, \
                 movers and empty trips change the order. Check below whether the difference is real (*).",
                human(ranked),
                disagree.join(", ")
            )
        };

        let others: Vec<&LayoutSummary> = lv.layouts.iter().filter(|l| l.layout != out.baseline).collect();
        let heads: Vec<String> = std::iter::once("paired difference".to_string())
            .chain(others.iter().map(|l| format!("{} − {}", l.layout, out.baseline)))
            .collect();
        let mut t = Table::new(&heads);
        let mut rows: Vec<(String, usize)> = SHOWN
            .iter()
            .filter(|(name, _)| fleets || !matches!(*name, "wip_in_transit_mean" | "move_wait_s"))
            .filter(|(name, _)| fleets || !name.contains("distance") && !name.contains("cost"))
            .filter_map(|(name, label)| Some((label.to_string(), find_metric(metric_list, name)?)))
            .collect();
        for p in &plant.products {
            let label = format!("{}/flow_time_s", p.id);
            rows.push((
                format!("{} flow time", p.id),
                find_metric(metric_list, &label).expect("product metric"),
            ));
        }
        for (label, m) in rows {
            let metric = &metric_list[m];
            let mut row = vec![label];
            for o in &others {
                let d = lv
                    .differences
                    .iter()
                    .find(|d| d.layout == o.layout && d.metric == metric.name && d.subject == metric.subject)
                    .expect("a difference per metric");
                row.push(diff_cell(d, metric.kind));
            }
            t.row(row);
        }
        s.push('\n');
        s.push_str(&t.render(2));
        let _ = writeln!(
            s,
            "  * the 95% paired interval excludes zero: a real difference, not noise. Every metric is in \
             --format json/csv and --out."
        );
        if let Some(sel) = &lv.selection {
            s.push('\n');
            s.push_str(&select::render(sel, ranked));
        }
    }
    if out.levels.len() > 1 {
        s.push_str(&sweep(out));
    }
    s
}

/// Each layout at each demand level: where does a layout break down?
fn sweep(out: &CompareOutput) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "\n== demand sweep ==");
    let heads: Vec<String> = std::iter::once("layout".to_string())
        .chain(out.levels.iter().map(|l| {
            let mark = if l.overloaded.is_empty() { "" } else { " (overloaded)" };
            format!("×{}{mark}", l.demand_factor)
        }))
        .collect();
    for (title, pick) in [("flow time", 0usize), ("throughput (lots/h)", 1), ("WIP (lots)", 2)] {
        let mut h = heads.clone();
        h[0] = format!("{title}: layout");
        let mut t = Table::new(&h);
        for (li, l) in out.levels[0].layouts.iter().enumerate() {
            let mut row = vec![l.layout.clone()];
            for lv in &out.levels {
                let x = &lv.layouts[li];
                row.push(match pick {
                    0 => dur(&x.flow_time_s.estimate()),
                    1 => pm(&x.throughput_per_h, 1.0),
                    _ => pm(&x.wip_mean, 1.0),
                });
            }
            t.row(row);
        }
        s.push_str(&t.render(2));
        s.push('\n');
    }
    let _ = writeln!(
        s,
        "  A layout breaks down where its flow time and WIP climb steeply from one level to the next; \
         at an overloaded level they grow with the horizon and the numbers only say \"too much\"."
    );
    s
}
