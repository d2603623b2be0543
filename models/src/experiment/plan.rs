//! Experiment plans: the YAML file, its factors and levels, the design points they make, and the plant each point runs.
//!
//! A factor is `layout`, `demand`, or a path to any field of the scenario
//! (`fleets.forklifts.count`, `products.pump-housing.demand.per_hour`):
//! keys of mappings, and in lists either a 0-based index or the `id` of an
//! element. Each design point is the scenario with its levels written in,
//! compiled like any scenario, so a level the scenario would refuse is
//! refused here, with the design point named.
//!
//! Design points are an index into the factor grid ([`Experiment::point`])
//! and are compiled when a worker needs one ([`Experiment::setup`], with a
//! small cache), so plan memory does not grow with a plant per point. At
//! load, design point 1 and, for every factor, each of its levels (once)
//! are compiled, so a bad level is refused at once. A plan of up to
//! [`FULL_HASH_POINTS`] points compiles every point then too, because its
//! content hash covers every compiled plant (the hash results folders were
//! made with); a larger plan's hash covers the scenario document and the
//! levels instead (see [`Experiment::content_hash`]), and a point that
//! fails only in combination is reported when it is reached.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};

use serde::Deserialize;
use serde_norway::{Mapping, Value};
use sha2::{Digest, Sha256};

use crate::plant::Plant;
use crate::sim::{Plan, RunSpec};
use crate::timebuckets::{By, Grid};
use crate::units::parse_duration;

/// A plan as written (see the module notes).
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct PlanSpec {
    scenario: String,
    replications: u32,
    seed: Option<u64>,
    horizon: Option<String>,
    warmup: Option<String>,
    #[serde(default = "yes")]
    common_random_numbers: bool,
    factors: Option<Mapping>,
    points: Option<Vec<Mapping>>,
    /// Time buckets every unit also reports by (`hour-of-day`, `shift`, …).
    by: Option<String>,
}

fn yes() -> bool {
    true
}

/// What a factor changes.
#[derive(Debug, Clone, PartialEq)]
pub enum FactorKind {
    /// The layout simulated (levels are layout names).
    Layout,
    /// The demand factor (levels are numbers > 0).
    Demand,
    /// A field of the scenario, by its path.
    Field(Vec<String>),
}

/// One factor of the plan.
#[derive(Debug, Clone, PartialEq)]
pub struct Factor {
    /// As written in the plan, e.g. `fleets.forklifts.count`.
    pub name: String,
    /// What it changes.
    pub kind: FactorKind,
}

/// One design point: a level for every factor (`None`: the scenario's own value).
#[derive(Debug, Clone, PartialEq)]
pub struct DesignPoint {
    /// Levels in factor order.
    pub levels: Vec<Option<Value>>,
}

impl DesignPoint {
    /// Each level as text (`-` for the scenario's own), for tables and CSV.
    pub fn labels(&self) -> Vec<String> {
        self.levels.iter().map(|l| l.as_ref().map_or_else(|| "-".to_string(), value_text)).collect()
    }
}

/// A YAML scalar as plain text.
pub fn value_text(v: &Value) -> String {
    match v {
        Value::String(s) => s.clone(),
        Value::Number(n) => n.to_string(),
        Value::Bool(b) => b.to_string(),
        Value::Null => "null".into(),
        other => serde_norway::to_string(other).unwrap_or_default().trim().to_string(),
    }
}

/// Plans with at most this many design points keep the content hash over
/// every compiled plant (and so compile every point at load); larger plans
/// hash the scenario document and the levels (see [`Experiment::content_hash`]).
pub const FULL_HASH_POINTS: usize = 10_000;

/// The most design points a plan may have: the results file's header lists
/// every point's levels (about 100 bytes each in memory), so ten million
/// points hold about 1 GB; split a larger study into several plans.
pub const MAX_POINTS: u64 = 10_000_000;

/// Design points compiled at load to try every level; a plan with more distinct levels than this
/// has the rest checked when their points are reached.
const MAX_PROBES: usize = 2_000;

/// Compiled design points kept at once; a worker's units of one point are
/// consecutive, so a few per thread suffice.
const CACHE: usize = 64;

/// The design points: a full factorial (an index into the grid of levels) or a list.
#[derive(Debug, Clone)]
enum Design {
    /// Every combination, the last factor varying fastest.
    Factorial(Vec<Vec<Value>>),
    /// The points as listed.
    List(Vec<DesignPoint>),
}

impl Design {
    fn len(&self) -> usize {
        match self {
            Design::Factorial(levels) => levels.iter().map(Vec::len).product(),
            Design::List(points) => points.len(),
        }
    }

    fn point(&self, p: usize) -> DesignPoint {
        match self {
            Design::Factorial(levels) => {
                let mut rest = p;
                let mut out = vec![None; levels.len()];
                for (f, list) in levels.iter().enumerate().rev() {
                    out[f] = Some(list[rest % list.len()].clone());
                    rest /= list.len();
                }
                DesignPoint { levels: out }
            }
            Design::List(points) => points[p].clone(),
        }
    }

