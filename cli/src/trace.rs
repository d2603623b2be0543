//! `run --trace`: the flags, checked before anything runs, and the traced replications written afterwards.
//!
//! Every check that can fail on the user's input (the window, the
//! replications, the folder, the timeline file, a plant the tracer cannot
//! follow) is made here before the first replication, so a mistake costs a
//! second; the traced replications are then run again one by one (a
//! replication is fully determined by its seed and number, so its trace is
//! of exactly the run that was summarised).

use std::path::{Path, PathBuf};
use std::time::Instant;

use clap::Args;
use layflow_models::plant::Plant;
use layflow_models::results::folder::{check_new_file, sha256_hex, write_atomic};
use layflow_models::sim::trace::{untraceable, TraceOptions, TraceSink, TRACE_FILES};
use layflow_models::sim::{simulate_traced, Plan, RunSpec};
use layflow_models::units::{format_duration, parse_duration};
use serde::{Deserialize, Serialize};

use crate::failure::Failure;
use crate::output::note;

/// The trace flags of `layflow run`.
#[derive(Args, Debug, Clone, Default)]
pub struct TraceArgs {
    /// Write tidy CSV traces (lots, visits, moves, mover and machine states) of chosen
    /// replications into this folder (docs/traces.md).
    #[arg(long, value_name = "DIR")]
    pub trace: Option<PathBuf>,
    /// Replications to trace, numbered from 1 as `run` reports them (default: 1).
    #[arg(long, value_name = "N,..", value_delimiter = ',', requires = "trace")]
    pub trace_replications: Vec<u64>,
    /// The stretch of simulated time to trace, e.g. "2 d..3 d" (default: the observation
    /// window, from the end of the warm-up to the horizon).
    #[arg(long, value_name = "FROM..TO", requires = "trace")]
    pub trace_window: Option<String>,
    /// Draw the first traced replication's machines, movers and queues over (at most a
    /// day of) the trace window as an SVG timeline. Needs --trace.
    #[arg(long, value_name = "FILE.svg")]
    pub timeline: Option<PathBuf>,
    /// Replace the trace files already in the --trace folder, and an existing --timeline file.
    #[arg(long)]
    pub force: bool,
}

/// The name of a trace folder's manifest, written beside its five CSV files.
pub(crate) const TRACE_MANIFEST: &str = "trace.json";

/// `trace.json`: what a trace folder holds, so that a later reader (the
/// report's replay) can tell which scenario, layout and window it is of
/// without being told again (docs/traces.md, "The manifest").
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub(crate) struct TraceManifest {
    /// The layflow version that wrote the trace.
    pub layflow_version: String,
    /// The scenario file as given on the command line.
    pub scenario: String,
    /// SHA-256 of the scenario file's text, hex (as results folders name it).
    pub scenario_sha256: String,
    /// The plant's name.
    pub plant: String,
    /// The layout traced in this folder.
    pub layout: String,
    /// The replications traced, numbered from 1 as `run` reports them.
    pub replications: Vec<u64>,
    /// The traced window, simulated seconds [from, to].
    pub window_s: (f64, f64),
    /// The run's horizon, s.
    pub horizon_s: f64,
    /// The run's warm-up, s.
    pub warmup_s: f64,
    /// The run's base seed.
    pub seed: u64,
}

/// The checked trace request: folders opened, files created with their headers.
pub struct TracePlan {
    /// Replications to trace, 0-based.
    replications: Vec<u64>,
    /// The window as given (`None`: the observation window).
    window: Option<(f64, f64)>,
    /// Per traced layout: (layout index, its folder, its open files).
    sinks: Vec<(usize, PathBuf, TraceSink)>,
    timeline: Option<PathBuf>,
}

/// A layout's folder name: its name with anything but letters, digits, `.`, `-` and `_` made `_`.
pub(crate) fn folder_name(name: &str) -> String {
    let s: String = name
        .chars()
        .map(|c| if c.is_alphanumeric() || matches!(c, '.' | '-' | '_') { c } else { '_' })
        .collect();
    if s.is_empty() || s.chars().all(|c| c == '.') {
        "layout".to_string()
    } else {
        s
    }
}

