//! The fuzz target: seeded mutations of every shipped scenario must never panic, and whatever `check` accepts must have a finite static picture and finish a short run.
//!
//! cargo-fuzz needs a nightly compiler and the project builds on stable, so
//! this is a hand-rolled mutation test over the YAML tree
//! (`serde_norway::Value`), seeded and deterministic. Each case takes one of
//! the shipped scenarios (`scenarios/*.yaml`, `scenarios/validation/*.yaml`;
//! experiment plans are not scenarios), applies one to three mutations
//! (numbers pushed to extremes, numbers with units given extreme values or
//! other units, keys deleted, list items doubled or dropped, values swapped
//! for another type), writes it back to YAML and then does what `check` does
//! (load, then the static picture) and, when the scenario loads, a short run
//! of one replication. It asserts:
//!
//! - nothing panics (each step runs under `catch_unwind`);
//! - every number in the static picture of an accepted scenario is finite
//!   (docs/limits.md: meaningless values are refused at load time);
//! - the short run finishes (a watchdog ends the test with the offending
//!   mutant if one case runs for minutes: that is a hang, not a slow case).
//!
//! CI runs `DEFAULT_CASES` cases (well under a minute in release mode);
//! `LAYFLOW_FUZZ_CASES=200000 cargo test --release -p layflow-tests --test fuzz`
//! runs longer, and `LAYFLOW_FUZZ_SEED` picks another sequence
//! (docs/validation.md, "The fuzz target").

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use layflow_models::analysis::StaticPicture;
use layflow_models::sim::{simulate, Plan, RunSpec};
use layflow_models::timebuckets::{By, Grid};
use serde_norway::Value;

/// Cases CI runs: about 25 s in release mode on one core.
const DEFAULT_CASES: u64 = 20_000;

/// The seed of the default sequence (any fixed value; this one is arbitrary).
const DEFAULT_SEED: u64 = 0x1A7F_10E5;

/// A case that runs this long is taken to hang. Far beyond any honest case
/// (the slowest take well under a second), so it never fires on a slow machine.
const HANG_AFTER: Duration = Duration::from_secs(180);

/// The short run: at most this much simulated time and about this many lots.
const RUN_HORIZON_S: f64 = 8.0 * 3600.0;
const RUN_MAX_LOTS: f64 = 20_000.0;

/// SplitMix64: a tiny, well-known generator (Steele, Lea & Flood 2014), so
/// the sequence of mutants depends on nothing outside this file.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
    fn pick<'a, T>(&mut self, xs: &'a [T]) -> &'a T {
        &xs[self.below(xs.len())]
    }
}

/// Numbers at the edges: zero, negatives, the largest and smallest floats,
/// non-numbers, 2³² and beyond, and the ceilings' neighbourhoods.
const EXTREMES: &[&str] = &[
    "0",
    "-1",
    "1e308",
    "-1e308",
    "1e-300",
    "5e-324",
    ".nan",
    ".inf",
    "-.inf",
    "4294967295",
    "4294967296",
    "18446744073709551615",
    "9223372036854775807",
    "0.5",
    "1e6",
    "1e9",
    "3.2e9",
];

/// What a number with a unit may become: an extreme value or another unit.
const UNIT_VALUES: &[&str] = &[
    "1e308 d",
    "-1e308 d",
    "1e-300 s",
    "0 s",
    "-1 s",
    "NaN s",
    "inf s",
    "1e308 m/s",
    "1e-300 m/s",
    "0 m/s",
    "5 weeks",
    "5 km/h",
    "5 d",
    "5 min",
    "5 s",
    "5 kg",
    "1e308 t",
    "5 m/s2",
    "1e300 m/s2",
    "5",
    "%",
    "1e308%",
    "-5%",
];

