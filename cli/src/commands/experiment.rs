//! `layflow experiment`, `merge` and `summarize`: run a plan's units durably (resumable, shardable), combine shards exactly, and report.

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::atomic::Ordering;
use std::sync::{Arc, Mutex};

use clap::{Args, ValueEnum};
use rayon::prelude::*;

use layflow_models::experiment::journal::{self, Contents, Writer};
use layflow_models::experiment::results;
use layflow_models::experiment::runs;
use layflow_models::experiment::{self as exp, Experiment, Header, Shard, Unit};
use layflow_models::results::check::one_study;
use layflow_models::results::experiment as folder;
use layflow_models::results::{prepare, write_atomic, Kind, Mode};
use layflow_models::sim::simulate;
use layflow_models::study::replication_deadlock;
use layflow_models::study::Progress as _;

use crate::failure::Failure;
use crate::output::{note, out};
use crate::render::experiment::{point_line, render, runs_table};
use crate::render::progress::Progress;
use crate::render::table::count;
use crate::settings::pool;

/// Arguments of `layflow experiment`.
#[derive(Args, Debug)]
#[command(after_help = "Every finished unit (one replication of one design point) is written and synced to \
                  DIR/units.jsonl before it counts, so after Ctrl-C, a kill or a power cut `--resume` finishes \
                  the rest and the results are the same, byte for byte, as an uninterrupted run.\n\n\
                  Examples:\n  layflow experiment scenarios/plans/overnight.yaml --out results\n  \
                  layflow experiment scenarios/plans/overnight.yaml --out results --resume\n  \
                  parallel layflow experiment scenarios/plans/overnight.yaml --shard {}/4 --out shards/{} ::: 1 2 3 4\n  \
                  layflow merge shards/1 shards/2 shards/3 shards/4 --out results")]
pub struct ExperimentArgs {
    /// The experiment plan (YAML): scenario, replications, and factors or points.
    pub plan: PathBuf,
    /// Folder for the results (created if missing).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Continue a run that stopped: keep the units already in DIR, run the rest.
    /// Also continues a finished run whose plan now asks for more replications
    /// (and nothing else changed): only the new units run.
    #[arg(long)]
    pub resume: bool,
    /// Replace what DIR holds: delete its study files (units.jsonl, results.csv,
    /// summary.csv, summary.json, replications.csv, by_bucket.csv, runs.jsonl
    /// and the manifest; nothing else) and run afresh.
    #[arg(long, conflicts_with = "resume")]
    pub force: bool,
    /// When every unit is done: also write the results as one self-contained HTML
    /// page (see docs/report.md). With --resume or --force an existing page is replaced.
    #[command(flatten)]
    pub report: crate::report::ReportFlags,
    /// Run only shard K of N (units are dealt round-robin); combine the shards with `layflow merge`.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<String>,
    /// Worker threads (default: every core). Results do not depend on it.
    #[arg(long, value_name = "K")]
    pub threads: Option<usize>,
    /// No progress bar or per-point lines.
    #[arg(long, short)]
    pub quiet: bool,
    /// Run overloaded design points anyway: a replication whose WIP reaches the overload limit
    /// turns arriving lots away (counted) instead of failing the experiment (docs/overload.md).
    #[arg(long)]
    pub allow_overload: bool,
}

/// Arguments of `layflow merge`.
#[derive(Args, Debug)]
pub struct MergeArgs {
    /// Output folders of the shards (each holding units.jsonl).
    #[arg(required = true, num_args = 1..)]
    pub dirs: Vec<PathBuf>,
    /// Folder for the merged results (created if missing; one of the shard
    /// folders itself is allowed).
    #[arg(long, value_name = "DIR")]
    pub out: PathBuf,
    /// Replace another study's results in the --out folder: delete its study
    /// files (and nothing else), then write the merge.
    #[arg(long)]
    pub force: bool,
}

