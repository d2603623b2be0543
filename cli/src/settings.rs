//! What every command resolves before it runs: scenario, layouts, horizon, warm-up, replications, seed, threads, demand.
//!
//! Raw flags become checked values here, once, over the scenario's `run:`
//! settings, so every command reads the same numbers the same way.

use std::path::Path;

use clap::{Args, ValueEnum};
use layflow_models::limits;
use layflow_models::plant::Plant;
use layflow_models::study::warmup::{choose, WarmupChoice, PILOT_REPLICATIONS};
use layflow_models::suggest::did_you_mean;
use layflow_models::text::num;
use layflow_models::timebuckets::{By, Grid};
use layflow_models::units::{format_duration, parse_duration};

use crate::failure::Failure;
use crate::output::note;

/// Output format shared by the commands.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Format {
    /// Aligned tables for people.
    Table,
    /// JSON for programs.
    Json,
}

/// Run settings shared by the commands that simulate; each overrides the scenario's `run:` value.
#[derive(Args, Debug, Clone)]
pub struct SimOptions {
    /// Replications (overrides run.replications).
    #[arg(long, value_name = "N")]
    pub replications: Option<u32>,
    /// Base seed of every random stream (overrides run.seed).
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    /// Simulated time per replication, warm-up included, e.g. "30 d" (overrides run.horizon).
    #[arg(long, value_name = "DURATION")]
    pub horizon: Option<String>,
    /// Statistics are cleared at this time, e.g. "2 d", or "auto" to choose it with MSER-5
    /// from pilot runs (overrides run.warmup).
    #[arg(long, value_name = "DURATION|auto")]
    pub warmup: Option<String>,
    /// Worker threads for replications (default: every core). Results do not depend on it.
    #[arg(long, value_name = "K")]
    pub threads: Option<usize>,
    /// No progress bar.
    #[arg(long, short)]
    pub quiet: bool,
    /// Leave the wall-clock time out of the JSON, so that the same seed gives byte-identical output.
    #[arg(long)]
    pub no_wall_clock: bool,
    /// Run an overloaded plant anyway: a replication whose WIP reaches the overload limit turns
    /// arriving lots away (counted and reported) instead of stopping the run (docs/overload.md).
    #[arg(long)]
    pub allow_overload: bool,
    /// Also report every metric per time bucket: hour-of-day, shift, shift=ID (a department or
    /// fleet with a calendar), day-of-week, day, or period=DURATION, e.g. "period=8 h"
    /// (docs/results-over-time.md).
    #[arg(long, value_name = "BUCKETS", value_parser = By::parse)]
    pub by: Option<By>,
}

/// Load a scenario, turning its error into a bad-input failure.
pub fn load(path: &Path) -> Result<Plant, Failure> {
    layflow_models::load_scenario(path).map_err(|e| Failure::input(e.to_string()))
}

/// For the simulating commands: a scenario's `measured_from_to` is not what they
/// simulate, as `check --from-to` says of the flag.
pub fn note_measured_not_simulated(path: &Path) {
    if let Some(m) = layflow_models::measured_source(path) {
        crate::output::note!(
            "note: the scenario's measured_from_to ({}) sets check's and search's load-distance only; this \
             command simulates the routings",
            m.path.display()
        );
    }
}

/// What `--allow-overload` does to the numbers, said loudly on stderr.
pub const OVERLOAD_WARNING: &str = "WARNING: --allow-overload: a replication whose WIP reaches the overload limit \
     turns arriving lots away at the dock instead of stopping; they are counted as turned-away lots, and numbers \
     from a capped run describe a plant that turns work away (docs/overload.md).";

/// Apply `--allow-overload` to a plant about to be simulated, with the warning when set.
pub fn allow_overload(plant: &mut Plant, allow: bool) {
    plant.run.allow_overload = allow;
    if allow {
        note!("{OVERLOAD_WARNING}");
    }
}

/// A duration flag's value in seconds (never negative), or `default` when absent.
pub fn duration_arg(flag: &str, v: &Option<String>, default: f64) -> Result<f64, Failure> {
    match v {
        None => Ok(default),
        Some(text) => {
            parse_duration(text).map_err(|e| Failure::input(format!("{flag} {text:?}: {e}"))).and_then(|s| {
                if s >= 0.0 {
                    Ok(s)
                } else {
                    Err(Failure::input(format!("{flag} {text:?}: must not be negative")))
                }
            })
        }
    }
}

/// Resolve layout names (default: all), with a did-you-mean on a miss.
pub fn layouts(plant: &Plant, names: &[String]) -> Result<Vec<usize>, Failure> {
    if names.is_empty() {
        return Ok((0..plant.layouts.len()).collect());
    }
    names.iter().map(|n| layout(plant, n)).collect()
}

