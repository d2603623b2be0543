//! `layflow search`: find layouts with a low load-distance cost, write them for `compare`, and check them by simulation.

use std::path::{Path, PathBuf};
use std::time::Duration;

use clap::{Args, ValueEnum};
use indicatif::{ProgressBar, ProgressStyle};
use serde::Serialize;

use layflow_models::analysis::StaticPicture;
use layflow_models::plant::{Layout, Plant};
use layflow_models::search::qaplib::{self, Instance, Solution};
use layflow_models::search::{
    self, AnnealParams, LayoutCost, Limits, Method, Outcome, PlantProblem, Problem, Ranked, Settings,
    TabuParams, TracePoint,
};

use crate::compare::{CompareArgs, CompareFormat};
use crate::run::{duration_arg, SimOptions};
use crate::select::SelectArgs;
use crate::table::{num, whole, Table};
use crate::{load, output, plot, Failure, Format};

/// How long each method runs when neither --time-limit nor --iterations is given.
const DEFAULT_TIME_LIMIT_S: f64 = 10.0;

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
    #[arg(long, value_name = "FILE.dat", conflicts_with_all = ["scenario", "out", "validate", "from"])]
    pub qaplib: Option<PathBuf>,
    /// Methods to run, separated by commas: tabu (robust tabu search, Taillard 1991), anneal
    /// (simulated annealing), exchange (steepest-descent pairwise exchange with random restarts), or all.
    #[arg(long, value_enum, value_delimiter = ',', default_value = "tabu")]
    pub method: Vec<MethodName>,
    /// Wall-clock time for each method, e.g. "10s" or "2 min" [default: 10s unless --iterations is given].
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
    #[arg(long, value_name = "FACTOR")]
    pub demand: Option<f64>,
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

/// One method's run.
pub struct MethodRun {
    /// Which method.
    pub name: MethodName,
    /// What it found.
    pub outcome: Outcome,
}

impl MethodRun {
    /// The method's short name (`tabu`, `anneal`, `exchange`).
    pub fn key(&self) -> &'static str {
        self.name.key()
    }

    /// When its best was first reached.
    fn found_at(&self) -> Option<&TracePoint> {
        self.outcome.trace.last()
    }
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
    Ok(Limits { iterations: args.iterations, time_s, target: None })
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
        let bar = if quiet { ProgressBar::hidden() } else { ProgressBar::new_spinner() };
        bar.set_style(
            ProgressStyle::with_template("{spinner} {prefix}: best {msg}, {elapsed} elapsed")
                .expect("valid progress template"),
        );
        bar.set_prefix(name.key());
        bar.enable_steady_tick(Duration::from_millis(120));
        let outcome =
            search::search(problem, &name.method(), settings, |_, best| bar.set_message(shown(best)))
                .map_err(|e| Failure::input(format!("the {} search cannot start: {e}", name.key())))?;
        bar.finish_and_clear();
        runs.push(MethodRun { name, outcome });
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
    if args.validate && args.format == Format::Json {
        return Err(Failure::input(
            "--validate prints the comparison as a table; for JSON, write the layouts with --out, add the \
             file to `layout_files:` and run `layflow compare --format json`",
        ));
    }
    // Check where results go before searching, so a typo costs a second, not the search.
    for (flag, file, ext) in [("--out", &args.out, "yaml"), ("--plot", &args.plot, "svg")] {
        if let Some(f) = file {
            check_target(f, flag, ext)?;
        }
    }
    let plant = load(path)?;
    let factor = args.demand.unwrap_or(plant.demand_factor);
    if !(factor.is_finite() && factor > 0.0) {
        return Err(Failure::input(format!("--demand must be a number > 0, got {factor}")));
    }
    let from = match &args.from {
        None => 0,
        Some(name) => crate::run::layouts(&plant, std::slice::from_ref(name))
            .map_err(|f| Failure::input(f.message().replace("--layout ", "--from ")))?[0],
    };
    let picture = StaticPicture::new(&plant, factor);
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
    let loads_per_h = picture.from_to.iter().sum();
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
        let current = (start_cost.forbidden == 0 && start_cost.rules_broken == 0)
            .then(|| (plant.layouts[from].name.as_str(), cost_value(&start_cost, &pp)));
        let svg = plot::search_svg(&plant.name, &series, unit, current)?;
        write_file(file, svg.as_bytes(), "--plot")?;
    }
    if let Some(file) = &args.out {
        write_file(file, layouts_yaml(&report, path, &found, file).as_bytes(), "--out")?;
    }
    match args.format {
        Format::Table => print!("{}", render(&report, &found, args)),
        Format::Json => {
            let json = json_output(&report, &found, args.sim.no_wall_clock);
            println!("{}", serde_json::to_string_pretty(&json).expect("plain data serializes"));
        }
    }
    if args.validate {
        validate(&plant, path, from, &found, args)?;
    }
    Ok(())
}