/// Output formats of `summarize`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum SummaryFormat {
    /// A table per design point.
    Table,
    /// summary.csv.
    Csv,
    /// summary.json.
    Json,
}

/// Arguments of `layflow summarize`.
#[derive(Args, Debug)]
pub struct SummarizeArgs {
    /// An experiment's output folder.
    pub dir: PathBuf,
    /// Output format on stdout.
    #[arg(long, value_enum, default_value_t = SummaryFormat::Table)]
    pub format: SummaryFormat,
    /// Instead of the summary, list the runs recorded in DIR/runs.jsonl
    /// (after a merge: every shard's), slowest first: host, Slurm job,
    /// times, units, events per second (docs/cluster.md).
    #[arg(long)]
    pub runs: bool,
}

/// Read a folder's units through the results module, reporting a torn tail on stderr.
fn read_journal(dir: &Path) -> Result<Contents, Failure> {
    let c = folder::read(dir)?;
    if c.torn_bytes > 0 {
        note!(
            "note: {}: the last {} bytes were a line cut off mid-write (the run stopped while writing it); \
             kept the {} complete units before it",
            folder::journal_path(dir).display(),
            c.torn_bytes,
            c.units.len()
        );
    }
    if c.unchecked > 0 {
        note!(
            "note: {}: {} units have no checksum (written by an older layflow) and are read unchecked; the \
             next --resume or merge into this folder rewrites them with checksums",
            folder::journal_path(dir).display(),
            c.unchecked
        );
    }
    Ok(c)
}

