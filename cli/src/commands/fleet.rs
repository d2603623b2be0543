//! `layflow fleet`: size one handling fleet by simulating every size with common random numbers.

use std::path::PathBuf;
use std::time::Instant;

use clap::{Args, ValueEnum};
use layflow_models::analysis::StaticPicture;
use layflow_models::metrics::{every_metric, CONFIDENCE};
use layflow_models::results;
use layflow_models::sim::RunSpec;
use layflow_models::study::fleet::{self as study, Sweep};
use layflow_models::study::targets::{self, Target};

use crate::failure::Failure;
use crate::output::{self, note, out};
use crate::render::fleet::{render, render_analytic, FleetOutput};
use crate::render::progress::Progress;
use crate::render::warnings::warn_overload;
use crate::report::ReportFlags;
use crate::settings::{demand_factor, layout, SimOptions};

/// Arguments of `layflow fleet`.
#[derive(Args, Debug)]
pub struct FleetArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// The fleet to size; may be left out when the scenario has one fleet.
    #[arg(long, value_name = "NAME")]
    pub fleet: Option<String>,
    /// Fleet sizes to simulate: a range such as 2..8 (both ends included) or a list such as 2,3,5.
    #[arg(long, value_name = "A..B|A,B,...")]
    pub sizes: String,
    /// Layout to run (default: the first in the scenario).
    #[arg(long, value_name = "NAME")]
    pub layout: Option<String>,
    /// A target every acceptable size must meet with 95% confidence, e.g. 'move_wait_p95_s <= 5 min'
    /// or 'utilization <= 85%' (repeat for several). Any metric name of `compare --metric`; a name
    /// without SUBJECT/ means the sized fleet's where it has one (utilization, move_wait_s,
    /// move_wait_p95_s, empty_travel_share, handling_cost_per_h, handling_cost_per_load, …),
    /// else the plant's (throughput_per_h, wip_mean, flow_time_s, flow_time_p95_s, …).
    #[arg(long, value_name = "'METRIC OP VALUE'")]
    pub target: Vec<String>,
    /// Scale every product's demand by this factor (overrides demand_factor).
    #[arg(long, value_name = "FACTOR", value_parser = crate::settings::parse_demand)]
    pub demand: Option<f64>,
    /// Share of a mover's available time spent moving, for the analytic estimate only
    /// (default: the fleet's operators.efficiency, else 1).
    #[arg(long, value_name = "E", value_parser = crate::settings::parse_share)]
    pub efficiency: Option<f64>,
    /// Draw wait (log scale), utilisation, cost per hour (when priced) and every target's metric
    /// against fleet size, with the target lines and the recommended size, into this SVG file.
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// Also write summary.json and summary.csv (one row per size × metric) into this
    /// directory (created if missing), for `layflow report` and for pandas, R or a spreadsheet.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    /// Replace the --plot and --report files, and the results an --out folder holds (only a
    /// study's files), if they exist (without it, existing results are refused, never overwritten).
    #[arg(long)]
    pub force: bool,
    #[command(flatten)]
    pub report: ReportFlags,
    /// Output format.
    #[arg(long, value_enum, default_value_t = FleetFormat::Table)]
    pub format: FleetFormat,
    #[command(flatten)]
    pub sim: SimOptions,
}

/// Output formats of `fleet`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum FleetFormat {
    /// Aligned tables for people.
    Table,
    /// JSON for programs.
    Json,
}

