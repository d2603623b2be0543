//! `check`'s static picture of a big generated plant: 1,000 departments, 10,000 products.
//!
//! Target (issue 15): the picture of 10,000 products × 1,000 departments in
//! well under 2 s (the whole `check` of such a plant, parsing included, in
//! under 2 s). Memory and time follow the routing steps: the from-to charts
//! are sparse, so no departments² matrix is built per product.

use criterion::{criterion_group, criterion_main, Criterion};
use layflow_models::analysis::StaticPicture;
use layflow_models::parse_scenario;
use std::fmt::Write as _;
use std::hint::black_box;
use std::path::Path;

/// A plant of `nd` departments on a grid and `np` products, each routed
/// through 4 departments (picked by a fixed linear congruential sequence)
/// with a rework branch back to the first step.
fn big_plant(nd: usize, np: usize) -> String {
    let mut s =
        String::from("plant: generated scale plant\nrun: { horizon: 2 d, warmup: 1 d }\nlocations:\n");
    let side = (nd as f64).sqrt() as usize + 1;
    for d in 0..nd {
        let _ = writeln!(s, "  - {{ id: L{d}, at: [{}, {}] }}", (d % side) * 10, (d / side) * 10);
    }
    s.push_str(
        "  - { id: dock-in, at: [-10, 0] }\n  - { id: dock-out, at: [-10, 20] }\ndistance: rectilinear\n",
    );
    s.push_str(
        "departments:\n  - { id: receiving, dock: receiving }\n  - { id: shipping, dock: shipping }\n",
    );
    for d in 0..nd {
        let _ = writeln!(s, "  - {{ id: D{d}, machines: 2 }}");
    }
    s.push_str("layouts:\n  grid:\n    receiving: dock-in\n    shipping: dock-out\n");
    for d in 0..nd {
        let _ = writeln!(s, "    D{d}: L{d}");
    }
    s.push_str("products:\n");
    let mut x: u64 = 7;
    let mut next = || {
        x = x.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        (x >> 33) as usize % nd
    };
    for p in 0..np {
        let d: Vec<usize> = (0..4).map(|_| next()).collect();
        let _ = write!(
            s,
            "  - id: P{p}\n    demand: {{ per_hour: 0.001 }}\n    routing:\n\
             \x20     - {{ step: s0, at: D{}, time: 2 min }}\n\
             \x20     - {{ step: s1, at: D{}, time: 3 min, then: [{{ step: s2, p: 0.9 }}, {{ step: s0, p: 0.1 }}] }}\n\
             \x20     - {{ step: s2, at: D{}, time: 2 min }}\n\
             \x20     - {{ step: s3, at: D{}, time: 1 min }}\n\
             \x20     - {{ step: ship, at: shipping }}\n",
            d[0], d[1], d[2], d[3]
        );
    }
    s.push_str(
        "fleets:\n  - { id: trucks, kind: forklift, count: 3, speed: { loaded: 2.0 m/s, empty: 2.5 m/s }, \
         handling: { load: 30 s, unload: 30 s }, home: receiving }\n",
    );
    s
}

fn picture(c: &mut Criterion) {
    let text = big_plant(1000, 10_000);
    let plant = parse_scenario(&text, Path::new("generated.yaml")).expect("the generated plant loads");
    let mut g = c.benchmark_group("static_picture");
    g.sample_size(10);
    g.bench_function("departments_1000_products_10000", |b| {
        b.iter(|| black_box(StaticPicture::new(&plant, 1.0)).from_to.len())
    });
    g.finish();
}

criterion_group!(benches, picture);
criterion_main!(benches);
