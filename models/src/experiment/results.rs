//! An experiment's results from its units: tidy CSV, a summary with intervals and pooled percentiles per design point.
//!
//! Everything here is computed from the units sorted by unit number, so the
//! same units give the same bytes however they were run: in one go, resumed
//! after a crash, or in shards merged afterwards.

use layflow_engine::{interval, TickHistogram};
use serde::Serialize;

use crate::metrics::{Estimate, Peak, CONFIDENCE};
use crate::sim::TICK_S;
use crate::timebuckets::By;

use super::journal::{Header, Unit};

/// Percentiles reported from the pooled histograms.
pub const PERCENTILES: &[(f64, &str)] = &[(0.5, "p50"), (0.9, "p90"), (0.95, "p95"), (0.99, "p99")];

/// One metric at one design point.
#[derive(Debug, Clone, Serialize)]
pub struct MetricSummary {
    /// plant, product, department or fleet.
    pub scope: String,
    /// The product, department or fleet id; empty for the plant.
    pub subject: String,
    /// The metric's name.
    pub metric: String,
    /// Replications that observed it.
    pub n: usize,
    /// Mean over those replications (`null` if none).
    pub mean: Option<f64>,
    /// 95% Student t half-width (`null` with fewer than 2).
    pub half_width: Option<f64>,
}

/// A pooled percentile: every replication's histogram added, then read.
#[derive(Debug, Clone, Serialize)]
pub struct Percentile {
    /// `flow_time_s` or `move_wait_s`.
    pub metric: &'static str,
    /// e.g. `p95`.
    pub percentile: &'static str,
    /// Seconds (to the histogram's 1 ms tick and 3 significant digits).
    pub value_s: f64,
    /// Observations pooled.
    pub observations: u64,
}

/// One design point's summary.
#[derive(Debug, Clone, Serialize)]
pub struct PointSummary {
    /// 1-based design point number.
    pub point: usize,
    /// Factor levels, as text, in factor order.
    pub levels: Vec<String>,
    /// Replications done.
    pub replications: usize,
    /// Events simulated over them.
    pub events: u64,
    /// Every metric.
    pub metrics: Vec<MetricSummary>,
    /// Pooled percentiles of flow time and move wait.
    pub percentiles: Vec<Percentile>,
    /// With `by:` in the plan: every bucketed metric in every bucket, and the peak.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub by_bucket: Option<PointBuckets>,
}

/// One metric in one bucket of a design point, across its replications (a tidy row).
#[derive(Debug, Clone, Serialize)]
pub struct BucketMetric {
    /// The bucket's label.
    pub bucket: String,
    /// plant, product, department or fleet.
    pub scope: String,
    /// The product, department or fleet id; empty for the plant.
    pub subject: String,
    /// The registry name.
    pub metric: String,
    /// Replications that observed it in this bucket.
    pub n: usize,
    /// Mean over them.
    pub mean: Option<f64>,
    /// Half-width of the 95% interval.
    pub half_width: Option<f64>,
}

/// A design point's results by time bucket.
#[derive(Debug, Clone, Serialize)]
pub struct PointBuckets {
    /// Every bucketed metric in every bucket, bucket by bucket.
    pub rows: Vec<BucketMetric>,
    /// The peak and the recovery from it, as `run --by` reports them.
    pub peak: Peak,
}

/// The whole experiment's summary.
#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    /// The plan's content hash.
    pub plan_hash: String,
    /// The scenario's currency, when it names one: every cost metric is in it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub currency: Option<String>,
    /// Factor names.
    pub factors: Vec<String>,
    /// Confidence of every interval.
    pub confidence: f64,
    /// Per design point.
    pub points: Vec<PointSummary>,
    /// The plan's `by:`, when it has one (each point then has `by_bucket`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub by: Option<String>,
}

/// Sort units by number and check each appears once (duplicates must be identical).
pub fn canonical(mut units: Vec<Unit>) -> Result<Vec<Unit>, String> {
    units.sort_by_key(|u| u.unit);
    let mut out: Vec<Unit> = Vec::with_capacity(units.len());
    for u in units {
        match out.last() {
            Some(prev) if prev.unit == u.unit => {
                if *prev != u {
                    return Err(format!(
                        "unit {} (design point {}, replication {}) appears twice with different results",
                        u.unit,
                        u.point + 1,
                        u.replication
                    ));
                }
            }
            _ => out.push(u),
        }
    }
    Ok(out)
}

