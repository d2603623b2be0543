//! Swap deltas: the change in cost when two facilities trade locations, from scratch in O(n) or maintained in O(1).
//!
//! For a permutation φ and facilities r ≠ s (general, asymmetric a and b;
//! φ is the permutation before the swap):
//!
//! Δ(φ, r, s) = a_rr(b_φsφs − b_φrφr) + a_rs(b_φsφr − b_φrφs)
//!            + a_sr(b_φrφs − b_φsφr) + a_ss(b_φrφr − b_φsφs)
//!            + Σ_{k≠r,s} [ (a_kr − a_ks)(b_φkφs − b_φkφr) + (a_rk − a_sk)(b_φsφk − b_φrφk) ]
//!            + c_rφs + c_sφr − c_rφr − c_sφs.
//!
//! When a and b are symmetric the sum is 2·Σ_{k≠r,s}(a_rk − a_sk)(b_φsφk − b_φrφk)
//! and the a_rs, a_sr terms cancel.
//!
//! After u and v swap (φ' the new permutation), for every pair {r, s}
//! disjoint from {u, v} (É. D. Taillard, "Robust taboo search for the
//! quadratic assignment problem", *Parallel Computing* 17:443–455, 1991):
//!
//! Δ(φ', r, s) = Δ(φ, r, s)
//!   + (a_ru − a_rv + a_sv − a_su)(b_φ'sφ'u − b_φ'sφ'v + b_φ'rφ'v − b_φ'rφ'u)
//!   + (a_ur − a_vr + a_vs − a_us)(b_φ'uφ's − b_φ'vφ's + b_φ'vφ'r − b_φ'uφ'r).
//!
//! With x_k = a_ku − a_kv, y_k = b_φ'kφ'u − b_φ'kφ'v, z_k = a_uk − a_vk and
//! w_k = b_φ'uφ'k − b_φ'vφ'k this is Δ + (x_r − x_s)(y_s − y_r) + (z_r − z_s)(w_s − w_r):
//! four O(n) vectors per swap, then O(1) per pair. The fixed-cost part of
//! Δ(r, s) depends only on where r and s are, so it is unchanged for those
//! pairs. The pairs that contain u or v are recomputed in O(n) each.
//!
//! Penalties for adjacency rules are not kept here: they change only for the
//! rules of the two facilities swapped, and [`Problem::swap_delta`] adds them.

use super::qap::Problem;

/// A permutation with its distances gathered into facility order, so the
/// O(n) delta reads rows sequentially: `bp[i·m + j] = b_φ(i)φ(j)`.
/// A swap costs O(m) (two rows and two columns trade places).
#[derive(Debug, Clone)]
pub struct Assignment {
    m: usize,
    p: Vec<usize>,
    bp: Vec<f64>,
    /// The transpose of `bp`; kept only for asymmetric problems.
    bpt: Vec<f64>,
}

impl Assignment {
    /// Gather the distances for permutation `p` (m entries, checked by the caller).
    pub fn new(q: &Problem, p: Vec<usize>) -> Assignment {
        let m = q.m;
        let mut bp = vec![0.0; m * m];
        for i in 0..m {
            for j in 0..m {
                bp[i * m + j] = q.b[p[i] * m + p[j]];
            }
        }
        let bpt = if q.symmetric {
            Vec::new()
        } else {
            let mut t = vec![0.0; m * m];
            for i in 0..m {
                for j in 0..m {
                    t[j * m + i] = bp[i * m + j];
                }
            }
            t
        };
        Assignment { m, p, bp, bpt }
    }

    /// The permutation: `perm()[i]` is the location of facility i.
    pub fn perm(&self) -> &[usize] {
        &self.p
    }

    /// Swap the locations of facilities u and v.
    pub fn swap(&mut self, u: usize, v: usize) {
        if u == v {
            return;
        }
        self.p.swap(u, v);
        swap_rows_and_columns(&mut self.bp, self.m, u, v);
        if !self.bpt.is_empty() {
            swap_rows_and_columns(&mut self.bpt, self.m, u, v);
        }
    }

