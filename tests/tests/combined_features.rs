//! Crews, a batch machine and assembly in one plant (scenarios/crews-batches-assembly-demo.yaml): the three features run together and the plant's books still balance.
//!
//! Each feature is checked against theory on its own in crews.rs,
//! batches.rs and assembly.rs. Here they meet: the fitters run the saw's
//! loading and the assembly bench and repair the foundry; assembled pumps
//! wait for the paint oven's batches. What must still hold is conservation:
//! Little's law for the whole plant (Little 1961; docs/formulas.md §4), a kit
//! consumes exactly its parts, and every kit passes the oven once.
//!
//! Statistical rows: K = 3 half-widths of the scenario's 10-replication
//! Student t interval (t(0.975, 9) = 2.262, so about 6.8 standard errors),
//! plus an allowance for lots inside the plant at the window's edges.

use layflow_tests::{check_little, department, little_edge_bound, load, run_layout, Checks, HOUR};

const K: f64 = 3.0;

#[test]
fn people_oven_and_kits_together_keep_the_books() {
    let file = "crews-batches-assembly-demo.yaml";
    let plant = load(file);
    let run = run_layout(&plant, 0);
    let mut c = Checks::new(file);
    check_little(&mut c, file, &run, little_edge_bound(&run));
    let product = |id: &str| plant.products.iter().position(|p| p.id == id).expect("product in the demo");
    let (pump, imp, seal) = (product("pump"), product("impeller"), product("seal-kit"));
    let oven = department(&plant, "paint-oven");
    for (r, rep) in run.reps.iter().enumerate() {
        let a = rep.assembly.as_deref().expect("assembly statistics");
        // Bookkeeping, exact: one impeller and two seal kits per kit.
        c.holds(
            &format!(
                "replication {}: {} kits = impellers consumed {}",
                r + 1,
                a.kits[pump],
                rep.shipped[imp]
            ),
            a.kits[pump] == rep.shipped[imp],
        );
        c.holds(
            &format!(
                "replication {}: 2 × {} kits = seal kits consumed {}",
                r + 1,
                a.kits[pump],
                rep.shipped[seal]
            ),
            2 * a.kits[pump] == rep.shipped[seal],
        );
        // Every kit goes through the oven once: the oven's loads differ from the
        // kits only by the pumps between assembly and the oven at the window's
        // edges (a few: the oven holds at most 4, and 2 h is its longest wait).
        let (_, oven_loads) = rep.batch[oven];
        let gap = (oven_loads as f64 - a.kits[pump] as f64).abs();
        c.holds(
            &format!(
                "replication {}: oven loads {oven_loads} vs kits {} (edge gap ≤ 12)",
                r + 1,
                a.kits[pump]
            ),
            gap <= 12.0,
        );
        // The crew was busy some of the time and never more than its two people.
        let busy = rep.crews[0].busy_mean;
        c.holds(
            &format!("replication {}: fitters busy {busy:.3} people, in (0, 2)", r + 1),
            busy > 0.0 && busy < 2.0,
        );
    }
    // The oven sees the kits' rate: the static picture's arrivals at the oven
    // (1 pump per order), with a window-edge allowance of 4 loads ÷ the window.
    let s = &run.summary;
    let window_h = (run.spec.horizon_s - run.spec.warmup_s) / HOUR;
    let kits = &s.products[pump].kits.as_ref().expect("pump assembles").kits_per_h;
    c.estimate(
        "kits per hour vs the oven's static arrivals",
        run.picture.arrivals_per_h[oven],
        kits,
        K,
        4.0 / window_h,
        0.05,
    );
    c.finish();
}
