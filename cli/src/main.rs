//! The layflow command line: the command tree and dispatch; each command lives in `commands/`.
//!
//! `settings.rs` resolves what every command shares (scenario, layouts,
//! horizon, warm-up, replications, seed, threads, demand); `commands/` holds
//! one file per command; `render/` draws their output (tables, charts, the
//! plant, progress, one colour palette). Human tables go to stdout,
//! diagnostics and progress to stderr, both through `output.rs` (a write
//! error is a value, never a panic). Exit codes: 0 success, 2 bad input
//! (scenario or arguments), 1 the run itself failed or its output could not
//! be written, 141 stdout closed early (`| head`), 130 Ctrl-C.

mod commands;
mod failure;
mod output;
mod render;
mod report;
mod settings;
mod signals;
mod trace;

use std::process::ExitCode;

/// Freed memory stays with the process for the next replication instead of
/// going back to the system (the workspace Cargo.toml says why and what it saved).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

use clap::{Parser, Subcommand};

use commands::{check, compare, draw, experiment, fleet, generate, run, search};

/// Simulate work in process moving through a plant laid out by departments,
/// and compare layouts on throughput, WIP, flow time and handling cost.
#[derive(Parser, Debug)]
#[command(
    name = "layflow",
    version,
    about,
    long_about = None,
    after_help = "Examples:\n  layflow check scenarios/demo.yaml\n  layflow run scenarios/demo.yaml\n  \
                  layflow run scenarios/demo.yaml --layout proposed --replications 40 --format json\n  \
                  layflow compare scenarios/demo.yaml --demand 0.8,1.0,1.2\n  \
                  layflow compare scenarios/demo.yaml --select --indifference \"3 min\"\n  \
                  layflow fleet scenarios/demo.yaml --fleet forklifts --sizes 1..5 --target 'move_wait_p95_s <= 2 min'\n  \
                  layflow search scenarios/demo.yaml --out found.yaml --validate\n  \
                  layflow experiment scenarios/plans/overnight.yaml --out results\n  \
                  layflow draw scenarios/aisles-demo.yaml --layout proposed -o plant.svg\n  \
                  layflow report results -o report.html\n\n\
                  Exit codes: 0 success, 2 bad input (scenario or arguments), 1 the run failed or its output\n  \
                  could not be written, 130 stopped by Ctrl-C or SIGTERM, 141 stdout closed early (`| head`)."
)]
struct Cli {
    #[command(subcommand)]
    command: Command,
    /// Show every table column, however wide (default tables fit 100 characters).
    #[arg(long, global = true)]
    wide: bool,
    /// Show the statistical working: procedure constants, pilot-run details.
    #[arg(long, short = 'v', global = true)]
    verbose: bool,
}

#[derive(Subcommand, Debug)]
enum Command {
    /// Validate a scenario and print its static picture for every layout:
    /// from-to chart, load-distance, static handling cost, predicted utilisations.
    Check(check::CheckArgs),
    /// Simulate every layout (or those named) over replications and report
    /// means with 95% confidence intervals.
    Run(run::RunArgs),
    /// Compare layouts under common random numbers: paired differences against
    /// a baseline, static against simulated rank, demand sweeps, and selection
    /// of the best layout with a stated confidence (--select).
    Compare(compare::CompareArgs),
    /// Size one handling fleet: simulate every size with common random numbers,
    /// judge each against targets, and show the analytic estimate beside it.
    Fleet(fleet::FleetArgs),
    /// Search for layouts with a low load-distance cost (robust tabu search, simulated
    /// annealing, pairwise exchange), write them for `compare`, and check them by simulation.
    Search(search::SearchArgs),
    /// Run an experiment plan (layouts × demand × fleet sizes × any scenario field ×
    /// replications): durable, resumable, shardable for a cluster.
    Experiment(experiment::ExperimentArgs),
    /// Combine the output folders of an experiment's shards into exactly the result of one run.
    Merge(experiment::MergeArgs),
    /// Print an experiment's summary again from its output folder, without re-running.
    Summarize(experiment::SummarizeArgs),
    /// Draw one layout as an SVG picture: locations, departments, docks, the aisle
    /// network and flows between departments (width ∝ loads per hour).
    Draw(draw::DrawArgs),
    /// Write one self-contained HTML page from results folders: the answer,
    /// the plant side by side, charts, results over time, assumptions, and a
    /// replay of a day from a trace (--replay).
    Report(report::ReportArgs),
    /// Write a synthetic plant of real size (80 departments, 1,000 products by
    /// default) as a scenario file, for trials and benchmarks (docs/speed.md).
    #[command(hide = true)]
    Generate(generate::GenerateArgs),
}

/// The last guard: output goes through `output.rs`, which returns write
/// errors as values, so no write should reach here. Should one still panic
/// on a closed stdout or stderr (a dependency printing directly), leave as
/// a write error does: quietly with 141 for a closed pipe, else with one
/// line and exit 1. Any other panic is a bug and keeps its message.
fn last_guard_for_output() {
    let default = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        let text = info
            .payload()
            .downcast_ref::<String>()
            .map(String::as_str)
            .or_else(|| info.payload().downcast_ref::<&str>().copied())
            .unwrap_or("");
        if text.contains("Broken pipe") || text.contains("os error 32") {
            // 128 + SIGPIPE, what a shell reports for a process the pipe closed.
            std::process::exit(141);
        }
        if text.starts_with("failed printing to std") {
            output::note!(
                "error: could not write the output ({})",
                text.trim_start_matches("failed printing to ")
            );
            std::process::exit(1);
        }
        default(info);
    }));
}

fn main() -> ExitCode {
    last_guard_for_output();
    signals::install();
    let cli = Cli::parse();
    render::table::set_wide(cli.wide);
    render::table::set_verbose(cli.verbose);
    let result = match cli.command {
        Command::Check(a) => check::check(&a),
        Command::Run(a) => run::run(&a),
        Command::Compare(a) => compare::compare(&a),
        Command::Fleet(a) => fleet::fleet(&a),
        Command::Search(a) => search::search(&a),
        Command::Experiment(a) => experiment::experiment(&a),
        Command::Merge(a) => experiment::merge(&a),
        Command::Summarize(a) => experiment::summarize(&a),
        Command::Draw(a) => draw::draw(&a),
        Command::Report(a) => report::report(&a),
        Command::Generate(a) => generate::generate(&a),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(f) => {
            let msg = f.message().trim_end();
            if f.quiet {
                // A closed pipe: the reader has seen enough; nothing to report.
            } else if msg.starts_with("error") {
                output::note!("{msg}");
            } else {
                output::note!("error: {msg}");
            }
            ExitCode::from(f.code)
        }
    }
}