    /// Change in flow and fixed cost if r and s swapped (r ≠ s): O(n). No penalties.
    #[inline]
    pub fn delta(&self, q: &Problem, r: usize, s: usize) -> f64 {
        let (n, m) = (q.n, q.m);
        let (br, bs) = (&self.bp[r * m..r * m + n], &self.bp[s * m..s * m + n]);
        let (ar, as_) = (&q.a[r * m..r * m + n], &q.a[s * m..s * m + n]);
        let mut sum = dot_diff(ar, as_, bs, br);
        if !q.symmetric {
            let (tr, ts) = (&self.bpt[r * m..r * m + n], &self.bpt[s * m..s * m + n]);
            let (atr, ats) = (&q.at[r * m..r * m + n], &q.at[s * m..s * m + n]);
            sum += dot_diff(atr, ats, ts, tr);
        }
        self.finish_delta(q, r, s, sum)
    }

    /// Δ(r, s) from the sum over every k < n (k = r and k = s included):
    /// Σ_k (a_rk − a_sk)(b_φsφk − b_φrφk), plus, when asymmetric,
    /// Σ_k (a_kr − a_ks)(b_φkφs − b_φkφr). Takes out the k = r, s terms
    /// (each 0 when its facility is a placeholder, whose flows are 0) and adds
    /// the r–s terms and the fixed costs. O(1).
    #[inline(always)]
    fn finish_delta(&self, q: &Problem, r: usize, s: usize, sum: f64) -> f64 {
        let m = q.m;
        let bp = |i: usize, j: usize| self.bp[i * m + j];
        let a = |i: usize, j: usize| q.a[i * m + j];
        let (brr, bss, brs, bsr) = (bp(r, r), bp(s, s), bp(r, s), bp(s, r));
        let (arr, ass, ars, asr) = (a(r, r), a(s, s), a(r, s), a(s, r));
        let mut d = if q.symmetric {
            let tr = (arr - asr) * (bsr - brr);
            let ts = (ars - ass) * (bss - brs);
            2.0 * (sum - tr - ts) + arr * (bss - brr) + ass * (brr - bss)
        } else {
            let tr = (arr - ars) * (brs - brr) + (arr - asr) * (bsr - brr);
            let ts = (asr - ass) * (bss - bsr) + (ars - ass) * (bss - brs);
            sum - tr - ts + arr * (bss - brr) + ars * (bsr - brs) + asr * (brs - bsr) + ass * (brr - bss)
        };
        if q.has_fixed {
            let (pr, ps) = (self.p[r], self.p[s]);
            d += q.c[r * m + ps] + q.c[s * m + pr] - q.c[r * m + pr] - q.c[s * m + ps];
        }
        d
    }
}

fn swap_rows_and_columns(v: &mut [f64], m: usize, u: usize, w: usize) {
    let (lo, hi) = (u.min(w), u.max(w));
    let (head, tail) = v.split_at_mut(hi * m);
    head[lo * m..(lo + 1) * m].swap_with_slice(&mut tail[..m]);
    for i in 0..m {
        v.swap(i * m + u, i * m + w);
    }
}

