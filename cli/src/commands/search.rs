//! `layflow search`: find layouts with a low load-distance cost, write them for `compare`, and check them by simulation.

use std::path::{Path, PathBuf};

use clap::{Args, ValueEnum};

use layflow_models::analysis::StaticPicture;
use layflow_models::plant::{Layout, Plant};
use layflow_models::search::qaplib::{self, Instance, Solution};
use layflow_models::search::{
    self, AnnealParams, Limits, Method, PlantProblem, Problem, Ranked, Settings, TabuParams,
};

use crate::commands::check::FromToArgs;
use crate::commands::compare::{compare_plant, CompareArgs, CompareFormat, SelectArgs};
use crate::failure::Failure;
use crate::output::out;
use crate::render::plot;
use crate::render::progress::Spinner;
use crate::render::search::{
    cost_value, json_output, layouts_yaml, limits_text, objective_text, pp_value, render, stall_text,
    trace_series, Found, MethodRun, Report,
};
use crate::render::table::{whole, Table};
use crate::report::ReportFlags;
use crate::settings::{duration_arg, layout, Format, SimOptions};

/// How long each method runs when neither --time-limit nor --iterations is given.
const DEFAULT_TIME_LIMIT_S: f64 = 10.0;

/// Under a time limit, a method stops once this share of its time has passed
/// since its last improvement: the searches here find their best early, and
/// the rest of the time is better spent on the next method.
pub const STALL_SHARE: f64 = 0.5;

/// Arguments of `layflow search`.
#[derive(Args, Debug)]
#[command(
    after_help = "The search ranks layouts by the static method only (flow × distance, plus floor costs): \
                  queues, movers and congestion are not counted. Check the best layouts by simulation with \
                  --validate, or write them with --out and run `layflow compare`.\n\n\
                  Examples:\n  layflow search scenarios/demo.yaml\n  \
                  layflow search scenarios/demo.yaml --method all --time-limit 5s --plot search.svg\n  \
                  layflow search scenarios/demo.yaml --iterations 20000 --top 3 --out found.yaml --validate\n  \
                  layflow search --qaplib nug30.dat --method tabu --time-limit 2s"
)]
pub struct SearchArgs {
    /// The scenario file (YAML).
    #[arg(required_unless_present = "qaplib")]
    pub scenario: Option<PathBuf>,
    /// Search a QAPLIB instance (NAME.dat) instead of a scenario, to see how the methods do on a
    /// problem with a published optimum; NAME.sln beside it gives the gap.
    #[arg(long, value_name = "FILE.dat", conflicts_with_all = ["scenario", "out", "validate", "from", "from_to"])]
    pub qaplib: Option<PathBuf>,
    /// Methods to run, separated by commas: tabu (robust tabu search, Taillard 1991), anneal
    /// (simulated annealing), exchange (steepest-descent pairwise exchange with random restarts), or all.
    #[arg(long, value_enum, value_delimiter = ',', default_value = "tabu")]
    pub method: Vec<MethodName>,
    /// Wall-clock time for EACH method, not in total (--method all --time-limit 5s runs up to 15 s),
    /// e.g. "10s" or "2 min" [default: 10s unless --iterations is given]. A method stops early once
    /// half of its time has passed with no improvement; --iterations alone never stops early.
    #[arg(long, value_name = "DURATION")]
    pub time_limit: Option<String>,
    /// Stop each method after this many iterations: the same seed then gives the same layouts on any
    /// machine. With --time-limit too, whichever comes first.
    #[arg(long, value_name = "N")]
    pub iterations: Option<u64>,
    /// How many distinct layouts to report, write and validate.
    #[arg(long, value_name = "K", default_value_t = 3)]
    pub top: usize,
    /// The layout to start from and compare against [default: the first in the scenario].
    #[arg(long, value_name = "NAME")]
    pub from: Option<String>,
    /// Scale every product's demand by this factor before building the from-to chart
    /// (overrides demand_factor; also used by --validate).
    #[arg(long, value_name = "FACTOR", value_parser = crate::settings::parse_demand)]
    pub demand: Option<f64>,
    #[command(flatten)]
    pub from_to: FromToArgs,
    /// Write the layouts found to this YAML file; add it to the scenario with
    /// `layout_files: [FILE]` and `layflow compare` runs them.
    #[arg(long, value_name = "FILE.yaml")]
    pub out: Option<PathBuf>,
    /// Names of the layouts found: PREFIX-1, PREFIX-2, ...
    #[arg(long, value_name = "PREFIX", default_value = "search")]
    pub prefix: String,
    /// Then simulate the starting layout and the layouts found with common random numbers
    /// (as `layflow compare` does) and report which runs best.
    #[arg(long)]
    pub validate: bool,
    /// The metric --validate ranks on (as in `layflow compare`).
    #[arg(long, value_name = "METRIC", default_value = "flow_time_s")]
    pub metric: String,
    #[command(flatten)]
    pub select: SelectArgs,
    /// Draw the best-so-far cost over time for each method to this SVG file.
    #[arg(long, value_name = "FILE.svg")]
    pub plot: Option<PathBuf>,
    /// Replace the --out, --plot and --report files if they exist (without it, an existing file is refused, never overwritten).
    #[arg(long)]
    pub force: bool,
    /// With --validate: also write the comparison as one self-contained HTML page (see docs/report.md).
    #[command(flatten)]
    pub report: ReportFlags,
    /// Output format on stdout (the --validate comparison is a table).
    #[arg(long, value_enum, default_value_t = Format::Table)]
    pub format: Format,
    #[command(flatten)]
    pub sim: SimOptions,
}

