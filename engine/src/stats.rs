//! Statistics collected during a run: counts, tallies, time-weighted levels and histograms.
//!
//! Each collector uses constant memory whatever the horizon, and each can be
//! reset at the end of the warm-up without losing the current state of the
//! system (a time-weighted level keeps its level).

use hdrhistogram::Histogram;

/// Running mean and variance of observations (Welford's method, numerically stable).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Tally {
    n: u64,
    mean: f64,
    m2: f64,
}

impl Tally {
    /// An empty tally.
    pub const fn new() -> Self {
        Tally { n: 0, mean: 0.0, m2: 0.0 }
    }

    /// Add one observation.
    #[inline]
    pub fn add(&mut self, x: f64) {
        self.n += 1;
        let d = x - self.mean;
        self.mean += d / self.n as f64;
        self.m2 += d * (x - self.mean);
    }

    /// A tally of `n` observations summing to `total`, for collectors that
    /// keep only counts and sums where no variance is needed: its mean is
    /// `total / n` and its variance NaN (unknown), never a false 0.
    pub fn from_sum(n: u64, total: f64) -> Self {
        if n == 0 {
            Tally::new()
        } else {
            Tally { n, mean: total / n as f64, m2: f64::NAN }
        }
    }

    /// Number of observations.
    pub fn count(&self) -> u64 {
        self.n
    }

    /// Sample mean (0 when empty).
    pub fn mean(&self) -> f64 {
        self.mean
    }

    /// Unbiased sample variance (0 with fewer than two observations).
    pub fn variance(&self) -> f64 {
        if self.n < 2 {
            0.0
        } else {
            self.m2 / (self.n - 1) as f64
        }
    }

    /// Forget every observation.
    pub fn reset(&mut self) {
        *self = Tally::new();
    }
}

/// The time average of a piecewise-constant level (WIP, queue length, busy machines).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TimeWeighted {
    level: f64,
    last: f64,
    start: f64,
    area: f64,
    max: f64,
}

impl TimeWeighted {
    /// A level of 0 observed from time `t0`.
    pub const fn new(t0: f64) -> Self {
        TimeWeighted { level: 0.0, last: t0, start: t0, area: 0.0, max: 0.0 }
    }

    /// Change the level by `delta` at time `t` (t never decreases).
    #[inline]
    pub fn add(&mut self, t: f64, delta: f64) {
        self.area += self.level * (t - self.last);
        self.last = t;
        self.level += delta;
        if self.level > self.max {
            self.max = self.level;
        }
    }

    /// Set the level to `level` at time `t`.
    #[inline]
    pub fn set(&mut self, t: f64, level: f64) {
        self.add(t, level - self.level);
    }

    /// The current level.
    pub fn level(&self) -> f64 {
        self.level
    }

    /// Time average from the last reset until `t`.
    pub fn mean(&self, t: f64) -> f64 {
        let span = t - self.start;
        if span > 0.0 {
            (self.area + self.level * (t - self.last)) / span
        } else {
            self.level
        }
    }

    /// Integral of the level over time from the last reset until `t`.
    pub fn area(&self, t: f64) -> f64 {
        self.area + self.level * (t - self.last)
    }

    /// Highest level seen since the last reset.
    pub fn max(&self) -> f64 {
        self.max
    }

    /// Start observing afresh at `t`, keeping the current level.
    pub fn reset(&mut self, t: f64) {
        self.area = 0.0;
        self.last = t;
        self.start = t;
        self.max = self.level;
    }
}

/// A histogram of durations recorded as integer ticks, so that histograms from
/// separate runs merge exactly (counts add; nothing is re-sampled).
#[derive(Debug, Clone)]
pub struct TickHistogram {
    hist: Histogram<u64>,
    tick_s: f64,
}

impl TickHistogram {
    /// Three significant digits, ticks of `tick_s` seconds (e.g. 0.001 for ms).
    ///
    /// # Panics
    /// If `tick_s` is not a positive finite number (a programming error).
    pub fn new(tick_s: f64) -> Self {
        Self::with_digits(tick_s, 3)
    }

    /// As [`TickHistogram::new`] with `digits` significant digits (1 to 5):
    /// two digits keep quantiles within 1% in an eighth of the memory.
    ///
    /// # Panics
    /// If `tick_s` is not a positive finite number or `digits` is outside 1–5.
    pub fn with_digits(tick_s: f64, digits: u8) -> Self {
        assert!(tick_s > 0.0 && tick_s.is_finite(), "tick must be positive");
        let mut hist = Histogram::new(digits).expect("1 to 5 significant digits is valid");
        hist.auto(true);
        TickHistogram { hist, tick_s }
    }

    /// As [`TickHistogram::with_digits`], with room from the start for values
    /// up to `expected_s` seconds, so that recording up to there never grows
    /// (and copies) the counts; larger values still fit, by growing.
    ///
    /// # Panics
    /// As [`TickHistogram::with_digits`].
    pub fn with_room(tick_s: f64, digits: u8, expected_s: f64) -> Self {
        assert!(tick_s > 0.0 && tick_s.is_finite(), "tick must be positive");
        let high = (expected_s / tick_s).ceil().max(2.0) as u64;
        let mut hist = Histogram::new_with_max(high, digits).expect("a valid range and 1 to 5 digits");
        hist.auto(true);
        TickHistogram { hist, tick_s }
    }

    /// Record one duration in seconds (negative values count as 0).
    #[inline]
    pub fn record(&mut self, seconds: f64) {
        self.record_ticks(self.ticks(seconds));
    }