/// Run the sweep and report it.
pub fn fleet(args: &FleetArgs) -> Result<(), Failure> {
    let plant = args.sim.load(&args.scenario)?;
    crate::settings::note_measured_not_simulated(&args.scenario);
    let f = study::which_fleet(&plant, args.fleet.as_deref())?;
    let sizes = study::parse_sizes(&args.sizes)?;
    let list = every_metric(&plant);
    let fleet_id = plant.fleets()[f].id.clone();
    let mut targets: Vec<Target> = Vec::with_capacity(args.target.len());
    for text in &args.target {
        let (t, note) = targets::parse(text, &list, Some(&fleet_id))?;
        if let (Some(n), false) = (note, args.sim.quiet) {
            note!("{n}");
        }
        targets.push(t);
    }
    let layout = match &args.layout {
        None => 0,
        Some(n) => layout(&plant, n)?,
    };
    let settings = args.sim.resolve(&plant)?;
    let factor = demand_factor(&plant, args.demand)?;
    let efficiency = args.efficiency.unwrap_or_else(|| study::fleet_efficiency(&plant, f));
    if !(efficiency > 0.0 && efficiency <= 1.0) {
        return Err(Failure::input(format!(
            "--efficiency {efficiency}: must be above 0 and at most 1, e.g. 0.85"
        )));
    }
    if efficiency < layflow_models::limits::MIN_EFFICIENCY {
        return Err(Failure::input(format!(
            "--efficiency {efficiency}: below the floor of {}: {}",
            layflow_models::limits::MIN_EFFICIENCY,
            layflow_models::limits::MIN_EFFICIENCY_WHY
        )));
    }
    if let Some(p) = &args.plot {
        if p.extension().is_none_or(|e| e != "svg") {
            return Err(Failure::input(format!(
                "--plot {}: the picture is SVG; name a .svg file",
                p.display()
            )));
        }
        layflow_models::results::folder::check_new_file(p, "--plot", args.force)?;
    }
    if let Some(dir) = &args.out {
        let mode = if args.force { results::Mode::Force } else { results::Mode::Fresh };
        let held = results::prepare(dir, results::Kind::Fleet, mode)?;
        if args.force && !held.is_empty() && !args.sim.quiet {
            note!("--force: deleted {} from {}", held.names(), dir.display());
        }
    }
    let report = args.report.prepare(&plant, &args.scenario, args.force)?;
    let pic = StaticPicture::new(&plant, factor);
    warn_overload(&plant, &pic);
    let analytic = study::analytic(&plant, &pic, layout, f, efficiency)?;
    if args.format == FleetFormat::Table {
        // Before the simulation: the planner's number, at once.
        out(&format!("{}\n{}", plant.name, render_analytic(&fleet_id, &analytic)))?;
    }

    let top = study::sized(&plant, f, *sizes.first().expect("at least one size"));
    let (warmup_s, warmup_auto) = args.sim.warmup(&settings, &top, &[layout], factor)?;
    let grid = args.sim.grid(&top, warmup_s, settings.horizon_s)?;
    let started = Instant::now();
    let progress = Progress::new(sizes.len() as u64 * u64::from(settings.replications), settings.quiet);
    let spec = RunSpec {
        layout,
        horizon_s: settings.horizon_s,
        warmup_s,
        demand_factor: factor,
        seed: settings.seed,
    };
    let sweep = Sweep {
        plant: &plant,
        fleet: f,
        sizes: &sizes,
        targets: &targets,
        spec,
        replications: settings.replications,
        analytic: &analytic,
        buckets: grid.as_ref(),
    };
    let result = settings.pool.install(|| study::sweep(&sweep, &progress));
    progress.finish();
    let study::SweepResult { sizes: results, advice, events, by_bucket } = result?;
    let sized: Vec<u32> = results.iter().map(|r| r.movers).collect();
    let by_bucket = study::FleetBuckets::new(&fleet_id, &sized, by_bucket);
    let wall_s = started.elapsed().as_secs_f64();
    let smallest = results.iter().find(|r| r.meets_every_target).map(|r| r.movers);
    let out = FleetOutput {
        plant: plant.name.clone(),
        currency: plant.currency.clone(),
        scenario: args.scenario.display().to_string(),
        fleet: fleet_id,
        layout: plant.layouts[layout].name.clone(),
        horizon_s: settings.horizon_s,
        warmup_s,
        warmup_auto,
        replications: settings.replications,
        seed: settings.seed,
        demand_factor: factor,
        confidence: CONFIDENCE,
        analytic,
        targets,
        sizes: results,
        smallest_meeting_targets: smallest,
        advice,
        events,
        wall_s: (!settings.no_wall_clock).then_some(wall_s),
        by_bucket,
    };
    if let Some(path) = &args.plot {
        let svg = crate::render::plot::fleet_svg(
            &out.fleet,
            &out.sizes,
            &out.targets,
            out.smallest_meeting_targets,
            plant.currency.as_deref(),
        )?;
        let dir = path.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(std::path::Path::new("."));
        let name = path
            .file_name()
            .and_then(|n| n.to_str())
            .ok_or_else(|| Failure::input("--plot: bad file name"))?;
        layflow_models::results::write_atomic(dir, name, svg.as_bytes())?;
    }
    let json = serde_json::to_string_pretty(&out).expect("results serialise") + "\n";
    if args.out.is_some() || report.is_some() {
        let csv = results::fleet::summary_csv(&out.fleet, &out.sizes, out.by_bucket.as_ref())?;
        if let Some(dir) = &args.out {
            let scenario = std::fs::read(&args.scenario).ok().map(|t| results::folder::sha256_hex(&t));
            results::fleet::write(dir, &json, &csv, scenario)?;
        }
        if let Some(r) = &report {
            r.write(results::Kind::Fleet, &plant, &args.scenario, (&json, &csv), args.out.as_deref())?;
        }
    }
    match args.format {
        FleetFormat::Json => output::out(&json)?,
        FleetFormat::Table => output::out(&render(&out, wall_s))?,
    }
    if let (Some(dir), false) = (&args.out, settings.quiet) {
        note!("wrote summary.json and summary.csv to {}", dir.display());
    }
    if let (Some(p), false) = (&args.plot, settings.quiet) {
        note!("wrote {}", p.display());
    }
    Ok(())
}
