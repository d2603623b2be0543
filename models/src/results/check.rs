//! Checking that a results folder's files come from one study before anything reads them.
//!
//! `summarize` and `draw --results` read a folder a user may have filled
//! by hand, or by two commands over time; a table or a picture made from
//! a mix of two studies would look right and be wrong, so the mix is refused
//! with the files named.

use std::path::Path;

use crate::experiment::journal::Shard;
use crate::experiment::results;

use super::experiment as exp_files;
use super::folder::{survey, ResultsError};

/// Refuse `dir` when its files come from different studies: files of two
/// kinds, a manifest of one kind beside another kind's files, or an
/// experiment's derived files (`results.csv`, `summary.csv`,
/// `summary.json`) that are not what its `units.jsonl` gives.
pub fn one_study(dir: &Path) -> Result<(), ResultsError> {
    let held = survey(dir)?;
    let how = "move the files of one study to another folder, or rerun the study into an empty folder";
    if let Some(why) = held.mixed(dir) {
        return Err(ResultsError::Input(format!("{why}; {how}")));
    }
    if !exp_files::journal_path(dir).is_file() {
        return Ok(());
    }
    let c = exp_files::read(dir)?;
    let derived: Vec<&str> = ["results.csv", "summary.csv", "summary.json"]
        .into_iter()
        .filter(|f| dir.join(f).is_file())
        .collect();
    if derived.is_empty() {
        return Ok(());
    }
    let units = results::canonical(c.units).map_err(ResultsError::Input)?;
    let complete = c.header.shard == Shard::ALL && units.len() as u64 == c.header.units;
    let mut stale = Vec::new();
    if complete {
        // The derived files are a function of the units: recompute and compare byte for byte.
        let summary = results::summarize(&c.header, &units).map_err(ResultsError::Input)?;
        for f in &derived {
            let expected = match *f {
                "results.csv" => results::results_csv(&c.header, &units),
                "summary.csv" => results::summary_csv(&summary),
                _ => results::summary_json(&summary),
            };
            let have = std::fs::read(dir.join(f))
                .map_err(|e| ResultsError::Input(format!("cannot read {}: {e}", dir.join(f).display())))?;
            if have != expected {
                stale.push(*f);
            }
        }
    } else {
        // A run writes them only once every unit is done.
        stale = derived;
    }
    if stale.is_empty() {
        return Ok(());
    }
    Err(ResultsError::Input(format!(
        "{}: {} {} not come from the units in units.jsonl (plan {}, {} of {} units){}; {how}",
        dir.display(),
        stale.join(", "),
        if stale.len() == 1 { "does" } else { "do" },
        &c.header.hash[..16],
        units.len(),
        c.header.units,
        if complete { "" } else { ", and a run writes them only once every unit is done" }
    )))
}