/// Values of another type, swapped in for whatever was there.
fn other_type(rng: &mut Rng) -> Value {
    match rng.below(6) {
        0 => Value::Null,
        1 => Value::Bool(true),
        2 => Value::String("x".into()),
        3 => Value::Sequence(Vec::new()),
        4 => Value::Mapping(serde_norway::Mapping::new()),
        _ => serde_norway::from_str("[1, 2]").expect("a literal list"),
    }
}

/// Paths to every node of the tree: each a list of steps (key or index).
#[derive(Clone, Debug)]
enum Step {
    Key(Value),
    Index(usize),
}

fn collect_paths(v: &Value, here: &mut Vec<Step>, out: &mut Vec<Vec<Step>>) {
    out.push(here.clone());
    match v {
        Value::Mapping(m) => {
            for (k, child) in m {
                here.push(Step::Key(k.clone()));
                collect_paths(child, here, out);
                here.pop();
            }
        }
        Value::Sequence(s) => {
            for (i, child) in s.iter().enumerate() {
                here.push(Step::Index(i));
                collect_paths(child, here, out);
                here.pop();
            }
        }
        _ => {}
    }
}

fn node_mut<'a>(v: &'a mut Value, path: &[Step]) -> Option<&'a mut Value> {
    let mut cur = v;
    for s in path {
        cur = match (s, cur) {
            (Step::Key(k), Value::Mapping(m)) => m.get_mut(k)?,
            (Step::Index(i), Value::Sequence(q)) => q.get_mut(*i)?,
            _ => return None,
        };
    }
    Some(cur)
}

/// Applies one mutation at a random node; returns what it did, for the report.
fn mutate(doc: &mut Value, rng: &mut Rng) -> String {
    let mut paths = Vec::new();
    collect_paths(doc, &mut Vec::new(), &mut paths);
    let path = rng.pick(&paths).clone();
    let shown = format!("{path:?}");
    let Some(node) = node_mut(doc, &path) else { return "nothing".into() };
    match node {
        // Half the numbers move only a little, so that many mutants still
        // load and the run and the static picture are exercised too.
        Value::Number(n) if rng.below(2) == 0 => {
            let x = n.as_f64().unwrap_or(1.0) * *rng.pick(&[0.5, 2.0, 10.0, 0.1, 1.5]);
            // Whole numbers stay whole (and within i64, which YAML values hold).
            let text = if n.is_f64() || x.abs() > 9e18 {
                format!("{x:e}")
            } else {
                (x.round().max(1.0) as i64).to_string()
            };
            *node = serde_norway::from_str(&text).expect("a YAML number");
            format!("{shown} = {x}")
        }
        Value::String(s) if s.starts_with(|c: char| c.is_ascii_digit()) && rng.below(2) == 0 => {
            let (num, unit) = s.split_once(' ').unwrap_or((s.as_str(), ""));
            let x = num.parse::<f64>().unwrap_or(1.0) * *rng.pick(&[0.5, 2.0, 10.0, 0.1, 1e3]);
            *s = format!("{x} {unit}");
            format!("{shown} = {s:?}")
        }
        Value::Number(_) => {
            let x = *rng.pick(EXTREMES);
            *node = serde_norway::from_str(x).expect("a YAML number");
            format!("{shown} = {x}")
        }
        Value::String(s) if s.starts_with(|c: char| c.is_ascii_digit() || c == '-' || c == '.') => {
            let x = *rng.pick(UNIT_VALUES);
            *s = x.to_string();
            format!("{shown} = {x:?}")
        }
        Value::Mapping(m) if !m.is_empty() && rng.below(3) > 0 => {
            let keys: Vec<Value> = m.keys().cloned().collect();
            let k = rng.pick(&keys).clone();
            m.remove(&k);
            format!("{shown}: deleted {k:?}")
        }
        Value::Sequence(q) if !q.is_empty() && rng.below(3) > 0 => {
            let i = rng.below(q.len());
            if rng.below(2) == 0 {
                let item = q[i].clone();
                q.insert(i, item);
                format!("{shown}: doubled item {i}")
            } else {
                q.remove(i);
                format!("{shown}: dropped item {i}")
            }
        }
        _ => {
            *node = other_type(rng);
            format!("{shown} = {node:?}")
        }
    }
}

