//! The files of a fleet sizing: summary.json (as `fleet --format json` prints it) and summary.csv (one row per size × metric).

use std::path::Path;

use crate::metrics::by_bucket::WHOLE;
use crate::metrics::registry::{find, Scope};
use crate::study::fleet::{FleetBuckets, SizeResult};

use super::folder::{write_atomic, write_manifest_for, Kind, ResultsError};

/// The files a fleet sizing writes, in reading order.
pub const FILES: &[&str] = &["summary.json", "summary.csv"];

/// Write a fleet sizing's files into `dir` (prepared with
/// [`super::folder::prepare`]): `json` is the sizing as `--format json`
/// prints it, `csv` from [`summary_csv`].
pub fn write(
    dir: &Path,
    json: &str,
    csv: &[u8],
    scenario_sha256: Option<String>,
) -> Result<(), ResultsError> {
    write_atomic(dir, "summary.json", json.as_bytes())?;
    write_atomic(dir, "summary.csv", csv)?;
    write_manifest_for(dir, Kind::Fleet, FILES, scenario_sha256)
}

/// The scope of a sizing's metric: the sized fleet's own metrics, then the
/// plant's throughput, WIP and flow time (the registry names both).
fn scope_of(name: &str) -> Scope {
    if find(Scope::Fleet, name).is_some() {
        Scope::Fleet
    } else {
        Scope::Plant
    }
}

/// One row per size × metric, tidy: `fleet, movers, scope, subject, metric,
/// mean, half_width, n, meets_every_target`. With `--by`, a `bucket` column
/// follows `movers`: `whole window` on these rows, then one row per size ×
/// bucket × bucketed metric.
pub fn summary_csv(
    fleet: &str,
    sizes: &[SizeResult],
    by: Option<&FleetBuckets>,
) -> Result<Vec<u8>, ResultsError> {
    let fail = |e: csv::Error| ResultsError::Write(format!("cannot write CSV: {e}"));
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut head = vec![
        "fleet",
        "movers",
        "scope",
        "subject",
        "metric",
        "mean",
        "half_width",
        "n",
        "meets_every_target",
    ];
    if by.is_some() {
        head.insert(2, "bucket");
    }
    w.write_record(&head).map_err(fail)?;
    let opt = |x: Option<f64>| x.map_or(String::new(), |v| v.to_string());
    let mean = |m: f64, n: usize| if n == 0 || !m.is_finite() { String::new() } else { m.to_string() };
    for s in sizes {
        for (name, e) in &s.metrics.0 {
            let scope = scope_of(name);
            let mut row = vec![
                fleet.to_string(),
                s.movers.to_string(),
                scope.as_str().to_string(),
                if scope == Scope::Fleet { fleet.to_string() } else { String::new() },
                name.to_string(),
                mean(e.mean, e.n),
                opt(e.half_width),
                e.n.to_string(),
                s.meets_every_target.to_string(),
            ];
            if by.is_some() {
                row.insert(2, WHOLE.to_string());
            }
            w.write_record(&row).map_err(fail)?;
        }
        let Some(b) = by else { continue };
        for r in b.rows.iter().filter(|r| r.movers == s.movers) {
            let r = &r.row;
            w.write_record([
                fleet.to_string(),
                s.movers.to_string(),
                r.bucket.clone(),
                r.scope.as_str().to_string(),
                r.subject.clone(),
                r.metric.to_string(),
                mean(r.mean, r.n),
                opt(r.half_width),
                r.n.to_string(),
                s.meets_every_target.to_string(),
            ])
            .map_err(fail)?;
        }
    }
    w.into_inner().map_err(|e| ResultsError::Write(format!("cannot write CSV: {e}")))
}
