//! Time for robust tabu search to reach the proven optimum on QAPLIB instances, over 10 seeds.
//!
//! Run with `cargo bench -p layflow-models --bench qap`. A plain program, not
//! criterion: the measure is time-to-target per seed, reported as a median
//! with the count of seeds that got there. Target (issue 5): nug30 in at least
//! 9 of 10 seeds, median under 0.5 s. Data: QAPLIB (Burkard, Karisch, Rendl
//! 1997) in ../shared/qaplib or $LAYFLOW_QAPLIB; skipped with a notice if absent.

use std::path::PathBuf;
use std::time::Instant;

use layflow_models::qap::{random_permutation, robust_tabu, Qap};
use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;

fn numbers(path: &std::path::Path) -> Vec<f64> {
    std::fs::read_to_string(path)
        .expect("readable QAPLIB file")
        .split_whitespace()
        .map(|t| t.parse().expect("numbers"))
        .collect()
}

fn main() {
    let dir = std::env::var_os("LAYFLOW_QAPLIB")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../shared/qaplib"));
    if !dir.join("nug30.dat").is_file() {
        eprintln!(
            "NOTICE: QAPLIB data not found at {}; set LAYFLOW_QAPLIB. Nothing measured.",
            dir.display()
        );
        return;
    }
    println!("instance  optimum  reached  median time to optimum  slowest");
    for (name, opt) in [("nug20", 2570.0), ("nug30", 6124.0), ("kra30a-old", 88900.0)] {
        let v = numbers(&dir.join(format!("{name}.dat")));
        let n = v[0] as usize;
        let q = Qap::new(n, v[1..1 + n * n].to_vec(), v[1 + n * n..].to_vec()).expect("valid instance");
        let mut times = Vec::new();
        let mut reached = 0;
        for seed in 0..10u64 {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
            let start = random_permutation(n, &mut rng);
            let t0 = Instant::now();
            let f = robust_tabu(
                &q,
                start,
                5_000_000,
                seed,
                |b| b <= opt || t0.elapsed().as_secs_f64() > 10.0,
                |_, _| {},
            );
            let t = t0.elapsed().as_secs_f64();
            if f.cost <= opt {
                reached += 1;
                times.push(t);
            }
        }
        times.sort_by(f64::total_cmp);
        let median = if times.is_empty() { f64::NAN } else { times[times.len() / 2] };
        let slowest = times.last().copied().unwrap_or(f64::NAN);
        println!("{name:<10}{opt:>8}  {reached:>4}/10  {median:>18.3} s  {slowest:>8.3} s");
    }
}