    /// Points that together show every factor's every level once: design
    /// point 1 first, then (for a grid) each other level with the other
    /// factors at their first, (for a list) the first point with each level.
    fn level_probes(&self) -> Vec<usize> {
        let mut out = vec![0];
        match self {
            Design::Factorial(levels) => {
                let mut stride = 1;
                for list in levels.iter().rev() {
                    out.extend((1..list.len()).map(|i| i * stride));
                    stride *= list.len();
                }
            }
            Design::List(points) => {
                let factors = points.first().map_or(0, |p| p.levels.len());
                for f in 0..factors {
                    let mut seen: std::collections::HashSet<&Option<Value>> =
                        std::collections::HashSet::new();
                    for (i, p) in points.iter().enumerate() {
                        if seen.insert(&p.levels[f]) {
                            out.push(i);
                        }
                    }
                }
            }
        }
        out.sort_unstable();
        out.dedup();
        // A list may give every point its own level: past this many, the rest are checked when reached.
        out.truncate(MAX_PROBES);
        out
    }
}

/// What compiling a design point needs: the scenario document, its plant, the plan's settings.
#[derive(Debug)]
struct Compiler {
    file: PathBuf,
    text: String,
    scenario: PathBuf,
    scenario_text: String,
    base: Value,
    base_plant: Plant,
    horizon: Option<f64>,
    warmup: Option<f64>,
    seed: u64,
    common_random_numbers: bool,
    /// `by:`: every point's units also report by these time buckets.
    by: Option<By>,
    /// `--allow-overload`: every point's plant runs with the WIP cap.
    allow_overload: bool,
}

/// A checked plan; its design points are compiled when needed.
#[derive(Debug)]
pub struct Experiment {
    /// The plan file.
    pub file: PathBuf,
    /// The scenario file, resolved against the plan's folder.
    pub scenario: PathBuf,
    /// SHA-256 of the scenario file's text, hex: tells "the scenario changed" apart from other changes.
    pub scenario_sha256: String,
    /// Replications of every design point.
    pub replications: u32,
    /// Base seed of every stream.
    pub seed: u64,
    /// Replication r of every design point sees the same random numbers.
    pub common_random_numbers: bool,
    /// The factors, in plan order.
    pub factors: Vec<Factor>,
    /// `by:`: every unit also reports each metric per time bucket.
    pub by: Option<By>,
    /// The design points, in plan order (full factorial: the last factor varies fastest).
    design: Design,
    compiler: Compiler,
    /// Design point 1, compiled at load: every point reports its metrics.
    first: Arc<Setup>,
    /// Its metric labels: every point must report the same.
    first_metrics: Vec<String>,
    cache: Mutex<Vec<(usize, Arc<Setup>)>>,
    /// Content hash of everything that decides the results (plan settings,
    /// every design point's compiled plant, the layflow version), hex.
    pub hash: String,
}

/// What one design point runs.
#[derive(Debug, Clone)]
pub struct Setup {
    /// The plant with the point's levels written in.
    pub plant: Plant,
    /// Layout, horizon, warm-up, demand factor and seed.
    pub spec: RunSpec,
    /// The plant prepared for the simulation of that layout.
    pub sim: Plan,
}

/// (design point, replication) of unit `u` when each point has `replications`
/// consecutive units: the numbering every journal, shard and merge shares.
pub fn unit_of(u: u64, replications: u32) -> (usize, u64) {
    let r = u64::from(replications);
    ((u / r) as usize, u % r)
}

impl Experiment {
    /// Units of work: design points × replications.
    pub fn units(&self) -> u64 {
        self.point_count() as u64 * u64::from(self.replications)
    }

    /// The number of design points.
    pub fn point_count(&self) -> usize {
        self.design.len()
    }

    /// Design point `p` (0-based): its level of every factor.
    pub fn point(&self, p: usize) -> DesignPoint {
        self.design.point(p)
    }

    /// Design point 1, compiled at load.
    pub fn first(&self) -> &Setup {
        &self.first
    }

    /// (design point, replication) of unit `u`: replications of a point are consecutive.
    pub fn unit(&self, u: u64) -> (usize, u64) {
        unit_of(u, self.replications)
    }

    /// Design point `p` compiled (from a small cache, or now). An error is
    /// the plan's (exit 2), naming the design point and its levels.
    pub fn setup(&self, p: usize) -> Result<Arc<Setup>, PlanError> {
        if p == 0 {
            return Ok(self.first.clone());
        }
        if let Some((_, s)) = self.cache.lock().expect("no panic holding the cache").iter().find(|c| c.0 == p)
        {
            return Ok(s.clone());
        }
        let s = Arc::new(self.compile(p)?);
        let mut cache = self.cache.lock().expect("no panic holding the cache");
        if cache.len() >= CACHE {
            cache.remove(0);
        }
        cache.push((p, s.clone()));
        Ok(s)
    }