/// Every shipped scenario (plans excluded: they are not scenarios).
fn shipped() -> Vec<(PathBuf, Value)> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("..");
    let mut out = Vec::new();
    for dir in ["scenarios", "scenarios/validation"] {
        let mut files: Vec<PathBuf> = std::fs::read_dir(root.join(dir))
            .expect("the scenario folder")
            .map(|e| e.expect("an entry").path())
            .filter(|p| p.extension().is_some_and(|e| e == "yaml"))
            .collect();
        files.sort();
        for f in files {
            let text = std::fs::read_to_string(&f).expect("a readable scenario");
            out.push((f, serde_norway::from_str(&text).expect("a shipped scenario parses")));
        }
    }
    assert!(out.len() >= 20, "expected the shipped scenarios, found {}", out.len());
    out
}

/// The first number in the static picture that is not finite, by its Debug
/// text: robust to how the picture is laid out (dense or sparse).
fn non_finite(pic: &StaticPicture) -> Option<String> {
    let text = format!("{pic:?}");
    let bad = text
        .split(|c: char| !(c.is_alphanumeric() || c == '.' || c == '-' || c == '_'))
        .any(|w| matches!(w, "inf" | "-inf" | "NaN"));
    bad.then(|| {
        let at = text.find("inf").or_else(|| text.find("NaN")).unwrap_or(0);
        let from = text[..at].rfind(':').and_then(|i| text[..i].rfind([',', '{'])).unwrap_or(0);
        text[from..(at + 3).min(text.len())].to_string()
    })
}

/// The short run's horizon: at most 8 h, halved until the replication
/// draws at most `RUN_MAX_LOTS` lots; `None` when even a second draws more
/// (a single huge order), which is left to the lots ceiling's own tests.
fn short_horizon(plant: &layflow_models::plant::Plant) -> Option<f64> {
    let mut h = plant.run.horizon_s.min(RUN_HORIZON_S);
    while plant.lots_bound(h, plant.demand_factor) > RUN_MAX_LOTS {
        h /= 2.0;
        if h < 1.0 {
            return None;
        }
    }
    Some(h)
}

/// What one mutant did: an error (fine), or accepted and then checked.
enum Outcome {
    Refused,
    Accepted,
}

fn one_case(origin: &Path, text: &str) -> Result<Outcome, String> {
    let loaded = catch_unwind(|| layflow_models::parse_scenario(text, origin))
        .map_err(|_| format!("load panicked: {}", last_panic()))?;
    let Ok(plant) = loaded else { return Ok(Outcome::Refused) };
    let pic = catch_unwind(AssertUnwindSafe(|| StaticPicture::new(&plant, plant.demand_factor)))
        .map_err(|_| format!("the static picture panicked: {}", last_panic()))?;
    if let Some(at) = non_finite(&pic) {
        return Err(format!("accepted, but the static picture is not finite: …{at}"));
    }
    let Some(horizon_s) = short_horizon(&plant) else { return Ok(Outcome::Accepted) };
    let spec = RunSpec {
        layout: 0,
        horizon_s,
        warmup_s: 0.0,
        demand_factor: plant.demand_factor,
        seed: plant.run.seed,
    };
    // With results in four time buckets as well (they never change the run
    // itself), so the bucket bookkeeping meets every mutated plant too.
    let by = By::Period((horizon_s / 4.0).max(60.0));
    let grid = Grid::new(&by, &plant, 0.0, horizon_s).ok();
    let r = catch_unwind(AssertUnwindSafe(|| {
        let plan = Plan::new(&plant, 0);
        let plan = match grid {
            Some(g) => plan.with_buckets(g),
            None => plan,
        };
        simulate(&plan, &spec, 0)
    }))
    .map_err(|_| format!("a short run ({horizon_s} s) panicked: {}", last_panic()))?;
    if !r.by.is_empty() && r.overload.is_none() && r.deadlock.is_none() {
        let exposure: f64 = r.by.iter().map(|b| b.window_s).sum();
        if (exposure - r.window_s).abs() > 1e-9 * r.window_s {
            return Err(format!("the time buckets cover {exposure} s of a {} s window", r.window_s));
        }
    }
    Ok(Outcome::Accepted)
}