/// Summarise units under `header`: one pass that groups the units by design
/// point (so a plan of a million points costs a sort, not a scan per point).
pub fn summarize(header: &Header, units: &[Unit]) -> Result<Summary, String> {
    let mut refs: Vec<&Unit> = units.iter().collect();
    refs.sort_by_key(|u| (u.point, u.unit));
    let mut rest = refs.as_slice();
    let mut points = Vec::with_capacity(header.points.len());
    for p in 0..header.points.len() {
        let n = rest.iter().take_while(|u| u.point == p).count();
        let (mine, after) = rest.split_at(n);
        rest = after;
        points.push(summarize_point(header, p, mine)?);
    }
    Ok(Summary {
        plan_hash: header.hash.clone(),
        currency: header.currency.clone(),
        factors: header.factors.clone(),
        confidence: CONFIDENCE,
        points,
        by: header.by.as_ref().map(|b| b.by.clone()),
    })
}

/// Summarise design point `p` (0-based) from its units `mine`.
pub fn summarize_point(header: &Header, p: usize, mine: &[&Unit]) -> Result<PointSummary, String> {
    let metrics = header
        .metrics
        .iter()
        .enumerate()
        .map(|(m, name)| {
            let xs: Vec<f64> = mine.iter().filter_map(|u| u.values[m]).collect();
            let iv = interval(&xs, CONFIDENCE);
            MetricSummary {
                scope: name.scope.clone(),
                subject: name.subject.clone(),
                metric: name.name.clone(),
                n: xs.len(),
                mean: iv.mean.is_finite().then_some(iv.mean),
                half_width: iv.half_width,
            }
        })
        .collect();
    let mut percentiles = Vec::new();
    for (metric, pick) in [("flow_time_s", 0usize), ("move_wait_s", 1)] {
        let mut pooled = TickHistogram::new(TICK_S);
        for u in mine {
            let text = if pick == 0 { &u.flow_time_hist } else { &u.move_wait_hist };
            let h =
                Unit::histogram(text).map_err(|e| format!("unit {} ({metric} histogram): {e}", u.unit))?;
            pooled.merge(&h);
        }
        for &(q, name) in PERCENTILES {
            percentiles.push(Percentile {
                metric,
                percentile: name,
                value_s: pooled.quantile(q),
                observations: pooled.count(),
            });
        }
    }
    Ok(PointSummary {
        point: p + 1,
        levels: header.points[p].clone(),
        replications: mine.len(),
        events: mine.iter().map(|u| u.events).sum(),
        metrics,
        percentiles,
        by_bucket: point_buckets(header, mine),
    })
}

/// A point's buckets from its units' `by` arrays (`None` without `by:`).
fn point_buckets(header: &Header, mine: &[&Unit]) -> Option<PointBuckets> {
    let h = header.by.as_ref()?;
    let mut rows = Vec::with_capacity(h.buckets.len() * h.metrics.len());
    for (b, label) in h.buckets.iter().enumerate() {
        for (m, name) in h.metrics.iter().enumerate() {
            let xs: Vec<f64> = mine
                .iter()
                .filter_map(|u| u.by.as_ref().and_then(|v| v.get(b)?.get(m).copied().flatten()))
                .collect();
            let iv = interval(&xs, CONFIDENCE);
            rows.push(BucketMetric {
                bucket: label.clone(),
                scope: name.scope.clone(),
                subject: name.subject.clone(),
                metric: name.name.clone(),
                n: xs.len(),
                mean: iv.mean.is_finite().then_some(iv.mean),
                half_width: iv.half_width,
            });
        }
    }
    let column = |metric: &str| -> Option<Vec<Estimate>> {
        let col: Vec<Estimate> = rows
            .iter()
            .filter(|r| r.scope == "plant" && r.subject.is_empty() && r.metric == metric)
            .map(|r| Estimate { mean: r.mean.unwrap_or(f64::NAN), half_width: r.half_width, n: r.n })
            .collect();
        (col.len() == h.buckets.len()).then_some(col)
    };
    // The grid's name was checked when the plan was read.
    let by = By::parse(&h.by).unwrap_or(By::HourOfDay);
    let peak = Peak::from_buckets(
        &by,
        &h.buckets,
        column("wip_mean").as_deref(),
        column("move_wait_p95_s").as_deref(),
    );
    Some(PointBuckets { rows, peak })
}