    fn compile(&self, p: usize) -> Result<Setup, PlanError> {
        let s = compile_point(&self.compiler, &self.factors, p, &self.design.point(p))?;
        let here: Vec<String> = crate::metrics::metrics(&s.plant).iter().map(|m| m.label()).collect();
        if here != self.first_metrics {
            return Err(err(
                &self.compiler.file,
                None,
                format!("design point {} changes which products, departments or fleets the plant has", p + 1),
                "factors may change values, not the plant's structure",
            ));
        }
        let labels = |x: &Setup| x.sim.buckets().map(|g| g.labels.clone());
        if labels(&s) != labels(&self.first) {
            return Err(err(
                &self.compiler.file,
                line_of(&self.compiler.text, "by"),
                format!("by: design point {} has other time buckets than design point 1", p + 1),
                "every point must have the same buckets: vary the horizon or the calendars with a cyclic `by:` \
                 (hour-of-day, day-of-week), or run the points as separate plans",
            ));
        }
        Ok(s)
    }

    /// The content hash this plan would have with `replications` per design
    /// point: everything that decides the results, hex. With the plan's own
    /// count it is [`Experiment::hash`]; with another it tells whether a
    /// folder differs from this plan in its replications alone.
    ///
    /// A plan of up to [`FULL_HASH_POINTS`] points hashes the plan settings,
    /// every design point's compiled plant and the layflow version (so an
    /// edit that leaves every plant alone changes nothing); this compiles
    /// every point, one at a time. A larger plan hashes the plan settings,
    /// the scenario as a YAML document (comments and layout of the text do
    /// not count), the levels and the layflow version: the same inputs the
    /// plants are compiled from, without compiling a million of them.
    pub fn content_hash(&self, replications: u32) -> Result<String, PlanError> {
        let mut h = Sha256::new();
        h.update(format!("layflow {}\n", env!("CARGO_PKG_VERSION")));
        h.update(format!("{:?}\n{}\n{}\n", replications, self.seed, self.common_random_numbers));
        // Only when given, so a plan without `by:` keeps the hash it had before `by:` existed.
        if let Some(by) = &self.by {
            h.update(format!("by {}\n", by.name()));
        }
        for (s, f) in self.factors.iter().enumerate() {
            h.update(format!("factor {s} {:?}\n", f));
        }
        let n = self.point_count();
        if n <= FULL_HASH_POINTS {
            for p in 0..n {
                let s = if p == 0 { self.first.clone() } else { Arc::new(self.compile(p)?) };
                h.update(format!("{:?}\n{:?}\n{:?}\n", self.point(p).levels, s.spec, s.plant));
            }
        } else {
            let c = &self.compiler;
            h.update(format!("points {n} by document\n{:?}\n{:?}\n", c.horizon, c.warmup));
            if c.allow_overload {
                h.update("allow overload\n");
            }
            h.update(serde_norway::to_string(&c.base).unwrap_or_default());
            match &self.design {
                Design::Factorial(levels) => h.update(format!("factorial {levels:?}\n")),
                Design::List(points) => {
                    for p in points {
                        h.update(format!("{:?}\n", p.levels));
                    }
                }
            }
        }
        Ok(h.finalize().iter().map(|b| format!("{b:02x}")).collect())
    }
}

/// A plan error, for people: which file, where, what to do.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanError {
    /// The message, naming the file and (where known) the line.
    pub message: String,
}

impl std::fmt::Display for PlanError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.message)
    }
}

fn err(file: &Path, line: Option<usize>, what: impl std::fmt::Display, hint: &str) -> PlanError {
    let mut message = match line {
        Some(l) => format!("error in {}, line {l}: {what}", file.display()),
        None => format!("error in {}: {what}", file.display()),
    };
    if !hint.is_empty() {
        let _ = write!(message, "\nhint: {hint}");
    }
    PlanError { message }
}

/// The first line (1-based) whose text, trimmed, starts with `key` followed by `:`.
fn line_of(text: &str, key: &str) -> Option<usize> {
    let quoted = [key.to_string(), format!("\"{key}\""), format!("'{key}'")];
    text.lines()
        .position(|l| {
            let t = l.trim_start().trim_start_matches("- ").trim_start();
            quoted
                .iter()
                .any(|k| t.strip_prefix(k.as_str()).is_some_and(|rest| rest.trim_start().starts_with(':')))
        })
        .map(|i| i + 1)
}

/// Split `fleets.forklifts.count` or `products[0].demand` into segments.
fn segments(path: &str) -> Vec<String> {
    path.replace('[', ".").replace(']', "").split('.').filter(|s| !s.is_empty()).map(str::to_string).collect()
}

