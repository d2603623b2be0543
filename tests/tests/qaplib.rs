//! Robust tabu search against QAPLIB instances with proven optima.
//!
//! Data: QAPLIB (R. E. Burkard, S. E. Karisch, F. Rendl, "QAPLIB – A Quadratic
//! Assignment Problem Library", J. Global Optimization 10:391–403, 1997), read
//! from ../shared/qaplib (or the folder in LAYFLOW_QAPLIB). The data is not
//! part of the project: where the folder is absent the tests say so and pass.

use std::path::{Path, PathBuf};

use layflow_models::qap::{pairwise_exchange, random_permutation, robust_tabu, Qap};
use rand::SeedableRng;
use rand_xoshiro::Xoshiro256PlusPlus;

fn folder() -> Option<PathBuf> {
    let p = std::env::var_os("LAYFLOW_QAPLIB")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../shared/qaplib"));
    if p.join("nug12.dat").is_file() {
        Some(p)
    } else {
        eprintln!(
            "NOTICE: QAPLIB data not found at {} (set LAYFLOW_QAPLIB); the QAPLIB checks were skipped",
            p.display()
        );
        None
    }
}

fn numbers(text: &str) -> Vec<f64> {
    text.split_whitespace().map(|t| t.parse::<f64>().expect("QAPLIB files hold numbers")).collect()
}

/// NAME.dat: n, then A (flows), then B (distances), read by token because rows wrap.
fn instance(dir: &Path, name: &str) -> Qap {
    let v = numbers(&std::fs::read_to_string(dir.join(format!("{name}.dat"))).unwrap());
    let n = v[0] as usize;
    assert_eq!(v.len(), 1 + 2 * n * n, "{name}.dat has n and two n×n matrices");
    Qap::new(n, v[1..1 + n * n].to_vec(), v[1 + n * n..].to_vec()).unwrap()
}

/// NAME.sln: n and the optimal value (n is left out in some files), then
/// (optionally) a 1-based permutation of the `n` facilities.
fn solution(dir: &Path, name: &str, n: usize) -> (f64, Option<Vec<usize>>) {
    let v = numbers(&std::fs::read_to_string(dir.join(format!("{name}.sln"))).unwrap());
    let (value, rest) = match v.len() {
        1 => (v[0], &v[1..]),
        len if len == n + 1 => (v[0], &v[1..]),
        _ => (v[1], &v[2..]),
    };
    let perm = (rest.len() == n).then(|| rest.iter().map(|&x| x as usize - 1).collect());
    (value, perm)
}

fn inverse(p: &[usize]) -> Vec<usize> {
    let mut q = vec![0; p.len()];
    for (i, &k) in p.iter().enumerate() {
        q[k] = i;
    }
    q
}

const ALL: &[&str] =
    &["chr12a", "esc16a", "had12", "had20", "nug12", "nug15", "nug20", "nug30", "rou12", "scr12", "tai12a"];

#[test]
fn stated_optimal_permutations_give_the_stated_values() {
    let Some(dir) = folder() else { return };
    for name in ALL {
        let q = instance(&dir, name);
        let (value, perm) = solution(&dir, name, q.n());
        let p = perm.expect("a stated permutation");
        // The README of the data notes that nug12/15/20 state the permutation
        // the other way round (location → facility): accept either reading.
        let direct = q.cost(&p);
        let inverted = q.cost(&inverse(&p));
        assert!(direct == value || inverted == value, "{name}: {direct} / {inverted} vs {value}");
    }
}

#[test]
fn robust_tabu_reaches_the_optimum_on_the_size_12_instances() {
    let Some(dir) = folder() else { return };
    for name in ["nug12", "had12", "chr12a", "scr12", "tai12a", "rou12"] {
        let q = instance(&dir, name);
        let (opt, _) = solution(&dir, name, q.n());
        for seed in 0..3u64 {
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
            let start = random_permutation(q.n(), &mut rng);
            let f = robust_tabu(&q, start, 200_000, seed, |b| b <= opt, |_, _| {});
            assert_eq!(f.cost, q.cost(&f.perm));
            assert_eq!(f.cost, opt, "{name}, seed {seed}: reached {} (optimum {opt})", f.cost);
        }
    }
}

#[test]
fn gaps_on_the_larger_instances() {
    let Some(dir) = folder() else { return };
    // A fixed budget of iterations (deterministic); the gap is reported, and
    // bounded loosely: robust tabu is known to come within a fraction of a
    // percent on these (Taillard 1991).
    for (name, bound) in [("nug20", 0.01), ("had20", 0.01), ("nug30", 0.01), ("kra30a-old", 0.03)] {
        let q = instance(&dir, name);
        let (opt, _) = solution(&dir, name, q.n());
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(7);
        let start = random_permutation(q.n(), &mut rng);
        let f = robust_tabu(&q, start, 20_000, 7, |b| b <= opt, |_, _| {});
        let gap = (f.cost - opt) / opt;
        eprintln!(
            "{name}: robust tabu {} after ≤ 20000 iterations, optimum {opt}, gap {:.3}%",
            f.cost,
            gap * 100.0
        );
        assert_eq!(f.cost, q.cost(&f.perm));
        assert!(f.cost >= opt, "{name}: below the proven optimum, so the cost is wrong");
        assert!(gap <= bound, "{name}: gap {gap}");
    }
}

#[test]
fn pairwise_exchange_lands_near_the_optimum() {
    let Some(dir) = folder() else { return };
    // Steepest descent stops at the first local optimum; the best of 20
    // random starts is reported and must be a true cost, at or above the
    // proven optimum. Measured gaps: nug12 1.38%, had12 0%, nug20 1.32%, nug30
    // 1.57%; the bound (5%) is loose because a descent method has no guarantee.
    for name in ["nug12", "had12", "nug20", "nug30"] {
        let q = instance(&dir, name);
        let (opt, _) = solution(&dir, name, q.n());
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(11);
        let best = (0..20)
            .map(|_| pairwise_exchange(&q, random_permutation(q.n(), &mut rng)))
            .min_by(|a, b| a.cost.total_cmp(&b.cost))
            .unwrap();
        let gap = (best.cost - opt) / opt;
        eprintln!(
            "{name}: pairwise exchange, best of 20 starts {}, optimum {opt}, gap {:.2}%",
            best.cost,
            gap * 100.0
        );
        assert_eq!(best.cost, q.cost(&best.perm));
        assert!(best.cost >= opt && gap <= 0.05, "{name}: gap {gap}");
    }
}