/// Whether a case is running under `catch_unwind` (its panics are reported
/// with the case; any other panic is the harness's own and is printed).
static IN_CASE: AtomicBool = AtomicBool::new(false);

/// The message and place of the last panic, kept by the test's panic hook.
static LAST_PANIC: Mutex<String> = Mutex::new(String::new());

fn last_panic() -> String {
    LAST_PANIC.lock().map(|g| g.clone()).unwrap_or_default()
}

fn env_u64(name: &str, default: u64) -> u64 {
    std::env::var(name).ok().and_then(|v| v.trim().parse().ok()).unwrap_or(default)
}

#[test]
fn mutated_scenarios_never_panic_and_accepted_ones_are_finite() {
    let cases = env_u64("LAYFLOW_FUZZ_CASES", DEFAULT_CASES);
    let seed = env_u64("LAYFLOW_FUZZ_SEED", DEFAULT_SEED);
    let scenarios = shipped();
    // The watchdog: names the case that hangs, then ends the process.
    let current: Arc<Mutex<(Instant, String)>> = Arc::new(Mutex::new((Instant::now(), String::new())));
    {
        let current = Arc::clone(&current);
        std::thread::spawn(move || loop {
            std::thread::sleep(Duration::from_secs(1));
            let (since, what) = current.lock().map(|g| g.clone()).unwrap_or((Instant::now(), String::new()));
            if since.elapsed() > HANG_AFTER {
                eprintln!("fuzz: a case ran for {HANG_AFTER:?}, taken to hang:\n{what}");
                std::process::exit(1);
            }
        });
    }
    // Panics are caught and reported below with their message and place; the
    // default hook would print each one's backtrace in between.
    let hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(|info| {
        if let Ok(mut last) = LAST_PANIC.lock() {
            *last = info.to_string();
        }
        if !IN_CASE.load(Ordering::Relaxed) {
            eprintln!("fuzz: the harness itself panicked: {info}");
        }
    }));
    let mut rng = Rng(seed);
    let (mut refused, mut accepted) = (0u64, 0u64);
    let mut problems = Vec::new();
    for case in 0..cases {
        let (origin, base) = &scenarios[rng.below(scenarios.len())];
        let mut doc = base.clone();
        let n = *rng.pick(&[1, 1, 1, 2, 3]);
        let what: Vec<String> = (0..n).map(|_| mutate(&mut doc, &mut rng)).collect();
        let Ok(text) = serde_norway::to_string(&doc) else { continue };
        let name = origin.file_name().map_or(String::new(), |n| n.to_string_lossy().into_owned());
        let label = format!("case {case} (seed {seed}), {name}: {}", what.join("; "));
        if let Ok(mut g) = current.lock() {
            *g = (Instant::now(), label.clone());
        }
        IN_CASE.store(true, Ordering::Relaxed);
        let outcome = one_case(origin, &text);
        IN_CASE.store(false, Ordering::Relaxed);
        match outcome {
            Ok(Outcome::Refused) => refused += 1,
            Ok(Outcome::Accepted) => accepted += 1,
            Err(e) => problems.push(format!("{label}\n  {e}")),
        }
    }
    std::panic::set_hook(hook);
    eprintln!("fuzz: {cases} cases from seed {seed}: {refused} refused, {accepted} accepted and run");
    assert!(
        accepted > cases / 20,
        "too few mutants load ({accepted} of {cases}): the mutations are too harsh"
    );
    assert!(problems.is_empty(), "{} problems:\n{}", problems.len(), problems.join("\n"));
}