/// `by_bucket.csv`: one row per design point, bucket and metric (point,
/// factor levels, bucket, scope, subject, metric, mean, half_width, n).
pub fn by_bucket_csv(s: &Summary) -> Vec<u8> {
    csv_bytes(|w| {
        let mut head = vec!["point".to_string()];
        head.extend(s.factors.iter().cloned());
        head.extend(["bucket", "scope", "subject", "metric", "mean", "half_width", "n"].map(String::from));
        w.write_record(&head)?;
        for p in &s.points {
            for r in p.by_bucket.iter().flat_map(|b| &b.rows) {
                let mut row = vec![p.point.to_string()];
                row.extend(p.levels.iter().cloned());
                row.extend([
                    r.bucket.clone(),
                    r.scope.clone(),
                    r.subject.clone(),
                    r.metric.clone(),
                    cell(r.mean),
                    cell(r.half_width),
                    r.n.to_string(),
                ]);
                w.write_record(&row)?;
            }
        }
        Ok(())
    })
}

fn cell(x: Option<f64>) -> String {
    x.map_or_else(String::new, |v| format!("{v}"))
}

fn csv_bytes(rows: impl FnOnce(&mut csv::Writer<Vec<u8>>) -> csv::Result<()>) -> Vec<u8> {
    let mut w = csv::Writer::from_writer(Vec::new());
    rows(&mut w).expect("writing CSV to memory cannot fail");
    w.into_inner().expect("flushing to memory cannot fail")
}

/// Tidy data: one row per design point × replication × metric, the factor levels as columns.
pub fn results_csv(header: &Header, units: &[Unit]) -> Vec<u8> {
    csv_bytes(|w| {
        let mut head = vec!["point".to_string()];
        head.extend(header.factors.iter().cloned());
        head.extend(["replication", "scope", "subject", "metric", "value"].map(String::from));
        w.write_record(&head)?;
        for u in units {
            for (m, name) in header.metrics.iter().enumerate() {
                let mut row = vec![(u.point + 1).to_string()];
                row.extend(header.points[u.point].iter().cloned());
                row.extend([
                    u.replication.to_string(),
                    name.scope.clone(),
                    name.subject.clone(),
                    name.name.clone(),
                    cell(u.values[m]),
                ]);
                w.write_record(&row)?;
            }
        }
        Ok(())
    })
}

/// The summary as CSV: one row per design point × metric, then the pooled percentiles.
pub fn summary_csv(s: &Summary) -> Vec<u8> {
    csv_bytes(|w| {
        let mut head = vec!["point".to_string()];
        head.extend(s.factors.iter().cloned());
        head.extend(
            ["scope", "subject", "metric", "n", "mean", "half_width", "low", "high"].map(String::from),
        );
        w.write_record(&head)?;
        for p in &s.points {
            let lead = || {
                let mut r = vec![p.point.to_string()];
                r.extend(p.levels.iter().cloned());
                r
            };
            for m in &p.metrics {
                let mut row = lead();
                let (lo, hi) = match (m.mean, m.half_width) {
                    (Some(x), Some(h)) => (Some(x - h), Some(x + h)),
                    _ => (None, None),
                };
                row.extend([
                    m.scope.clone(),
                    m.subject.clone(),
                    m.metric.clone(),
                    m.n.to_string(),
                    cell(m.mean),
                    cell(m.half_width),
                    cell(lo),
                    cell(hi),
                ]);
                w.write_record(&row)?;
            }
            for q in &p.percentiles {
                let mut row = lead();
                row.extend([
                    "plant".to_string(),
                    String::new(),
                    format!("{}_{}", q.metric, q.percentile),
                    q.observations.to_string(),
                    format!("{}", q.value_s),
                    String::new(),
                    String::new(),
                    String::new(),
                ]);
                w.write_record(&row)?;
            }
        }
        Ok(())
    })
}

/// The summary as pretty JSON, newline-terminated.
pub fn summary_json(s: &Summary) -> Vec<u8> {
    let mut v = serde_json::to_vec_pretty(s).expect("plain data serializes");
    v.push(b'\n');
    v
}

/// The units file in canonical form: the header, then units by number.
pub fn units_jsonl(header: &Header, units: &[Unit]) -> Vec<u8> {
    let mut out = serde_json::to_vec(header).expect("plain data serializes");
    out.push(b'\n');
    for u in units {
        out.extend(super::journal::unit_line(u));
    }
    out
}