/// A layout the search found, named.
struct Found {
    name: String,
    layout: Vec<usize>,
    cost: LayoutCost,
    /// The scenario layout it equals, if any.
    same_as: Option<usize>,
}

/// What every rendering needs.
struct Report<'a> {
    plant: &'a Plant,
    pp: &'a PlantProblem,
    factor: f64,
    /// Loads per hour between departments (the from-to chart's total).
    loads_per_h: f64,
    from: usize,
    start_cost: LayoutCost,
    starts_there: bool,
    seed: u64,
    limits: Limits,
    runs: &'a [MethodRun],
}

/// The figure a layout is ranked by: cost per hour when priced, else load-metres per hour.
fn cost_value(c: &LayoutCost, pp: &PlantProblem) -> f64 {
    if pp.per_load_metre > 0.0 {
        c.total_cost_per_h
    } else {
        c.load_distance_m_per_h
    }
}

/// A search objective (load-metre equivalents) in the same figure; `None` when it counts broken rules.
fn pp_value(objective: f64, pp: &PlantProblem) -> Option<f64> {
    let rules_ok = pp.problem.rules() == 0 || objective < pp.problem.penalty();
    let scale = if pp.per_load_metre > 0.0 { pp.per_load_metre } else { 1.0 };
    (objective.is_finite() && rules_ok).then_some(objective * scale)
}

fn objective_text(objective: f64, pp: &PlantProblem) -> String {
    match pp_value(objective, pp) {
        Some(v) if pp.per_load_metre > 0.0 => format!("{} per hour", num(v)),
        Some(v) => format!("{} load-m/h", whole(v)),
        None => {
            let broken = (objective / pp.problem.penalty()).floor();
            format!("still breaking {broken} adjacency rule(s)")
        }
    }
}

fn trace_series<'a>(
    runs: &'a [MethodRun],
    value: impl Fn(f64) -> Option<f64>,
) -> Vec<plot::SearchSeries<'a>> {
    runs.iter()
        .map(|r| plot::SearchSeries {
            label: r.name.title(),
            points: r.outcome.trace.iter().filter_map(|t| Some((t.elapsed_s, value(t.objective)?))).collect(),
            end_s: r.outcome.elapsed_s,
        })
        .collect()
}

fn limits_text(l: &Limits) -> String {
    match (l.time_s, l.iterations) {
        (Some(t), Some(n)) => {
            format!("{} or {n} iterations, whichever came first", crate::table::dur_plain(t))
        }
        (Some(t), None) => crate::table::dur_plain(t),
        (None, Some(n)) => format!("{n} iterations"),
        (None, None) => "no limit".into(),
    }
}

fn moved(layout: &[usize], from: &[usize]) -> usize {
    layout.iter().zip(from).filter(|(a, b)| a != b).count()
}

fn change(value: f64, base: f64) -> String {
    if base > 0.0 && base.is_finite() {
        format!("{:+.1}%", (value / base - 1.0) * 100.0)
    } else {
        "-".into()
    }
}

