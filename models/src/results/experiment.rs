//! An experiment's folder: the units journal read back (torn tail and all), and the derived files written.

use std::path::{Path, PathBuf};

use crate::experiment::journal::{self, Contents, Header, Shard, Unit};
use crate::experiment::results;

use super::folder::{write_atomic, write_manifest, Kind, ResultsError};

/// The files an experiment folder holds, in reading order.
pub const FILES: &[&str] = &[journal::FILE, "results.csv", "summary.csv", "summary.json"];

/// The results by time bucket of a plan with `by:`.
pub const BY_BUCKET: &str = "by_bucket.csv";

/// The journal's path in `dir`.
pub fn journal_path(dir: &Path) -> PathBuf {
    dir.join(journal::FILE)
}

/// Read a folder's units; a line cut off mid-write is dropped and counted in `torn_bytes`.
pub fn read(dir: &Path) -> Result<Contents, ResultsError> {
    let path = journal_path(dir);
    if !path.is_file() {
        return Err(ResultsError::Input(format!(
            "{}: no results file ({}) here; is this an experiment's --out folder?",
            dir.display(),
            journal::FILE
        )));
    }
    journal::read(&path).map_err(ResultsError::Input)
}

/// Write the whole plan's results: canonical units file, tidy CSV, summaries (each atomically), manifest.
pub fn write(dir: &Path, header: &Header, units: &[Unit]) -> Result<(), ResultsError> {
    let whole = Header { shard: Shard::ALL, ..header.clone() };
    let summary = results::summarize(&whole, units).map_err(ResultsError::Write)?;
    write_atomic(dir, journal::FILE, &results::units_jsonl(&whole, units))?;
    write_atomic(dir, "results.csv", &results::results_csv(&whole, units))?;
    write_atomic(dir, "summary.csv", &results::summary_csv(&summary))?;
    write_atomic(dir, "summary.json", &results::summary_json(&summary))?;
    let mut files = FILES.to_vec();
    // Only with `by:` in the plan, so other folders hold what they always did.
    if whole.by.is_some() {
        write_atomic(dir, BY_BUCKET, &results::by_bucket_csv(&summary))?;
        files.push(BY_BUCKET);
    }
    write_manifest(dir, Kind::Experiment, &files)
}
