//! Shared helpers for the validation tests.
//!
//! Three kinds of helper live here: queueing formulas written out so that the
//! tests can compare the simulation with theory (each unit-tested against the
//! worked numbers of `docs/formulas.md` in `tests/tests/queueing.rs`),
//! a runner that loads a validation scenario and replicates it with the run
//! settings the file itself states, and a [`Checks`] table that compares an
//! estimate with a theoretical value under a stated tolerance, prints
//! expected beside actual, and fails once at the end with every miss listed.

use std::path::{Path, PathBuf};

use layflow_engine::interval;
use layflow_models::analysis::StaticPicture;
use layflow_models::metrics::{summarize, DurationEstimate, Estimate, LayoutSummary};
use layflow_models::plant::Plant;
use layflow_models::sim::{Plan, RepStats, RunSpec};
use layflow_models::study::replicate;

/// Seconds per hour, for converting the model's seconds to the hours of the references.
pub const HOUR: f64 = 3600.0;

// ---------------------------------------------------------------------------
// Queueing formulas.
// ---------------------------------------------------------------------------

/// Erlang B blocking probability B(c, a) for `c` servers and offered load `a`,
/// by the stable recursion B(0) = 1, B(k) = a·B(k−1) / (k + a·B(k−1)).
///
/// Source: the standard Erlang B recursion (from memory); cross-checked in the
/// tests against docs/formulas.md §1 (B(3, 2.4) = 0.268406).
pub fn erlang_b(c: u32, a: f64) -> f64 {
    (1..=c).fold(1.0, |b, k| a * b / (f64::from(k) + a * b))
}

/// Erlang C probability of waiting C(c, a) for an M/M/c queue with offered load
/// `a` = λ/μ < c, written as in docs/formulas.md §1 (the form of GNU Octave
/// `queueing` `erlangc`): [aᶜ/c!·c/(c−a)] / [Σ_{k<c} aᵏ/k! + aᶜ/c!·c/(c−a)].
///
/// # Panics
/// If `a >= c` (the queue is unstable and has no steady state).
pub fn erlang_c(c: u32, a: f64) -> f64 {
    let cf = f64::from(c);
    assert!(a < cf, "Erlang C needs a < c (got a = {a}, c = {c})");
    let mut term = 1.0; // aᵏ/k!, starting at k = 0
    let mut sum = 0.0;
    for k in 0..c {
        sum += term;
        term *= a / f64::from(k + 1);
    }
    // term is now aᶜ/c!
    let top = term * cf / (cf - a);
    top / (sum + top)
}

/// Steady-state means of a queue: waits in hours (or whatever unit λ is per).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct QueueMeans {
    /// Server utilisation ρ = λ·E[S]/c.
    pub rho: f64,
    /// Mean wait in queue.
    pub wq: f64,
    /// Mean number waiting.
    pub lq: f64,
    /// Mean time in system.
    pub w: f64,
    /// Mean number in system.
    pub l: f64,
}

impl QueueMeans {
    fn from_wq(lambda: f64, mean_service: f64, rho: f64, wq: f64) -> QueueMeans {
        let w = wq + mean_service;
        QueueMeans { rho, wq, lq: lambda * wq, w, l: lambda * w }
    }
}

/// M/M/c means: Wq = C(c, a)/(cμ − λ), W = Wq + 1/μ, Lq = λWq, L = λW (docs/formulas.md §1).
pub fn mmc(c: u32, lambda: f64, mu: f64) -> QueueMeans {
    let a = lambda / mu;
    let cf = f64::from(c);
    let wq = erlang_c(c, a) / (cf * mu - lambda);
    QueueMeans::from_wq(lambda, 1.0 / mu, a / cf, wq)
}

/// M/G/1 means by the Pollaczek–Khinchine mean-value formula
/// Wq = ρτ(1 + c_s²)/(2(1 − ρ)), with ρ = λτ (docs/formulas.md §2; Cooper 1981, p. 189).
///
/// # Panics
/// If ρ >= 1.
pub fn pollaczek_khinchine(lambda: f64, tau: f64, cs2: f64) -> QueueMeans {
    let rho = lambda * tau;
    assert!(rho < 1.0, "P-K needs rho < 1 (got {rho})");
    let wq = rho * tau * (1.0 + cs2) / (2.0 * (1.0 - rho));
    QueueMeans::from_wq(lambda, tau, rho, wq)
}

// ---------------------------------------------------------------------------
// Scenarios and runs.
// ---------------------------------------------------------------------------

/// Path of a scenario file given relative to the workspace's `scenarios/` folder.
pub fn scenario_path(relative: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios").join(relative)
}