/// Σ_k (x1_k − x2_k)(y1_k − y2_k), in four interleaved partial sums so the
/// compiler can use vector registers (a single running f64 sum may not be reordered).
#[inline]
fn dot_diff(x1: &[f64], x2: &[f64], y1: &[f64], y2: &[f64]) -> f64 {
    let n = x1.len();
    let (x2, y1, y2) = (&x2[..n], &y1[..n], &y2[..n]);
    let mut acc = [0.0f64; 4];
    let mut k = 0;
    while k + 4 <= n {
        for l in 0..4 {
            acc[l] += (x1[k + l] - x2[k + l]) * (y1[k + l] - y2[k + l]);
        }
        k += 4;
    }
    let mut tail = 0.0;
    while k < n {
        tail += (x1[k] - x2[k]) * (y1[k] - y2[k]);
        k += 1;
    }
    (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail
}

/// Σ_k x_k·y_k, four partial sums as in [`dot_diff`].
#[inline]
fn dot(x: &[f64], y: &[f64]) -> f64 {
    let n = x.len();
    let y = &y[..n];
    let mut acc = [0.0f64; 4];
    let (xc, yc) = (x.chunks_exact(4), y.chunks_exact(4));
    let (xt, yt) = (xc.remainder(), yc.remainder());
    for (xs, ys) in xc.zip(yc) {
        for l in 0..4 {
            acc[l] += xs[l] * ys[l];
        }
    }
    let tail: f64 = xt.iter().zip(yt).map(|(a, b)| a * b).sum();
    (acc[0] + acc[1]) + (acc[2] + acc[3]) + tail
}

/// Δ(φ, r, s) straight from the formula, with no gathered distances: the
/// reference the faster forms are tested against. O(n).
pub(crate) fn direct_delta(q: &Problem, p: &[usize], r: usize, s: usize) -> f64 {
    let (n, m) = (q.n, q.m);
    let a = |i: usize, j: usize| q.a[i * m + j];
    let b = |k: usize, l: usize| q.b[k * m + l];
    let (pr, ps) = (p[r], p[s]);
    let mut d = a(r, r) * (b(ps, ps) - b(pr, pr))
        + a(r, s) * (b(ps, pr) - b(pr, ps))
        + a(s, r) * (b(pr, ps) - b(ps, pr))
        + a(s, s) * (b(pr, pr) - b(ps, ps));
    for (k, &pk) in p.iter().enumerate().take(n) {
        if k == r || k == s {
            continue;
        }
        d += (a(k, r) - a(k, s)) * (b(pk, ps) - b(pk, pr)) + (a(r, k) - a(s, k)) * (b(ps, pk) - b(pr, pk));
    }
    d + q.c[r * m + ps] + q.c[s * m + pr] - q.c[r * m + pr] - q.c[s * m + ps]
}

// Here rather than beside the problem in `qap.rs`: the problem knows
// nothing of deltas, and deltas build on the problem, not the other way.
impl Problem {
    /// Change in the objective (flows, fixed costs and penalties) when
    /// facilities r and s swap, from scratch: O(m).
    pub fn swap_delta(&self, p: &[usize], r: usize, s: usize) -> f64 {
        let mut d = direct_delta(self, p, r, s);
        if self.has_rules() && (self.has_rules_for(r) || self.has_rules_for(s)) {
            d += self.penalty_delta(p, r, s);
        }
        d
    }
}

/// Δ(φ, r, s) for every pair a search may swap, kept up to date across swaps
/// (flows and fixed costs; no penalties). Pairs are stored for r < s with r
/// a real department (two placeholders never swap).
///
/// The pairs that contain a swapped facility have no O(1) update; instead
/// of O(n) each from scratch, their sums come from two n×m matrices kept
/// alongside, H = A·Bpᵀ and G = Aᵀ·Bp (Bp the distances in facility order),
/// since Σ_k (a_rk − a_sk)(b_φsφk − b_φrφk) = H_rs − H_rr − H_ss + H_sr and
/// likewise for G. A swap of u and v permutes Bp's rows and columns u and v,
/// so H and G change by a column swap plus a rank-one term: O(n·m) per
/// swap, and every delta touching u or v is then O(1). (G = H when both
/// matrices are symmetric, and is not kept.)
#[derive(Debug, Clone)]
pub struct DeltaMatrix {
    n: usize,
    m: usize,
    d: Vec<f64>,
    h: Vec<f64>,
    g: Vec<f64>,
    // Per-facility factors of the O(1) updates, reused every swap (no allocation).
    x: Vec<f64>,
    y: Vec<f64>,
    z: Vec<f64>,
    w: Vec<f64>,
    /// Swaps since the last full recompute (used only for inexact data).
    since_refresh: usize,
}

impl DeltaMatrix {
    /// All deltas from scratch: O(n·m·n).
    pub fn new(q: &Problem, asg: &Assignment) -> DeltaMatrix {
        let (n, m) = (q.n, q.m);
        let mut dm = DeltaMatrix {
            n,
            m,
            d: vec![0.0; n * m],
            h: vec![0.0; m * m],
            g: if q.symmetric { Vec::new() } else { vec![0.0; m * m] },
            x: vec![0.0; m],
            y: vec![0.0; m],
            z: vec![0.0; m],
            w: vec![0.0; m],
            since_refresh: 0,
        };
        dm.refresh(q, asg);
        dm
    }

    /// Recompute H, G and every delta from scratch.
    pub fn refresh(&mut self, q: &Problem, asg: &Assignment) {
        let (n, m) = (self.n, self.m);
        for r in 0..n {
            let ar = &q.a[r * m..r * m + n];
            for s in 0..m {
                self.h[r * m + s] = dot(ar, &asg.bp[s * m..s * m + n]);
            }
            if !q.symmetric {
                let atr = &q.at[r * m..r * m + n];
                for s in 0..m {
                    self.g[r * m + s] = dot(atr, &asg.bpt[s * m..s * m + n]);
                }
            }
        }
        for r in 0..n {
            for s in r + 1..m {
                self.d[r * m + s] = self.delta_from_sums(q, asg, r, s);
            }
        }
        self.since_refresh = 0;
    }

    /// Δ(φ, r, s) from H and G: O(1). (Rows of placeholders stay 0: no flows.)
    #[inline(always)]
    fn delta_from_sums(&self, q: &Problem, asg: &Assignment, r: usize, s: usize) -> f64 {
        let m = self.m;
        let h = &self.h;
        let mut sum = h[r * m + s] - h[r * m + r] - h[s * m + s] + h[s * m + r];
        if !q.symmetric {
            let g = &self.g;
            sum += g[r * m + s] - g[r * m + r] - g[s * m + s] + g[s * m + r];
        }
        asg.finish_delta(q, r, s, sum)
    }

    /// Δ(φ, r, s) for r < s, r < n: flows and fixed costs, no penalties.
    /// Meaningful for pairs the search may swap (both facilities movable).
    #[inline]
    pub fn get(&self, r: usize, s: usize) -> f64 {
        self.d[r * self.m + s]
    }

    /// Row r of the deltas (entries s > r are meaningful).
    #[inline]
    pub(crate) fn row(&self, r: usize) -> &[f64] {
        &self.d[r * self.m..(r + 1) * self.m]
    }

    /// Swap facilities u and v in `asg` and bring every delta up to date:
    /// O(1) per pair, O(n·m) in all.
    pub fn swap(&mut self, q: &Problem, asg: &mut Assignment, u: usize, v: usize) {
        let (u, v) = (u.min(v), u.max(v));
        if u == v {
            return;
        }
        asg.swap(u, v);
        let (n, m) = (self.n, self.m);
        if !q.exact {
            // Maintained sums drift by rounding; a full recompute every 64·m
            // swaps costs O(n²/64) per swap on average and bounds the drift.
            self.since_refresh += 1;
            if self.since_refresh >= 64 * m {
                self.refresh(q, asg);
                return;
            }
        }
        let (x, y, z, w) = (&mut self.x[..m], &mut self.y[..m], &mut self.z[..m], &mut self.w[..m]);
        // Taillard's update for the pairs disjoint from {u, v}; the loop also
        // writes wrong values into columns u and v, overwritten below.
        if q.symmetric {
            let (au, av) = (&q.a[u * m..(u + 1) * m], &q.a[v * m..(v + 1) * m]);
            let (bu, bv) = (&asg.bp[u * m..(u + 1) * m], &asg.bp[v * m..(v + 1) * m]);
            for k in 0..m {
                // z holds a_uk − a_vk for the update of H; x is it doubled, so
                // Taillard's update is one product per pair.
                z[k] = au[k] - av[k];
                x[k] = 2.0 * z[k];
                y[k] = bu[k] - bv[k];
            }
            let (x, y, z) = (&*x, &*y, &*z);
            for r in 0..n {
                if r == u || r == v {
                    continue;
                }
                let (xr, yr) = (x[r], y[r]);
                let row = &mut self.d[r * m + r + 1..(r + 1) * m];
                for ((d, &xs), &ys) in row.iter_mut().zip(&x[r + 1..]).zip(&y[r + 1..]) {
                    *d += (xr - xs) * (ys - yr);
                }
            }
            // H'_rs = H_r,σ(s) + (a_rv − a_ru)(Bp_old[σs][u] − Bp_old[σs][v])
            //       = H_r,σ(s) + (a_ur − a_vr)(b'_us − b'_vs): columns u, v swap, plus z_r·y_s.
            for (r, &zr) in z.iter().enumerate().take(n) {
                let row = &mut self.h[r * m..(r + 1) * m];
                row.swap(u, v);
                if zr != 0.0 {
                    for (hs, &ys) in row.iter_mut().zip(y) {
                        *hs += zr * ys;
                    }
                }
            }
        } else {
            let (atu, atv) = (&q.at[u * m..(u + 1) * m], &q.at[v * m..(v + 1) * m]);
            let (btu, btv) = (&asg.bpt[u * m..(u + 1) * m], &asg.bpt[v * m..(v + 1) * m]);
            let (au, av) = (&q.a[u * m..(u + 1) * m], &q.a[v * m..(v + 1) * m]);
            let (bu, bv) = (&asg.bp[u * m..(u + 1) * m], &asg.bp[v * m..(v + 1) * m]);
            for k in 0..m {
                x[k] = atu[k] - atv[k];
                y[k] = btu[k] - btv[k];
                z[k] = au[k] - av[k];
                w[k] = bu[k] - bv[k];
            }
            let (x, y, z, w) = (&*x, &*y, &*z, &*w);
            for r in 0..n {
                if r == u || r == v {
                    continue;
                }
                let (xr, yr, zr, wr) = (x[r], y[r], z[r], w[r]);
                let row = &mut self.d[r * m + r + 1..(r + 1) * m];
                let k = r + 1;
                for (i, d) in row.iter_mut().enumerate() {
                    let s = k + i;
                    *d += (xr - x[s]) * (y[s] - yr) + (zr - z[s]) * (w[s] - wr);
                }
            }
            // H'_rs = H_r,σ(s) + (a_rv − a_ru)(b'_sv − b'_su) = H_r,σ(s) + x_r·y_s;
            // G'_rs = G_r,σ(s) + (a_vr − a_ur)(b'_vs − b'_us) = G_r,σ(s) + z_r·w_s.
            for r in 0..n {
                let hrow = &mut self.h[r * m..(r + 1) * m];
                hrow.swap(u, v);
                let xr = x[r];
                if xr != 0.0 {
                    for (hs, &ys) in hrow.iter_mut().zip(y) {
                        *hs += xr * ys;
                    }
                }
                let grow = &mut self.g[r * m..(r + 1) * m];
                grow.swap(u, v);
                let zr = z[r];
                if zr != 0.0 {
                    for (gs, &ws) in grow.iter_mut().zip(w) {
                        *gs += zr * ws;
                    }
                }
            }
        }
        // The pairs that contain u or v, from H and G.
        for r in 0..n.min(v) {
            if r != u && q.pair_movable(r, v) {
                self.d[r * m + v] = self.delta_from_sums(q, asg, r, v);
            }
            if r < u && q.pair_movable(r, u) {
                self.d[r * m + u] = self.delta_from_sums(q, asg, r, u);
            }
        }
        for t in [u, v] {
            if t < n {
                for s in t + 1..m {
                    if q.pair_movable(t, s) {
                        self.d[t * m + s] = self.delta_from_sums(q, asg, t, s);
                    }
                }
            }
        }
    }
}
