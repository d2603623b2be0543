//! The record of every `experiment` run on a folder (`runs.jsonl`): which host ran which shard, when, and how fast.
//!
//! It is provenance, kept apart from the results: the units and every file
//! made from them are the same bytes whoever ran them, while this file says
//! that shard 3 ran on node17, was requeued once and ran at a third of the
//! others' speed. One JSON line is appended per run of `layflow experiment`
//! (a first run, each `--resume`, a requeued job's restart), when the run
//! ends: complete, stopped by Ctrl-C or SIGTERM, or failed. A run killed
//! outright (SIGKILL, a lost node) leaves no line; the next run's line shows
//! the units it found already done. `merge` gathers the shards' lines into
//! the merged folder's file; `summarize` shows them slowest first.

use std::io::Write as _;
use std::path::Path;

use serde::{Deserialize, Serialize};

/// The file name in a results folder.
pub const FILE: &str = "runs.jsonl";

/// One run of `layflow experiment` on one folder.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunRecord {
    /// `K/N` for a shard, `all` for the whole plan.
    pub shard: String,
    /// The host name of the machine that ran it.
    pub host: String,
    /// The batch job, when a scheduler ran it: Slurm's `ARRAY_JOB_TASK`
    /// (e.g. `4711_3`) or job id.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub job: Option<String>,
    /// How many times the scheduler had restarted the job before this run
    /// (Slurm's `SLURM_RESTART_COUNT`: a requeue after a lost node or a `scontrol requeue`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub restarts: Option<u32>,
    /// When the run started and ended, UTC, RFC 3339 to the millisecond.
    pub started: String,
    /// See `started`.
    pub finished: String,
    /// Wall-clock seconds from start to end.
    pub wall_s: f64,
    /// Units this folder is to hold (the shard's share of the plan).
    pub units: u64,
    /// Units already done when the run started (found in units.jsonl).
    pub found_done: u64,
    /// Units this run simulated and saved.
    pub ran: u64,
    /// Simulation events of the units this run ran.
    pub events: u64,
    /// `events` over the wall-clock time of the run, all its threads together.
    pub events_per_s: f64,
    /// `complete`, `stopped` (Ctrl-C or SIGTERM: the running units were
    /// saved) or `failed` (an error; the units saved before it are kept).
    pub outcome: String,
}

impl RunRecord {
    /// The shard's number K of `K/N` (0 for `all`), for ordering.
    pub fn shard_number(&self) -> u64 {
        self.shard.split('/').next().and_then(|k| k.parse().ok()).unwrap_or(0)
    }
}

/// Append `record` to `dir/runs.jsonl` and sync it to disk.
pub fn append(dir: &Path, record: &RunRecord) -> std::io::Result<()> {
    let mut line = serde_json::to_string(record).expect("a run record serialises");
    line.push('\n');
    let mut f = std::fs::OpenOptions::new().create(true).append(true).open(dir.join(FILE))?;
    f.write_all(line.as_bytes())?;
    f.sync_all()
}

/// The records in `dir/runs.jsonl`, in file order; none when there is no
/// such file. A line that does not read (cut off by a crash mid-write, or
/// edited) is skipped and counted: the records are for reading, never for results.
pub fn read(dir: &Path) -> std::io::Result<(Vec<RunRecord>, usize)> {
    let path = dir.join(FILE);
    let text = match std::fs::read_to_string(&path) {
        Ok(t) => t,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok((Vec::new(), 0)),
        Err(e) => return Err(e),
    };
    let mut records = Vec::new();
    let mut skipped = 0;
    for line in text.lines().filter(|l| !l.trim().is_empty()) {
        match serde_json::from_str(line) {
            Ok(r) => records.push(r),
            Err(_) => skipped += 1,
        }
    }
    Ok((records, skipped))
}

/// The records of several folders as one file's bytes: every distinct
/// record once, by shard then start time (merging into one of the shard
/// folders, or merging twice, repeats none).
pub fn gathered(records: Vec<RunRecord>) -> Vec<u8> {
    // The line itself breaks ties, so equal records end up side by side
    // (two runs of one shard may start in the same second).
    let mut lines: Vec<(u64, String, String)> = records
        .iter()
        .map(|r| {
            (r.shard_number(), r.started.clone(), serde_json::to_string(r).expect("a run record serialises"))
        })
        .collect();
    lines.sort();
    lines.dedup();
    let mut out = Vec::new();
    for (_, _, line) in &lines {
        out.extend_from_slice(line.as_bytes());
        out.push(b'\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn record(shard: &str, started: &str) -> RunRecord {
        RunRecord {
            shard: shard.into(),
            host: "node1".into(),
            job: Some("7_2".into()),
            restarts: None,
            started: started.into(),
            finished: "2026-12-04T10:00:09Z".into(),
            wall_s: 9.0,
            units: 8,
            found_done: 0,
            ran: 8,
            events: 90_000,
            events_per_s: 10_000.0,
            outcome: "complete".into(),
        }
    }

    #[test]
    fn records_append_read_back_and_gather_without_repeats() {
        let t = tempfile::tempdir().unwrap();
        let (a, b) = (record("2/4", "2026-12-04T10:00:00Z"), record("10/12", "2026-12-04T09:00:00Z"));
        append(t.path(), &a).unwrap();
        append(t.path(), &b).unwrap();
        // A line cut off by a crash is skipped, not an error.
        std::fs::OpenOptions::new()
            .append(true)
            .open(t.path().join(FILE))
            .unwrap()
            .write_all(b"{\"shard\":\"3/4\",\"ho")
            .unwrap();
        let (got, skipped) = read(t.path()).unwrap();
        assert_eq!((got.clone(), skipped), (vec![a.clone(), b.clone()], 1));
        // Shard 2 before shard 10 (by number, not by text); each record once.
        let bytes = gathered(vec![b.clone(), a.clone(), b.clone()]);
        let lines: Vec<&str> = std::str::from_utf8(&bytes).unwrap().lines().collect();
        assert_eq!(lines.len(), 2);
        assert!(lines[0].contains("\"2/4\"") && lines[1].contains("\"10/12\""), "{lines:?}");
        assert_eq!(read(Path::new("/nonexistent/folder")).unwrap().0, vec![]);
    }
}
