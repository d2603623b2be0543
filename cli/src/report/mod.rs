//! `layflow report` and every command's `--report`: one self-contained HTML page from a study's results files.
//!
//! The page is a function of the results files alone (summary.json,
//! summary.csv, and a trace for the replay): `--report` on a command makes
//! those files in memory and goes through the same code as `layflow report`
//! on the folder they were written to, so both give the same page.

pub mod charts;
pub mod html;
pub mod page;
pub mod plant;
pub mod replay;
pub mod study;

use std::path::{Path, PathBuf};

use clap::Args;
use layflow_models::plant::Plant;
use layflow_models::results::folder::{check_new_file, sha256_hex, write_atomic, Kind};

use crate::failure::Failure;
use crate::output::note;

use self::replay::{Replay, ReplayRequest};
use self::study::Study;

/// Arguments of `layflow report`.
#[derive(Args, Debug)]
#[command(after_help = "Examples:\n  layflow compare scenarios/demo.yaml --out results\n  \
                  layflow report results -o report.html\n  \
                  layflow run scenarios/demo.yaml --layout proposed --trace trace\n  \
                  layflow report results --replay trace -o report.html --force\n\n\
                  The page needs no network and no server: open it in any browser, or send it by email.\n\
                  What it shows and how to read it: docs/report.md.")]
pub struct ReportArgs {
    /// Results folders (`compare --out`, `fleet --out`, `experiment --out`), all of one scenario.
    #[arg(required = true, value_name = "RESULTS_DIR")]
    pub dirs: Vec<PathBuf>,
    /// The HTML file to write.
    #[arg(short = 'o', long = "out", value_name = "FILE.html")]
    pub out: PathBuf,
    /// The scenario the results were made from (default: the path summary.json records).
    #[arg(long, value_name = "FILE")]
    pub scenario: Option<PathBuf>,
    #[command(flatten)]
    pub replay: ReplayFlags,
    /// Replace the -o file if it exists (without it, an existing file is refused, never overwritten).
    #[arg(long)]
    pub force: bool,
}

/// The replay flags, the same on `report` and on every command's `--report`.
#[derive(Args, Debug, Clone, Default)]
pub struct ReplayFlags {
    /// Add a replay of a day to the page, from a `layflow run --trace` folder
    /// of the same scenario.
    #[arg(long, value_name = "TRACE_DIR")]
    pub replay: Option<PathBuf>,
    /// The stretch to replay, "FROM..TO" with units (e.g. "2 d..3 d"), inside
    /// the traced window (default: the busiest day of the first traced replication).
    #[arg(long, value_name = "FROM..TO", requires = "replay")]
    pub replay_window: Option<String>,
    /// Which layout's trace to replay, when the trace folder holds several.
    #[arg(long, value_name = "NAME", requires = "replay")]
    pub replay_layout: Option<String>,
}

/// `--report` on `compare`, `fleet`, `search --validate` and `experiment`.
#[derive(Args, Debug, Clone, Default)]
pub struct ReportFlags {
    /// Also write the results as one self-contained HTML page (what `layflow
    /// report` makes from the results folder; see docs/report.md).
    #[arg(long, value_name = "FILE.html")]
    pub report: Option<PathBuf>,
    #[command(flatten)]
    pub replay: ReplayFlags,
}

impl ReportFlags {
    /// Check the flags before anything runs: the page's path, and the replay
    /// (built now, so a bad trace fails in a second, not after the study).
    pub fn prepare(&self, plant: &Plant, scenario: &Path, force: bool) -> Result<Option<Prepared>, Failure> {
        let Some(out) = &self.report else {
            if self.replay.replay.is_some() {
                return Err(Failure::input(
                    "--replay adds a replay to the HTML page: it needs --report FILE.html".to_string(),
                ));
            }
            return Ok(None);
        };
        check_out(out, "--report", force)?;
        let sha = scenario_sha(scenario)?;
        let replay = build_replay(plant, &sha, &self.replay)?;
        Ok(Some(Prepared { out: out.clone(), replay, sha }))
    }
}

/// A `--report` checked before the study, finished after it by [`Prepared::write`].
pub struct Prepared {
    out: PathBuf,
    replay: Option<Replay>,
    sha: String,
}

impl Prepared {
    /// Write the page of the study just run: `json` and `csv` are the
    /// summary.json and summary.csv it writes (or would write) to a folder.
    /// `folder` is the `--out` folder the files also went to, if any (the page names it as its source).
    pub fn write(
        &self,
        kind: Kind,
        plant: &Plant,
        scenario: &Path,
        (json, csv): (&str, &[u8]),
        folder: Option<&Path>,
    ) -> Result<(), Failure> {
        let mut study = Study::in_memory(kind, json, csv, scenario)?;
        if let Some(f) = folder {
            study.source = f.display().to_string();
        }
        self.finish(plant, scenario, study)
    }

    /// Write the page of a study whose results folder `dir` is complete (an experiment's).
    pub fn write_from_folder(&self, plant: &Plant, scenario: &Path, dir: &Path) -> Result<(), Failure> {
        let study = Study::read(dir)?;
        self.finish(plant, scenario, study)
    }