fn render(r: &Report, found: &[Found], args: &SearchArgs) -> String {
    let plant = r.plant;
    let rules = &plant.search;
    let mut out = format!("Layout search: {}\n", plant.name);
    let pinned = rules.pinned.iter().filter(|p| p.is_some()).count();
    let empty = rules.keep_empty.iter().filter(|&&e| e).count();
    out.push_str(&format!(
        "  {} departments on {} locations; {pinned} pinned (docks stay where they are unless search.pinned \
         moves them),\n  {} kept empty, {}, {}\n",
        plant.departments.len(),
        plant.locations.len(),
        crate::table::count(empty, "location"),
        crate::table::count(rules.adjacent.len() + rules.apart.len(), "adjacency rule"),
        crate::table::count(rules.floor_costs.len(), "floor cost"),
    ));
    out.push_str(&format!(
        "  flows: the from-to chart at demand ×{:.2} ({} loads/h between departments); distances: {}\n",
        r.factor,
        num(r.loads_per_h),
        plant.distance_rule.describe()
    ));
    let priced = r.pp.per_load_metre > 0.0;
    if priced {
        out.push_str(&format!(
            "  cost: load-distance × {} per load-metre{}\n",
            num(r.pp.per_load_metre),
            if rules.floor_costs.is_empty() { "" } else { " + floor costs" }
        ));
    } else {
        out.push_str("  cost: load-distance only (set costs.per_load_metre to price it)\n");
    }
    out.push_str(&format!("  each method ran for {}, seed {}\n", limits_text(&r.limits), r.seed));
    let start = &plant.layouts[r.from];
    if !r.starts_there {
        out.push_str(&format!(
            "  note: layout \"{}\" breaks the search rules (a department on a location pinned to another or \
             kept empty), so the methods start from a random layout\n",
            start.name
        ));
    }
    out.push('\n');

    let mut t = Table::new(&["method", "iterations", "ran for", "best found after", "best"]);
    for run in r.runs {
        let at = run.found_at();
        t.row(vec![
            run.name.title().into(),
            run.outcome.iterations.to_string(),
            secs(run.outcome.elapsed_s),
            at.map_or("-".into(), |p| format!("{} (iteration {})", secs(p.elapsed_s), p.iteration)),
            objective_text(run.outcome.evaluation.objective, r.pp),
        ]);
    }
    out.push_str(&t.render(2));
    out.push('\n');

    let base = cost_value(&r.start_cost, r.pp);
    let mut header = vec!["layout", "load-distance (load-m/h)"];
    if priced {
        header.extend(["handling /h", "floor /h", "total /h"]);
    }
    header.extend(["vs start", "departments moved", "rules"]);
    let mut t = Table::new(&header);
    let row = |name: String, c: &LayoutCost, vs: String, moves: String| {
        let mut cells = vec![name, whole(c.load_distance_m_per_h)];
        if priced {
            cells.extend([num(c.handling_cost_per_h), num(c.floor_cost_per_h), num(c.total_cost_per_h)]);
        }
        let rules = if c.forbidden > 0 {
            format!("{} on forbidden locations", c.forbidden)
        } else if c.rules_broken > 0 {
            format!("{} broken", c.rules_broken)
        } else {
            "met".into()
        };
        cells.extend([vs, moves, rules]);
        cells
    };
    t.row(row(format!("{} (start)", start.name), &r.start_cost, "-".into(), "-".into()));
    for (l, other) in plant.layouts.iter().enumerate() {
        if l == r.from || found.iter().any(|f| f.same_as == Some(l)) {
            continue;
        }
        let c = r.pp.cost(&other.location_of).expect("scenario layouts are checked on load");
        let vs = change(cost_value(&c, r.pp), base);
        t.row(row(
            format!("{} (scenario)", other.name),
            &c,
            vs,
            moved(&other.location_of, &start.location_of).to_string(),
        ));
    }
    for f in found {
        let name = match f.same_as {
            Some(l) => format!("{} (= {})", f.name, plant.layouts[l].name),
            None => f.name.clone(),
        };
        let vs = change(cost_value(&f.cost, r.pp), base);
        t.row(row(name, &f.cost, vs, moved(&f.layout, &start.location_of).to_string()));
    }
    out.push_str(&t.render(2));

    let ties = found
        .iter()
        .filter(|f| {
            found.first().is_some_and(|b| {
                b.cost.total_cost_per_h == f.cost.total_cost_per_h
                    && b.cost.load_distance_m_per_h == f.cost.load_distance_m_per_h
            })
        })
        .count();
    if ties > 1 {
        out.push_str(&format!(
            "\n  {ties} layouts tie at the lowest cost (mirror images and swaps of departments with the same \
             flows often do):\n  the static method cannot tell them apart; simulation can.\n"
        ));
    }
    if let Some(best) = found.first() {
        let moves: Vec<String> = best
            .layout
            .iter()
            .zip(&start.location_of)
            .enumerate()
            .filter(|(_, (a, b))| a != b)
            .map(|(d, (&to, &was))| {
                format!(
                    "{} {} → {}",
                    plant.departments[d].id, plant.locations[was].id, plant.locations[to].id
                )
            })
            .collect();
        if moves.is_empty() {
            out.push_str(&format!(
                "\n  {} is the start layout: the search found nothing cheaper.\n",
                best.name
            ));
        } else {
            out.push_str(&format!(
                "\n  {} moves {}:\n",
                best.name,
                crate::table::count(moves.len(), "department")
            ));
            for m in moves {
                out.push_str(&format!("    {m}\n"));
            }
        }
    }
    out.push_str(
        "\n  Static cost only: queues, waits for movers and congestion are not counted; the cheapest layout is \
         not always the one that runs best.\n",
    );
    match (&args.out, args.validate) {
        (_, true) => {}
        (Some(file), false) => out.push_str(&format!(
            "  Wrote {}. Add `layout_files: [{}]` to the scenario and run `layflow compare`, or rerun with \
             --validate.\n",
            file.display(),
            file.file_name().map_or_else(|| file.display().to_string(), |n| n.to_string_lossy().into_owned())
        )),
        (None, false) => {
            out.push_str("  Write them with --out FILE.yaml, or simulate them now with --validate.\n")
        }
    }
    out
}