/// Run `layflow experiment`.
pub fn experiment(args: &ExperimentArgs) -> Result<(), Failure> {
    // --allow-overload changes the results, so the plan compiles every point
    // with it and it enters the content hash: such a folder resumes and
    // merges only with the flag.
    let plan = exp::load(&args.plan, args.allow_overload).map_err(|e| Failure::input(e.to_string()))?;
    if args.allow_overload {
        note!("{}", crate::settings::OVERLOAD_WARNING);
    }
    let shard = match &args.shard {
        None => Shard::ALL,
        Some(s) => Shard::parse(s).map_err(Failure::input)?,
    };
    let mode = if args.force {
        Mode::Force
    } else if args.resume {
        Mode::Continue
    } else {
        Mode::Fresh
    };
    let report = match &args.report.report {
        Some(_) if shard != Shard::ALL => {
            return Err(Failure::input(
                "--report needs every unit: a shard holds only some; make the page after `layflow merge` with \
                 `layflow report MERGED_DIR -o report.html`",
            ));
        }
        Some(_) => {
            let plant = crate::settings::load(&plan.scenario)?;
            let r = args.report.prepare(&plant, &plan.scenario, args.force || args.resume)?;
            r.map(|r| (r, plant))
        }
        None if args.report.replay.replay.is_some() => {
            return Err(Failure::input(
                "--replay adds a replay to the HTML page: it needs --report FILE.html",
            ));
        }
        None => None,
    };
    let held = prepare(&args.out, Kind::Experiment, mode)?;
    if args.force && !held.is_empty() {
        note!("--force: deleted {} from {}", held.names(), args.out.display());
    }
    let header = Header::new(&plan, shard);
    let path = folder::journal_path(&args.out);
    if args.resume && !path.exists() && !held.is_empty() {
        return Err(Failure::input(format!(
            "--out {}: holds {} but no {}, so there is no run to resume; add --force (instead of --resume) to \
             replace those files, or choose another folder",
            args.out.display(),
            held.names(),
            journal::FILE
        )));
    }
    let (writer, done) = open_journal(&path, &header, &plan, args)?;
    let pool = pool(args.threads)?;
    let mine: Vec<u64> = (0..plan.units()).filter(|&u| shard.owns(u)).collect();
    let mut is_done = vec![false; plan.units() as usize];
    for u in &done {
        is_done[u.unit as usize] = true;
    }
    let pending: Vec<u64> = mine.iter().copied().filter(|&u| !is_done[u as usize]).collect();
    note!(
        "{}: {} × {} = {} units{}; {} done, {} to run",
        plan.file.display(),
        count(plan.point_count(), "design point"),
        count(plan.replications as usize, "replication"),
        plan.units(),
        if shard == Shard::ALL { String::new() } else { format!(", shard {shard} has {}", mine.len()) },
        mine.len() - pending.len(),
        pending.len()
    );
    // Ctrl-C or SIGTERM (a scheduler's warning) from here on stops new units; running ones finish and are saved.
    crate::signals::finish_units_on_stop();
    let progress = Progress::with_noun(mine.len() as u64, args.quiet, "units");
    progress.advance(mine.len() as u64 - pending.len() as u64);
    let remaining = Arc::new(point_counts(&plan, &mine, &is_done));
    // A resumed point's line counts the units it already had.
    let mut open: HashMap<usize, Vec<Unit>> = HashMap::new();
    if !args.quiet {
        for u in done.iter().filter(|u| remaining[u.point].load(Ordering::Relaxed) > 0) {
            open.entry(u.point).or_default().push(u.clone());
        }
    }
    let started = (jiff::Timestamp::now(), std::time::Instant::now());
    let found_done = (mine.len() - pending.len()) as u64;
    let state = Mutex::new(RunState { writer, units: done, open, error: None, events: 0 });
    pool.install(|| {
        pending.par_iter().for_each(|&u| {
            if crate::signals::stopping() {
                return;
            }
            let (p, r) = plan.unit(u);
            // Compiled when first needed (a plan may have a million points);
            // a level refused only in this combination is the plan's error.
            let setup = match plan.setup(p) {
                Ok(s) => s,
                Err(e) => {
                    let mut st = state.lock().expect("no worker panics while holding the lock");
                    st.error.get_or_insert(Failure::input(format!(
                        "{e}\nthe finished units are saved, but they belong to this version of the plan: fix it and \
                         run it again with --force, or leave that level out"
                    )));
                    crate::signals::request_stop();
                    return;
                }
            };
            let rep = simulate(&setup.sim, &setup.spec, r);
            let unit = Unit::new(&plan, u, &setup.plant, &rep);
            let mut st = state.lock().expect("no worker panics while holding the lock");
            if st.error.is_some() {
                return;
            }
            if let Some(why) = replication_deadlock(&setup.plant, &rep, r) {
                // A jammed plant's numbers mean nothing: keep them out of the results.
                let levels: Vec<String> = plan
                    .factors
                    .iter()
                    .zip(&header.points[p])
                    .map(|(f, l)| format!("{}={l}", f.name))
                    .collect();
                st.error = Some(Failure::run(format!(
                    "design point {} ({}): {why}\nthe finished units are saved; fix the cause and rerun with --resume",
                    p + 1,
                    levels.join(", ")
                )));
                crate::signals::request_stop();
                return;
            }
            if let Err(e) = st.writer.write(&unit) {
                st.error = Some(Failure::run(format!(
                    "cannot write {}: {e}\nthe finished units are saved; fix the cause and rerun with --resume",
                    st.writer.path().display()
                )));
                crate::signals::request_stop();
                return;
            }
            progress.done(&rep);
            st.events += rep.events;
            let left = &remaining[p];
            if args.quiet {
                st.units.push(unit);
            } else {
                // The units of a point still running, kept apart so its line needs no scan of every unit.
                st.open.entry(p).or_default().push(unit.clone());
                st.units.push(unit);
                if left.fetch_sub(1, Ordering::SeqCst) == 1 {
                    let mine = st.open.remove(&p).unwrap_or_default();
                    progress.println(point_line(&plan, &header, &mine, p));
                }
            }
        });
    });
    progress.finish();
    let st = state.into_inner().expect("no worker panicked");
    let finished = st.units.len();
    let outcome = if st.error.is_some() {
        "failed"
    } else if finished < mine.len() {
        "stopped"
    } else {
        "complete"
    };
    let ran = finished as u64 - found_done;
    record_run(&args.out, shard, mine.len() as u64, found_done, ran, st.events, started, outcome);
    if let Some(e) = st.error {
        return Err(e);
    }
    if finished < mine.len() {
        return Err(Failure::interrupted(format!(
            "stopped by Ctrl-C or SIGTERM: {finished} of {} units done and saved in {}; run the same command with \
             --resume to finish",
            mine.len(),
            path.display()
        )));
    }
    let units = results::canonical(st.units).map_err(Failure::run)?;
    if shard == Shard::ALL {
        folder::write(&args.out, &header, &units)?;
        let summary = results::summarize(&header, &units).map_err(Failure::run)?;
        out(&render(&summary, plan.units())).map_err(|f| f.and(&safe_in(&args.out)))?;
        note!(
            "results in {}: units.jsonl, results.csv, summary.csv, summary.json{}",
            args.out.display(),
            if header.by.is_some() { ", by_bucket.csv" } else { "" }
        );
        if let Some((r, plant)) = &report {
            r.write_from_folder(plant, &plan.scenario, &args.out)?;
        }
    } else {
        write_atomic(&args.out, journal::FILE, &results::units_jsonl(&header, &units))?;
        layflow_models::results::folder::write_manifest(&args.out, Kind::Experiment, &[journal::FILE])?;
        note!(
            "shard {shard} complete: {} units in {}. When every shard is done: layflow merge DIR... --out DIR",
            units.len(),
            path.display()
        );
    }
    Ok(())
}

