//! `layflow compare`: layouts side by side under common random numbers, with paired differences.

use std::path::PathBuf;
use std::time::Instant;

use clap::{Args, ValueEnum};
use layflow_models::analysis::StaticPicture;
use layflow_models::metrics::{find_metric, metrics, Metric, Scope, CONFIDENCE};
use layflow_models::plant::Plant;
use layflow_models::results::{self, compare as files};
use layflow_models::study::compare::{self as study, CompareOutput, Request};
use layflow_models::study::select::Settings;
use layflow_models::suggest::closest;

use crate::failure::Failure;
use crate::output::{self, note};
use crate::render::compare::render;
use crate::render::progress::Progress;
use crate::render::warnings::warn_overload;
use crate::report::ReportFlags;
use crate::settings::{layouts, SimOptions};

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
    /// Demand factor, or several separated by commas for a sweep, e.g. 0.8,1.0,1.2 or 80%,120%
    /// (overrides demand_factor).
    #[arg(long, value_name = "F,...", value_delimiter = ',', value_parser = crate::settings::parse_demand)]
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
    /// With --out: replace the results the folder holds (its summary.json, summary.csv,
    /// replications.csv, units.jsonl, results.csv and manifest; nothing else). Without it,
    /// a folder holding any study's results is refused. With --report: replace the page.
    #[arg(long)]
    pub force: bool,
    #[command(flatten)]
    pub report: ReportFlags,
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

impl SelectArgs {
    /// Validate the `--select` flags for `metric`; `None` without `--select`.
    pub fn settings(
        &self,
        metric: &Metric,
        replications_given: Option<u32>,
    ) -> Result<Option<Settings>, Failure> {
        if !self.select {
            if self.indifference.is_some() {
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
        crate::settings::replications_ceiling("--first-stage", self.first_stage as u64)?;
        crate::settings::replications_ceiling("--max-replications", self.max_replications as u64)?;
        let s = Settings::new(
            metric,
            self.indifference.as_deref(),
            self.confidence,
            self.first_stage,
            self.max_replications,
        )?;
        Ok(Some(s))
    }
}

/// Run the comparison and report it.
pub fn compare(args: &CompareArgs) -> Result<(), Failure> {
    let plant = args.sim.load(&args.scenario)?;
    crate::settings::note_measured_not_simulated(&args.scenario);
    compare_plant(&plant, args)
}

/// Run the comparison on an already loaded plant (`search --validate` adds
/// its layouts to the plant in memory first).
pub fn compare_plant(plant: &Plant, args: &CompareArgs) -> Result<(), Failure> {
    let settings = args.sim.resolve(plant)?;
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
    let (ranked_on, note) =
        find_metric(&metric_list, &args.metric).ok_or_else(|| unknown_metric(&args.metric, &metric_list))?;
    if let (Some(n), false) = (note, settings.quiet) {
        note!("{n}");
    }
    let selection = args.select.settings(&metric_list[ranked_on], args.sim.replications)?;
    if let Some(dir) = &args.out {
        let mode = if args.force { results::Mode::Force } else { results::Mode::Fresh };
        let held = results::prepare(dir, results::Kind::Compare, mode)?;
        if args.force && !held.is_empty() && !settings.quiet {
            note!("--force: deleted {} from {}", held.names(), dir.display());
        }
    }
    if args.force && args.out.is_none() && args.report.report.is_none() {
        return Err(Failure::input(
            "--force replaces what --out or --report would write: add one of them, or leave --force out",
        ));
    }
    let report = args.report.prepare(plant, &args.scenario, args.force)?;

    let started = Instant::now();
    let top = levels.iter().copied().fold(f64::MIN, f64::max);
    let (warmup_s, warmup_auto) = args.sim.warmup(&settings, plant, &which, top)?;
    let grid = args.sim.grid(plant, warmup_s, settings.horizon_s)?;
    for &factor in &levels {
        warn_overload(plant, &StaticPicture::new(plant, factor));
    }
    let req = Request {
        plant,
        layouts: &which,
        baseline,
        levels: &levels,
        metrics: &metric_list,
        ranked_on,
        selection: selection.as_ref(),
        horizon_s: settings.horizon_s,
        warmup_s,
        replications: settings.replications,
        seed: settings.seed,
        grid: grid.as_ref(),
    };
    let progress = Progress::new(study::planned_replications(&req), settings.quiet);
    let out_levels = settings.pool.install(|| study::run(&req, &progress));
    progress.finish();
    let out_levels = out_levels?;
    let wall_s = started.elapsed().as_secs_f64();

    let out = CompareOutput {
        plant: plant.name.clone(),
        scenario: args.scenario.display().to_string(),
        horizon_s: settings.horizon_s,
        warmup_s,
        warmup_auto,
        replications: settings.replications,
        seed: settings.seed,
        confidence: CONFIDENCE,
        common_random_numbers: true,
        baseline: plant.layouts[which[baseline]].name.clone(),
        ranked_on: metric_list[ranked_on].label(),
        events: out_levels.iter().flat_map(|l| &l.layouts).map(|s| s.events).sum(),
        levels: out_levels,
        wall_s: (!settings.no_wall_clock).then_some(wall_s),
    };
    if let Some(dir) = &args.out {
        files::write(dir, &out, &metric_list)?;
    }
    match args.format {
        CompareFormat::Json => output::out(&files::summary_json(&out))?,
        CompareFormat::Csv => {
            output::out(&String::from_utf8_lossy(&files::summary_csv(&out, &metric_list)?))?;
        }
        CompareFormat::Table => output::out(&render(plant, &out, &metric_list, wall_s))?,
    }
    if let Some(dir) = &args.out {
        if !settings.quiet {
            note!("wrote summary.json, summary.csv and replications.csv to {}", dir.display());
        }
    }
    if let Some(r) = &report {
        let csv = files::summary_csv(&out, &metric_list)?;
        r.write(
            results::Kind::Compare,
            plant,
            &args.scenario,
            (&files::summary_json(&out), &csv),
            args.out.as_deref(),
        )?;
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
    let near = closest(name, labels.iter().map(String::as_str))
        .map(|l| format!(" Did you mean {l:?}?"))
        .unwrap_or_default();
    let plant_level: Vec<&str> = list.iter().filter(|m| m.scope == Scope::Plant).map(|m| m.name).collect();
    Failure::input(format!(
        "--metric {name:?}: no such metric.{near} Plant metrics: {}; per product, department or fleet \
         write NAME/METRIC, e.g. {}",
        plant_level.join(", "),
        labels.iter().find(|l| l.contains('/')).map_or("", String::as_str)
    ))
}