/// Seconds with enough digits for a search that improves within milliseconds.
fn secs(s: f64) -> String {
    if s < 0.01 {
        format!("{:.2} ms", s * 1e3)
    } else if s < 1.0 {
        format!("{:.1} ms", s * 1e3)
    } else if s < 120.0 {
        format!("{s:.2} s")
    } else {
        crate::table::dur_plain(s)
    }
}

/// A name or id as a YAML key or value: plain when that is unambiguous, else double-quoted.
fn yaml_text(s: &str) -> String {
    let plain = !s.is_empty()
        && s.chars().all(|c| c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.'))
        && s.starts_with(|c: char| c.is_ascii_alphabetic())
        && !matches!(
            s.to_ascii_lowercase().as_str(),
            "true" | "false" | "yes" | "no" | "on" | "off" | "null"
        );
    if plain {
        s.to_string()
    } else {
        serde_json::to_string(s).expect("strings serialize")
    }
}

fn layouts_yaml(r: &Report, scenario: &Path, found: &[Found], file: &Path) -> String {
    let plant = r.plant;
    let file_name =
        file.file_name().map_or_else(|| file.display().to_string(), |n| n.to_string_lossy().into_owned());
    let methods: Vec<&str> = r.runs.iter().map(MethodRun::key).collect();
    let mut y = format!(
        "# Layouts found by `layflow search` for {} ({}).\n\
         # Include them with `layout_files: [{file_name}]` in the scenario, then run `layflow compare`.\n\
         # Ranked by static cost only (load-distance and floor costs): queues, movers and congestion\n\
         # are not counted until you simulate them.\n\
         # Methods {}; seed {}; each ran for {}; demand ×{:.2}.\n\
         # The start layout \"{}\" has load-distance {} load-m/h.\n\
         layouts:\n",
        plant.name,
        scenario.display(),
        methods.join(", "),
        r.seed,
        limits_text(&r.limits),
        r.factor,
        plant.layouts[r.from].name,
        whole(r.start_cost.load_distance_m_per_h),
    );
    for (i, f) in found.iter().enumerate() {
        let mut note =
            format!("rank {}: load-distance {} load-m/h", i + 1, whole(f.cost.load_distance_m_per_h));
        if r.pp.per_load_metre > 0.0 {
            note.push_str(&format!(", total {} per hour", num(f.cost.total_cost_per_h)));
        }
        if let Some(l) = f.same_as {
            note.push_str(&format!(", same as layout \"{}\"", plant.layouts[l].name));
        }
        y.push_str(&format!("  # {note}\n  {}:\n", yaml_text(&f.name)));
        for (d, &l) in f.layout.iter().enumerate() {
            y.push_str(&format!(
                "    {}: {}\n",
                yaml_text(&plant.departments[d].id),
                yaml_text(&plant.locations[l].id)
            ));
        }
    }
    y
}

/// A file we are about to write: its folder exists and its name ends in `.ext`.
fn check_target(file: &Path, flag: &str, ext: &str) -> Result<(), Failure> {
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
    Ok(())
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
    output::write_atomic(folder_of(file), &name, bytes)
}

#[derive(Serialize)]
struct JsonOut<'a> {
    plant: &'a str,
    demand_factor: f64,
    seed: u64,
    cost_per_load_metre: f64,
    start: JsonLayout,
    methods: Vec<JsonMethod>,
    layouts: Vec<JsonLayout>,
}

#[derive(Serialize)]
struct JsonMethod {
    method: &'static str,
    iterations: u64,
    #[serde(skip_serializing_if = "Option::is_none")]
    elapsed_s: Option<f64>,
    best_objective: f64,
}

#[derive(Serialize)]
struct JsonLayout {
    name: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    same_as: Option<String>,
    load_distance_m_per_h: f64,
    handling_cost_per_h: f64,
    floor_cost_per_h: f64,
    total_cost_per_h: f64,
    rules_broken: usize,
    departments_moved: usize,
    /// Department id → location id, in scenario order.
    assignment: Vec<[String; 2]>,
}

