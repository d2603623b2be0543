//! The hot loop does not allocate: allocations do not grow with the horizon.
//!
//! A counting global allocator wraps the system one. Over a run ten times
//! longer, the event count grows tenfold while the allocation count may only
//! grow by the few reallocations of queues and histograms reaching a new
//! maximum (logarithmic in the extremes, not linear in events).
#![allow(unsafe_code)] // a global allocator must be an `unsafe impl`

use std::alloc::{GlobalAlloc, Layout, System};
use std::path::Path;
use std::sync::atomic::{AtomicU64, Ordering};

use layflow_models::load_scenario;
use layflow_models::plant::{DepartmentRole, Handling, Plant, QueueOrder};
use layflow_models::sim::{simulate, Plan, RunSpec};
use layflow_models::timebuckets::{By, Grid};

struct Counting;
static ALLOCATIONS: AtomicU64 = AtomicU64::new(0);

// SAFETY: forwards every call unchanged to the system allocator.
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        ALLOCATIONS.fetch_add(1, Ordering::Relaxed);
        unsafe { System.alloc(layout) }
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) }
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        ALLOCATIONS.fetch_add(1, Ordering::Relaxed);
        unsafe { System.realloc(ptr, layout, new_size) }
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

#[test]
fn allocations_do_not_grow_with_the_horizon() {
    // One test for both plants: the counter is global, so two tests running
    // at once would count each other's allocations. The variable-demand demo
    // adds profiled arrivals (thinning) and trace orders releasing several
    // lots at once. The third plant has every fleet rule: tow trains,
    // nearest-idle fleet choice, reserve, parking, shifts and breaks. The
    // aisle demo travels its network segment by segment (a capacity-1
    // crossing and a speed limit), with waits at the crossing. The last two
    // block after service (deadlock detection runs each time a wait begins).
    // The alternatives plant chooses departments by shortest-queue,
    // least-work and first-free (shared queues) and branches from the dock.
    // The batch demo has two batch departments (min, max_wait, compatibility
    // groups, a rework loop back to a batch machine) served by forklifts:
    // each machine's batch slots are fixed at the start, and each group's
    // queue grows to its largest length, like a plain queue.
    // The demo again with every queue order and due dates: ordered queues
    // are heaps that grow to their largest length, like the plain ones.
    // The assembly demo keeps lots waiting for kits and component stocks
    // in queues that, too, only grow to their largest length.
    // The crews plants use people for operations (with shifts and breaks),
    // setups and loading, and walking technicians for repairs: each crew's
    // queue of requests is a ring buffer sized to the machines at the start.
    // The crews-batches-assembly demo runs all three together.
    let mut plants: Vec<(String, Plant)> = Vec::new();
    for name in [
        "demo.yaml",
        "orders-demo.yaml",
        "validation/all-fleet-rules.yaml",
        "aisles-demo.yaml",
        "staging-breakdowns.yaml",
        "validation/two-station-blocking.yaml",
        "validation/alt-movers.yaml",
        "batches-demo.yaml",
        "assembly-demo.yaml",
        "crews-batches-assembly-demo.yaml",
        "validation/crews-mixed.yaml",
        "validation/crews-machine-repair.yaml",
    ] {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios").join(name);
        plants.push((name.to_string(), load_scenario(&path).unwrap()));
    }
    let demo = plants[0].1.clone();
    plants.push(("demo.yaml with queue orders and due dates".into(), with_queue_orders(demo)));
    for (name, plant) in plants {
        // Results by hour of day (24 fixed buckets) must not grow with the horizon either.
        let hours = Grid::new(&By::HourOfDay, &plant, 86400.0, 10.0 * 86400.0).unwrap();
        for (plan, by) in
            [(Plan::new(&plant, 0), ""), (Plan::new(&plant, 0).with_buckets(hours), " --by hour-of-day")]
        {
            let name = format!("{name}{by}");
            let count = |days: f64| {
                let spec = RunSpec {
                    layout: 0,
                    horizon_s: days * 86400.0,
                    warmup_s: 86400.0,
                    demand_factor: 1.0,
                    seed: 99,
                };
                let before = ALLOCATIONS.load(Ordering::Relaxed);
                let r = simulate(&plan, &spec, 0);
                (ALLOCATIONS.load(Ordering::Relaxed) - before, r.events)
            };
            let (short, short_events) = count(10.0);
            let (long, long_events) = count(100.0);
            assert!(long_events > 9 * short_events, "{name}: {long_events} vs {short_events} events");
            // 100 days is about 280,000 events; allow 64 extra allocations for queues and
            // histograms reaching new maxima, far below one per thousand events.
            assert!(
                long <= short + 64,
                "{name}: allocations grew with the horizon: {short} for 10 d, {long} for 100 d"
            );
            eprintln!(
            "{name}: allocations: {short} for 10 d ({short_events} events), {long} for 100 d ({long_events} events)"
        );
        }
    }
}

/// `plant` with a queue order on every work department (priority, earliest
/// due, shortest time in turn), a priority and a due allowance of one day on
/// every product, and fleets serving requests earliest due first.
fn with_queue_orders(mut plant: Plant) -> Plant {
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
    plant
}