/// One layout by name, with a did-you-mean on a miss.
pub fn layout(plant: &Plant, name: &str) -> Result<usize, Failure> {
    plant.layout_index(name).ok_or_else(|| {
        let known = || plant.layouts.iter().map(|l| l.name.as_str());
        Failure::input(format!(
            "--layout {name:?}: no such layout{}; the scenario has: {}",
            did_you_mean(name, known()),
            known().collect::<Vec<_>>().join(", ")
        ))
    })
}

/// Reads a `--demand` value: a number (`1.2`) or a percentage (`120%`).
pub fn parse_demand(text: &str) -> Result<f64, String> {
    let f = layflow_models::scenario::parse_factor(text).map_err(|_| {
        format!("\"{text}\" is not a demand factor; write a number or a percentage, e.g. 1.2 or 120%")
    })?;
    limits::check_at_most("the demand factor", f, limits::MAX_FACTOR, limits::RATE_WHY)?;
    Ok(f)
}

/// Reads a share such as `--efficiency`: a number (`0.85`) or a percentage (`85%`).
pub fn parse_share(text: &str) -> Result<f64, String> {
    layflow_models::scenario::parse_factor(text)
        .map_err(|_| format!("\"{text}\" is not a share; write a number or a percentage, e.g. 0.85 or 85%"))
}

/// The demand factor to use: the command line's, else the scenario's.
pub fn demand_factor(plant: &Plant, arg: Option<f64>) -> Result<f64, Failure> {
    match arg {
        None => Ok(plant.demand_factor),
        Some(f) if f > 0.0 && f.is_finite() => Ok(f),
        Some(f) => Err(Failure::input(format!(
            "--demand {f}: the demand factor must be a positive number, e.g. 1.2"
        ))),
    }
}

/// Checks a number of replications given as `flag` against the ceiling.
pub fn replications_ceiling(flag: &str, n: u64) -> Result<(), Failure> {
    limits::check_count("replications", n, u64::from(limits::MAX_REPLICATIONS), limits::MAX_REPLICATIONS_WHY)
        .map_err(|m| Failure::input(format!("{flag} {n}: {m}")))
}

/// A pool of `--threads` workers (default: every core) for the replications.
pub fn pool(arg: Option<usize>) -> Result<rayon::ThreadPool, Failure> {
    let threads = match arg {
        Some(0) => return Err(Failure::input("--threads must be at least 1")),
        Some(k) if k > limits::MAX_THREADS => {
            return Err(Failure::input(format!(
                "--threads {k}: more than the ceiling of {} worker threads; results do not depend on it, \
                 and more threads than cores only wait",
                limits::MAX_THREADS
            )))
        }
        Some(k) => k,
        None => std::thread::available_parallelism().map_or(1, usize::from),
    };
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .map_err(|e| Failure::run(format!("cannot start {threads} worker threads: {e}")))
}

/// The run settings of a simulating command, checked.
pub struct Settings {
    /// Simulated time per replication, warm-up included, s.
    pub horizon_s: f64,
    /// Replications (at least 1).
    pub replications: u32,
    /// Base seed.
    pub seed: u64,
    /// The worker pool.
    pub pool: rayon::ThreadPool,
    /// No progress output.
    pub quiet: bool,
    /// Keep the wall-clock time out of JSON.
    pub no_wall_clock: bool,
}

impl SimOptions {
    /// Load the scenario to simulate, with `--allow-overload` applied.
    pub fn load(&self, path: &Path) -> Result<Plant, Failure> {
        let mut plant = load(path)?;
        allow_overload(&mut plant, self.allow_overload);
        Ok(plant)
    }

    /// `--horizon`, `--replications`, `--seed` and `--threads`, checked, over the scenario's values.
    pub fn resolve(&self, plant: &Plant) -> Result<Settings, Failure> {
        let horizon_s = duration_arg("--horizon", &self.horizon, plant.run.horizon_s)?;
        let replications = self.replications.unwrap_or(plant.run.replications);
        if replications == 0 {
            return Err(Failure::input("--replications must be at least 1"));
        }
        replications_ceiling("--replications", u64::from(replications))?;
        // Bad buckets (a shift with no calendar, a period longer than the
        // run) fail here, before any pilot run; `grid` checks again against
        // the window once the warm-up is known.
        if let Some(by) = &self.by {
            let warmup_s = match self.warmup.as_deref().map(str::trim) {
                Some("auto") => 0.0,
                _ => duration_arg("--warmup", &self.warmup, plant.run.warmup_s)?,
            };
            if warmup_s < horizon_s {
                Grid::new(by, plant, warmup_s, horizon_s).map_err(Failure::input)?;
            }
        }
        Ok(Settings {
            horizon_s,
            replications,
            seed: self.seed.unwrap_or(plant.run.seed),
            pool: pool(self.threads)?,
            quiet: self.quiet,
            no_wall_clock: self.no_wall_clock,
        })
    }

