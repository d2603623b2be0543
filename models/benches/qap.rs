//! Time for robust tabu search to reach the proven optimum on QAPLIB instances, over 10 seeds.
//!
//! Run with `cargo bench -p layflow-models --bench qap`. A plain program, not
//! criterion: the measure is time-to-target per seed, reported as a median
//! with the count of seeds that got there. Target: nug30 in at least 9 of 10
//! seeds, median under 0.5 s. Data: QAPLIB (Burkard, Karisch, Rendl 1997) in
//! ../shared/qaplib or $LAYFLOW_QAPLIB; skipped with a notice if absent.

use std::path::PathBuf;

use layflow_models::search::qaplib::{read_dat, read_sln};
use layflow_models::search::{robust_tabu, Limits, Settings, TabuParams};

/// Per seed: at most this many iterations or this many seconds.
const ITERATIONS: u64 = 50_000_000;
const SECONDS: f64 = 20.0;

fn main() {
    let dir = std::env::var_os("LAYFLOW_QAPLIB")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../shared/qaplib"));
    if !dir.join("nug30.dat").is_file() {
        eprintln!(
            "NOTICE: QAPLIB data not found at {} (set LAYFLOW_QAPLIB); nothing measured.",
            dir.display()
        );
        return;
    }
    let params = TabuParams::default();
    println!("robust tabu, 10 seeds, random starts; {params:?}");
    println!("instance    optimum  reached  median time  median iterations  slowest reached  µs/iteration");
    for name in ["nug20", "nug30", "kra30a-old"] {
        let inst = read_dat(&dir.join(format!("{name}.dat"))).expect("a readable instance");
        let opt = read_sln(&dir.join(format!("{name}.sln"))).expect("a readable solution").value;
        let q = inst.problem().expect("a valid instance");
        let (mut times, mut iters) = (Vec::new(), Vec::new());
        let (mut reached, mut total_t, mut total_it) = (0, 0.0, 0u64);
        for seed in 0..10u64 {
            let settings = Settings {
                seed,
                limits: Limits {
                    iterations: Some(ITERATIONS),
                    time_s: Some(SECONDS),
                    target: Some(opt),
                    stall_share: None,
                },
                ..Settings::default()
            };
            let out = robust_tabu(&q, &settings, &params, |_, _| {}).expect("a valid search");
            total_t += out.elapsed_s;
            total_it += out.iterations;
            if out.evaluation.cost <= opt {
                reached += 1;
                times.push(out.elapsed_s);
                iters.push(out.iterations);
            } else {
                // A seed that misses counts as infinitely slow in the median.
                times.push(f64::INFINITY);
                iters.push(u64::MAX);
            }
        }
        times.sort_by(f64::total_cmp);
        iters.sort_unstable();
        // Median of 10: the mean of the 5th and 6th.
        let median = 0.5 * (times[4] + times[5]);
        let median_it =
            if iters[5] == u64::MAX { f64::INFINITY } else { 0.5 * (iters[4] as f64 + iters[5] as f64) };
        let slowest = times.iter().copied().filter(|t| t.is_finite()).fold(f64::NAN, f64::max);
        println!(
            "{name:<11}{opt:>8}  {reached:>4}/10  {median:>9.3} s  {median_it:>17.0}  {slowest:>13.3} s  {:>12.3}",
            1e6 * total_t / total_it.max(1) as f64
        );
    }
}
