//! Reading a results folder back: each aisle segment's simulated traffic and congestion, for the plant drawing.

use std::path::Path;

use crate::metrics::registry::{def_of, Id};
use crate::plant::Plant;

use super::check::one_study;
use super::folder::{read_manifest, Kind, ResultsError};

/// Per-segment figures of a simulation, read from a results folder.
pub struct SegmentFigures {
    /// Movers entering each segment per hour.
    pub traffic: Vec<f64>,
    /// Mover-seconds of congestion delay per hour at each segment.
    pub delay: Vec<f64>,
    /// Colour by delay (someone waited somewhere), else by traffic.
    pub by_delay: bool,
}

impl SegmentFigures {
    /// The value each segment is coloured by.
    pub fn value(&self, s: usize) -> f64 {
        if self.by_delay {
            self.delay[s]
        } else {
            self.traffic[s]
        }
    }
}

/// Reads `summary.csv` of a `compare --out` or experiment folder: the rows of
/// scope `segment` for the drawn layout (where the file has a `layout`
/// column), at the first demand factor or design point listed. `None` when
/// the folder holds no per-segment results. `scenario_sha256` is the SHA-256
/// of the drawn scenario's text: a folder that records another is refused
/// (segments are matched by number, which means nothing across scenarios).
pub fn read_segments(
    dir: &Path,
    plant: &Plant,
    layout: usize,
    scenario_sha256: &str,
) -> Result<Option<SegmentFigures>, ResultsError> {
    one_study(dir).map_err(|e| ResultsError::Input(format!("--results {e}")))?;
    if let Some(theirs) = recorded_scenario(dir)? {
        if theirs != scenario_sha256 {
            return Err(ResultsError::Input(format!(
                "--results {}: these results were made from another scenario, or from another version of this \
                 one (its text differs: SHA-256 {} there, {} now); draw the scenario they were made from, or \
                 rerun the study on this one",
                dir.display(),
                &theirs[..theirs.len().min(16)],
                &scenario_sha256[..scenario_sha256.len().min(16)]
            )));
        }
    }
    let Some(net) = plant.aisles.as_ref() else {
        return Ok(None);
    };
    let path = dir.join("summary.csv");
    if !path.is_file() {
        return Ok(None);
    }
    let bad = |e: String| ResultsError::Input(format!("--results {}: {e}", path.display()));
    let mut r = csv::Reader::from_path(&path).map_err(|e| bad(e.to_string()))?;
    let head = r.headers().map_err(|e| bad(e.to_string()))?.clone();
    let col = |name: &str| head.iter().position(|h| h == name);
    let (Some(scope), Some(subject), Some(metric), Some(mean)) =
        (col("scope"), col("subject"), col("metric"), col("mean"))
    else {
        return Err(
            bad("not a results summary: it needs the columns scope, subject, metric and mean".into()),
        );
    };
    let layout_col = col("layout");
    // With --by, the whole window's rows only (the buckets' rows follow them).
    let bucket_col = col("bucket");
    // Demand levels (compare) or design points (experiment): the manifest
    // says which; a folder from before manifests is told by its columns.
    let group_col = match read_manifest(dir)?.map(|m| m.kind) {
        Some(Kind::Compare) => col("demand_factor"),
        Some(Kind::Experiment) => col("point"),
        Some(Kind::Fleet) => col("movers"),
        None => col("demand_factor").or(col("point")),
    };
    let mut group: Option<String> = None;
    let n = net.segments.len();
    let (mut traffic, mut delay) = (vec![f64::NAN; n], vec![f64::NAN; n]);
    for (i, row) in r.records().enumerate() {
        let row = row.map_err(|e| bad(format!("row {}: {e}", i + 2)))?;
        if row.get(scope) != Some("segment") {
            continue;
        }
        if layout_col.is_some_and(|c| row.get(c) != Some(plant.layouts[layout].name.as_str())) {
            continue;
        }
        if bucket_col.is_some_and(|c| row.get(c) != Some(crate::metrics::by_bucket::WHOLE)) {
            continue;
        }
        if let Some(c) = group_col {
            let g = row.get(c).unwrap_or("").to_string();
            match &group {
                None => group = Some(g),
                Some(first) if *first != g => continue,
                Some(_) => {}
            }
        }
        let Some(k) =
            row.get(subject).and_then(|s| s.strip_prefix("segment-")).and_then(|s| s.parse::<usize>().ok())
        else {
            continue;
        };
        if k >= n {
            return Err(bad(format!(
                "row {}: {} does not exist in this scenario's network of {n} segments; was the folder made from another scenario?",
                i + 2,
                row.get(subject).unwrap_or("")
            )));
        }
        let v: f64 = row.get(mean).and_then(|m| m.parse().ok()).unwrap_or(f64::NAN);
        let name = row.get(metric).unwrap_or("");
        if name == def_of(Id::SegmentTraversals).name {
            traffic[k] = v;
        } else if name == def_of(Id::SegmentCongestionDelay).name {
            delay[k] = v;
        }
    }
    if traffic.iter().all(|x| x.is_nan()) {
        return Ok(None);
    }
    let clean = |v: Vec<f64>| v.into_iter().map(|x| if x.is_finite() { x } else { 0.0 }).collect::<Vec<_>>();
    let (traffic, delay) = (clean(traffic), clean(delay));
    let by_delay = delay.iter().any(|&d| d > 0.0);
    Ok(Some(SegmentFigures { traffic, delay, by_delay }))
}

/// The SHA-256 of the scenario text a folder's study ran, where it was
/// recorded: an experiment's units.jsonl header, or the manifest of a
/// comparison or a fleet sizing.
pub fn recorded_scenario(dir: &Path) -> Result<Option<String>, ResultsError> {
    let Some(m) = read_manifest(dir)? else { return Ok(None) };
    Ok(match m.kind {
        Kind::Compare | Kind::Fleet => m.scenario_sha256,
        Kind::Experiment => {
            let path = dir.join(crate::experiment::journal::FILE);
            if !path.is_file() {
                return Ok(None);
            }
            crate::experiment::journal::read_header(&path)
                .map_err(|e| ResultsError::Input(format!("--results {e}")))?
                .settings
                .map(|s| s.scenario_sha256)
        }
    })
}
