//! `layflow run`: simulate layouts over replications and report with confidence intervals.

use std::path::PathBuf;
use std::time::Instant;

use clap::Args;
use layflow_models::analysis::StaticPicture;
use layflow_models::metrics::{LayoutAccumulator, CONFIDENCE};
use layflow_models::sim::{Plan, RunSpec};
use layflow_models::study::{replicate_fold, CapTally, Progress as _};

use crate::failure::Failure;
use crate::output;
use crate::render::progress::Progress;
use crate::render::run::{render, RunOutput};
use crate::render::warnings::warn_overload;
use crate::settings::{demand_factor, layouts, Format, SimOptions};

/// Arguments of `layflow run`.
#[derive(Args, Debug)]
pub struct RunArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// Layout to simulate (repeat, or separate by commas); default: every layout.
    #[arg(long, value_name = "NAME", value_delimiter = ',')]
    pub layout: Vec<String>,
    /// Scale every product's demand by this factor, e.g. 1.2 or 120% (overrides demand_factor).
    #[arg(long, value_name = "FACTOR", value_parser = crate::settings::parse_demand)]
    pub demand: Option<f64>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    #[command(flatten)]
    pub sim: SimOptions,
    #[command(flatten)]
    pub trace: crate::trace::TraceArgs,
}

/// Simulate and report.
pub fn run(args: &RunArgs) -> Result<(), Failure> {
    let plant = args.sim.load(&args.scenario)?;
    crate::settings::note_measured_not_simulated(&args.scenario);
    let settings = args.sim.resolve(&plant)?;
    let factor = demand_factor(&plant, args.demand)?;
    let which = layouts(&plant, &args.layout)?;
    // Every trace flag is checked, and its files opened, before anything runs.
    let traces = args.trace.prepare(&plant, &which, settings.replications, settings.horizon_s)?;
    let (warmup_s, warmup_auto) = args.sim.warmup(&settings, &plant, &which, factor)?;
    let (horizon_s, replications, seed) = (settings.horizon_s, settings.replications, settings.seed);
    let grid = args.sim.grid(&plant, warmup_s, horizon_s)?;

    let pic = StaticPicture::new(&plant, factor);
    warn_overload(&plant, &pic);

    let total = which.len() as u64 * u64::from(replications);
    let progress = Progress::new(total, settings.quiet);
    let started = Instant::now();
    let mut summaries = Vec::with_capacity(which.len());
    let mut capped = Vec::new();
    for &l in &which {
        progress.stage(format!("layout {}", plant.layouts[l].name));
        let spec = RunSpec { layout: l, horizon_s, warmup_s, demand_factor: factor, seed };
        let mut plan = Plan::new(&plant, l);
        if let Some(g) = &grid {
            plan = plan.with_buckets(g.clone());
        }
        // Each replication is folded into the summary and dropped: memory does not grow with replications.
        let mut acc = LayoutAccumulator::new(&plant).with_buckets(grid.as_ref());
        let mut caps = CapTally::default();
        settings.pool.install(|| {
            replicate_fold(
                &plan,
                &spec,
                0..u64::from(replications),
                |r| progress.done(r),
                |_, r| {
                    acc.add(&r);
                    caps.add(&r);
                },
            )
        });
        if let Some(why) = acc.deadlock() {
            progress.finish();
            return Err(Failure::run(format!("layout \"{}\": {why}", plant.layouts[l].name)));
        }
        if let Some(note) = caps.note() {
            capped.push(format!("WARNING: layout \"{}\": {note}.", plant.layouts[l].name));
        }
        summaries.push(acc.finish(&spec, &pic));
    }
    progress.finish();
    // After the progress bar, so the warnings are not drawn over.
    for note in &capped {
        output::note!("{note}");
    }
    let wall_s = started.elapsed().as_secs_f64();
    if let Some(traces) = traces {
        let spec = RunSpec { layout: which[0], horizon_s, warmup_s, demand_factor: factor, seed };
        traces.write(&plant, &spec, &args.scenario)?;
    }
    let events = summaries.iter().map(|s| s.events).sum();

    let out = RunOutput {
        plant: &plant.name,
        currency: plant.currency.as_deref(),
        scenario: args.scenario.display().to_string(),
        horizon_s,
        warmup_s,
        warmup_auto,
        replications,
        seed,
        demand_factor: factor,
        confidence: CONFIDENCE,
        layouts: summaries,
        events,
        wall_s: (!settings.no_wall_clock).then_some(wall_s),
    };
    match args.format {
        Format::Json => {
            output::out(&(serde_json::to_string_pretty(&out).expect("summaries serialise") + "\n"))
        }
        Format::Table => output::out(&render(&plant, &out, wall_s)),
    }
}