    /// The time buckets of `--by` for the window [`warmup_s`, `horizon_s`], if asked for.
    pub fn grid(&self, plant: &Plant, warmup_s: f64, horizon_s: f64) -> Result<Option<Grid>, Failure> {
        self.by
            .as_ref()
            .map(|by| Grid::new(by, plant, warmup_s, horizon_s).map_err(Failure::input))
            .transpose()
    }

    /// Checks that one replication of the resolved horizon at `demand_factor`
    /// draws no more lots than the ceiling (the scenario's own values were
    /// checked when it loaded; the command line may raise either).
    pub fn check_lots(&self, s: &Settings, plant: &Plant, demand_factor: f64) -> Result<(), Failure> {
        let lots = plant.lots_bound(s.horizon_s, demand_factor);
        limits::check_lots(lots, &format_duration(s.horizon_s), demand_factor)
            .map_err(|m| Failure::input(format!("--horizon and --demand: {m}")))
    }

    /// The warm-up in seconds from `--warmup` (a duration, or `auto`), else the
    /// scenario's; with `auto`, also what MSER-5 chose from pilots of `layouts`
    /// at `demand_factor`. Checked to be shorter than the horizon.
    pub fn warmup(
        &self,
        s: &Settings,
        plant: &Plant,
        layouts: &[usize],
        demand_factor: f64,
    ) -> Result<(f64, Option<WarmupChoice>), Failure> {
        self.check_lots(s, plant, demand_factor)?;
        let (warmup_s, choice) = if self.warmup.as_deref().map(str::trim) != Some("auto") {
            (duration_arg("--warmup", &self.warmup, plant.run.warmup_s)?, None)
        } else {
            if !s.quiet {
                note!(
                    "choosing the warm-up: MSER-5 on {PILOT_REPLICATIONS} pilot replications per layout at demand ×{}",
                    num(demand_factor)
                );
            }
            let choice = s
                .pool
                .install(|| choose(plant, layouts, s.horizon_s, demand_factor, s.seed))
                .ok_or_else(|| Failure::input("--warmup auto: the horizon is too short for MSER-5"))?;
            if let Some(w) = choice.warning() {
                note!("{w}");
            }
            (choice.warmup_s, Some(choice))
        };
        if !(s.horizon_s > warmup_s) {
            return Err(Failure::input(format!(
                "the horizon ({}) must be longer than the warm-up ({})",
                format_duration(s.horizon_s),
                format_duration(warmup_s)
            )));
        }
        Ok((warmup_s, choice))
    }
}

#[cfg(test)]
mod tests {
    use clap::Parser;

    use super::parse_demand;
    use crate::{Cli, Command};

    #[test]
    fn demand_takes_a_number_or_a_percentage() {
        assert_eq!(parse_demand("1.2"), Ok(1.2));
        assert_eq!(parse_demand("120%"), Ok(1.2));
        assert_eq!(parse_demand("80 %"), Ok(0.8));
        let e = parse_demand("12x").unwrap_err();
        assert_eq!(e, "\"12x\" is not a demand factor; write a number or a percentage, e.g. 1.2 or 120%");
    }

    /// The flag as a user types it, through clap, on every command that takes it.
    #[test]
    fn every_command_reads_a_percentage() {
        let parse = |args: &[&str]| Cli::try_parse_from(["layflow"].iter().chain(args)).map(|c| c.command);
        match parse(&["compare", "s.yaml", "--demand", "0.8,120%"]).unwrap() {
            Command::Compare(a) => assert_eq!(a.demand, [0.8, 1.2]),
            other => panic!("{other:?}"),
        }
        for cmd in
            [&["run"][..], &["fleet", "--sizes", "1,2"], &["search"], &["draw", "--out", "p.svg"], &["check"]]
        {
            let args: Vec<&str> = cmd.iter().copied().chain(["s.yaml", "--demand", "120%"]).collect();
            let demand = match parse(&args).unwrap() {
                Command::Run(a) => a.demand,
                Command::Fleet(a) => a.demand,
                Command::Search(a) => a.demand,
                Command::Draw(a) => a.demand,
                Command::Check(a) => a.demand,
                other => panic!("{other:?}"),
            };
            assert_eq!(demand, Some(1.2), "{cmd:?}");
        }
        match parse(&["fleet", "s.yaml", "--sizes", "1,2", "--efficiency", "85%"]).unwrap() {
            Command::Fleet(a) => assert_eq!(a.efficiency, Some(0.85)),
            other => panic!("{other:?}"),
        }
        let e = parse(&["run", "s.yaml", "--demand", "lots"]).unwrap_err().to_string();
        assert!(e.contains("write a number or a percentage"), "{e}");
        assert!(!e.contains("float"), "{e}");
    }
}
