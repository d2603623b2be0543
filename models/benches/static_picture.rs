//! `check`'s static picture of a big generated plant: 1,000 departments, 10,000 products (`layflow generate`'s generator).
//!
//! Target (issue 15): the picture of 10,000 products × 1,000 departments in
//! well under 2 s (the whole `check` of such a plant, parsing included, in
//! under 2 s). Memory and time follow the routing steps: the from-to charts
//! are sparse, so no departments² matrix is built per product.

use criterion::{criterion_group, criterion_main, Criterion};
use layflow_models::analysis::StaticPicture;
use layflow_models::generate::{scenario, Spec};
use layflow_models::parse_scenario;
use std::hint::black_box;
use std::path::Path;

fn picture(c: &mut Criterion) {
    // The generator of `layflow generate`: 4–6 operations a product, rework branches, 4 fleets.
    let spec =
        Spec { departments: 1000, products: 10_000, min_operations: 4, max_operations: 6, ..Spec::default() };
    let text = scenario(&spec);
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