/// The value at `path`, creating the last key of a mapping if missing (the
/// scenario's own checks then refuse a key it does not know).
fn field_mut<'a>(root: &'a mut Value, path: &[String]) -> Result<&'a mut Value, String> {
    let mut at = root;
    for (i, seg) in path.iter().enumerate() {
        let last = i + 1 == path.len();
        let here = path[..i].join(".");
        let place = if here.is_empty() { "the top level".to_string() } else { format!("`{here}`") };
        at = match at {
            Value::Mapping(m) => {
                let key = Value::String(seg.clone());
                if !m.contains_key(&key) {
                    if last {
                        m.insert(key.clone(), Value::Null);
                    } else {
                        let keys: Vec<String> = m.keys().map(value_text).collect();
                        return Err(format!("{place} has no `{seg}` (it has: {})", keys.join(", ")));
                    }
                }
                m.get_mut(&key).expect("present")
            }
            Value::Sequence(items) => {
                let n = items.len();
                let idx = match seg.parse::<usize>() {
                    Ok(k) if k < n => k,
                    Ok(k) => return Err(format!("{place} has {n} entries; index {k} is past the end")),
                    Err(_) => {
                        let ids: Vec<String> =
                            items.iter().filter_map(|v| v.get("id").map(value_text)).collect();
                        items
                            .iter()
                            .position(|v| v.get("id").map(value_text).as_deref() == Some(seg.as_str()))
                            .ok_or_else(|| {
                                format!("{place} has no entry with id `{seg}` (ids: {})", ids.join(", "))
                            })?
                    }
                };
                &mut items[idx]
            }
            _ => return Err(format!("{place} is a single value; `{seg}` cannot be looked up in it")),
        };
    }
    Ok(at)
}

/// Read and check a plan: design point 1 and every level are compiled now,
/// the other points when a worker needs them. `allow_overload`
/// (`--allow-overload`) runs every point with the WIP cap, and enters the
/// content hash.
pub fn load(file: &Path, allow_overload: bool) -> Result<Experiment, PlanError> {
    let text = crate::textfile::read_text(file).map_err(|e| match e {
        crate::textfile::TextError::Io(e) => {
            err(file, None, format!("cannot read the plan: {e}"), "check the path")
        }
        crate::textfile::TextError::Encoding { line, message, hint, .. } => err(file, line, message, hint),
    })?;
    let de = serde_norway::Deserializer::from_str(&text);
    let spec: PlanSpec = serde_path_to_error::deserialize(de).map_err(|e| {
        let line = e.inner().location().map(|l| l.line());
        let path = e.path().to_string();
        // serde's words name Rust types (`u32`, `struct PlanSpec`); say it in the plan's words.
        let raw = crate::scenario::bare_message(e.inner());
        let (message, hint) = crate::scenario::type_error(&raw, &path).unwrap_or((raw, None));
        let what = if path == "." { message } else { format!("{path}: {message}") };
        let hint = hint.unwrap_or_else(|| {
            "a plan holds scenario, replications, optional seed, horizon, warmup, common_random_numbers, by, and \
             `factors:` (every combination) or `points:` (a list)"
                .to_string()
        });
        err(file, line, what, &hint)
    })?;
    if spec.replications == 0 {
        return Err(err(file, line_of(&text, "replications"), "replications must be at least 1", ""));
    }
    let r = u64::from(spec.replications);
    let max = u64::from(crate::limits::MAX_REPLICATIONS);
    if let Err(m) = crate::limits::check_count("replications", r, max, crate::limits::MAX_REPLICATIONS_WHY) {
        return Err(err(file, line_of(&text, "replications"), format!("replications: {m}"), ""));
    }
    let dir = file.parent().unwrap_or_else(|| Path::new(""));
    let scenario = dir.join(&spec.scenario);
    let scenario_text = crate::textfile::read_text(&scenario).map_err(|e| match e {
        crate::textfile::TextError::Io(e) => err(
            file,
            line_of(&text, "scenario"),
            format!("cannot read the scenario {}: {e}", scenario.display()),
            "the scenario is named relative to the plan file",
        ),
        crate::textfile::TextError::Encoding { line, message, hint, .. } => {
            err(&scenario, line, message, hint)
        }
    })?;
    // The scenario as it stands must be valid on its own.
    let base_plant =
        crate::parse_scenario(&scenario_text, &scenario).map_err(|e| PlanError { message: e.to_string() })?;
    let base: Value = serde_norway::from_str(&scenario_text)
        .map_err(|e| err(&scenario, None, format!("not YAML: {e}"), ""))?;

    let (factors, design) = design(file, &text, &spec, &base)?;
    let duration = |key: &str, v: &Option<String>| -> Result<Option<f64>, PlanError> {
        v.as_ref()
            .map(|t| {
                parse_duration(t).ok().filter(|s| *s >= 0.0).ok_or_else(|| {
                    err(
                        file,
                        line_of(&text, key),
                        format!("{key} {t:?} is not a duration ≥ 0"),
                        "write e.g. \"20 d\" or \"36 h\"",
                    )
                })
            })
            .transpose()
    };
    let horizon = duration("horizon", &spec.horizon)?;
    let warmup = duration("warmup", &spec.warmup)?;
    let seed = spec.seed.unwrap_or(base_plant.run.seed);
    let by = spec
        .by
        .as_deref()
        .map(|t| {
            By::parse(t).map_err(|e| {
                err(
                    file,
                    line_of(&text, "by"),
                    format!("by: {e}"),
                    "write e.g. `by: hour-of-day`, `by: shift`, `by: day-of-week`, `by: day` or `by: period=8 h`",
                )
            })
        })
        .transpose()?;
    let scenario_sha256: String =
        Sha256::digest(scenario_text.as_bytes()).iter().map(|b| format!("{b:02x}")).collect();
    let compiler = Compiler {
        file: file.to_path_buf(),
        text,
        scenario: scenario.clone(),
        scenario_text,
        base,
        base_plant,
        horizon,
        warmup,
        seed,
        common_random_numbers: spec.common_random_numbers,
        by: by.clone(),
        allow_overload,
    };
    // Design point 1 at once: whatever else is wrong, this is said first.
    let first = compile_point(&compiler, &factors, 0, &design.point(0))?;
    let first_metrics = crate::metrics::metrics(&first.plant).iter().map(|m| m.label()).collect();
    let mut exp = Experiment {
        file: file.to_path_buf(),
        scenario,
        scenario_sha256,
        replications: spec.replications,
        seed,
        common_random_numbers: spec.common_random_numbers,
        factors,
        by,
        design,
        compiler,
        first: Arc::new(first),
        first_metrics,
        cache: Mutex::new(Vec::new()),
        hash: String::new(),
    };
    // Every level once (a few compiles), so a bad level is refused before hours of work.
    for p in exp.design.level_probes() {
        exp.setup(p)?;
    }
    exp.hash = exp.content_hash(spec.replications)?;
    Ok(exp)
}