/// A search method, as named on the command line.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum MethodName {
    /// Robust tabu search (Taillard 1991).
    Tabu,
    /// Simulated annealing (Kirkpatrick, Gelatt and Vecchi 1983).
    Anneal,
    /// Steepest-descent pairwise exchange, restarted from random layouts.
    Exchange,
    /// All three, one after the other.
    All,
}

impl MethodName {
    fn key(self) -> &'static str {
        match self {
            MethodName::Tabu => "tabu",
            MethodName::Anneal => "anneal",
            MethodName::Exchange => "exchange",
            MethodName::All => "all",
        }
    }

    fn title(self) -> &'static str {
        match self {
            MethodName::Tabu => "robust tabu search (Taillard 1991)",
            MethodName::Anneal => "simulated annealing (Kirkpatrick et al. 1983)",
            MethodName::Exchange => "pairwise exchange, steepest descent",
            MethodName::All => "all",
        }
    }

    fn method(self) -> Method {
        match self {
            MethodName::Tabu | MethodName::All => Method::Tabu(TabuParams::default()),
            MethodName::Anneal => Method::Anneal(AnnealParams::default()),
            MethodName::Exchange => Method::Exchange { restarts: true },
        }
    }
}

/// The methods asked for, in a fixed order, each once.
fn methods(asked: &[MethodName]) -> Vec<MethodName> {
    let all = [MethodName::Tabu, MethodName::Anneal, MethodName::Exchange];
    if asked.contains(&MethodName::All) {
        return all.to_vec();
    }
    all.into_iter().filter(|m| asked.contains(m)).collect()
}

fn limits(args: &SearchArgs) -> Result<Limits, Failure> {
    let time_s = match (&args.time_limit, args.iterations) {
        (None, Some(_)) => None,
        (given, _) => Some(duration_arg("--time-limit", given, DEFAULT_TIME_LIMIT_S)?),
    };
    if time_s == Some(0.0) {
        return Err(Failure::input("--time-limit must be more than 0 s"));
    }
    if args.iterations == Some(0) {
        return Err(Failure::input("--iterations must be at least 1"));
    }
    if let Some(n) = args.iterations.filter(|&n| n > layflow_models::limits::MAX_ITERATIONS) {
        return Err(Failure::input(format!(
            "--iterations {n}: more than the ceiling of {:e} iterations per method, which no search needs \
             (the best layout stops improving long before) and which would run for days",
            layflow_models::limits::MAX_ITERATIONS as f64
        )));
    }
    // The stall rule is a time rule: iterations alone stay deterministic.
    let stall_share = time_s.map(|_| STALL_SHARE);
    Ok(Limits { iterations: args.iterations, time_s, target: None, stall_share })
}

/// Run each method with a spinner that shows the best so far.
fn run_methods(
    problem: &Problem,
    names: &[MethodName],
    settings: &Settings,
    quiet: bool,
    shown: impl Fn(f64) -> String,
) -> Result<Vec<MethodRun>, Failure> {
    let mut runs = Vec::new();
    for &name in names {
        let spinner = Spinner::new(name.key(), quiet);
        let outcome = search::search(problem, &name.method(), settings, |_, best| spinner.best(shown(best)))
            .map_err(|e| Failure::input(format!("the {} search cannot start: {e}", name.key())))?;
        spinner.finish();
        runs.push(MethodRun { key: name.key(), title: name.title(), outcome });
    }
    Ok(runs)
}

