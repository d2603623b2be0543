//! Next-arrival times of a product whose rate follows a repeating profile: Lewis–Shedler thinning.
//!
//! Candidates come at the peak rate λ_max; one at time t is kept with
//! probability λ(t)/λ_max. The kept points form a Poisson process of rate
//! λ(t) (P. A. W. Lewis and G. S. Shedler, "Simulation of nonhomogeneous
//! Poisson processes by thinning", Naval Research Logistics Quarterly
//! 26(3):403–413, 1979). Both draws come from the product's arrival stream,
//! so the arrivals never depend on the layout.

use layflow_engine::Stream;
use rand::RngExt;
use rand_distr::Exp1;

use crate::plant::profile_index;

/// The first kept candidate after `now`, or `None` if none comes by `horizon`.
///
/// `peak_rate` is λ_max (lots per second, demand factor included) and
/// `accept[k]` is λ/λ_max in profile segment `k` of length `every_s`. Each
/// candidate costs one exponential and one uniform draw; the loop stops at
/// the horizon, so a long stretch of zero factors only costs candidates.
#[inline]
pub(crate) fn next_thinned(
    rng: &mut Stream,
    now: f64,
    horizon: f64,
    peak_rate: f64,
    every_s: f64,
    accept: &[f64],
) -> Option<f64> {
    let mut t = now;
    loop {
        t += rng.sample::<f64, _>(Exp1) / peak_rate;
        // Also catches an infinite gap from an absurdly small rate.
        if !(t <= horizon) {
            return None;
        }
        let u: f64 = rng.random();
        if u < accept[profile_index(t, every_s, accept.len())] {
            return Some(t);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use layflow_engine::stream;

    /// Counts per profile segment over many periods match λ_k × segment length.
    ///
    /// Source: Lewis and Shedler (1979) (module docs): the thinned process is
    /// Poisson with intensity λ(t), so the count in a segment of length h at
    /// factor f_k is Poisson with mean λ·f_k·h, and counts in disjoint
    /// segments are independent. Summed over P periods the mean is P·λ·f_k·h
    /// and the standard deviation its square root; each check allows 4 of
    /// them (a two-sided miss has probability about 6e-5 per check, and the
    /// seed is fixed, so the test is deterministic).
    #[test]
    fn segment_counts_follow_the_factors() {
        let factors = [0.5, 2.0, 0.0, 1.0];
        let peak: f64 = 2.0;
        let accept: Vec<f64> = factors.iter().map(|f| f / peak).collect();
        let (base, every, periods) = (6.0 / 3600.0, 3600.0, 5000.0);
        let horizon = periods * every * factors.len() as f64;
        let mut rng = stream(7, 0, &[1, 0]);
        let mut counts = [0u64; 4];
        let mut t = 0.0;
        while let Some(next) = next_thinned(&mut rng, t, horizon, base * peak, every, &accept) {
            assert!(next > t && next <= horizon);
            counts[profile_index(next, every, 4)] += 1;
            t = next;
        }
        for (k, &f) in factors.iter().enumerate() {
            let mean = periods * base * f * every;
            let tol = 4.0 * mean.sqrt();
            let got = counts[k] as f64;
            assert!((got - mean).abs() <= tol, "segment {k}: {got} lots, expected {mean} ± {tol}");
        }
        assert_eq!(counts[2], 0, "a zero factor lets nothing through");
    }

    #[test]
    fn segments_repeat() {
        assert_eq!(profile_index(0.0, 3600.0, 4), 0);
        assert_eq!(profile_index(3599.9, 3600.0, 4), 0);
        assert_eq!(profile_index(3600.0, 3600.0, 4), 1);
        assert_eq!(profile_index(4.0 * 3600.0 + 1.0, 3600.0, 4), 0);
        assert_eq!(profile_index(7.5 * 3600.0, 3600.0, 4), 3);
    }
}
