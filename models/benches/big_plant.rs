//! A plant of real size (issue 18): 80 departments, 1,000 products with 4–12 operations, 4 fleets, from `layflow generate`'s generator.
//!
//! Run with `cargo bench -p layflow-models --bench big_plant`. A plain
//! program, not criterion: each target is one measured figure.
//! Targets (docs/speed.md):
//! - `check` (reading the scenario and its static picture) under 1 s;
//! - one simulated month on one core at 5 million events per second or more;
//! - peak memory (resident) under 300 MB;
//! - robust tabu search to a best within 0.5% of where it ends in under 60 s.

use std::hint::black_box;
use std::path::Path;
use std::time::Instant;

use layflow_models::analysis::StaticPicture;
use layflow_models::generate::{scenario, Spec};
use layflow_models::parse_scenario;
use layflow_models::search::plant::PlantProblem;
use layflow_models::search::{robust_tabu, Limits, Settings, TabuParams};
use layflow_models::sim::{simulate, Plan, RunSpec};

#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

/// The process's peak resident memory so far (Linux: VmHWM), MB.
fn peak_mb() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let kb: f64 = s.lines().find(|l| l.starts_with("VmHWM:"))?.split_whitespace().nth(1)?.parse().ok()?;
    Some(kb / 1024.0)
}

fn main() {
    let spec = Spec::default();
    let text = scenario(&spec);
    println!(
        "generated plant: {} departments, {} products, {}–{} operations, {} fleets, {:.0} kB of YAML",
        spec.departments,
        spec.products,
        spec.min_operations,
        spec.max_operations,
        spec.fleets,
        text.len() as f64 / 1024.0
    );

    // check: parse and the static picture, best of 5.
    let mut best = f64::INFINITY;
    for _ in 0..5 {
        let t = Instant::now();
        let plant = parse_scenario(&text, Path::new("generated.yaml")).expect("the generated plant loads");
        black_box(StaticPicture::new(&plant, 1.0).from_to.len());
        best = best.min(t.elapsed().as_secs_f64());
    }
    println!("check (parse + static picture): {:.3} s (target < 1 s)", best);

    // One simulated month (2 d warm-up), one core, best of 3.
    let plant = parse_scenario(&text, Path::new("generated.yaml")).expect("the generated plant loads");
    let plan = Plan::new(&plant, 0);
    let run = RunSpec {
        layout: 0,
        horizon_s: 30.0 * 86400.0,
        warmup_s: 2.0 * 86400.0,
        demand_factor: 1.0,
        seed: 1,
    };
    let mut rate = 0.0f64;
    let mut events = 0;
    for r in 0..3 {
        let t = Instant::now();
        events = black_box(simulate(&plan, &run, r)).events;
        rate = rate.max(events as f64 / t.elapsed().as_secs_f64());
    }
    println!(
        "one simulated month: {events} events, {:.2} million events/s on one core (target ≥ 5)",
        rate / 1e6
    );
    if let Some(mb) = peak_mb() {
        println!("peak memory after the runs: {mb:.0} MB (target < 300 MB)");
    }

    // Search: robust tabu for 60 s per seed; when did the best come within 0.5% of its final value?
    let pic = StaticPicture::new(&plant, 1.0);
    let pp = PlantProblem::new(&plant, &pic).expect("a search problem");
    let params = TabuParams::default();
    let mut times = Vec::new();
    for seed in 0..3u64 {
        let settings = Settings {
            seed,
            limits: Limits { iterations: None, time_s: Some(60.0), target: None, stall_share: None },
            ..Settings::default()
        };
        let out = robust_tabu(&pp.problem, &settings, &params, |_, _| {}).expect("a valid search");
        let last = out.evaluation.cost;
        let stable =
            out.trace.iter().find(|p| p.objective <= last * 1.005).map_or(out.elapsed_s, |p| p.elapsed_s);
        println!(
            "search seed {seed}: best {last:.0} after {:.1} s; within 0.5% of it at {stable:.2} s",
            out.elapsed_s
        );
        times.push(stable);
    }
    times.sort_by(f64::total_cmp);
    println!(
        "search to a 0.5%-stable best: median {:.2} s, slowest {:.2} s (target < 60 s)",
        times[1], times[2]
    );
}
