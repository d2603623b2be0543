//! An experiment's results from its units: tidy CSV, a summary with intervals and pooled percentiles per design point.
//!
//! Everything here is computed from the units sorted by unit number, so the
//! same units give the same bytes however they were run: in one go, resumed
//! after a crash, or in shards merged afterwards.

use layflow_engine::{interval, TickHistogram};
use serde::Serialize;

use crate::metrics::CONFIDENCE;
use crate::sim::TICK_S;

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
}

/// The whole experiment's summary.
#[derive(Debug, Clone, Serialize)]
pub struct Summary {
    /// The plan's content hash.
    pub plan_hash: String,
    /// Factor names.
    pub factors: Vec<String>,
    /// Confidence of every interval.
    pub confidence: f64,
    /// Per design point.
    pub points: Vec<PointSummary>,
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
        factors: header.factors.clone(),
        confidence: CONFIDENCE,
        points,
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