/// The scenario's refusal of a design point, in the user's files: a field a
/// factor sets is blamed on the plan's line of that factor; anything else on
/// the scenario file's own line of the field (the copy with the levels
/// written in, whose line numbers mean nothing to the user, is never quoted).
fn point_error(
    c: &Compiler,
    factors: &[Factor],
    point: &DesignPoint,
    describe: &str,
    e: &crate::ScenarioError,
) -> PlanError {
    let at = e.path().unwrap_or("");
    let hint = e.hint().unwrap_or("");
    let set_by = factors.iter().zip(&point.levels).find_map(|(f, level)| {
        let (FactorKind::Field(path), Some(level)) = (&f.kind, level) else { return None };
        let field = indexed_path(&c.base, path);
        let inside =
            at == field || at.starts_with(&format!("{field}.")) || at.starts_with(&format!("{field}["));
        inside.then_some((f, level))
    });
    match set_by {
        Some((f, level)) => err(
            &c.file,
            line_of(&c.text, &f.name),
            format!("factor `{}`, level {}, in {describe}: {}", f.name, value_text(level), e.message()),
            hint,
        ),
        None => {
            let line = if at.is_empty() { None } else { crate::scenario::line_of_path(&c.scenario_text, at) };
            let what = if at.is_empty() { e.message().to_string() } else { format!("{at}: {}", e.message()) };
            err(
                &c.scenario,
                line,
                format!("{what} (with the levels of {describe} of {})", c.file.display()),
                hint,
            )
        }
    }
}

/// A factor's path with list entries named by id turned into indices, as the
/// scenario's messages write paths (`departments.drilling.machines` →
/// `departments[2].machines`).
fn indexed_path(base: &Value, path: &[String]) -> String {
    let mut out = String::new();
    let mut at = Some(base);
    for seg in path {
        match at {
            Some(Value::Sequence(items)) => {
                let i = seg.parse::<usize>().ok().or_else(|| {
                    items.iter().position(|v| v.get("id").map(value_text).as_deref() == Some(seg.as_str()))
                });
                match i {
                    Some(i) => {
                        let _ = write!(out, "[{i}]");
                        at = items.get(i);
                    }
                    None => {
                        let _ = write!(out, "[{seg}]");
                        at = None;
                    }
                }
            }
            other => {
                if !out.is_empty() {
                    out.push('.');
                }
                out.push_str(seg);
                at = other.and_then(|v| v.get(seg.as_str()));
            }
        }
    }
    out
}

