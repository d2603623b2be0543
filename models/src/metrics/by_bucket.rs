//! Results by time bucket across replications: each bucket's metrics with intervals, and the peak.
//!
//! A bucket's value of a metric in one replication is `value` over that
//! bucket's `RepStats` (its window is the bucket's exposure), so a bucketed
//! WIP, flow time or utilisation has the one definition the whole run uses.
//! Across replications each (bucket, metric) is a [`Moments`]: its mean and
//! 95% interval over the replications that observed it, as for the whole run.

use serde::Serialize;

use crate::plant::Plant;
use crate::sim::RepStats;
use crate::timebuckets::{By, Grid};

use super::estimate::{Estimate, Moments};
use super::list::{every_metric, Metric};
use super::registry::{Id, Percentile, Scope};

/// The label of the whole window's row beside the buckets.
pub const WHOLE: &str = "whole window";

/// Share above the off-peak level within which the plant counts as recovered.
pub const RECOVERED_WITHIN: f64 = 0.10;

/// Whether `m` is reported per bucket: every listed metric, and the 50th,
/// 90th and 95th percentiles of flow time and move wait (plant and fleet).
/// The percentiles of the move wait's two parts are not: buckets keep no
/// histograms of them.
pub fn bucketed(m: &Metric) -> bool {
    let pct = |p: Percentile| matches!(p, Percentile::P50 | Percentile::P90 | Percentile::P95);
    match m.def.id {
        Id::FlowTimeQuantile(p) | Id::MoveWaitQuantile(p) | Id::FleetMoveWaitQuantile(p) => pct(p),
        Id::FleetMoveWaitAssignQuantile(_) | Id::FleetMoveWaitDriveQuantile(_) => false,
        // Kits and their waits are counted for the whole window only (the
        // bucket collector keeps no kitting figures yet: docs/metrics.md, "Assembly").
        Id::ProductKits | Id::ProductKitWait | Id::ProductPartWait => false,
        // Crews' figures are kept for the whole window only, not per bucket.
        Id::PersonWait
        | Id::DepartmentPersonWait
        | Id::CrewUtilization
        | Id::CrewScheduledUtilization
        | Id::CrewPersonWait
        | Id::CrewCost => false,
        _ => m.def.listed,
    }
}

/// The metrics `plant` reports per bucket, in report order.
pub fn bucket_metrics(plant: &Plant) -> Vec<Metric> {
    every_metric(plant).into_iter().filter(bucketed).collect()
}

/// Every bucketed metric's value in each bucket of one replication: `[bucket][metric]`.
pub fn bucket_values(plant: &Plant, list: &[Metric], r: &RepStats) -> Vec<Vec<f64>> {
    r.by.iter().map(|b| list.iter().map(|m| m.value(plant, b)).collect()).collect()
}

/// A layout's buckets while replications are folded in, in memory that does
/// not grow with them (a [`Moments`] per bucket and metric).
#[derive(Debug, Clone)]
pub struct BucketAccumulator {
    grid: Grid,
    metrics: Vec<Metric>,
    /// `[bucket * metrics + metric]`.
    moments: Vec<Moments>,
    /// Each bucket's exposure per replication, h.
    exposure: Vec<Moments>,
    /// The same metrics over the whole window, computed the same way (for
    /// the row tables print beside the buckets).
    whole: Vec<Moments>,
}

impl BucketAccumulator {
    /// Nothing folded in yet.
    pub fn new(plant: &Plant, grid: &Grid) -> BucketAccumulator {
        let metrics = bucket_metrics(plant);
        BucketAccumulator {
            moments: vec![Moments::new(); grid.len() * metrics.len()],
            exposure: vec![Moments::new(); grid.len()],
            whole: vec![Moments::new(); metrics.len()],
            grid: grid.clone(),
            metrics,
        }
    }

    /// Fold in the next replication.
    pub fn add(&mut self, plant: &Plant, r: &RepStats) {
        self.add_values(plant, &bucket_values(plant, &self.metrics, r), r);
    }

    /// Fold in the next replication whose bucket values the caller has computed already.
    pub fn add_values(&mut self, plant: &Plant, values: &[Vec<f64>], r: &RepStats) {
        let nm = self.metrics.len();
        for (m, w) in self.metrics.iter().zip(&mut self.whole) {
            w.add(m.value(plant, r));
        }
        for (b, (row, stats)) in values.iter().zip(&r.by).enumerate() {
            self.exposure[b].add(stats.window_s / 3600.0);
            for (k, &x) in row.iter().enumerate() {
                self.moments[b * nm + k].add(x);
            }
        }
    }

