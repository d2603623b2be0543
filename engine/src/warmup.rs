//! Warm-up truncation: where to cut the start of one output series (MSER and MSER-5).
//!
//! MSER (White 1997) picks the deletion point d that minimises
//! MSER(d) = (1/(n−d)²)·Σ_{i>d}(Xᵢ − X̄_{n,d})², trading the bias of keeping
//! early observations against the variance lost by deleting them. MSER-5
//! (Spratt 1998) applies the same rule to means of non-overlapping batches of
//! five, which smooths the series and makes the choice less jumpy.
//!
//! The search is restricted to d ≤ n/2: MSER(d) falls to 0 as the kept tail
//! shrinks to one value, so an unguarded search would happily delete almost
//! everything. A minimum found on that guard means the series had not
//! settled, which [`Truncation::at_limit`] reports so the caller can ask for
//! a longer run.

use std::borrow::Cow;

/// The batch size of MSER-5.
pub const MSER5_BATCH: usize = 5;

/// The chosen warm-up truncation point of one series.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Truncation {
    /// d*: the number of leading batches to delete.
    pub batches_deleted: usize,
    /// d* × batch size: the number of leading raw observations to delete.
    pub observations_deleted: usize,
    /// MSER(d*), in the squared units of the series.
    pub statistic: f64,
    /// Mean of the batch means kept (equivalently of the raw observations
    /// kept, trailing partial batch excluded).
    pub truncated_mean: f64,
    /// d* lies on the n/2 guard (or the series was too short to search at
    /// all): the series had not settled, and the run should be longer.
    pub at_limit: bool,
}

/// MSER(d) of a series of batch means, computed directly (two passes) from the definition.
///
/// `None` when `d` leaves no value to keep. Useful for tabulating the
/// statistic; [`mser_batched`] does the search in one backward pass instead.
pub fn mser_statistic(batch_means: &[f64], d: usize) -> Option<f64> {
    let tail = batch_means.get(d..).filter(|t| !t.is_empty())?;
    let m = tail.len() as f64;
    let mean = tail.iter().sum::<f64>() / m;
    let ss = tail.iter().map(|x| (x - mean).powi(2)).sum::<f64>();
    Some(ss / (m * m))
}

/// MSER on the raw series (batch size 1). See [`mser_batched`].
pub fn mser(series: &[f64]) -> Option<Truncation> {
    mser_batched(series, 1)
}

/// MSER-5: MSER on means of batches of five raw observations. See [`mser_batched`].
pub fn mser5(series: &[f64]) -> Option<Truncation> {
    mser_batched(series, MSER5_BATCH)
}