/// Compile design point `p` (0-based) with its levels written into the scenario.
fn compile_point(
    c: &Compiler,
    factors: &[Factor],
    p: usize,
    point: &DesignPoint,
) -> Result<Setup, PlanError> {
    let file = c.file.as_path();
    let text = c.text.as_str();
    let describe = || {
        let parts: Vec<String> =
            factors.iter().zip(point.labels()).map(|(f, l)| format!("{} = {l}", f.name)).collect();
        format!("design point {} ({})", p + 1, parts.join(", "))
    };
    let mut layout = None;
    let mut demand = None;
    let fields = factors.iter().any(|f| matches!(f.kind, FactorKind::Field(_)));
    let mut doc = if fields { Some(c.base.clone()) } else { None };
    for (f, level) in factors.iter().zip(&point.levels) {
        let Some(level) = level else { continue };
        match &f.kind {
            FactorKind::Layout => layout = Some(value_text(level)),
            FactorKind::Demand => demand = demand_level(level),
            FactorKind::Field(path) => {
                let doc = doc.as_mut().expect("a field factor clones the document");
                *field_mut(doc, path).map_err(|e| err(file, line_of(text, &f.name), e, ""))? = level.clone();
            }
        }
    }
    let plant = match &doc {
        Some(doc) => {
            let yaml = serde_norway::to_string(doc).expect("a YAML value serializes");
            crate::parse_scenario(&yaml, &c.scenario)
                .map_err(|e| point_error(c, factors, point, &describe(), &e))?
        }
        None => c.base_plant.clone(),
    };
    let layout_index = match &layout {
        None => 0,
        Some(name) => plant.layout_index(name).ok_or_else(|| {
            let known: Vec<&str> = plant.layouts.iter().map(|l| l.name.as_str()).collect();
            err(
                file,
                line_of(text, "layout"),
                format!("{}: no layout named {name:?}", describe()),
                &format!("the scenario's layouts: {}", known.join(", ")),
            )
        })?,
    };
    let horizon_s = c.horizon.unwrap_or(plant.run.horizon_s);
    let warmup_s = c.warmup.unwrap_or(plant.run.warmup_s);
    if warmup_s >= horizon_s {
        return Err(err(
            file,
            line_of(text, "warmup"),
            format!("the warm-up ({warmup_s} s) must end before the horizon ({horizon_s} s)"),
            "",
        ));
    }
    let point_seed = if c.common_random_numbers { c.seed } else { mix(c.seed, p as u64) };
    let spec = RunSpec {
        layout: layout_index,
        horizon_s,
        warmup_s,
        demand_factor: demand.unwrap_or(plant.demand_factor),
        seed: point_seed,
    };
    // The plan may raise the horizon or the demand above what the
    // scenario was checked with: the lots ceiling applies to the point.
    let lots = plant.lots_bound(spec.horizon_s, spec.demand_factor);
    let horizon_words = crate::units::format_duration(spec.horizon_s);
    if let Err(m) = crate::limits::check_lots(lots, &horizon_words, spec.demand_factor) {
        return Err(err(file, None, format!("design point {}: {m}", p + 1), ""));
    }
    let mut plant = plant;
    plant.run.allow_overload = c.allow_overload;
    let mut sim = Plan::new(&plant, layout_index);
    // The grid is per point: a factor may change the horizon, the warm-up or the calendars.
    if let Some(by) = &c.by {
        let grid = Grid::new(by, &plant, spec.warmup_s, spec.horizon_s)
            .map_err(|e| err(file, line_of(text, "by"), format!("by: {}: {e}", describe()), ""))?;
        sim = sim.with_buckets(grid);
    }
    Ok(Setup { plant, spec, sim })
}