struct RunState {
    writer: Writer,
    units: Vec<Unit>,
    /// Units of design points not yet finished (for their line when they finish).
    open: HashMap<usize, Vec<Unit>>,
    error: Option<Failure>,
    /// Simulation events of the units this run saved.
    events: u64,
}

/// Append this run's record to DIR/runs.jsonl (see `experiment::runs`): the
/// host, the batch job if a scheduler ran it, the times and the speed. A
/// record that cannot be written is a note, not a failure: the units are safe.
#[allow(clippy::too_many_arguments)]
fn record_run(
    dir: &Path,
    shard: Shard,
    units: u64,
    found_done: u64,
    ran: u64,
    events: u64,
    started: (jiff::Timestamp, std::time::Instant),
    outcome: &str,
) {
    let wall_s = started.1.elapsed().as_secs_f64();
    // Milliseconds: enough to order two runs of one shard in the same second.
    let stamp = |t: jiff::Timestamp| {
        jiff::Timestamp::from_millisecond(t.as_millisecond())
            .map_or_else(|_| t.to_string(), |t| t.to_string())
    };
    let env = |k: &str| std::env::var(k).ok().filter(|v| !v.is_empty());
    let job = match (env("SLURM_ARRAY_JOB_ID"), env("SLURM_ARRAY_TASK_ID")) {
        (Some(a), Some(t)) => Some(format!("{a}_{t}")),
        _ => env("SLURM_JOB_ID"),
    };
    let record = runs::RunRecord {
        shard: if shard == Shard::ALL { "all".to_string() } else { shard.to_string() },
        host: gethostname::gethostname().to_string_lossy().into_owned(),
        job,
        restarts: env("SLURM_RESTART_COUNT").and_then(|c| c.parse().ok()),
        started: stamp(started.0),
        finished: stamp(jiff::Timestamp::now()),
        wall_s,
        units,
        found_done,
        ran,
        events,
        events_per_s: if wall_s > 0.0 { events as f64 / wall_s } else { 0.0 },
        outcome: outcome.to_string(),
    };
    if let Err(e) = runs::append(dir, &record) {
        note!(
            "note: cannot write {}: {e} (the record of this run; the units are saved)",
            dir.join(runs::FILE).display()
        );
    }
}

