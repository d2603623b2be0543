//! `search`'s report: the methods' runs, the layouts found as tables, JSON and a layout file, and progress series.

use std::path::Path;

use layflow_models::plant::{Home, Plant};
use layflow_models::search::{LayoutCost, Limits, Outcome, PlantProblem, TracePoint};
use serde::Serialize;

use super::table::{num, whole, Table};

/// One method's run.
pub struct MethodRun {
    /// The method's short name (`tabu`, `anneal`, `exchange`).
    pub key: &'static str,
    /// The method in words, with its source.
    pub title: &'static str,
    /// What it found.
    pub outcome: Outcome,
}

impl MethodRun {
    /// The method's short name.
    pub fn key(&self) -> &'static str {
        self.key
    }

    /// When its best was first reached.
    fn found_at(&self) -> Option<&TracePoint> {
        self.outcome.trace.last()
    }
}

/// A layout the search found, named.
pub struct Found {
    /// Its name, as written to the layout file.
    pub name: String,
    /// The layout it ran under.
    pub layout: Vec<usize>,
    /// Its static cost.
    pub cost: LayoutCost,
    /// The scenario layout it equals, if any.
    pub same_as: Option<usize>,
}

/// What every rendering needs.
pub struct Report<'a> {
    /// The plant's name.
    pub plant: &'a Plant,
    /// The search problem built from the scenario.
    pub pp: &'a PlantProblem,
    /// Demand factor of the from-to chart.
    pub factor: f64,
    /// Loads per hour between departments (the from-to chart's total).
    pub loads_per_h: f64,
    /// Index of the start layout.
    pub from: usize,
    /// The start layout's static cost.
    pub start_cost: LayoutCost,
    /// Whether the search could start from it (it keeps every pin and empty location).
    pub starts_there: bool,
    /// Base seed.
    pub seed: u64,
    /// Each method's limits.
    pub limits: Limits,
    /// Each method's run.
    pub runs: &'a [MethodRun],
}

/// The figure a layout is ranked by: cost per hour when priced, else load-metres per hour.
pub fn cost_value(c: &LayoutCost, pp: &PlantProblem) -> f64 {
    if pp.per_load_metre > 0.0 {
        c.total_cost_per_h
    } else {
        c.load_distance_m_per_h
    }
}

/// A search objective (load-metre equivalents) in the same figure; `None` when it counts broken rules.
pub fn pp_value(objective: f64, pp: &PlantProblem) -> Option<f64> {
    let rules_ok = pp.problem.rules() == 0 || objective < pp.problem.penalty();
    let scale = if pp.per_load_metre > 0.0 { pp.per_load_metre } else { 1.0 };
    (objective.is_finite() && rules_ok).then_some(objective * scale)
}

pub fn objective_text(objective: f64, pp: &PlantProblem) -> String {
    match pp_value(objective, pp) {
        Some(v) if pp.per_load_metre > 0.0 => format!("{} per hour", num(v)),
        Some(v) => format!("{} load-m/h", whole(v)),
        None => {
            let broken = (objective / pp.problem.penalty()).floor();
            format!("still breaking {broken} adjacency rule(s)")
        }
    }
}

pub fn trace_series<'a>(
    runs: &'a [MethodRun],
    value: impl Fn(f64) -> Option<f64>,
) -> Vec<super::plot::SearchSeries<'a>> {
    runs.iter()
        .map(|r| super::plot::SearchSeries {
            label: r.title,
            points: r.outcome.trace.iter().filter_map(|t| Some((t.elapsed_s, value(t.objective)?))).collect(),
            end_s: r.outcome.elapsed_s,
        })
        .collect()
}

/// The limits in words, saying they are per method.
pub fn limits_text(l: &Limits) -> String {
    let budget = match (l.time_s, l.iterations) {
        (Some(t), Some(n)) => {
            format!("{} or {n} iterations, whichever came first", super::table::dur_plain(t))
        }
        (Some(t), None) => super::table::dur_plain(t),
        (None, Some(n)) => format!("{n} iterations"),
        (None, None) => "no limit".into(),
    };
    format!("each method ran for {budget} (the limit is per method, not in total)")
}

