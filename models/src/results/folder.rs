//! A results folder on disk: created before any run, written file by file atomically, labelled by a manifest.
//!
//! A rename within one directory is atomic on the file systems we run on, so
//! a crash or Ctrl-C leaves either the old file or the new one, never half of
//! one. The manifest (`layflow-results.json`) says which kind of study wrote
//! the folder, so a reader knows what it holds without guessing from file
//! or column names, and a study never writes into another kind's folder.

use std::io::Write as _;
use std::path::Path;

use serde::{Deserialize, Serialize};

/// The manifest's file name.
pub const MANIFEST: &str = "layflow-results.json";

/// Which study wrote a folder.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Kind {
    /// `layflow compare --out` (and `search --validate`): summary.json, summary.csv, replications.csv.
    Compare,
    /// `layflow experiment` and `merge`: units.jsonl, results.csv, summary.csv, summary.json.
    Experiment,
}

impl Kind {
    /// The command that writes this kind, for messages.
    pub fn command(self) -> &'static str {
        match self {
            Kind::Compare => "layflow compare --out",
            Kind::Experiment => "layflow experiment",
        }
    }
}

/// What the manifest records.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Eq)]
pub struct Manifest {
    /// The study that wrote the folder.
    pub kind: Kind,
    /// The layflow version that wrote it.
    pub layflow_version: String,
    /// The files of the study, in the order they are best read.
    pub files: Vec<String>,
}

/// Why a folder cannot be used or written.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ResultsError {
    /// The folder or its contents are not what the user said (exit 2).
    Input(String),
    /// Writing failed (disk full, permissions; exit 1).
    Write(String),
}

impl std::fmt::Display for ResultsError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ResultsError::Input(m) | ResultsError::Write(m) => f.write_str(m),
        }
    }
}

impl std::error::Error for ResultsError {}

/// Create `dir` (and parents) if missing, before any simulation runs, so a
/// bad path fails in a second rather than after an hour; refuse a folder
/// that holds another kind of study's results.
pub fn prepare(dir: &Path, kind: Kind) -> Result<(), ResultsError> {
    std::fs::create_dir_all(dir).map_err(|e| {
        ResultsError::Input(format!("--out {}: cannot create the directory: {e}", dir.display()))
    })?;
    if !dir.is_dir() {
        return Err(ResultsError::Input(format!("--out {}: not a directory", dir.display())));
    }
    if let Some(m) = read_manifest(dir)? {
        if m.kind != kind {
            return Err(ResultsError::Input(format!(
                "--out {}: the folder holds results of `{}`; write these to another folder so neither is mixed \
                 with the other",
                dir.display(),
                m.kind.command()
            )));
        }
    }
    Ok(())
}

/// The folder's manifest, if it has one (folders written before manifests have none).
pub fn read_manifest(dir: &Path) -> Result<Option<Manifest>, ResultsError> {
    let path = dir.join(MANIFEST);
    if !path.is_file() {
        return Ok(None);
    }
    let text = std::fs::read_to_string(&path)
        .map_err(|e| ResultsError::Input(format!("{}: cannot read: {e}", path.display())))?;
    serde_json::from_str(&text).map(Some).map_err(|e| {
        ResultsError::Input(format!(
            "{}: not a layflow results manifest ({e}); was it edited?",
            path.display()
        ))
    })
}

/// Write the manifest for a folder of `kind` holding `files`.
pub fn write_manifest(dir: &Path, kind: Kind, files: &[&str]) -> Result<(), ResultsError> {
    let m = Manifest {
        kind,
        layflow_version: env!("CARGO_PKG_VERSION").to_string(),
        files: files.iter().map(|f| f.to_string()).collect(),
    };
    let json = serde_json::to_string_pretty(&m).expect("a manifest serialises") + "\n";
    write_atomic(dir, MANIFEST, json.as_bytes())
}

/// Write `bytes` to `dir/name` atomically: temp file in `dir`, flush, sync, rename.
pub fn write_atomic(dir: &Path, name: &str, bytes: &[u8]) -> Result<(), ResultsError> {
    let target = dir.join(name);
    let fail = |e: std::io::Error| ResultsError::Write(format!("cannot write {}: {e}", target.display()));
    let mut tmp = tempfile::Builder::new().prefix(&format!(".{name}.")).tempfile_in(dir).map_err(fail)?;
    tmp.write_all(bytes).map_err(fail)?;
    // A temporary file is private (0600); a result is for everyone who may
    // read the folder, like any file the user would have saved.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt as _;
        tmp.as_file().set_permissions(std::fs::Permissions::from_mode(0o644)).map_err(fail)?;
    }
    tmp.as_file().sync_all().map_err(fail)?;
    tmp.persist(&target).map_err(|e| fail(e.error))?;
    Ok(())
}