/// The best `k` distinct layouts over every run.
fn merged_top(runs: &[MethodRun], k: usize) -> Vec<Ranked> {
    let mut all: Vec<Ranked> = runs.iter().flat_map(|r| r.outcome.top.iter().cloned()).collect();
    all.sort_by(|a, b| {
        a.evaluation.objective.total_cmp(&b.evaluation.objective).then(a.layout.cmp(&b.layout))
    });
    all.dedup_by(|a, b| a.layout == b.layout);
    all.truncate(k);
    all
}

/// Run `layflow search`.
pub fn search(args: &SearchArgs) -> Result<(), Failure> {
    let names = methods(&args.method);
    let limits = limits(args)?;
    if args.top == 0 {
        return Err(Failure::input("--top must be at least 1"));
    }
    if let Some(q) = &args.qaplib {
        return search_qaplib(args, q, &names, limits);
    }
    let path = args.scenario.as_ref().expect("clap requires a scenario without --qaplib");
    if args.sim.by.is_some() && !args.validate {
        return Err(Failure::input(
            "--by slices simulated results by time; the search itself is static, so --by goes with \
             --validate (which compares the layouts found by time bucket too)",
        ));
    }
    if args.report.report.is_some() && !args.validate {
        return Err(Failure::input(
            "--report writes the simulated comparison of the layouts found: it goes with --validate",
        ));
    }
    if let Some(r) = &args.report.report {
        crate::report::check_out(r, "--report", args.force)?;
    }
    if args.validate && args.format == Format::Json {
        return Err(Failure::input(
            "--validate prints the comparison as a table; for JSON, write the layouts with --out, add the \
             file to `layout_files:` and run `layflow compare --format json`",
        ));
    }
    // Check where results go before searching, so a typo costs a second, not the search.
    for (flag, file, ext) in [("--out", &args.out, "yaml"), ("--plot", &args.plot, "svg")] {
        if let Some(f) = file {
            check_target(f, flag, ext, args.force)?;
        }
    }
    let plant = args.sim.load(path)?;
    let factor = args.demand.unwrap_or(plant.demand_factor);
    if !(factor.is_finite() && factor > 0.0) {
        return Err(Failure::input(format!("--demand must be a number > 0, got {factor}")));
    }
    let from = match &args.from {
        None => 0,
        Some(name) => {
            layout(&plant, name).map_err(|f| Failure::input(f.message().replace("--layout ", "--from ")))?
        }
    };
    let measured = args.from_to.read(&plant, path)?;
    let mut picture = StaticPicture::new(&plant, factor);
    if let Some(m) = &measured {
        picture = m.apply(&plant, picture);
    }
    let pp = PlantProblem::new(&plant, &picture)
        .map_err(|e| Failure::input(format!("{}: {e}", path.display())))?;
    let start_layout = &plant.layouts[from].location_of;
    let start_cost = pp.cost(start_layout).map_err(Failure::run)?;
    let starts_there = pp.problem.permutation(start_layout).is_ok();
    let seed = args.sim.seed.unwrap_or(plant.run.seed);
    let settings =
        Settings { start: starts_there.then(|| start_layout.clone()), seed, limits, keep: args.top };
    let shown = |objective: f64| objective_text(objective, &pp);
    let runs = run_methods(&pp.problem, &names, &settings, args.sim.quiet, shown)?;
    let top = merged_top(&runs, args.top);
    let found: Vec<Found> = top
        .iter()
        .enumerate()
        .map(|(i, r)| Found {
            name: format!("{}-{}", args.prefix, i + 1),
            cost: pp.cost(&r.layout).expect("searches report valid layouts"),
            same_as: plant.layouts.iter().position(|l| l.location_of == r.layout),
            layout: r.layout.clone(),
        })
        .collect();
    let loads_per_h = picture.from_to.total();
    let report = Report {
        plant: &plant,
        pp: &pp,
        factor,
        loads_per_h,
        from,
        start_cost,
        starts_there,
        seed,
        limits,
        runs: &runs,
    };

    if let Some(file) = &args.plot {
        let series = trace_series(&runs, |o| pp_value(o, &pp));
        let unit = if pp.per_load_metre > 0.0 { "cost per hour" } else { "load-metres per hour" };
        // The start layout first, then the scenario's other layouts, each at
        // its static cost; a layout breaking a rule is marked so.
        let order = std::iter::once(from).chain((0..plant.layouts.len()).filter(|&l| l != from));
        let references: Vec<(String, f64)> = order
            .filter_map(|l| {
                let c = if l == from { start_cost } else { pp.cost(&plant.layouts[l].location_of).ok()? };
                let role = if l == from { "start layout" } else { "scenario layout" };
                let broken = if c.forbidden + c.rules_broken > 0 { ", breaks the rules" } else { "" };
                Some((format!("{role} {}{broken}", plant.layouts[l].name), cost_value(&c, &pp)))
            })
            .collect();
        let svg = plot::search_svg(&plant.name, &series, unit, &references)?;
        write_file(file, svg.as_bytes(), "--plot")?;
    }
    if let Some(file) = &args.out {
        write_file(file, layouts_yaml(&report, path, &found, file).as_bytes(), "--out")?;
    }
    match args.format {
        Format::Table => {
            if let Some(m) = &measured {
                out(&format!("{}\n\n", crate::render::check::measured_note(&plant, m)))?;
            }
            out(&render(&report, &found, args.out.as_deref(), args.validate))?
        }
        Format::Json => {
            let json = json_output(&report, &found, args.sim.no_wall_clock);
            let text = match &measured {
                None => serde_json::to_string_pretty(&json),
                // A value only with a measured chart (its keys then sorted), so the usual output keeps its form.
                Some(m) => {
                    let mut v = serde_json::to_value(&json).expect("plain data serializes");
                    v["from_to_source"] = serde_json::json!({
                        "measured": true,
                        "file": m.file,
                        "loads_counted_per_s": m.per_s,
                        "note": "not derived from the routings; run, compare and --validate still simulate the routings",
                    });
                    serde_json::to_string_pretty(&v)
                }
            };
            out(&(text.expect("plain data serializes") + "\n"))?;
        }
    }
    if args.validate {
        validate(&plant, path, from, &found, args)?;
    }
    Ok(())
}