/// Reads `--trace-window "FROM..TO"` in seconds (the report's `--replay-window` too).
/// `flag` names the option in messages.
pub(crate) fn parse_window(flag: &str, text: &str, horizon_s: f64) -> Result<(f64, f64), Failure> {
    let bad = |why: String| Failure::input(format!("{flag} {text:?}: {why}"));
    let (a, b) = text
        .split_once("..")
        .ok_or_else(|| bad("write it as FROM..TO with units, e.g. \"2 d..3 d\" or \"36 h..48 h\"".into()))?;
    let from = parse_duration(a.trim()).map_err(|e| bad(format!("FROM: {e}")))?;
    let to = parse_duration(b.trim()).map_err(|e| bad(format!("TO: {e}")))?;
    if from < 0.0 || to <= from {
        return Err(bad("TO must come after FROM, and FROM must not be negative".into()));
    }
    if to > horizon_s {
        return Err(bad(format!(
            "the run ends at {} (the horizon); choose a window inside it, or a longer --horizon",
            format_duration(horizon_s)
        )));
    }
    Ok((from, to))
}

impl TraceArgs {
    /// Check every trace flag and open the trace files, before anything runs.
    /// `None` without `--trace`.
    pub fn prepare(
        &self,
        plant: &Plant,
        layouts: &[usize],
        replications: u32,
        horizon_s: f64,
    ) -> Result<Option<TracePlan>, Failure> {
        let Some(dir) = &self.trace else {
            if self.timeline.is_some() {
                return Err(Failure::input(
                    "--timeline draws a traced replication: add --trace DIR (the folder for its CSV files)",
                ));
            }
            return Ok(None);
        };
        let reps = if self.trace_replications.is_empty() { vec![1] } else { self.trace_replications.clone() };
        for &r in &reps {
            if r == 0 || r > u64::from(replications) {
                return Err(Failure::input(format!(
                    "--trace-replications {r}: replications are numbered 1 to {replications} (--replications); \
                     choose among them, or raise --replications"
                )));
            }
        }
        let mut reps: Vec<u64> = reps.iter().map(|r| r - 1).collect();
        reps.sort_unstable();
        reps.dedup();
        let window =
            self.trace_window.as_deref().map(|w| parse_window("--trace-window", w, horizon_s)).transpose()?;
        for &l in layouts {
            if let Some(why) = untraceable(&Plan::new(plant, l)) {
                return Err(Failure::input(format!(
                    "--trace: layout \"{}\" cannot be traced yet: {why}; traces follow plants without these \
                     features for now (docs/traces.md)",
                    plant.layouts[l].name
                )));
            }
        }
        if let Some(file) = &self.timeline {
            check_new_file(file, "--timeline", self.force)?;
            if file.extension().and_then(|e| e.to_str()) != Some("svg") {
                return Err(Failure::input(format!(
                    "--timeline {}: the timeline is an SVG picture; name the file …\u{2009}.svg",
                    file.display()
                )));
            }
        }
        let folders: Vec<(usize, PathBuf)> = if layouts.len() == 1 {
            vec![(layouts[0], dir.clone())]
        } else {
            layouts.iter().map(|&l| (l, dir.join(folder_name(&plant.layouts[l].name)))).collect()
        };
        self.check_folder(dir)?;
        let mut sinks = Vec::with_capacity(folders.len());
        for (l, folder) in folders {
            self.check_folder(&folder)?;
            std::fs::create_dir_all(&folder).map_err(|e| {
                Failure::input(format!("--trace {}: cannot create the folder: {e}", folder.display()))
            })?;
            let sink = TraceSink::create(&folder).map_err(|e| {
                Failure::input(format!("--trace {}: {e}; choose a folder you can write to", dir.display()))
            })?;
            sinks.push((l, folder, sink));
        }
        Ok(Some(TracePlan { replications: reps, window, sinks, timeline: self.timeline.clone() }))
    }