fn json_layout(
    plant: &Plant,
    name: String,
    same_as: Option<usize>,
    layout: &[usize],
    c: &LayoutCost,
    from: &[usize],
) -> JsonLayout {
    JsonLayout {
        name,
        same_as: same_as.map(|l| plant.layouts[l].name.clone()),
        load_distance_m_per_h: c.load_distance_m_per_h,
        handling_cost_per_h: c.handling_cost_per_h,
        floor_cost_per_h: c.floor_cost_per_h,
        total_cost_per_h: c.total_cost_per_h,
        rules_broken: c.rules_broken,
        departments_moved: moved(layout, from),
        assignment: layout
            .iter()
            .enumerate()
            .map(|(d, &l)| [plant.departments[d].id.clone(), plant.locations[l].id.clone()])
            .collect(),
    }
}

fn json_output<'a>(r: &Report<'a>, found: &[Found], no_wall_clock: bool) -> JsonOut<'a> {
    let plant = r.plant;
    let start = &plant.layouts[r.from];
    JsonOut {
        plant: &plant.name,
        demand_factor: r.factor,
        seed: r.seed,
        cost_per_load_metre: r.pp.per_load_metre,
        start: json_layout(
            plant,
            start.name.clone(),
            None,
            &start.location_of,
            &r.start_cost,
            &start.location_of,
        ),
        methods: r
            .runs
            .iter()
            .map(|m| JsonMethod {
                method: m.key(),
                iterations: m.outcome.iterations,
                elapsed_s: (!no_wall_clock).then_some(m.outcome.elapsed_s),
                best_objective: m.outcome.evaluation.objective,
            })
            .collect(),
        layouts: found
            .iter()
            .map(|f| json_layout(plant, f.name.clone(), f.same_as, &f.layout, &f.cost, &start.location_of))
            .collect(),
    }
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
    println!();
    if names.len() < 2 {
        println!(
            "Nothing to validate: every layout found is the start layout \"{}\" itself.",
            plant.layouts[from].name
        );
        return Ok(());
    }
    println!("Validating by simulation: {} with common random numbers.", names.join(", "));
    let compare = CompareArgs {
        scenario: path.to_path_buf(),
        layouts: names.clone(),
        baseline: Some(names[0].clone()),
        demand: args.demand.into_iter().collect(),
        metric: args.metric.clone(),
        select: args.select.clone(),
        format: CompareFormat::Table,
        out: None,
        sim: args.sim.clone(),
    };
    crate::compare::compare_plant(&plant, &compare)
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
        check_target(f, "--plot", "svg")?;
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
        let svg =
            plot::search_svg(&title, &series, "objective", solution.as_ref().map(|s| ("optimum", s.value)))?;
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
                    "best": r.outcome.evaluation.cost,
                    "gap_percent": gap(r.outcome.evaluation.cost),
                    "permutation_1_based": r.outcome.layout.iter().map(|&k| k + 1).collect::<Vec<_>>(),
                })).collect::<Vec<_>>(),
            });
            println!("{}", serde_json::to_string_pretty(&json).expect("plain data serializes"));
        }
        Format::Table => {
            println!("QAPLIB instance {} (n = {}), seed {seed}", file.display(), inst.n);
            match &solution {
                Some(s) => {
                    println!("  optimum or best known value {} (from {})", whole(s.value), sln_path.display())
                }
                None => println!("  no {} beside it: no gap to report", sln_path.display()),
            }
            println!("  each method ran for {} (stopping early at the optimum)\n", limits_text(&limits));
            let mut t = Table::new(&["method", "iterations", "ran for", "best", "gap"]);
            for r in &runs {
                t.row(vec![
                    r.name.title().into(),
                    r.outcome.iterations.to_string(),
                    secs(r.outcome.elapsed_s),
                    whole(r.outcome.evaluation.cost),
                    gap(r.outcome.evaluation.cost).map_or("-".into(), |g| format!("{g:.2}%")),
                ]);
            }
            print!("{}", t.render(2));
            if let Some(best) =
                runs.iter().min_by(|a, b| a.outcome.evaluation.cost.total_cmp(&b.outcome.evaluation.cost))
            {
                let p: Vec<String> = best.outcome.layout.iter().map(|&k| (k + 1).to_string()).collect();
                println!("\n  best permutation (facility → location, 1-based): {}", p.join(" "));
            }
        }
    }
    Ok(())
}