/// Units of each design point this run still has to do.
fn point_counts(plan: &Experiment, mine: &[u64], is_done: &[bool]) -> Vec<std::sync::atomic::AtomicUsize> {
    let counts: Vec<std::sync::atomic::AtomicUsize> =
        (0..plan.point_count()).map(|_| std::sync::atomic::AtomicUsize::new(0)).collect();
    for &u in mine {
        if !is_done[u as usize] {
            counts[plan.unit(u).0].fetch_add(1, Ordering::Relaxed);
        }
    }
    counts
}

/// Open (or create) the results file; returns the units already done.
/// A finished or stopped run whose plan now has more replications (and
/// nothing else changed) is renumbered to the larger plan first.
fn open_journal(
    path: &Path,
    header: &Header,
    plan: &Experiment,
    args: &ExperimentArgs,
) -> Result<(Writer, Vec<Unit>), Failure> {
    let fail = |e: std::io::Error| Failure::run(format!("cannot write {}: {e}", path.display()));
    if !path.exists() {
        if args.resume {
            note!("note: {} holds no results yet; starting afresh", args.out.display());
        }
        // A header cut short (a full disk) would make the folder neither fresh nor resumable: remove it.
        let w = Writer::create(path, header).map_err(|e| {
            if e.kind() != std::io::ErrorKind::AlreadyExists {
                let _ = std::fs::remove_file(path);
            }
            fail(e)
        })?;
        return Ok((w, Vec::new()));
    }
    if !args.resume {
        return Err(Failure::input(format!(
            "{} already holds results ({}); add --resume to finish that run, --force to replace it, or choose \
             another --out",
            args.out.display(),
            journal::FILE
        )));
    }
    let c = read_journal(&args.out)?;
    if c.header.shard != header.shard {
        return Err(Failure::input(format!(
            "{} holds shard {} of this plan, not {}; give the same --shard to resume it",
            path.display(),
            c.header.shard,
            header.shard
        )));
    }
    if c.header.same_plan(header) {
        let w = Writer::append(path, c.intact_bytes).map_err(fail)?;
        return Ok((w, c.units));
    }
    if c.header.fewer_replications_of(plan) {
        if header.shard != Shard::ALL {
            return Err(Failure::input(format!(
                "{}: the plan now has {} replications, not {}; a shard's units are renumbered when replications \
                 grow, so raise them on the whole run: `layflow merge` the shards into one folder, then run \
                 `layflow experiment PLAN --out THAT_FOLDER --resume` without --shard",
                path.display(),
                header.replications,
                c.header.replications
            )));
        }
        // The derived files describe the smaller plan; they go first, so a
        // crash from here on leaves a folder that simply resumes.
        for f in ["results.csv", "summary.csv", "summary.json", "by_bucket.csv"] {
            let p = args.out.join(f);
            if p.is_file() {
                std::fs::remove_file(&p)
                    .map_err(|e| Failure::run(format!("cannot delete {}: {e}", p.display())))?;
            }
        }
        let units = results::canonical(c.header.rekeyed(header, c.units)).map_err(Failure::input)?;
        write_atomic(&args.out, journal::FILE, &results::units_jsonl(header, &units))?;
        note!(
            "note: the plan now has {} replications per design point, not {}: keeping the {} units done, \
             running only the new ones",
            header.replications,
            c.header.replications,
            units.len()
        );
        let len = std::fs::metadata(path).map_err(fail)?.len();
        let w = Writer::append(path, len).map_err(fail)?;
        return Ok((w, units));
    }
    let changes = c.header.differences(header);
    let what = if changes.is_empty() {
        format!(
            "the plan or scenario content (hash {} there, {} now)",
            &c.header.hash[..16],
            &header.hash[..16]
        )
    } else {
        changes.join("; ")
    };
    let hint = if c.header.replications > header.replications && changes.len() == 1 {
        " (replications may only be raised on --resume)"
    } else {
        ""
    };
    Err(Failure::input(format!(
        "{}: these results are of another plan or scenario version: changed: {what}{hint}. Results of different \
         versions cannot be mixed: undo the change, choose another --out, or add --force (instead of --resume) \
         to replace them",
        path.display()
    )))
}