/// A file we are about to write: its folder exists and its name ends in `.ext`.
fn check_target(file: &Path, flag: &str, ext: &str, force: bool) -> Result<(), Failure> {
    let fits =
        |e: &std::ffi::OsStr| e.eq_ignore_ascii_case(ext) || (ext == "yaml" && e.eq_ignore_ascii_case("yml"));
    if !file.extension().is_some_and(fits) {
        return Err(Failure::input(format!("{flag} {}: name a .{ext} file", file.display())));
    }
    let dir = folder_of(file);
    if !dir.is_dir() {
        return Err(Failure::input(format!(
            "{flag} {}: the folder {} does not exist",
            file.display(),
            dir.display()
        )));
    }
    Ok(layflow_models::results::folder::check_new_file(file, flag, force)?)
}

/// The folder a file goes in (`.` for a bare name).
fn folder_of(file: &Path) -> &Path {
    match file.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    }
}

/// Write a result file atomically (temp file beside it, then rename); its
/// path was checked by [`check_target`] before the search.
fn write_file(file: &Path, bytes: &[u8], flag: &str) -> Result<(), Failure> {
    let name = file
        .file_name()
        .ok_or_else(|| Failure::input(format!("{flag} {}: not a file name", file.display())))?
        .to_string_lossy()
        .into_owned();
    Ok(layflow_models::results::write_atomic(folder_of(file), &name, bytes)?)
}

/// Simulate the start layout and the layouts found, as `compare` does.
fn validate(
    plant: &Plant,
    path: &Path,
    from: usize,
    found: &[Found],
    args: &SearchArgs,
) -> Result<(), Failure> {
    let mut plant = plant.clone();
    let mut names = vec![plant.layouts[from].name.clone()];
    for f in found {
        let name = match f.same_as {
            Some(l) => plant.layouts[l].name.clone(),
            None => {
                if plant.layout_index(&f.name).is_some() {
                    return Err(Failure::input(format!(
                        "the scenario already has a layout named \"{}\" (perhaps from a layout file an earlier \
                         search wrote); choose other names with --prefix",
                        f.name
                    )));
                }
                plant.layouts.push(Layout { name: f.name.clone(), location_of: f.layout.clone() });
                f.name.clone()
            }
        };
        if !names.contains(&name) {
            names.push(name);
        }
    }
    if names.len() < 2 {
        return out(&format!(
            "\nNothing to validate: every layout found is the start layout \"{}\" itself.\n",
            plant.layouts[from].name
        ));
    }
    out(&format!("\nValidating by simulation: {} with common random numbers.\n", names.join(", ")))?;
    let compare = CompareArgs {
        scenario: path.to_path_buf(),
        layouts: names.clone(),
        baseline: Some(names[0].clone()),
        demand: args.demand.into_iter().collect(),
        metric: args.metric.clone(),
        select: args.select.clone(),
        format: CompareFormat::Table,
        out: None,
        force: args.force && args.report.report.is_some(),
        report: args.report.clone(),
        sim: args.sim.clone(),
    };
    compare_plant(&plant, &compare)
}