    fn finish(&self, plant: &Plant, scenario: &Path, study: Study) -> Result<(), Failure> {
        let html = page::page(&page::Inputs {
            plant,
            scenario: scenario.display().to_string(),
            scenario_sha256: self.sha.clone(),
            studies: std::slice::from_ref(&study),
            replay: self.replay.as_ref(),
        });
        write_page(&self.out, &html)
    }
}

/// Refuse a page path that cannot be written: an existing file without
/// `--force`, a folder, a missing or unwritable folder, a name not ending in .html.
pub fn check_out(out: &Path, flag: &str, force: bool) -> Result<(), Failure> {
    if out.extension().is_none_or(|e| !e.eq_ignore_ascii_case("html") && !e.eq_ignore_ascii_case("htm")) {
        return Err(Failure::input(format!("{flag} {}: the page is HTML; name a .html file", out.display())));
    }
    check_new_file(out, flag, force)?;
    let dir = out.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(Path::new("."));
    if !dir.is_dir() {
        return Err(Failure::input(format!(
            "{flag} {}: the folder {} does not exist; create it first, or name a file in an existing folder",
            out.display(),
            dir.display()
        )));
    }
    // Writable? A temporary file in the folder tells, and goes at once.
    tempfile::Builder::new().prefix(".layflow-report-check.").tempfile_in(dir).map_err(|e| {
        // tempfile adds the temporary file's name, which means nothing to the user.
        let why = e.to_string();
        let why = why.split(" at path ").next().unwrap_or(&why).to_string();
        Failure::input(format!("{flag} {}: cannot write in {}: {why}", out.display(), dir.display()))
    })?;
    Ok(())
}

fn scenario_sha(scenario: &Path) -> Result<String, Failure> {
    std::fs::read(scenario)
        .map(|t| sha256_hex(&t))
        .map_err(|e| Failure::input(format!("cannot read {}: {e}", scenario.display())))
}

fn build_replay(plant: &Plant, sha: &str, flags: &ReplayFlags) -> Result<Option<Replay>, Failure> {
    let Some(trace) = &flags.replay else { return Ok(None) };
    let req = ReplayRequest {
        trace,
        window: flags.replay_window.as_deref(),
        layout: flags.replay_layout.as_deref(),
    };
    replay::build(plant, sha, &req).map(Some)
}

fn write_page(out: &Path, html: &str) -> Result<(), Failure> {
    let dir = out.parent().filter(|d| !d.as_os_str().is_empty()).unwrap_or(Path::new("."));
    let name =
        out.file_name().and_then(|n| n.to_str()).ok_or_else(|| Failure::input("--report: bad file name"))?;
    write_atomic(dir, name, html.as_bytes())?;
    note!("wrote {} ({} KB)", out.display(), html.len().div_ceil(1024));
    Ok(())
}

/// `layflow report`: read the folders, check they are one scenario's, write the page.
pub fn report(args: &ReportArgs) -> Result<(), Failure> {
    check_out(&args.out, "-o", args.force)?;
    let studies: Vec<Study> = args.dirs.iter().map(|d| Study::read(d)).collect::<Result<_, _>>()?;
    // One scenario: every folder that records its scenario's hash must agree.
    let recorded: Vec<(&Study, &str)> =
        studies.iter().filter_map(|s| s.scenario_sha256.as_deref().map(|h| (s, h))).collect();
    if let Some(&(first, h)) = recorded.first() {
        if let Some((other, _)) = recorded.iter().find(|(_, x)| *x != h) {
            return Err(Failure::input(format!(
                "{} and {} were made from different scenarios (or different versions of one: SHA-256 {} and {}); \
                 one page describes one plant: make a report per scenario",
                first.source,
                other.source,
                &h[..16.min(h.len())],
                &other.scenario_sha256.as_deref().unwrap_or("")[..16]
            )));
        }
    }
    let scenario = match &args.scenario {
        Some(p) => p.clone(),
        None => studies.iter().find_map(|s| s.scenario.clone()).ok_or_else(|| {
            Failure::input(format!(
                "{}: the results do not record the scenario's path (experiment folders do not); name it with \
                 --scenario FILE",
                studies[0].source
            ))
        })?,
    };
    if !scenario.is_file() {
        return Err(Failure::input(format!(
            "the scenario {} is not there (the results record the path as it was given when they were made); \
             name it with --scenario FILE",
            scenario.display()
        )));
    }
    let sha = scenario_sha(&scenario)?;
    if let Some(&(s, h)) = recorded.first() {
        if h != sha {
            return Err(Failure::input(format!(
                "{}: these results were made from another scenario, or another version of {} (its text differs: \
                 SHA-256 {} there, {} now); name the scenario they were made from with --scenario, or rerun the \
                 study",
                s.source,
                scenario.display(),
                &h[..16.min(h.len())],
                &sha[..16]
            )));
        }
    }
    let plant = crate::settings::load(&scenario)?;
    let replay = build_replay(&plant, &sha, &args.replay)?;
    let html = page::page(&page::Inputs {
        plant: &plant,
        scenario: scenario.display().to_string(),
        scenario_sha256: sha,
        studies: &studies,
        replay: replay.as_ref(),
    });
    write_page(&args.out, &html)
}