/// Loads a scenario that must be valid, panicking with the loader's message if not.
pub fn load(relative: &str) -> Plant {
    let path = scenario_path(relative);
    layflow_models::load_scenario(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The run of one layout: the spec used, every replication and their summary.
pub struct Run {
    /// What was run.
    pub spec: RunSpec,
    /// Per-replication raw results, in replication order.
    pub reps: Vec<RepStats>,
    /// Means and 95% intervals across replications.
    pub summary: LayoutSummary,
    /// The static picture at the run's demand factor.
    pub picture: StaticPicture,
}

/// Replication 0 of layout 0 of `plant` (its own run settings) traced into a
/// temporary folder (lots.csv, visits.csv, ...), and the same replication's
/// statistics from an untraced run; tracing must read the model, never change it.
pub fn traced_replication(plant: &Plant) -> (tempfile::TempDir, RepStats) {
    use layflow_models::sim::trace::{TraceOptions, TraceSink};
    let plan = Plan::new(plant, 0);
    let spec = RunSpec {
        layout: 0,
        horizon_s: plant.run.horizon_s,
        warmup_s: plant.run.warmup_s,
        demand_factor: 1.0,
        seed: plant.run.seed,
    };
    let dir = tempfile::tempdir().expect("temp dir");
    let mut sink = TraceSink::create(dir.path()).expect("trace files");
    let opts = TraceOptions::new(plant, (spec.warmup_s, spec.horizon_s));
    let traced =
        layflow_models::sim::simulate_traced(&plan, &spec, 0, &mut sink, &opts).expect("trace written");
    sink.flush().expect("flushed");
    let rep = layflow_models::sim::simulate(&plan, &spec, 0);
    assert_eq!(traced.events, rep.events, "tracing reads the model, never changes it");
    (dir, rep)
}

/// A traced folder's visits.csv: each lot's (product, start, end), by trace
/// lot number (for plants where each lot makes one timed visit).
pub fn visit_times(dir: &Path) -> std::collections::BTreeMap<u32, (String, f64, f64)> {
    let text = std::fs::read_to_string(dir.join("visits.csv")).expect("visits.csv");
    let mut lines = text.lines();
    let head: Vec<&str> = lines.next().expect("header").split(',').collect();
    let col = |n: &str| head.iter().position(|h| *h == n).expect("column");
    let mut out = std::collections::BTreeMap::new();
    for l in lines {
        let v: Vec<&str> = l.split(',').collect();
        let num = |n: &str| v[col(n)].parse::<f64>().expect("a number");
        out.insert(
            v[col("lot")].parse().expect("lot"),
            (v[col("product")].to_string(), num("start"), num("end")),
        );
    }
    out
}

/// Replicates layout `layout` of `plant` with the scenario's own run settings
/// (horizon, warm-up, replications, seed) and summarises it.
pub fn run_layout(plant: &Plant, layout: usize) -> Run {
    run_layout_reps(plant, layout, plant.run.replications)
}

/// As [`run_layout`], with `replications` in place of the scenario's number.
pub fn run_layout_reps(plant: &Plant, layout: usize, replications: u32) -> Run {
    let spec = RunSpec {
        layout,
        horizon_s: plant.run.horizon_s,
        warmup_s: plant.run.warmup_s,
        demand_factor: plant.demand_factor,
        seed: plant.run.seed,
    };
    run_spec(plant, spec, replications)
}

/// Replicates `plant` under an explicit run spec and summarises it.
pub fn run_spec(plant: &Plant, spec: RunSpec, replications: u32) -> Run {
    let layout = spec.layout;
    let plan = Plan::new(plant, layout);
    let reps = replicate(&plan, &spec, replications, |_| {});
    let picture = StaticPicture::new(plant, spec.demand_factor);
    let summary = summarize(plant, &spec, &picture, &reps);
    Run { spec, reps, summary, picture }
}

/// An estimate multiplied by a constant (a unit change): the mean and the
/// half-width scale alike.
pub fn scaled(e: &Estimate, factor: f64) -> Estimate {
    Estimate { mean: e.mean * factor, half_width: e.half_width.map(|h| h * factor), n: e.n }
}

/// A duration estimate in seconds as a plain estimate in hours.
pub fn hours(d: &DurationEstimate) -> Estimate {
    scaled(&Estimate { mean: d.mean, half_width: d.half_width, n: d.n }, 1.0 / HOUR)
}

/// An estimate shifted by a known constant (e.g. flow time minus a known
/// mean processing time gives the wait in queue); the half-width is unchanged.
pub fn shifted(e: &Estimate, by: f64) -> Estimate {
    Estimate { mean: e.mean + by, ..*e }
}

/// Index of the department with this id.
pub fn department(plant: &Plant, id: &str) -> usize {
    plant.departments.iter().position(|d| d.id == id).unwrap_or_else(|| panic!("no department {id:?}"))
}

/// Half-width of an estimate, which every check needs (so at least two replications).
pub fn hw(e: &Estimate) -> f64 {
    e.half_width.expect("a check needs at least two replications for a half-width")
}

// ---------------------------------------------------------------------------
// Checks: expected beside actual, with the tolerance and why.
// ---------------------------------------------------------------------------

/// A table of checks. Each row compares an actual value with the theory under
/// a tolerance; [`Checks::finish`] prints the table and panics if any row failed.
#[derive(Default)]
pub struct Checks {
    title: String,
    rows: Vec<String>,
    failures: Vec<String>,
}

impl Checks {
    /// An empty table with a title.
    pub fn new(title: &str) -> Checks {
        Checks { title: title.to_string(), ..Checks::default() }
    }

    /// Records an exact (formula or bookkeeping) check: |actual − expected| ≤ tol.
    pub fn exact(&mut self, what: &str, expected: f64, actual: f64, tol: f64) {
        let ok = (actual - expected).abs() <= tol;
        self.push(ok, format!("{what}: theory {expected:.6} | got {actual:.9} | tol {tol:.2e}"));
    }

    /// Records a relative check: |actual − expected| ≤ rel·|expected|.
    pub fn relative(&mut self, what: &str, expected: f64, actual: f64, rel: f64) {
        self.exact(what, expected, actual, rel * expected.abs());
    }

    /// Records a statistical check of a replication estimate against theory.
    ///
    /// Passes when |mean − theory| ≤ `k`·half-width + `bias`. It also fails
    /// when that tolerance exceeds `power`·|theory|, so that a check whose run
    /// became too noisy to detect an error of that size cannot silently pass.
    pub fn estimate(&mut self, what: &str, theory: f64, e: &Estimate, k: f64, bias: f64, power: f64) {
        let h = hw(e);
        let tol = k * h + bias;
        let close = (e.mean - theory).abs() <= tol;
        let sharp = tol <= power * theory.abs();
        let mut row = format!(
            "{what}: theory {theory:.6} | sim {:.6} ± {h:.6} (n={}) | tol {tol:.6} = {k}·hw + {bias:.2e} ({:.2}% of theory)",
            e.mean,
            e.n,
            100.0 * tol / theory.abs()
        );
        if !sharp {
            row.push_str(&format!(" | TOO NOISY: tol must be <= {:.1}% of theory", 100.0 * power));
        }
        self.push(close && sharp, row);
    }

    /// Records a condition that must hold, with a description.
    pub fn holds(&mut self, what: &str, ok: bool) {
        self.push(ok, what.to_string());
    }

    fn push(&mut self, ok: bool, row: String) {
        let mark = if ok { "ok  " } else { "FAIL" };
        let line = format!("  [{mark}] {row}");
        if !ok {
            self.failures.push(line.clone());
        }
        self.rows.push(line);
    }

    /// Prints every row (visible with `--nocapture`) and panics listing the failures.
    pub fn finish(self) {
        println!("== {}", self.title);
        for r in &self.rows {
            println!("{r}");
        }
        assert!(
            self.failures.is_empty(),
            "{}: {} of {} checks failed:\n{}",
            self.title,
            self.failures.len(),
            self.rows.len(),
            self.failures.join("\n")
        );
    }
}

/// Little's law, L = λW (docs/formulas.md §4; Little 1961), on one run.
///
/// Per replication the identity is exact up to the window's edges: ∫WIP over
/// the window and Σ flow times of the lots shipped in it differ only by the
/// pre-warm-up time of lots present at the warm-up and the in-window time of
/// lots still present at the horizon. In steady state the two cancel in
/// expectation (ages and residual lives of the lots present at a fixed time
/// have the same distribution), and their random part is in the spread of
/// the replications. So the per-replication relative gap
/// g = (WIP − throughput·flow time)/WIP is tested with its own paired
/// interval: |ḡ| ≤ 4 half-widths + `bias`, where the caller states the bias
/// (see [`little_edge_bound`] for a bound that needs no steady state). The
/// summary's `little_relative_gap`, built from the means, must be within that
/// bound plus |ḡ| and the second-order term hw(X)/X · hw(W)/W.
pub fn check_little(checks: &mut Checks, label: &str, run: &Run, bias: f64) {
    let gaps: Vec<f64> = run
        .reps
        .iter()
        .map(|r| {
            let shipped: u64 = r.shipped.iter().sum();
            let x = shipped as f64 / r.window_s;
            (r.wip_total - x * r.flow_time_all.mean()) / r.wip_total
        })
        .collect();
    let iv = interval(&gaps, 0.95);
    let h = iv.half_width.expect("Little's check needs two replications");
    let s = &run.summary;
    let tol = 4.0 * h + bias;
    checks.exact(
        &format!("{label}: Little, mean per-replication gap (WIP − X·W)/WIP [tol = 4·hw (hw {h:.1e}) + bias {bias:.1e}]"),
        0.0,
        iv.mean,
        tol,
    );
    let second = hw(&s.throughput_per_h) / s.throughput_per_h.mean
        * (s.flow_time_s.half_width.unwrap_or(0.0) / s.flow_time_s.mean);
    checks.exact(
        &format!("{label}: Little, little_relative_gap of the summary"),
        0.0,
        s.little_relative_gap,
        tol + iv.mean.abs() + second,
    );
}

/// A bound on the mean Little gap that needs no steady state: each window
/// edge can shift ∫WIP against Σ flow times by about L·W, i.e. W/T relative;
/// 2·W/T for both edges.
pub fn little_edge_bound(run: &Run) -> f64 {
    2.0 * run.summary.flow_time_s.mean / (run.spec.horizon_s - run.spec.warmup_s)
}