/// `--qaplib`: search a published instance and report the gap to its optimum.
fn search_qaplib(
    args: &SearchArgs,
    file: &Path,
    names: &[MethodName],
    limits: Limits,
) -> Result<(), Failure> {
    if !file.is_file() {
        return Err(Failure::input(format!("--qaplib {}: no such file", file.display())));
    }
    let inst: Instance = qaplib::read_dat(file).map_err(|e| {
        Failure::input(format!(
            "{e}\n  hint: a QAPLIB NAME.dat holds n, then the n×n flows, then the n×n distances"
        ))
    })?;
    if let Some(f) = &args.plot {
        check_target(f, "--plot", "svg", args.force)?;
    }
    let sln_path = file.with_extension("sln");
    let solution: Option<Solution> =
        if sln_path.exists() { Some(qaplib::read_sln(&sln_path).map_err(Failure::input)?) } else { None };
    let problem = inst.problem().map_err(|e| Failure::input(format!("{}: {e}", file.display())))?;
    let limits = Limits { target: solution.as_ref().map(|s| s.value), ..limits };
    let seed = args.sim.seed.unwrap_or(1);
    let settings = Settings { start: None, seed, limits, keep: args.top };
    let runs = run_methods(&problem, names, &settings, args.sim.quiet, whole)?;
    if let Some(svg_file) = &args.plot {
        let series = trace_series(&runs, Some);
        let title = file.file_stem().map_or_else(|| "instance".into(), |s| s.to_string_lossy().into_owned());
        let optimum: Vec<(String, f64)> = solution.iter().map(|s| ("optimum".to_string(), s.value)).collect();
        let svg = plot::search_svg(&title, &series, "objective", &optimum)?;
        write_file(svg_file, svg.as_bytes(), "--plot")?;
    }
    let gap =
        |v: f64| solution.as_ref().map(|s| if s.value != 0.0 { (v / s.value - 1.0) * 100.0 } else { 0.0 });
    match args.format {
        Format::Json => {
            let json = serde_json::json!({
                "instance": file.display().to_string(),
                "size": inst.n,
                "seed": seed,
                "optimum": solution.as_ref().map(|s| s.value),
                "methods": runs.iter().map(|r| serde_json::json!({
                    "method": r.key(),
                    "iterations": r.outcome.iterations,
                    "elapsed_s": (!args.sim.no_wall_clock).then_some(r.outcome.elapsed_s),
                    "stopped_on_stall": r.outcome.stalled,
                    "best": r.outcome.evaluation.cost,
                    "gap_percent": gap(r.outcome.evaluation.cost),
                    "permutation_1_based": r.outcome.layout.iter().map(|&k| k + 1).collect::<Vec<_>>(),
                })).collect::<Vec<_>>(),
            });
            out(&(serde_json::to_string_pretty(&json).expect("plain data serializes") + "\n"))?;
        }
        Format::Table => {
            let mut text = format!("QAPLIB instance {} (n = {}), seed {seed}\n", file.display(), inst.n);
            match &solution {
                Some(s) => text.push_str(&format!(
                    "  optimum or best known value {} (from {})\n",
                    whole(s.value),
                    sln_path.display()
                )),
                None => text.push_str(&format!("  no {} beside it: no gap to report\n", sln_path.display())),
            }
            text.push_str(&format!("  {} (stopping early at the optimum)\n", limits_text(&limits)));
            if let Some(s) = stall_text(&limits) {
                text.push_str(&format!("  {s}\n"));
            }
            text.push('\n');
            let mut t = Table::new(&["method", "iterations", "ran for", "best", "gap"]);
            for r in &runs {
                t.row(vec![
                    r.title.into(),
                    r.outcome.iterations.to_string(),
                    crate::render::search::ran_for(&r.outcome),
                    whole(r.outcome.evaluation.cost),
                    gap(r.outcome.evaluation.cost).map_or("-".into(), |g| format!("{g:.2}%")),
                ]);
            }
            text.push_str(&t.render(2));
            if let Some(best) =
                runs.iter().min_by(|a, b| a.outcome.evaluation.cost.total_cmp(&b.outcome.evaluation.cost))
            {
                let p: Vec<String> = best.outcome.layout.iter().map(|&k| (k + 1).to_string()).collect();
                text.push_str(&format!(
                    "\n  best permutation (facility → location, 1-based): {}\n",
                    p.join(" ")
                ));
            }
            out(&text)?;
        }
    }
    Ok(())
}
