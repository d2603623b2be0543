//! The classic hold model of the event calendar at 10², 10⁴ and 10⁶ pending events.
//!
//! A hold takes the next event and schedules one at now + an exponential
//! increment, so the calendar's size stays fixed (Vaucher & Duval 1975;
//! Jones 1986 for the method of comparing event-set algorithms).
//! Targets: ≤ 60 ns per hold at 10⁴, ≤ 250 ns at 10⁶ (release build).

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use layflow_engine::{stream, Calendar};
use rand::RngExt;
use std::hint::black_box;

fn filled(n: usize) -> (Calendar<u32>, Vec<f64>) {
    let mut rng = stream(1, 0, &[n as u64]);
    let mut cal = Calendar::with_capacity(n + 1);
    for i in 0..n {
        cal.schedule(-rng.random::<f64>().ln(), i as u32);
    }
    // Pre-drawn increments keep the generator and the logarithm out of the timing.
    let incs: Vec<f64> = (0..4096).map(|_| -rng.random::<f64>().ln()).collect();
    (cal, incs)
}

fn hold(c: &mut Criterion) {
    let mut g = c.benchmark_group("calendar_hold");
    for n in [100usize, 10_000, 1_000_000] {
        let (mut cal, incs) = filled(n);
        let mut k = 0usize;
        g.throughput(Throughput::Elements(1));
        g.bench_with_input(BenchmarkId::from_parameter(n), &n, |b, _| {
            b.iter(|| {
                let (t, e) = cal.take_next().expect("calendar never empties in a hold");
                k = (k + 1) & 4095;
                cal.schedule(t + incs[k], black_box(e));
            })
        });
    }
    g.finish();
}

criterion_group!(benches, hold);
criterion_main!(benches);
