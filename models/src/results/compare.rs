//! The files of a comparison: summary.json, summary.csv (one row per level × layout × metric) and replications.csv.

use std::path::Path;

use crate::metrics::by_bucket::WHOLE;
use crate::metrics::estimate::{Estimate, CONFIDENCE};
use crate::metrics::list::Metric;
use crate::study::compare::{CompareOutput, Difference};

use super::folder::{sha256_hex, write_atomic, write_manifest_for, Kind, ResultsError};

/// The files a comparison writes, in reading order.
pub const FILES: &[&str] = &["summary.json", "summary.csv", "replications.csv"];

/// The comparison as JSON, exactly as `compare --format json` prints it.
pub fn summary_json(out: &CompareOutput) -> String {
    serde_json::to_string_pretty(out).expect("summaries serialise") + "\n"
}

/// Write every file of the comparison into `dir` (prepared with [`super::folder::prepare`]).
pub fn write(dir: &Path, out: &CompareOutput, metric_list: &[Metric]) -> Result<(), ResultsError> {
    write_atomic(dir, "summary.json", summary_json(out).as_bytes())?;
    write_atomic(dir, "summary.csv", &summary_csv(out, metric_list)?)?;
    write_atomic(dir, "replications.csv", &replications_csv(out, metric_list)?)?;
    // The scenario as it is now (it was read moments ago), so `draw --results`
    // can tell these results from another scenario's.
    let scenario = std::fs::read(&out.scenario).ok().map(|t| sha256_hex(&t));
    write_manifest_for(dir, Kind::Compare, FILES, scenario)
}

/// One row per demand level × layout × metric: the layout's mean and the
/// paired difference against the baseline. With `--by`, a `bucket` column
/// follows `layout`: `whole window` on these rows, then one row per bucket ×
/// bucketed metric of each layout.
pub fn summary_csv(out: &CompareOutput, metric_list: &[Metric]) -> Result<Vec<u8>, ResultsError> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let by = out.levels.iter().flat_map(|lv| &lv.layouts).any(|l| l.by_bucket.is_some());
    let mut header = vec![
        "demand_factor",
        "layout",
        "scope",
        "subject",
        "metric",
        "mean",
        "half_width",
        "n",
        "baseline",
        "difference",
        "difference_half_width",
        "difference_n",
        "difference_excludes_zero",
    ];
    if by {
        header.insert(2, "bucket");
    }
    w.write_record(&header).map_err(csv_failure)?;
    let opt = |x: Option<f64>| x.map_or(String::new(), |v| v.to_string());
    // A row's last eight cells: the estimate, then the paired difference against the baseline.
    let cells = |e: Estimate, d: Option<&Difference>| -> [String; 8] {
        let mean = |m: f64, n: usize| if n == 0 { String::new() } else { m.to_string() };
        let of = |f: &dyn Fn(&Difference) -> String| d.map_or(String::new(), f);
        [
            mean(e.mean, e.n),
            opt(e.half_width),
            e.n.to_string(),
            out.baseline.clone(),
            of(&|d| mean(d.mean, d.n)),
            of(&|d| opt(d.half_width)),
            of(&|d| d.n.to_string()),
            of(&|d| d.excludes_zero.to_string()),
        ]
    };
    for lv in &out.levels {
        for (li, s) in lv.layouts.iter().enumerate() {
            let mut diffs = lv.differences.iter().filter(|d| d.layout == s.layout);
            for (m, metric) in metric_list.iter().enumerate() {
                let col: Vec<f64> = lv.values[li].iter().map(|v| v[m]).filter(|x| x.is_finite()).collect();
                let e: Estimate = layflow_engine::interval(&col, CONFIDENCE).into();
                let d = if s.layout == out.baseline { None } else { diffs.next() };
                let mut row = vec![
                    lv.demand_factor.to_string(),
                    s.layout.clone(),
                    metric.scope.as_str().to_string(),
                    metric.subject.clone(),
                    metric.name.to_string(),
                ];
                row.extend(cells(e, d));
                if by {
                    row.insert(2, WHOLE.to_string());
                }
                w.write_record(&row).map_err(csv_failure)?;
            }
            let Some(b) = &s.by_bucket else {
                continue;
            };
            let mut diffs =
                lv.bucket_differences.iter().map(|d| &d.difference).filter(|d| d.layout == s.layout);
            for r in &b.rows {
                let d = if s.layout == out.baseline { None } else { diffs.next() };
                let mut row = vec![
                    lv.demand_factor.to_string(),
                    s.layout.clone(),
                    r.bucket.clone(),
                    r.scope.as_str().to_string(),
                    r.subject.clone(),
                    r.metric.to_string(),
                ];
                row.extend(cells(Estimate { mean: r.mean, half_width: r.half_width, n: r.n }, d));
                w.write_record(&row).map_err(csv_failure)?;
            }
        }
    }
    w.into_inner().map_err(|e| ResultsError::Write(format!("cannot write CSV: {e}")))
}

/// Tidy data: one row per demand level × layout × replication × metric.
pub fn replications_csv(out: &CompareOutput, metric_list: &[Metric]) -> Result<Vec<u8>, ResultsError> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(["demand_factor", "layout", "replication", "scope", "subject", "metric", "value"])
        .map_err(csv_failure)?;
    for lv in &out.levels {
        for (li, s) in lv.layouts.iter().enumerate() {
            for (r, vals) in lv.values[li].iter().enumerate() {
                for (metric, v) in metric_list.iter().zip(vals) {
                    w.write_record([
                        lv.demand_factor.to_string(),
                        s.layout.clone(),
                        r.to_string(),
                        metric.scope.as_str().to_string(),
                        metric.subject.clone(),
                        metric.name.to_string(),
                        // Nothing observed (no lot shipped): an empty cell, read as missing.
                        if v.is_finite() { v.to_string() } else { String::new() },
                    ])
                    .map_err(csv_failure)?;
                }
            }
        }
    }
    w.into_inner().map_err(|e| ResultsError::Write(format!("cannot write CSV: {e}")))
}

fn csv_failure(e: csv::Error) -> ResultsError {
    ResultsError::Write(format!("cannot write CSV: {e}"))
}