/// The stall rule in words, when the limits have one (a time limit).
pub fn stall_text(l: &Limits) -> Option<String> {
    let (t, s) = (l.time_s?, l.stall_share?);
    Some(format!(
        "a method stops early once {}% of its time ({}) passes with no improvement",
        (s * 100.0).round(),
        super::table::dur_plain(t * s)
    ))
}

/// How long a method ran, marked when it stopped on a stall.
pub fn ran_for(o: &Outcome) -> String {
    if o.stalled {
        format!("{} (stalled)", secs(o.elapsed_s))
    } else {
        secs(o.elapsed_s)
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

/// The search as tables: the methods, the layouts found, and the moves the best asks for.
pub fn render(r: &Report, found: &[Found], out_file: Option<&Path>, validate: bool) -> String {
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
        super::table::count(empty, "location"),
        super::table::count(rules.adjacent.len() + rules.apart.len(), "adjacency rule"),
        super::table::count(rules.floor_costs.len(), "floor cost"),
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
    out.push_str(&format!("  {}; seed {}\n", limits_text(&r.limits), r.seed));
    if let Some(s) = stall_text(&r.limits) {
        out.push_str(&format!("  {s}\n"));
    }
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
            run.title.into(),
            run.outcome.iterations.to_string(),
            ran_for(&run.outcome),
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
    // Every broken rule, named under the table (the column keeps its count).
    let mut broken: Vec<(String, Vec<String>)> = Vec::new();
    let mut name_broken = |name: &str, layout: &[usize]| {
        let b = PlantProblem::broken_rules(plant, layout);
        if !b.is_empty() {
            broken.push((name.to_string(), b));
        }
    };
    name_broken(&start.name, &start.location_of);
    t.row(row(format!("{} (start)", start.name), &r.start_cost, "-".into(), "-".into()));
    for (l, other) in plant.layouts.iter().enumerate() {
        if l == r.from || found.iter().any(|f| f.same_as == Some(l)) {
            continue;
        }
        let c = r.pp.cost(&other.location_of).expect("scenario layouts are checked on load");
        name_broken(&other.name, &other.location_of);
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
        name_broken(&f.name, &f.layout);
        t.row(row(name, &f.cost, vs, moved(&f.layout, &start.location_of).to_string()));
    }
    out.push_str(&t.render(2));
    for (name, rules) in &broken {
        out.push_str(&format!("  {name} breaks: {}\n", rules.join("; ")));
    }

    let tied: Vec<&Found> = found
        .iter()
        .filter(|f| {
            found.first().is_some_and(|b| {
                b.cost.total_cost_per_h == f.cost.total_cost_per_h
                    && b.cost.load_distance_m_per_h == f.cost.load_distance_m_per_h
            })
        })
        .collect();
    if tied.len() > 1 {
        out.push_str(&ties_text(plant, &tied));
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
                super::table::count(moves.len(), "department")
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
    match (out_file, validate) {
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

/// Whether two layouts put every pair of departments the same distance apart
/// (both ways): mirror images, rotations, or swaps of interchangeable
/// places. The static cost is then equal for any flows, not only these.
fn same_distances(plant: &Plant, a: &[usize], b: &[usize]) -> bool {
    let n = a.len();
    (0..n).all(|i| (0..n).all(|j| plant.distance(a[i], a[j]) == plant.distance(b[i], b[j])))
}

/// The places movers drive to or from that stay put whatever the layout
/// (homes and parking places at a location), named.
fn fixed_places(plant: &Plant) -> Vec<(String, usize)> {
    let mut v = Vec::new();
    for f in plant.fleets() {
        if let Home::Location(l) = f.home {
            v.push((format!("{}'s home {}", f.id, plant.locations[l].id), l));
        }
        for &l in &f.parking {
            v.push((format!("{}'s parking place {}", f.id, plant.locations[l].id), l));
        }
    }
    v
}

/// What a tie at the lowest cost means, in words. Layouts that put every
/// pair of departments the same distance apart are mirror images to the
/// static method; simulation sees them as equal too unless a mover's trip
/// differs between them through something the static method ignores: a
/// home or parking place fixed at a location, or traffic in the aisles.
fn ties_text(plant: &Plant, tied: &[&Found]) -> String {
    let names: Vec<&str> = tied.iter().map(|f| f.name.as_str()).collect();
    let names = names.join(", ");
    let first = &tied[0].layout;
    if !tied[1..].iter().all(|f| same_distances(plant, first, &f.layout)) {
        return format!(
            "\n  {names} tie at the lowest cost, but the distances between departments differ (departments \
             with the same\n  flows swapped): the static method cannot tell them apart; simulation can, \
             through the queues and\n  mover trips each arrangement makes.\n"
        );
    }
    let mut differs: Vec<String> = fixed_places(plant)
        .into_iter()
        .filter(|(_, p)| {
            tied[1..].iter().any(|f| {
                first.iter().zip(&f.layout).any(|(&a, &b)| {
                    plant.distance(*p, a) != plant.distance(*p, b)
                        || plant.distance(a, *p) != plant.distance(b, *p)
                })
            })
        })
        .map(|(name, _)| format!("{name} is at different distances from the departments in each"))
        .collect();
    if plant.aisles.is_some() {
        differs.push(
            "trips follow mirrored paths through the aisles, where one-way aisles, intersections and \
                      passing rules need not be symmetric"
                .into(),
        );
    }
    let head = format!(
        "\n  {names} tie at the lowest cost because they are mirror images: every department is the same \
         distance\n  from every other in each, so the static method sees them as equal."
    );
    if differs.is_empty() {
        format!(
            "{head} So does simulation: every trip a mover\n  makes (between departments, homes and parking \
             places) has the same length in each, so with the\n  same seed they give the same numbers. Pick \
             either.\n"
        )
    } else {
        format!(
            "{head} Simulation sees them as equal too\n  except through what the static method ignores, \
             which differs here: {}.\n  Simulate them (--validate) to see whether that matters.\n",
            differs.join("; ")
        )
    }
}

/// Seconds with enough digits for a search that improves within milliseconds.
pub fn secs(s: f64) -> String {
    if s < 0.01 {
        format!("{:.2} ms", s * 1e3)
    } else if s < 1.0 {
        format!("{:.1} ms", s * 1e3)
    } else if s < 120.0 {
        format!("{s:.2} s")
    } else {
        super::table::dur_plain(s)
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

pub fn layouts_yaml(r: &Report, scenario: &Path, found: &[Found], file: &Path) -> String {
    let plant = r.plant;
    let file_name =
        file.file_name().map_or_else(|| file.display().to_string(), |n| n.to_string_lossy().into_owned());
    let methods: Vec<&str> = r.runs.iter().map(MethodRun::key).collect();
    let mut y = format!(
        "# Layouts found by `layflow search` for {} ({}).\n\
         # Include them with `layout_files: [{file_name}]` in the scenario, then run `layflow compare`.\n\
         # Ranked by static cost only (load-distance and floor costs): queues, movers and congestion\n\
         # are not counted until you simulate them.\n\
         # Methods {}; seed {}; {}{}; demand ×{:.2}.\n\
         # The start layout \"{}\" has load-distance {} load-m/h.\n\
         layouts:\n",
        plant.name,
        scenario.display(),
        methods.join(", "),
        r.seed,
        limits_text(&r.limits),
        stall_text(&r.limits).map_or(String::new(), |s| format!("; {s}")),
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

#[derive(Serialize)]
pub struct JsonOut<'a> {
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
    /// It stopped early: half its time limit passed with no improvement.
    stopped_on_stall: bool,
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
    /// Each broken rule (adjacency pair, pin, empty location) in words.
    broken_rules: Vec<String>,
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
        broken_rules: PlantProblem::broken_rules(plant, layout),
        departments_moved: moved(layout, from),
        assignment: layout
            .iter()
            .enumerate()
            .map(|(d, &l)| [plant.departments[d].id.clone(), plant.locations[l].id.clone()])
            .collect(),
    }
}

pub fn json_output<'a>(r: &Report<'a>, found: &[Found], no_wall_clock: bool) -> JsonOut<'a> {
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
                stopped_on_stall: m.outcome.stalled,
                best_objective: m.outcome.evaluation.objective,
            })
            .collect(),
        layouts: found
            .iter()
            .map(|f| json_layout(plant, f.name.clone(), f.same_as, &f.layout, &f.cost, &start.location_of))
            .collect(),
    }
}