    /// `seconds` as this histogram's integer ticks (negative values count as
    /// 0): what [`TickHistogram::record`] records. Computed once, it can be
    /// recorded into several histograms of the same tick.
    #[inline]
    pub fn ticks(&self, seconds: f64) -> u64 {
        (seconds / self.tick_s).round().max(0.0) as u64
    }

    /// Record a duration already converted by [`TickHistogram::ticks`] (of a histogram with the same tick).
    #[inline]
    pub fn record_ticks(&mut self, ticks: u64) {
        // With auto-resize on, recording a u64 cannot fail.
        let _ = self.hist.record(ticks);
    }

    /// Values recorded.
    pub fn count(&self) -> u64 {
        self.hist.len()
    }

    /// The value at quantile `q` in [0, 1], seconds (0 when empty).
    pub fn quantile(&self, q: f64) -> f64 {
        if self.hist.is_empty() {
            0.0
        } else {
            self.hist.value_at_quantile(q) as f64 * self.tick_s
        }
    }

    /// Add every count of `other` (same tick) into this histogram.
    ///
    /// # Panics
    /// If the ticks differ (a programming error).
    pub fn merge(&mut self, other: &TickHistogram) {
        assert!(self.tick_s == other.tick_s, "histograms with different ticks");
        // With auto-resize on, adding cannot fail.
        let _ = self.hist.add(&other.hist);
    }

    /// Forget every recorded value.
    pub fn reset(&mut self) {
        self.hist.reset();
    }

    /// The underlying histogram (for serialisation).
    pub fn inner(&self) -> &Histogram<u64> {
        &self.hist
    }

    /// The histogram in HdrHistogram's standard V2 interchange format (the
    /// counts only; the tick is the caller's to record).
    pub fn to_v2(&self) -> Vec<u8> {
        use hdrhistogram::serialization::Serializer as _;
        let mut out = Vec::new();
        hdrhistogram::serialization::V2Serializer::new()
            .serialize(&self.hist, &mut out)
            .expect("serialising into memory cannot fail");
        out
    }

    /// Read a histogram written by [`TickHistogram::to_v2`] with ticks of `tick_s`.
    pub fn from_v2(bytes: &[u8], tick_s: f64) -> Result<TickHistogram, String> {
        let hist: Histogram<u64> = hdrhistogram::serialization::Deserializer::new()
            .deserialize(&mut std::io::Cursor::new(bytes))
            .map_err(|e| format!("not a V2 histogram: {e:?}"))?;
        let mut t = TickHistogram::new(tick_s);
        // Into a fresh auto-resizing histogram, so later merges cannot fail.
        let _ = t.hist.add(&hist);
        Ok(t)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn v2_round_trip_and_adding_equal_recording_together() {
        // Two halves recorded apart, written in the V2 interchange format, read
        // back and added, must equal one histogram that recorded everything:
        // same count and the same value at every quantile.
        let (mut a, mut b, mut all) =
            (TickHistogram::new(0.001), TickHistogram::new(0.001), TickHistogram::new(0.001));
        for i in 0..5000u32 {
            let x = f64::from(i % 997) * 0.37 + f64::from(i) * 1e-3;
            if i % 2 == 0 {
                a.record(x)
            } else {
                b.record(x)
            }
            all.record(x);
        }
        let mut sum = TickHistogram::from_v2(&a.to_v2(), 0.001).unwrap();
        sum.merge(&TickHistogram::from_v2(&b.to_v2(), 0.001).unwrap());
        assert_eq!(sum.count(), all.count());
        for q in [0.0, 0.1, 0.5, 0.9, 0.95, 0.99, 1.0] {
            assert_eq!(sum.quantile(q), all.quantile(q), "quantile {q}");
        }
        assert!(TickHistogram::from_v2(b"not a histogram", 0.001).is_err());
    }

    #[test]
    fn tally_matches_two_pass_formulas() {
        let xs = [2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0];
        let mut t = Tally::new();
        xs.iter().for_each(|&x| t.add(x));
        // Two-pass: mean 5, sum of squared deviations 32, so s² = 32/7.
        assert_eq!(t.count(), 8);
        assert!((t.mean() - 5.0).abs() < 1e-12);
        assert!((t.variance() - 32.0 / 7.0).abs() < 1e-12);
    }

    #[test]
    fn time_weighted_average_and_reset() {
        let mut w = TimeWeighted::new(0.0);
        w.add(1.0, 2.0); // 0 on [0,1)
        w.add(3.0, -1.0); // 2 on [1,3)
                          // level 1 on [3,5): area 0 + 4 + 2 = 6 over 5
        assert!((w.mean(5.0) - 1.2).abs() < 1e-12);
        assert_eq!(w.max(), 2.0);
        w.reset(5.0);
        assert_eq!(w.mean(7.0), 1.0);
        assert_eq!(w.max(), 1.0);
    }

    #[test]
    fn histograms_merge_exactly() {
        let mut a = TickHistogram::new(0.001);
        let mut b = TickHistogram::new(0.001);
        let mut both = TickHistogram::new(0.001);
        for i in 0..1000 {
            let x = f64::from(i) * 0.37;
            if i % 2 == 0 {
                a.record(x)
            } else {
                b.record(x)
            }
            both.record(x);
        }
        a.merge(&b);
        assert_eq!(a.count(), 1000);
        for q in [0.5, 0.9, 0.95, 0.99] {
            assert_eq!(a.quantile(q), both.quantile(q));
        }
        // 3 significant digits: the median of 0..370 s is within 0.1% of 184.8 s.
        assert!((a.quantile(0.5) - 184.8).abs() / 184.8 < 2e-3);
    }
}
