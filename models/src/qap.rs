//! The Koopmans–Beckmann quadratic assignment problem: cost, O(1) swap deltas, and robust tabu search.
//!
//! Facility i sits at location `p[i]`; the cost of `p` is
//! Σ_ij a_ij · b_{p(i) p(j)} (Koopmans and Beckmann, *Econometrica* 25(1),
//! 1957), with `a` the flows between departments and `b` the distances
//! between locations. Swapping two facilities changes the cost by Δ(p, r, s),
//! which costs O(n) to compute from scratch; after a swap of u and v, every
//! Δ(p, r, s) with {r, s} ∩ {u, v} = ∅ is updated in O(1) (É. D. Taillard,
//! "Robust taboo search for the quadratic assignment problem", *Parallel
//! Computing* 17:443–455, 1991). Both matrices may be asymmetric.

use rand::{RngExt, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;

/// A square instance: n facilities, n locations (pad with zero-flow dummy
/// facilities to leave locations empty).
#[derive(Debug, Clone)]
pub struct Qap {
    n: usize,
    a: Vec<f64>,
    b: Vec<f64>,
}

impl Qap {
    /// An instance from row-major n×n flow and distance matrices.
    pub fn new(n: usize, flow: Vec<f64>, distance: Vec<f64>) -> Result<Qap, String> {
        if n < 2 {
            return Err(format!("an assignment problem needs at least 2 facilities, got {n}"));
        }
        if flow.len() != n * n || distance.len() != n * n {
            return Err(format!(
                "the matrices must be {n}×{n}: got {} flow and {} distance entries",
                flow.len(),
                distance.len()
            ));
        }
        if let Some(x) = flow.iter().chain(&distance).find(|x| !x.is_finite()) {
            return Err(format!("matrix entries must be finite numbers, got {x}"));
        }
        Ok(Qap { n, a: flow, b: distance })
    }

    /// Facilities (= locations).
    pub fn n(&self) -> usize {
        self.n
    }

    #[inline]
    fn a(&self, i: usize, j: usize) -> f64 {
        self.a[i * self.n + j]
    }

    #[inline]
    fn b(&self, k: usize, l: usize) -> f64 {
        self.b[k * self.n + l]
    }

    /// Σ_ij a_ij b_{p(i)p(j)}.
    pub fn cost(&self, p: &[usize]) -> f64 {
        let n = self.n;
        let mut c = 0.0;
        for i in 0..n {
            for j in 0..n {
                c += self.a(i, j) * self.b(p[i], p[j]);
            }
        }
        c
    }

    /// Change in cost when facilities r and s swap locations (r ≠ s), from scratch in O(n).
    pub fn delta(&self, p: &[usize], r: usize, s: usize) -> f64 {
        let (pr, ps) = (p[r], p[s]);
        let mut d = self.a(r, r) * (self.b(ps, ps) - self.b(pr, pr))
            + self.a(r, s) * (self.b(ps, pr) - self.b(pr, ps))
            + self.a(s, r) * (self.b(pr, ps) - self.b(ps, pr))
            + self.a(s, s) * (self.b(pr, pr) - self.b(ps, ps));
        for (k, &pk) in p.iter().enumerate() {
            if k == r || k == s {
                continue;
            }
            d += self.a(k, r) * (self.b(pk, ps) - self.b(pk, pr))
                + self.a(k, s) * (self.b(pk, pr) - self.b(pk, ps))
                + self.a(r, k) * (self.b(ps, pk) - self.b(pr, pk))
                + self.a(s, k) * (self.b(pr, pk) - self.b(ps, pk));
        }
        d
    }
}

/// The swap deltas of every pair under the current permutation, kept up to date.
#[derive(Debug, Clone)]
pub struct Deltas {
    n: usize,
    d: Vec<f64>,
    /// Per-facility terms of the O(1) update for the last swap (reused, no allocation).
    x: Vec<f64>,
    y: Vec<f64>,
    z: Vec<f64>,
    w: Vec<f64>,
}

impl Deltas {
    /// All Δ(p, r, s) for r < s, from scratch: O(n³).
    pub fn new(q: &Qap, p: &[usize]) -> Deltas {
        let n = q.n;
        let mut d = vec![0.0; n * n];
        for r in 0..n {
            for s in r + 1..n {
                d[r * n + s] = q.delta(p, r, s);
            }
        }
        Deltas { n, d, x: vec![0.0; n], y: vec![0.0; n], z: vec![0.0; n], w: vec![0.0; n] }
    }

    /// Δ(p, r, s) for r < s.
    #[inline]
    pub fn get(&self, r: usize, s: usize) -> f64 {
        self.d[r * self.n + s]
    }

    /// Swap u and v in `p` and bring every delta up to date: O(n²) overall,
    /// O(1) per pair not touching u or v.
    pub fn swap(&mut self, q: &Qap, p: &mut [usize], u: usize, v: usize) {
        p.swap(u, v);
        let n = self.n;
        let (pu, pv) = (p[u], p[v]);
        // Taillard's update factors into per-facility terms: with
        // x_r = a_ru − a_rv, y_r = b_{p(r)p(u)} − b_{p(r)p(v)}, z_r = a_ur − a_vr and
        // w_r = b_{p(u)p(r)} − b_{p(v)p(r)}, the change of Δ(r, s) is
        // (x_r − x_s)(y_s − y_r) + (z_r − z_s)(w_s − w_r). Four O(n) passes, then O(1) per pair.
        for (r, &pr) in p.iter().enumerate() {
            self.x[r] = q.a(r, u) - q.a(r, v);
            self.y[r] = q.b(pr, pu) - q.b(pr, pv);
            self.z[r] = q.a(u, r) - q.a(v, r);
            self.w[r] = q.b(pu, pr) - q.b(pv, pr);
        }
        for r in 0..n {
            let (xr, yr, zr, wr) = (self.x[r], self.y[r], self.z[r], self.w[r]);
            let row = &mut self.d[r * n..(r + 1) * n];
            if r == u || r == v {
                for (s, d) in row.iter_mut().enumerate().skip(r + 1) {
                    *d = q.delta(p, r, s);
                }
                continue;
            }
            for (s, d) in row.iter_mut().enumerate().skip(r + 1) {
                *d = if s == u || s == v {
                    q.delta(p, r, s)
                } else {
                    *d + (xr - self.x[s]) * (self.y[s] - yr) + (zr - self.z[s]) * (self.w[s] - wr)
                };
            }
        }
    }
}

/// A random permutation of 0..n from `seed` (Fisher–Yates).
pub fn random_permutation(n: usize, rng: &mut Xoshiro256PlusPlus) -> Vec<usize> {
    let mut p: Vec<usize> = (0..n).collect();
    for i in (1..n).rev() {
        let j = rng.random_range(0..=i);
        p.swap(i, j);
    }
    p
}

/// What a search found.
#[derive(Debug, Clone)]
pub struct Found {
    /// The best permutation: `perm[facility]` is its location.
    pub perm: Vec<usize>,
    /// Its cost.
    pub cost: f64,
    /// Iteration at which it was first reached.
    pub at_iteration: u64,
}

/// Steepest-descent pairwise exchange: from `start`, make the swap that
/// lowers the cost most, until no swap lowers it (a local optimum under
/// pairwise exchange, the classic improvement method for process layouts).
pub fn pairwise_exchange(q: &Qap, start: Vec<usize>) -> Found {
    let n = q.n;
    let mut p = start;
    let mut deltas = Deltas::new(q, &p);
    let mut moves = 0u64;
    loop {
        let mut pick = None;
        let mut pick_delta = 0.0;
        for r in 0..n {
            for s in r + 1..n {
                let d = deltas.get(r, s);
                // Strictly better only, with a guard against rounding noise on non-integer data.
                if d < pick_delta - 1e-12 * (1.0 + d.abs()) {
                    pick = Some((r, s));
                    pick_delta = d;
                }
            }
        }
        let Some((r, s)) = pick else { break };
        deltas.swap(q, &mut p, r, s);
        moves += 1;
    }
    let cost = q.cost(&p);
    Found { perm: p, cost, at_iteration: moves }
}

/// Robust tabu search (Taillard 1991), from `start`, for at most `iterations`
/// moves or until `stop(best)` says so (a known optimum, a time limit).
/// `improved(iteration, best)` is called at each new best.
///
/// Parameters as in Taillard's paper (from memory): tabu tenure drawn
/// uniformly in [0.9n, 1.1n] and redrawn every 2.2n iterations; a move whose
/// two assignments have not been made for more than 5n² iterations is forced
/// (long-term aspiration); a tabu move that beats the best is allowed.
pub fn robust_tabu(
    q: &Qap,
    start: Vec<usize>,
    iterations: u64,
    seed: u64,
    mut stop: impl FnMut(f64) -> bool,
    mut improved: impl FnMut(u64, f64),
) -> Found {
    let n = q.n;
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
    let mut p = start;
    let mut cur = q.cost(&p);
    let mut best = Found { perm: p.clone(), cost: cur, at_iteration: 0 };
    improved(0, cur);
    let mut deltas = Deltas::new(q, &p);
    // tabu[i * n + k]: the iteration until which putting facility i at location k is tabu.
    let mut tabu = vec![0i64; n * n];
    let (lo, hi) = ((0.9 * n as f64).floor() as i64, (1.1 * n as f64).ceil() as i64);
    let aspiration = 5 * (n * n) as i64;
    let redraw = (2.2 * n as f64).ceil() as i64;
    let mut tenure = rng.random_range(lo.max(1)..=hi.max(1));
    for it in 1..=iterations as i64 {
        if stop(best.cost) {
            break;
        }
        if it % redraw == 0 {
            tenure = rng.random_range(lo.max(1)..=hi.max(1));
        }
        let (mut pick, mut pick_delta, mut aspired_pick) = (None, f64::INFINITY, false);
        for r in 0..n {
            for s in r + 1..n {
                let d = deltas.get(r, s);
                let (tr, ts) = (tabu[r * n + p[s]], tabu[s * n + p[r]]);
                let authorized = tr < it || ts < it;
                let aspired = tr < it - aspiration || ts < it - aspiration || cur + d < best.cost;
                let better = d < pick_delta;
                // Taillard's rule: an aspired move beats any non-aspired one; otherwise the
                // best authorised (non-tabu) move wins.
                let take =
                    if aspired { !aspired_pick || better } else { !aspired_pick && authorized && better };
                if take {
                    pick = Some((r, s));
                    pick_delta = d;
                    aspired_pick = aspired;
                }
            }
        }
        let (r, s) = pick.unwrap_or_else(|| {
            // Every move tabu and none aspired (rare on tiny instances): any swap keeps the walk going.
            let r = rng.random_range(0..n - 1);
            (r, rng.random_range(r + 1..n))
        });
        let d = deltas.get(r, s);
        // Forbid moving each facility back to where it was for a while.
        tabu[r * n + p[r]] = it + tenure;
        tabu[s * n + p[s]] = it + tenure;
        deltas.swap(q, &mut p, r, s);
        cur += d;
        if cur < best.cost - 1e-9 * best.cost.abs().max(1.0) {
            // Recompute rather than trust a long chain of additions.
            cur = q.cost(&p);
            if cur < best.cost {
                best = Found { perm: p.clone(), cost: cur, at_iteration: it as u64 };
                improved(it as u64, cur);
            }
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    fn random_instance(n: usize, seed: u64, symmetric: bool) -> Qap {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
        let mut m = |_: usize| -> Vec<f64> {
            let mut v: Vec<f64> = (0..n * n).map(|_| f64::from(rng.random_range(0..10u32))).collect();
            if symmetric {
                for i in 0..n {
                    for j in 0..i {
                        v[i * n + j] = v[j * n + i];
                    }
                }
            }
            v
        };
        let a = m(0);
        let b = m(1);
        Qap::new(n, a, b).unwrap()
    }

    #[test]
    fn deltas_match_recomputed_costs_and_stay_exact_after_swaps() {
        // Integer matrices: every sum is exact in f64, so the O(1) updates
        // (Taillard 1991) must equal cost differences exactly.
        for (seed, sym) in [(1, false), (2, true), (3, false)] {
            let q = random_instance(9, seed, sym);
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed + 10);
            let mut p = random_permutation(9, &mut rng);
            let mut deltas = Deltas::new(&q, &p);
            for _ in 0..200 {
                for r in 0..9 {
                    for s in r + 1..9 {
                        let mut p2 = p.clone();
                        p2.swap(r, s);
                        assert_eq!(deltas.get(r, s), q.cost(&p2) - q.cost(&p), "pair {r},{s}");
                    }
                }
                let u = rng.random_range(0..8);
                let v = rng.random_range(u + 1..9);
                deltas.swap(&q, &mut p, u, v);
            }
        }
    }

    fn brute_force(q: &Qap) -> f64 {
        fn go(q: &Qap, p: &mut Vec<usize>, k: usize, best: &mut f64) {
            if k == p.len() {
                *best = best.min(q.cost(p));
                return;
            }
            for i in k..p.len() {
                p.swap(k, i);
                go(q, p, k + 1, best);
                p.swap(k, i);
            }
        }
        let mut p: Vec<usize> = (0..q.n).collect();
        let mut best = f64::INFINITY;
        go(q, &mut p, 0, &mut best);
        best
    }

    #[test]
    fn tabu_finds_the_brute_force_optimum_on_small_instances() {
        // Exhaustive enumeration of all n! layouts is the reference.
        for seed in 0..12 {
            let n = 5 + (seed as usize % 3);
            let q = random_instance(n, 100 + seed, seed % 2 == 0);
            let opt = brute_force(&q);
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
            let start = random_permutation(n, &mut rng);
            let f = robust_tabu(&q, start, 2000, seed, |_| false, |_, _| {});
            assert_eq!(f.cost, q.cost(&f.perm), "the reported cost is the cost of the reported layout");
            assert_eq!(f.cost, opt, "seed {seed}, n {n}");
        }
    }

    #[test]
    fn pairwise_exchange_stops_at_a_local_optimum() {
        // A local optimum under pairwise exchange: no single swap lowers the
        // cost (checked by recomputing every swap), and no method can beat
        // the brute-force optimum.
        for seed in 0..8 {
            let n = 6 + (seed as usize % 2);
            let q = random_instance(n, 300 + seed, seed % 2 == 1);
            let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
            let f = pairwise_exchange(&q, random_permutation(n, &mut rng));
            assert_eq!(f.cost, q.cost(&f.perm));
            for r in 0..n {
                for s in r + 1..n {
                    let mut p2 = f.perm.clone();
                    p2.swap(r, s);
                    assert!(q.cost(&p2) >= f.cost, "seed {seed}: swap {r},{s} still improves");
                }
            }
            assert!(f.cost >= brute_force(&q));
        }
    }

    #[test]
    fn bad_instances_are_refused() {
        assert!(Qap::new(1, vec![0.0], vec![0.0]).is_err());
        assert!(Qap::new(2, vec![0.0; 3], vec![0.0; 4]).is_err());
        assert!(Qap::new(2, vec![f64::NAN, 0.0, 0.0, 0.0], vec![0.0; 4]).is_err());
    }
}