/// MSER applied to means of non-overlapping batches of `batch` raw observations.
///
/// Raw values at the end that do not fill a whole batch are dropped: they
/// are the most recent, so losing them costs little, whereas dropping them
/// at the start would shift every batch boundary. The search covers
/// 0 ≤ d ≤ ⌊b/2⌋ for b full batches, and never leaves fewer than two batches
/// (with one left the statistic is 0 by construction). Exact ties go to the
/// smallest d, so nothing is deleted without a reason.
///
/// `None` when `batch` is 0, when there are fewer than two full batches, or
/// when the series holds a non-finite value.
pub fn mser_batched(series: &[f64], batch: usize) -> Option<Truncation> {
    if batch == 0 || series.iter().any(|x| !x.is_finite()) {
        return None;
    }
    let n = series.len() / batch;
    if n < 2 {
        return None;
    }
    let means: Cow<'_, [f64]> = if batch == 1 {
        Cow::Borrowed(series)
    } else {
        Cow::Owned(series.chunks_exact(batch).map(|c| c.iter().sum::<f64>() / batch as f64).collect())
    };
    let d_max = (n / 2).min(n - 2);

    // Welford's update run backwards gives the mean and the sum of squared
    // deviations of every suffix in O(n) without the cancellation of
    // Σx² − (Σx)²/m, which loses all digits when the spread is small
    // beside the level (queue lengths of 1e6 ± 1, say).
    let mut count = 0.0;
    let mut mean = 0.0;
    let mut ss = 0.0;
    let mut best: Option<(usize, f64, f64)> = None;
    for (d, &x) in means.iter().enumerate().rev() {
        count += 1.0;
        let delta = x - mean;
        mean += delta / count;
        ss += delta * (x - mean);
        if d <= d_max {
            let stat = ss / (count * count);
            // Scanning d downwards, `<=` lets the smaller d win a tie.
            if best.is_none_or(|(_, s, _)| stat <= s) {
                best = Some((d, stat, mean));
            }
        }
    }
    let (d, statistic, truncated_mean) = best?;
    Some(Truncation {
        batches_deleted: d,
        observations_deleted: d * batch,
        statistic,
        truncated_mean,
        at_limit: d == d_max,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The 40 raw values of the worked example in docs/formulas.md §12.
    const EXAMPLE: [f64; 40] = [
        9.0, 8.0, 7.0, 8.0, 8.0, 5.0, 4.0, 4.0, 3.0, 4.0, 2.0, 3.0, 2.0, 2.0, 2.0, 2.0, 1.0, 2.0, 2.0, 2.0,
        2.0, 2.0, 3.0, 2.0, 1.0, 3.0, 2.0, 2.0, 2.0, 2.0, 1.0, 2.0, 2.0, 2.0, 2.0, 2.0, 2.0, 2.0, 2.0, 2.0,
    ];

    #[test]
    fn mser5_matches_worked_example() {
        // Batch means and MSER-5(d), d = 0..4, from docs/formulas.md §12 (values
        // given to 6 s.f., so tolerance 1e-6 absolute on numbers < 1).
        let means: Vec<f64> = EXAMPLE.chunks_exact(5).map(|c| c.iter().sum::<f64>() / 5.0).collect();
        for (got, want) in means.iter().zip([8.0, 4.0, 2.2, 1.8, 2.0, 2.2, 1.8, 2.0]) {
            assert!((got - want).abs() < 1e-12, "{got} vs {want}");
        }
        for (d, want) in [0.5025, 0.0732362, 1.0 / 225.0, 0.00448, 0.005].into_iter().enumerate() {
            let got = mser_statistic(&means, d).unwrap();
            assert!((got - want).abs() < 1e-6, "d {d}: {got} vs {want}");
        }
        // docs/formulas.md §12: d* = 2, so 10 raw observations go; truncated mean 2.0.
        let t = mser5(&EXAMPLE).unwrap();
        assert_eq!(t.batches_deleted, 2);
        assert_eq!(t.observations_deleted, 10);
        assert!((t.statistic - 1.0 / 225.0).abs() < 1e-12);
        assert!((t.truncated_mean - 2.0).abs() < 1e-12);
        assert!(!t.at_limit);
    }

    #[test]
    fn guard_excludes_the_one_batch_tail() {
        // docs/formulas.md §12: d = 7 leaves one batch and gives 0, which must not win.
        let means = [8.0, 4.0, 2.2, 1.8, 2.0, 2.2, 1.8, 2.0];
        assert_eq!(mser_statistic(&means, 7), Some(0.0));
        assert_eq!(mser_statistic(&means, 8), None);
        assert_eq!(mser(&means).unwrap().batches_deleted, 2);
    }

    #[test]
    fn raw_mser_matches_worked_example() {
        // docs/formulas.md §12: batch size 1, d ≤ 20: d* = 12, MSER 0.00633200,
        // truncated mean 1.96429 (= 55/28; 6 s.f. given, tolerance 5e-6).
        let t = mser(&EXAMPLE).unwrap();
        assert_eq!(t.batches_deleted, 12);
        assert_eq!(t.observations_deleted, 12);
        assert!((t.statistic - 0.00633200).abs() < 1e-8);
        assert!((t.truncated_mean - 1.96429).abs() < 5e-6);
        assert!(!t.at_limit);
    }

    #[test]
    fn trailing_partial_batch_is_dropped() {
        // Three trailing values, however wild, do not make a batch of five.
        let mut longer = EXAMPLE.to_vec();
        longer.extend([100.0, -50.0, 7.0]);
        assert_eq!(mser5(&longer), mser5(&EXAMPLE));
    }

    #[test]
    fn a_trend_ends_on_the_guard() {
        // m consecutive integers have Σ(x − x̄)² = m(m²−1)/12 (the variance of
        // a discrete uniform), so MSER(d) = (m²−1)/(12m) with m = n−d falls
        // as d grows: the minimum is always on the guard.
        let trend: Vec<f64> = (0..100).map(|i| -(i as f64)).collect();
        let t = mser(&trend).unwrap();
        assert_eq!(t.batches_deleted, 50);
        assert!(t.at_limit);
    }

    #[test]
    fn constant_series_deletes_nothing() {
        // Every MSER(d) is exactly 0; the tie goes to d = 0.
        let t = mser5(&[3.5; 50]).unwrap();
        assert_eq!(t.batches_deleted, 0);
        assert_eq!(t.statistic, 0.0);
        assert_eq!(t.truncated_mean, 3.5);
    }

    #[test]
    fn short_or_bad_input_gives_none() {
        assert_eq!(mser(&[]), None);
        assert_eq!(mser(&[1.0]), None);
        assert_eq!(mser5(&[1.0; 9]), None);
        assert_eq!(mser_batched(&[1.0; 10], 0), None);
        assert_eq!(mser(&[1.0, f64::NAN, 2.0, 3.0]), None);
        assert_eq!(mser(&[1.0, f64::INFINITY, 2.0, 3.0]), None);
        // Two batches: only d = 0 can be searched, which is on the guard.
        let t = mser(&[1.0, 2.0]).unwrap();
        assert_eq!(t.batches_deleted, 0);
        assert!(t.at_limit);
        assert!((t.statistic - 0.125).abs() < 1e-15); // (0.5² + 0.5²)/2², by hand
    }

    #[test]
    fn large_level_small_spread_keeps_its_digits() {
        // The worked example shifted by 1e9: every MSER(d) is unchanged in
        // exact arithmetic, so d* and the statistics must still match
        // docs/formulas.md §12. The raw values stay exact integers, so raw MSER is
        // held to the reference's own 6 s.f. (1e-8). The batch means such as
        // 1e9 + 2.2 are rounded on input by up to ½ulp(1e9) = 6e-8, which moves
        // Σ(x − x̄)² by up to 2·Σ|x − x̄|·6e-8 = 2·0.8·6e-8 ≈ 1e-7 and MSER-5(2)
        // by ≈ 1e-7/6² ≈ 2.7e-9: tolerance 5e-9. (Σx² − (Σx)²/m would be
        // off by about ulp(6e18) = 1024 here.)
        let shifted: Vec<f64> = EXAMPLE.iter().map(|x| x + 1e9).collect();
        let t = mser5(&shifted).unwrap();
        assert_eq!(t.batches_deleted, 2);
        assert!((t.statistic - 1.0 / 225.0).abs() < 5e-9, "{}", t.statistic);
        assert!((t.truncated_mean - (1e9 + 2.0)).abs() < 1e-6);
        let raw = mser(&shifted).unwrap();
        assert_eq!(raw.batches_deleted, 12);
        assert!((raw.statistic - 0.00633200).abs() < 1e-8);
    }
}