    /// Refuse a folder that holds anything, unless `--force` and what it
    /// holds is trace files (or layout folders of them): `--force` deletes
    /// those files only, as `--force` does for results folders.
    fn check_folder(&self, folder: &Path) -> Result<(), Failure> {
        if folder.exists() && !folder.is_dir() {
            return Err(Failure::input(format!("--trace {}: a file, not a folder", folder.display())));
        }
        let Ok(entries) = std::fs::read_dir(folder) else {
            return Ok(()); // missing: created later (which reports what goes wrong)
        };
        let names: Vec<String> =
            entries.filter_map(Result::ok).map(|e| e.file_name().to_string_lossy().into_owned()).collect();
        if names.is_empty() {
            return Ok(());
        }
        if !self.force {
            return Err(Failure::input(format!(
                "--trace {}: the folder is not empty; choose a new or empty folder, or add --force to replace \
                 the trace files in it (it deletes only {} and {TRACE_MANIFEST})",
                folder.display(),
                TRACE_FILES.join(", ")
            )));
        }
        for f in TRACE_FILES.iter().chain([&TRACE_MANIFEST]) {
            let path = folder.join(f);
            if path.is_file() {
                std::fs::remove_file(&path)
                    .map_err(|e| Failure::input(format!("--force: cannot delete {}: {e}", path.display())))?;
            }
        }
        Ok(())
    }
}

impl TracePlan {
    /// Run the traced replications of every traced layout, write each
    /// folder's `trace.json`, then draw the timeline. `scenario` is the
    /// scenario file as given (its text is hashed into the manifest).
    pub fn write(mut self, plant: &Plant, spec: &RunSpec, scenario: &Path) -> Result<(), Failure> {
        let window = self.window.unwrap_or((spec.warmup_s, spec.horizon_s));
        let text = std::fs::read(scenario).map_err(|e| {
            Failure::input(format!("{}: cannot read the scenario again: {e}", scenario.display()))
        })?;
        let scenario_sha256 = sha256_hex(&text);
        let started = Instant::now();
        for (l, folder, sink) in &mut self.sinks {
            let spec = RunSpec { layout: *l, ..*spec };
            let plan = Plan::new(plant, *l);
            let opts = TraceOptions::new(plant, window);
            for &r in &self.replications {
                simulate_traced(&plan, &spec, r, sink, &opts).map_err(|e| Failure::run(e.to_string()))?;
            }
            sink.flush().map_err(|e| Failure::run(e.to_string()))?;
            let manifest = TraceManifest {
                layflow_version: env!("CARGO_PKG_VERSION").to_string(),
                scenario: scenario.display().to_string(),
                scenario_sha256: scenario_sha256.clone(),
                plant: plant.name.clone(),
                layout: plant.layouts[*l].name.clone(),
                replications: self.replications.iter().map(|r| r + 1).collect(),
                window_s: window,
                horizon_s: spec.horizon_s,
                warmup_s: spec.warmup_s,
                seed: spec.seed,
            };
            let json = serde_json::to_string_pretty(&manifest).expect("a trace manifest serialises") + "\n";
            write_atomic(folder, TRACE_MANIFEST, json.as_bytes())?;
            note!(
                "trace: layout \"{}\", replication{} {}, {} to {}: {}",
                plant.layouts[*l].name,
                if self.replications.len() == 1 { "" } else { "s" },
                self.replications.iter().map(|r| (r + 1).to_string()).collect::<Vec<_>>().join(", "),
                format_duration(window.0),
                format_duration(window.1),
                folder.display()
            );
        }
        note!("trace: written in {:.2} s", started.elapsed().as_secs_f64());
        if let Some(file) = &self.timeline {
            let (l, folder, _) = &self.sinks[0];
            let mut shown = window;
            if shown.1 - shown.0 > 86_400.0 {
                shown.1 = shown.0 + 86_400.0;
                note!(
                    "--timeline: the trace window is longer than a day; drawing its first day ({} to {})",
                    format_duration(shown.0),
                    format_duration(shown.1)
                );
            }
            let title = format!(
                "{} \u{2014} layout {}, replication {}",
                plant.name,
                plant.layouts[*l].name,
                self.replications[0] + 1
            );
            let svg = crate::render::timeline::draw(folder, self.replications[0] + 1, shown, &title)
                .map_err(Failure::run)?;
            std::fs::write(file, svg)
                .map_err(|e| Failure::run(format!("--timeline {}: cannot write: {e}", file.display())))?;
            note!("timeline: {}", file.display());
        }
        Ok(())
    }
}