/// SplitMix64 of (seed, point): independent streams per design point when
/// common random numbers are off.
fn mix(seed: u64, point: u64) -> u64 {
    let mut z = seed ^ point.wrapping_add(1).wrapping_mul(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

fn factor_kind(file: &Path, text: &str, name: &str, base: &Value) -> Result<FactorKind, PlanError> {
    match name {
        "layout" => Ok(FactorKind::Layout),
        "demand" => Ok(FactorKind::Demand),
        _ => {
            let path = segments(name);
            let mut probe = base.clone();
            field_mut(&mut probe, &path).map_err(|e| {
                err(
                    file,
                    line_of(text, name),
                    format!("factor `{name}`: {e}"),
                    "a factor is `layout`, `demand`, or the path of a scenario field, e.g. fleets.forklifts.count",
                )
            })?;
            Ok(FactorKind::Field(path))
        }
    }
}

/// A demand level as a number: `1.2` or `120%`.
fn demand_level(v: &Value) -> Option<f64> {
    v.as_f64().or_else(|| v.as_str().and_then(|s| crate::scenario::parse_factor(s).ok()))
}

fn check_level(file: &Path, text: &str, f: &Factor, v: &Value) -> Result<(), PlanError> {
    let bad =
        |what: String| Err(err(file, line_of(text, &f.name), format!("factor `{}`: {what}", f.name), ""));
    match f.kind {
        FactorKind::Demand => match demand_level(v) {
            Some(x) if x > 0.0 && x.is_finite() => Ok(()),
            _ => bad(format!("level {} is not a demand factor > 0", value_text(v))),
        },
        FactorKind::Layout if !v.is_string() => bad(format!("level {} is not a layout name", value_text(v))),
        _ if v.is_mapping() || v.is_sequence() => {
            bad("levels must be single values (numbers, names, durations)".into())
        }
        _ => Ok(()),
    }
}

fn design(
    file: &Path,
    text: &str,
    spec: &PlanSpec,
    base: &Value,
) -> Result<(Vec<Factor>, Design), PlanError> {
    let key_name = |k: &Value| -> Result<String, PlanError> {
        k.as_str()
            .map(str::to_string)
            .ok_or_else(|| err(file, None, format!("factor name {} is not text", value_text(k)), ""))
    };
    match (&spec.factors, &spec.points) {
        (Some(_), Some(_)) => Err(err(
            file,
            line_of(text, "points"),
            "a plan has `factors:` or `points:`, not both",
            "use `factors:` for every combination of levels, `points:` for a list of chosen combinations",
        )),
        (None, None) => Err(err(
            file,
            None,
            "the plan has no `factors:` and no `points:`",
            "e.g. `factors: { layout: [current, proposed], demand: [0.8, 1.0, 1.2] }`",
        )),
        (Some(map), None) => {
            if map.is_empty() {
                return Err(err(
                    file,
                    line_of(text, "factors"),
                    "`factors:` is empty",
                    "give at least one factor with its levels",
                ));
            }
            let mut factors = Vec::new();
            let mut levels: Vec<Vec<Value>> = Vec::new();
            for (k, v) in map {
                let name = key_name(k)?;
                let kind = factor_kind(file, text, &name, base)?;
                let f = Factor { name: name.clone(), kind };
                let list = match v {
                    Value::Sequence(s) => s.clone(),
                    other => vec![other.clone()],
                };
                if list.is_empty() {
                    return Err(err(
                        file,
                        line_of(text, &name),
                        format!("factor `{name}` has no levels"),
                        "list at least one level, e.g. [1, 2, 3]",
                    ));
                }
                for (i, l) in list.iter().enumerate() {
                    check_level(file, text, &f, l)?;
                    if list[..i].contains(l) {
                        return Err(err(
                            file,
                            line_of(text, &name),
                            format!("factor `{name}` lists level {} twice", value_text(l)),
                            "",
                        ));
                    }
                }
                factors.push(f);
                levels.push(list);
            }
            // Full factorial, the last factor varying fastest: an index into the grid, never listed.
            let n = levels.iter().try_fold(1u64, |n, l| n.checked_mul(l.len() as u64)).unwrap_or(u64::MAX);
            if n > MAX_POINTS {
                return Err(err(
                    file,
                    line_of(text, "factors"),
                    format!("the factors make {n} design points; the most a plan may have is {MAX_POINTS}"),
                    "the results file lists every point's levels, so a plan this size needs gigabytes before \
                     a unit runs; split the study into several plans (e.g. one per level of a factor)",
                ));
            }
            Ok((factors, Design::Factorial(levels)))
        }
        (None, Some(list)) => {
            if list.is_empty() {
                return Err(err(
                    file,
                    line_of(text, "points"),
                    "`points:` is empty",
                    "list at least one design point",
                ));
            }
            let mut factors: Vec<Factor> = Vec::new();
            for m in list {
                for k in m.keys() {
                    let name = key_name(k)?;
                    if !factors.iter().any(|f| f.name == name) {
                        let kind = factor_kind(file, text, &name, base)?;
                        factors.push(Factor { name, kind });
                    }
                }
            }
            let mut points: Vec<DesignPoint> = Vec::new();
            // Points by hash: a repeat is found without comparing every pair.
            let mut seen: std::collections::HashMap<u64, Vec<usize>> = std::collections::HashMap::new();
            for (i, m) in list.iter().enumerate() {
                let mut levels = Vec::new();
                for f in &factors {
                    let v = m.get(Value::String(f.name.clone())).cloned();
                    if let Some(v) = &v {
                        check_level(file, text, f, v)?;
                    }
                    levels.push(v);
                }
                let p = DesignPoint { levels };
                let key = {
                    use std::hash::{Hash as _, Hasher as _};
                    let mut h = std::collections::hash_map::DefaultHasher::new();
                    p.levels.hash(&mut h);
                    h.finish()
                };
                let same = seen.entry(key).or_default();
                if same.iter().any(|&j| points[j] == p) {
                    return Err(err(
                        file,
                        None,
                        format!("design point {} repeats an earlier one", i + 1),
                        "list each combination once; replications repeat it",
                    ));
                }
                same.push(points.len());
                points.push(p);
            }
            Ok((factors, Design::List(points)))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_find_keys_indices_and_ids() {
        let mut v: Value =
            serde_norway::from_str("fleets:\n  - { id: a, count: 1 }\n  - { id: b, count: 2 }\n").unwrap();
        *field_mut(&mut v, &segments("fleets.b.count")).unwrap() = Value::from(5);
        *field_mut(&mut v, &segments("fleets[0].count")).unwrap() = Value::from(7);
        assert_eq!(v["fleets"][1]["count"], Value::from(5));
        assert_eq!(v["fleets"][0]["count"], Value::from(7));
        let e = field_mut(&mut v, &segments("fleets.c.count")).unwrap_err();
        assert!(e.contains("no entry with id `c`") && e.contains("a, b"), "{e}");
        let e = field_mut(&mut v, &segments("fleet.a")).unwrap_err();
        assert!(e.contains("has no `fleet`"), "{e}");
    }

    #[test]
    fn mixing_keeps_points_apart() {
        assert_ne!(mix(1, 0), mix(1, 1));
        assert_eq!(mix(1, 3), mix(1, 3));
    }

    /// A plan file in a fresh folder, running the hand-checked scenario.
    fn plan(body: &str) -> Result<Experiment, PlanError> {
        let dir = tempfile::tempdir().unwrap();
        let scenario =
            Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/validation/tiny-hand-checked.yaml");
        let file = dir.path().join("plan.yaml");
        std::fs::write(&file, format!("scenario: {}\n{body}", scenario.display())).unwrap();
        load(&file, false)
    }

    #[test]
    fn demand_levels_may_be_percentages() {
        let e = plan("replications: 2\nfactors: { demand: [80%, 1.2] }\n").unwrap();
        let levels: Vec<f64> = (0..e.point_count()).map(|p| e.setup(p).unwrap().spec.demand_factor).collect();
        assert_eq!(levels, [0.8, 1.2]);
        let e = plan("replications: 2\nfactors: { demand: [lots] }\n").unwrap_err();
        assert!(e.message.contains("level lots is not a demand factor > 0"), "{}", e.message);
    }

    #[test]
    fn a_grid_is_indexed_in_plan_order_and_probed_once_per_level() {
        let v = |x: i64| Value::from(x);
        let d = Design::Factorial(vec![vec![v(1), v(2), v(3)], vec![v(10), v(20)]]);
        let order: Vec<Vec<Option<Value>>> = (0..d.len()).map(|p| d.point(p).levels).collect();
        let want: Vec<Vec<Option<Value>>> = [1, 2, 3]
            .iter()
            .flat_map(|&a| [10, 20].iter().map(move |&b| vec![Some(v(a)), Some(v(b))]))
            .collect();
        assert_eq!(order, want, "the last factor varies fastest");
        // Point 1, then 20 with the first of the other factor, then 2 and 3 likewise.
        assert_eq!(d.level_probes(), [0, 1, 2, 4]);
    }

    #[test]
    fn a_million_points_load_without_compiling_them() {
        let levels: Vec<String> = (0..1000).map(|i| format!("{:.3}", 0.5 + f64::from(i) * 0.001)).collect();
        let counts: Vec<String> = (1..=1000).map(|i| i.to_string()).collect();
        let e = plan(&format!(
            "replications: 1\nfactors:\n  demand: [{}]\n  departments.drilling.machines: [{}]\n",
            levels.join(", "),
            counts.join(", ")
        ))
        .unwrap();
        assert_eq!(e.point_count(), 1_000_000);
        assert!(e.cache.lock().unwrap().len() <= CACHE, "plan memory holds a bounded number of plants");
        let last = e.setup(999_999).unwrap();
        assert_eq!(last.plant.departments[2].machines, 1000);
        assert_eq!(last.spec.demand_factor, 1.499);
    }

    #[test]
    fn wrong_types_in_a_plan_are_said_in_words() {
        for (body, want) in [
            (
                "replications: ten\nfactors: { demand: [1] }\n",
                "replications: expected a whole number of replications, such as 10, got \"ten\"",
            ),
            (
                "replications: 2\nseed: x\nfactors: { demand: [1] }\n",
                "seed: expected a whole number, such as 42, got \"x\"",
            ),
            (
                "replications: 2\ncommon_random_numbers: maybe\nfactors: { demand: [1] }\n",
                "expected true or false, got \"maybe\"",
            ),
            (
                "replications: 2\nfactors: [1]\n",
                "factors: expected a mapping of factors to their levels, such as { layout: [current, proposed], demand: [0.8, 1.2] }, got a list",
            ),
            ("replications: 2\nhorizon: [20]\nfactors: { demand: [1] }\n", "horizon: expected a duration, such as \"20 d\", got a list"),
            ("replications: 2\npoints: 3\n", "points: expected a list of design points, such as [{ layout: current, demand: 1.2 }], got 3"),
        ] {
            let m = plan(body).unwrap_err().message;
            assert!(m.contains(want), "{body:?}:\n  want {want}\n  got  {m}");
            let leak = crate::scenario::RUST_WORDS.iter().find(|w| m.contains(*w));
            assert!(leak.is_none() && !m.contains("PlanSpec"), "{m}");
        }
    }
}
