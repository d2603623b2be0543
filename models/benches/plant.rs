//! Events per second of the demo plant on one core: one replication of 20 simulated days.
//!
//! Target: at least 3 million plant events per second (release build).
//! Criterion's "thrpt" line reports events per second directly.
//!
//! `demo_plant_by_hour`: the same replication of the demo's first layout with
//! results per hour of day (`Plan::with_buckets`, as `--by hour-of-day`).
//! Target: at most 15% fewer events per second than `demo_plant`. When it
//! was added (issue 16) it measured about 8.4 million events per second
//! without buckets and 4.8 million with, 40–45% fewer. What closed the gap,
//! measured step by step on one core (best of 30 replications):
//! - credits booked ahead of time read from the whole run's totals at bucket
//!   edges, only the parts that cross an edge moved; bucket means from counts
//!   and sums; one conversion to ticks per wait shared by every histogram;
//!   `Grid::locate` one division for grids of equal buckets: 24% → 19%;
//! - mimalloc as the global allocator (here and in the binary): each
//!   replication's bucket histograms no longer page-fault afresh: → 11%.
//!
//! Three interleaved criterion rounds after that (2 shared cores): 10.1, 10.5,
//! 10.5 million events per second without buckets; 9.2, 9.3, 9.3 with (9–12%).
//!
//! `held_at_dock`: a week of `scenarios/validation/held-at-dock.yaml`, lots
//! held at a receiving dock in an ever-longer line while another product
//! waits upstream at a full outbound area (issue 15, class 3). It once ran at
//! about 5,700 events per second because each new wait rescanned the whole
//! line; it should run at the demo's rate.

use criterion::{criterion_group, criterion_main, Criterion, Throughput};

/// The allocator the `layflow` binary uses, so the bench measures what users run.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;
use layflow_models::load_scenario;
use layflow_models::sim::{simulate, Plan, RunSpec};
use layflow_models::timebuckets::{By, Grid};
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

fn demo_by_hour(c: &mut Criterion) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/demo.yaml");
    let plant = load_scenario(&path).expect("the demo scenario loads");
    let spec = RunSpec {
        layout: 0,
        horizon_s: 20.0 * 86400.0,
        warmup_s: 2.0 * 86400.0,
        demand_factor: plant.demand_factor,
        seed: plant.run.seed,
    };
    let grid =
        Grid::new(&By::HourOfDay, &plant, spec.warmup_s, spec.horizon_s).expect("18 days hold 24 hours");
    let plan = Plan::new(&plant, 0).with_buckets(grid);
    let events = simulate(&plan, &spec, 0).events;
    let mut g = c.benchmark_group("demo_plant_by_hour");
    g.throughput(Throughput::Elements(events));
    g.sample_size(20);
    g.bench_function(format!("replication_20d/{}", plant.layouts[0].name), |b| {
        b.iter(|| black_box(simulate(&plan, &spec, 0)).events)
    });
    g.finish();
}

fn held_at_dock(c: &mut Criterion) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/validation/held-at-dock.yaml");
    let mut plant = load_scenario(&path).expect("the held-at-dock scenario loads");
    // Overloaded on purpose: capped at the overload limit (10,000 lots, reached
    // after about 110 h) rather than stopped, so the week runs to the end.
    plant.run.allow_overload = true;
    let plan = Plan::new(&plant, 0);
    let spec = RunSpec {
        layout: 0,
        horizon_s: 168.0 * 3600.0,
        warmup_s: 0.0,
        demand_factor: plant.demand_factor,
        seed: plant.run.seed,
    };
    let events = simulate(&plan, &spec, 0).events;
    let mut g = c.benchmark_group("held_at_dock");
    g.throughput(Throughput::Elements(events));
    g.sample_size(20);
    g.bench_function("replication_168h", |b| b.iter(|| black_box(simulate(&plan, &spec, 0)).events));
    g.finish();
}

/// The demo's first layout with a queue order on every work department
/// (priority, earliest due, shortest time in turn), a priority and a due
/// allowance of one day on every product, and fleets serving requests
/// earliest due first (issue 19). Target: at most 25% fewer events per
/// second than `demo_plant`. When added, two interleaved runs on the loaded
/// 2-core machine gave 4.39 and 4.49 million events per second against 5.04
/// and 4.61 for `demo_plant` (3–13% fewer). The plain demo's own cost did
/// not change: callgrind counted +0.01% instructions for a 6-day run.
fn demo_queue_orders(c: &mut Criterion) {
    use layflow_models::plant::{DepartmentRole, Handling, QueueOrder};
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/demo.yaml");
    let mut plant = load_scenario(&path).expect("the demo scenario loads");
    let orders = [QueueOrder::Priority, QueueOrder::EarliestDue, QueueOrder::ShortestTime];
    let work = plant.departments.iter_mut().filter(|d| d.role == DepartmentRole::Work);
    for (k, d) in work.enumerate() {
        d.queue_order = orders[k % orders.len()];
    }
    for (k, p) in plant.products.iter_mut().enumerate() {
        p.priority = Some(k as u32 % 3 + 1);
        p.due_within_s = Some(86400.0);
    }
    if let Handling::Fleets(fleets) = &mut plant.handling {
        for f in fleets {
            f.request_order = QueueOrder::EarliestDue;
        }
    }
    let spec = RunSpec {
        layout: 0,
        horizon_s: 20.0 * 86400.0,
        warmup_s: 2.0 * 86400.0,
        demand_factor: plant.demand_factor,
        seed: plant.run.seed,
    };
    let plan = Plan::new(&plant, 0);
    let events = simulate(&plan, &spec, 0).events;
    let mut g = c.benchmark_group("demo_plant_queue_orders");
    g.throughput(Throughput::Elements(events));
    g.sample_size(20);
    g.bench_function(format!("replication_20d/{}", plant.layouts[0].name), |b| {
        b.iter(|| black_box(simulate(&plan, &spec, 0)).events)
    });
    g.finish();
}

criterion_group!(benches, demo, demo_by_hour, held_at_dock, demo_queue_orders);
criterion_main!(benches);