    /// The metrics reported per bucket.
    pub fn metrics(&self) -> &[Metric] {
        &self.metrics
    }

    /// The summary so far.
    pub fn finish(&self) -> BucketSummary {
        let nm = self.metrics.len();
        let buckets = self
            .grid
            .labels
            .iter()
            .enumerate()
            .map(|(b, label)| BucketInfo {
                bucket: label.clone(),
                exposure_h: self.exposure[b].estimate().mean,
            })
            .collect();
        let mut rows = Vec::with_capacity(self.moments.len());
        for (b, label) in self.grid.labels.iter().enumerate() {
            for (k, m) in self.metrics.iter().enumerate() {
                let e = self.moments[b * nm + k].estimate();
                rows.push(BucketRow {
                    bucket: label.clone(),
                    scope: m.scope,
                    subject: m.subject.clone(),
                    metric: m.name,
                    mean: e.mean,
                    half_width: e.half_width,
                    n: e.n,
                });
            }
        }
        let whole = self
            .metrics
            .iter()
            .zip(&self.whole)
            .map(|(m, w)| {
                let e = w.estimate();
                BucketRow {
                    bucket: WHOLE.to_string(),
                    scope: m.scope,
                    subject: m.subject.clone(),
                    metric: m.name,
                    mean: e.mean,
                    half_width: e.half_width,
                    n: e.n,
                }
            })
            .collect();
        let find = |id: Id| self.metrics.iter().position(|m| m.def.id == id && m.scope == Scope::Plant);
        let column = |k: Option<usize>| -> Option<Vec<Estimate>> {
            k.map(|k| (0..self.grid.len()).map(|b| self.moments[b * nm + k].estimate()).collect())
        };
        let peak = Peak::from_buckets(
            &self.grid.by,
            &self.grid.labels,
            column(find(Id::Wip)).as_deref(),
            column(find(Id::MoveWaitQuantile(Percentile::P95))).as_deref(),
        );
        BucketSummary { by: self.grid.by.name(), cyclic: self.grid.by.cyclic(), buckets, rows, whole, peak }
    }
}

/// One bucket's name and how much of the window it covered.
#[derive(Debug, Clone, Serialize)]
pub struct BucketInfo {
    /// `10:00–11:00`, `Tue`, `06:00–14:00`, `day 3`, `day 2 08:00`.
    pub bucket: String,
    /// Hours of each replication's observation window in this bucket (folded over cycles).
    pub exposure_h: f64,
}

/// One metric in one bucket, across replications (a tidy row).
#[derive(Debug, Clone, Serialize)]
pub struct BucketRow {
    /// The bucket's label.
    pub bucket: String,
    /// The metric's scope.
    pub scope: Scope,
    /// The product, department, fleet or segment; empty for the plant.
    pub subject: String,
    /// The registry name.
    pub metric: &'static str,
    /// Mean over the replications that observed it in this bucket.
    pub mean: f64,
    /// Half-width of the 95% interval (`null` with fewer than two).
    pub half_width: Option<f64>,
    /// Replications that observed it in this bucket.
    pub n: usize,
}

/// A layout's results by time bucket.
#[derive(Debug, Clone, Serialize)]
pub struct BucketSummary {
    /// How the clock was sliced, as typed: `hour-of-day`, `period=8 h`.
    pub by: String,
    /// Every repetition of the cycle folded onto one set of buckets.
    pub cyclic: bool,
    /// The buckets, in time order.
    pub buckets: Vec<BucketInfo>,
    /// Every bucketed metric in every bucket, bucket by bucket.
    pub rows: Vec<BucketRow>,
    /// The same metrics over the whole window, each replication's value
    /// computed as a bucket's is (bucket `whole window`).
    pub whole: Vec<BucketRow>,
    /// The peak and the recovery from it.
    pub peak: Peak,
}

impl BucketSummary {
    /// The estimate of metric `name` of `subject` (empty for the plant) in
    /// bucket `b`, or over the whole window when `b` is `None`.
    pub fn get(&self, b: Option<usize>, subject: &str, name: &str) -> Option<Estimate> {
        let rows = match b {
            Some(b) => {
                let per = self.whole.len();
                &self.rows[b * per..(b + 1) * per]
            }
            None => &self.whole[..],
        };
        rows.iter().find(|r| r.metric == name && r.subject == subject).map(|r| Estimate {
            mean: r.mean,
            half_width: r.half_width,
            n: r.n,
        })
    }
}

