//! Events per second of the demo plant on one core: one replication of 20 simulated days.
//!
//! Target: at least 3 million plant events per second (release build).
//! Criterion's "thrpt" line reports events per second directly.

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use layflow_models::load_scenario;
use layflow_models::sim::{simulate, Plan, RunSpec};
use std::hint::black_box;
use std::path::Path;

fn demo(c: &mut Criterion) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/demo.yaml");
    let plant = load_scenario(&path).expect("the demo scenario loads");
    let mut g = c.benchmark_group("demo_plant");
    for (l, layout) in plant.layouts.iter().enumerate() {
        let plan = Plan::new(&plant, l);
        let spec = RunSpec {
            layout: l,
            horizon_s: 20.0 * 86400.0,
            warmup_s: 2.0 * 86400.0,
            demand_factor: plant.demand_factor,
            seed: plant.run.seed,
        };
        let events = simulate(&plan, &spec, 0).events;
        g.throughput(Throughput::Elements(events));
        g.sample_size(20);
        g.bench_function(format!("replication_20d/{}", layout.name), |b| {
            b.iter(|| black_box(simulate(&plan, &spec, 0)).events)
        });
    }
    g.finish();
}

criterion_group!(benches, demo);
criterion_main!(benches);