/// Run `layflow merge`.
pub fn merge(args: &MergeArgs) -> Result<(), Failure> {
    let mut first: Option<(PathBuf, Header)> = None;
    let mut all = Vec::new();
    let mut currencies = Vec::new();
    for dir in &args.dirs {
        let c = read_journal(dir)?;
        currencies.push(c.header.currency.clone());
        match &first {
            None => first = Some((dir.clone(), c.header.clone())),
            Some((d0, h0)) => {
                if !h0.same_plan(&c.header) {
                    return Err(Failure::input(format!(
                        "{} and {} hold results of different plans or scenario versions (hash {} vs {}); only \
                         shards of one plan merge",
                        d0.display(),
                        dir.display(),
                        &h0.hash[..16],
                        &c.header.hash[..16]
                    )));
                }
            }
        }
        all.extend(c.units);
    }
    let (_, mut header) = first.expect("clap requires at least one folder");
    // A folder written before the currency was recorded has none; a shard that records it names it.
    header.currency = currencies.into_iter().flatten().next();
    let units = results::canonical(all).map_err(Failure::input)?;
    if (units.len() as u64) < header.units {
        let mut have = vec![false; header.units as usize];
        for u in &units {
            have[u.unit as usize] = true;
        }
        let missing: Vec<u64> = (0..header.units).filter(|&u| !have[u as usize]).collect();
        let (p, r) = header.unit(missing[0]);
        return Err(Failure::input(format!(
            "{} of {} units are missing, e.g. design point {} replication {r} (unit {}); finish the shards that \
             stopped (rerun them with --resume) or add the folders left out, then merge again",
            missing.len(),
            header.units,
            p + 1,
            missing[0]
        )));
    }
    // Merging into one of the shard folders, or again into a folder holding
    // this plan's results (a rerun of a merge script), replaces units with
    // the whole plan's, which include them; a folder holding anything else is refused.
    let same = |d: &PathBuf| {
        std::fs::canonicalize(d).ok().is_some_and(|d| std::fs::canonicalize(&args.out).ok() == Some(d))
    };
    let this_plan = folder::journal_path(&args.out).is_file()
        && folder::read(&args.out).is_ok_and(|c| c.header.same_plan(&header));
    let mode = if args.force {
        Mode::Force
    } else if args.dirs.iter().any(same) || this_plan {
        Mode::Continue
    } else {
        Mode::Fresh
    };
    // The shards' run records (who ran what, when), read before the out
    // folder is prepared: it may be one of the shards, and --force clears it.
    let mut records = Vec::new();
    for dir in args.dirs.iter().chain(this_plan.then_some(&args.out)) {
        records.extend(read_runs(dir));
    }
    prepare(&args.out, Kind::Experiment, mode)?;
    folder::write(&args.out, &header, &units)?;
    if !records.is_empty() {
        write_atomic(&args.out, runs::FILE, &runs::gathered(records))?;
    }
    let summary = results::summarize(&header, &units).map_err(Failure::run)?;
    out(&render(&summary, header.units)).map_err(|f| f.and(&safe_in(&args.out)))?;
    note!("merged {} folders into {}", args.dirs.len(), args.out.display());
    Ok(())
}