/// A bucket that stands out, with its estimate.
#[derive(Debug, Clone, Serialize)]
pub struct PeakBucket {
    /// The bucket's label.
    pub bucket: String,
    /// Its mean over replications.
    pub mean: f64,
    /// Half-width of the 95% interval.
    pub half_width: Option<f64>,
}

/// The busiest buckets and how long the plant takes to settle after the peak.
///
/// The off-peak level is the mean WIP of the quietest quarter of the buckets
/// (at least one). The plant has recovered at the first bucket after the
/// peak-WIP bucket whose WIP is at most (1 + 10%) × that level; the recovery
/// time runs from the end of the peak bucket to the start of that one, so it
/// is known to the width of a bucket. Cyclic grids wrap once round the cycle;
/// shift buckets are not in time order, so there is no recovery time by shift.
#[derive(Debug, Clone, Serialize)]
pub struct Peak {
    /// The bucket with the highest mean WIP (`wip_mean`).
    pub wip_mean: Option<PeakBucket>,
    /// The bucket with the highest mean 95th percentile of the move wait (none without movers).
    pub move_wait_p95_s: Option<PeakBucket>,
    /// Mean WIP of the quietest quarter of the buckets.
    pub off_peak_wip_mean: Option<f64>,
    /// Hours from the end of the peak-WIP bucket until WIP is back within 10%
    /// of the off-peak level; `None` when it never is within the grid, by
    /// shift, or when there is no clear peak (the busiest bucket's interval
    /// reaches down to within 10% of the off-peak level).
    pub recovery_h: Option<f64>,
    /// Why there is no recovery time, when there is none.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub recovery_note: Option<String>,
}

impl Peak {
    /// The peak of the buckets `labels` of a grid sliced `by`, from each
    /// bucket's plant WIP and 95th-percentile move wait across replications
    /// (`None`: the metric is not reported).
    pub fn from_buckets(
        by: &By,
        labels: &[String],
        wip: Option<&[Estimate]>,
        wait: Option<&[Estimate]>,
    ) -> Peak {
        let n = labels.len();
        let top = |col: &[Estimate]| -> Option<(usize, Estimate)> {
            col.iter()
                .copied()
                .enumerate()
                .filter(|(_, e)| e.mean.is_finite())
                .max_by(|a, b| a.1.mean.total_cmp(&b.1.mean))
        };
        let pb = |(b, e): (usize, Estimate)| PeakBucket {
            bucket: labels[b].clone(),
            mean: e.mean,
            half_width: e.half_width,
        };
        let wip_peak = wip.and_then(top);
        let wait_peak = wait.and_then(top).filter(|(_, e)| e.mean > 0.0);
        let mut peak = Peak {
            wip_mean: wip_peak.map(pb),
            move_wait_p95_s: wait_peak.map(pb),
            off_peak_wip_mean: None,
            recovery_h: None,
            recovery_note: None,
        };
        let (Some(col), Some((at, _))) = (wip, wip_peak) else {
            return peak;
        };
        let levels: Vec<f64> = col.iter().map(|e| e.mean).collect();
        let mut quiet: Vec<f64> = levels.iter().copied().filter(|x| x.is_finite()).collect();
        quiet.sort_by(f64::total_cmp);
        quiet.truncate((quiet.len() / 4).max(1));
        let off = quiet.iter().sum::<f64>() / quiet.len() as f64;
        peak.off_peak_wip_mean = Some(off);
        let (_, top) = wip_peak.expect("matched above");
        if top.mean - top.half_width.unwrap_or(f64::INFINITY) <= (1.0 + RECOVERED_WITHIN) * off {
            peak.recovery_note = Some(
                "no clear peak: the busiest bucket's WIP interval reaches within 10% of the off-peak level"
                    .into(),
            );
            return peak;
        }
        if matches!(by, By::Shift(_)) {
            peak.recovery_note = Some("shift buckets are not in time order".into());
            return peak;
        }
        let width_h = by.bucket_width_s() / 3600.0;
        let steps = if by.cyclic() { n - 1 } else { n - 1 - at };
        for s in 1..=steps {
            let b = (at + s) % n;
            if levels[b].is_finite() && levels[b] <= (1.0 + RECOVERED_WITHIN) * off {
                peak.recovery_h = Some((s - 1) as f64 * width_h);
                return peak;
            }
        }
        peak.recovery_note = Some(if by.cyclic() {
            "WIP stays more than 10% above the off-peak level all round the cycle".into()
        } else {
            "WIP is still more than 10% above the off-peak level at the end of the run".into()
        });
        peak
    }
}