/// Run `layflow summarize`.
pub fn summarize(args: &SummarizeArgs) -> Result<(), Failure> {
    one_study(&args.dir)?;
    if args.runs {
        return summarize_runs(args);
    }
    let c = read_journal(&args.dir)?;
    let units = results::canonical(c.units).map_err(Failure::input)?;
    let summary = results::summarize(&c.header, &units).map_err(Failure::input)?;
    if (units.len() as u64) < c.header.units && c.header.shard == Shard::ALL {
        note!(
            "note: {} of {} units are done; the table covers those (finish with `layflow experiment ... --resume`)",
            units.len(),
            c.header.units
        );
    }
    match args.format {
        SummaryFormat::Table => {
            let records = read_runs(&args.dir);
            if let Some(slowest) = records.iter().max_by(|a, b| a.wall_s.total_cmp(&b.wall_s)) {
                note!(
                    "{} runs recorded in {} (the slowest: shard {} on {}, {:.1} s); `layflow summarize {} --runs` \
                     lists them",
                    records.len(),
                    runs::FILE,
                    slowest.shard,
                    slowest.host,
                    slowest.wall_s,
                    args.dir.display()
                );
            }
            out(&render(&summary, c.header.units))
        }
        SummaryFormat::Csv => out(&String::from_utf8_lossy(&results::summary_csv(&summary))),
        SummaryFormat::Json => out(&String::from_utf8_lossy(&results::summary_json(&summary))),
    }
}

/// `summarize --runs`: the run records, as a table (slowest first), CSV or JSON.
fn summarize_runs(args: &SummarizeArgs) -> Result<(), Failure> {
    let records = read_runs(&args.dir);
    if records.is_empty() {
        return Err(Failure::input(format!(
            "{}: no {} here: it is written by layflow experiment (each run appends a line) and gathered by \
             layflow merge; folders made before it existed have none",
            args.dir.display(),
            runs::FILE
        )));
    }
    match args.format {
        SummaryFormat::Table => out(&runs_table(&records)),
        SummaryFormat::Json => {
            out(&(serde_json::to_string_pretty(&records).expect("run records serialise") + "\n"))
        }
        SummaryFormat::Csv => {
            // Every column on every row (empty where a run had no batch job),
            // in the JSON's field order.
            let fail = |e: csv::Error| Failure::run(format!("cannot write the runs as CSV: {e}"));
            let mut w = csv::Writer::from_writer(Vec::new());
            w.write_record([
                "shard",
                "host",
                "job",
                "restarts",
                "started",
                "finished",
                "wall_s",
                "units",
                "found_done",
                "ran",
                "events",
                "events_per_s",
                "outcome",
            ])
            .map_err(fail)?;
            for r in &records {
                w.write_record([
                    r.shard.clone(),
                    r.host.clone(),
                    r.job.clone().unwrap_or_default(),
                    r.restarts.map(|n| n.to_string()).unwrap_or_default(),
                    r.started.clone(),
                    r.finished.clone(),
                    r.wall_s.to_string(),
                    r.units.to_string(),
                    r.found_done.to_string(),
                    r.ran.to_string(),
                    r.events.to_string(),
                    r.events_per_s.to_string(),
                    r.outcome.clone(),
                ])
                .map_err(fail)?;
            }
            let bytes =
                w.into_inner().map_err(|e| Failure::run(format!("cannot write the runs as CSV: {e}")))?;
            out(&String::from_utf8_lossy(&bytes))
        }
    }
}

/// The run records in `dir` (none if it has no runs.jsonl); a file that
/// cannot be read, or lines that do not, are a note: they are never results.
fn read_runs(dir: &Path) -> Vec<runs::RunRecord> {
    let path = dir.join(runs::FILE);
    match runs::read(dir) {
        Ok((records, 0)) => records,
        Ok((records, skipped)) => {
            note!("note: {}: skipped {skipped} lines that are not run records", path.display());
            records
        }
        Err(e) => {
            note!("note: cannot read {}: {e}", path.display());
            Vec::new()
        }
    }
}

/// Where a summary that could not be printed can be had again: every unit is on disk already.
fn safe_in(dir: &Path) -> String {
    format!("; the results are safe in {0}: `layflow summarize {0}` prints them again", dir.display())
}
