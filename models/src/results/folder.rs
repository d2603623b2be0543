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
    /// `layflow fleet --out`: summary.json, summary.csv.
    Fleet,
}

impl Kind {
    /// The command that writes this kind, for messages.
    pub fn command(self) -> &'static str {
        match self {
            Kind::Compare => "layflow compare --out",
            Kind::Experiment => "layflow experiment",
            Kind::Fleet => "layflow fleet --out",
        }
    }

    /// The study in words, for messages: "a comparison (`layflow compare --out`)".
    pub fn study(self) -> &'static str {
        match self {
            Kind::Compare => "a comparison (`layflow compare --out`)",
            Kind::Experiment => "an experiment",
            Kind::Fleet => "a fleet sizing (`layflow fleet --out`)",
        }
    }
}

/// Every kind, in the order messages list them.
const KINDS: [Kind; 3] = [Kind::Compare, Kind::Experiment, Kind::Fleet];

/// What the manifest records.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Eq)]
pub struct Manifest {
    /// The study that wrote the folder.
    pub kind: Kind,
    /// The layflow version that wrote it.
    pub layflow_version: String,
    /// The files of the study, in the order they are best read.
    pub files: Vec<String>,
    /// SHA-256 (hex) of the scenario file's text the study ran, so a reader
    /// (`draw --results`) can refuse another scenario's results (absent in
    /// folders written before it was recorded, and in experiment folders,
    /// whose units.jsonl header records it).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scenario_sha256: Option<String>,
}

/// SHA-256 of `bytes`, hex: how a results folder names the scenario text it ran.
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::Digest as _;
    sha2::Sha256::digest(bytes).iter().map(|b| format!("{b:02x}")).collect()
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

/// Every file name a study writes into a folder (besides the manifest):
/// the only files `--force` ever deletes.
pub const STUDY_FILES: &[&str] = &[
    "summary.json",
    "summary.csv",
    "replications.csv",
    "units.jsonl",
    "results.csv",
    "by_bucket.csv",
    "runs.jsonl",
];

/// What a folder holds of ours: its manifest, and each study file present
/// with the kind of study its content shows (`None` where it cannot tell).
#[derive(Debug, Clone, Default)]
pub struct Holding {
    /// The manifest, if there is one.
    pub manifest: Option<Manifest>,
    /// Study files present, in [`STUDY_FILES`] order, each with the kind that wrote it.
    pub files: Vec<(String, Option<Kind>)>,
}

impl Holding {
    /// Nothing of ours: neither a manifest nor a study file.
    pub fn is_empty(&self) -> bool {
        self.manifest.is_none() && self.files.is_empty()
    }

    /// The kind of study the folder holds: the manifest's, else the files'
    /// (`None` when empty, mixed, or the files do not say).
    pub fn kind(&self) -> Option<Kind> {
        if let Some(m) = &self.manifest {
            return Some(m.kind);
        }
        let mut kinds = self.files.iter().filter_map(|(_, k)| *k);
        let first = kinds.next()?;
        kinds.all(|k| k == first).then_some(first)
    }

    /// The study files present, for messages: `summary.json, summary.csv`.
    pub fn names(&self) -> String {
        let mut v: Vec<&str> = self.files.iter().map(|(f, _)| f.as_str()).collect();
        if self.manifest.is_some() {
            v.push(MANIFEST);
        }
        v.join(", ")
    }

    /// Why the folder's files cannot all come from one study: files of two
    /// kinds, or files of another kind than the manifest says. `None` when consistent.
    pub fn mixed(&self, dir: &Path) -> Option<String> {
        let of = |k: Kind| -> Vec<&str> {
            self.files.iter().filter(|(_, f)| *f == Some(k)).map(|(n, _)| n.as_str()).collect()
        };
        if let Some(m) = &self.manifest {
            let other: Vec<(Kind, Vec<&str>)> = KINDS
                .into_iter()
                .filter(|&k| k != m.kind)
                .map(|k| (k, of(k)))
                .filter(|(_, f)| !f.is_empty())
                .collect();
            if let Some((k, files)) = other.first() {
                return Some(format!(
                    "{}: {MANIFEST} says the folder holds results of `{}`, but {} {} from {}",
                    dir.display(),
                    m.kind.command(),
                    files.join(", "),
                    if files.len() == 1 { "comes" } else { "come" },
                    k.study()
                ));
            }
            return None;
        }
        let present: Vec<(Kind, Vec<&str>)> =
            KINDS.into_iter().map(|k| (k, of(k))).filter(|(_, f)| !f.is_empty()).collect();
        if present.len() > 1 {
            let parts: Vec<String> =
                present.iter().map(|(k, f)| format!("{} from {}", f.join(", "), k.study())).collect();
            return Some(format!(
                "{}: the files come from {} studies: {}",
                dir.display(),
                if present.len() == 2 { "two" } else { "three" },
                parts.join(", ")
            ));
        }
        None
    }
}

/// Which kind of study wrote `name` in `dir`, from its name or its first
/// line (`summary.csv` and `summary.json` are written by both).
fn kind_of_file(dir: &Path, name: &str) -> Option<Kind> {
    match name {
        "units.jsonl" | "results.csv" | "runs.jsonl" => Some(Kind::Experiment),
        "by_bucket.csv" => {
            let text = std::fs::read_to_string(dir.join(name)).ok()?;
            (text.lines().next()?.split(',').next()? == "point").then_some(Kind::Experiment)
        }
        "replications.csv" => Some(Kind::Compare),
        "summary.csv" => {
            let text = std::fs::read_to_string(dir.join(name)).ok()?;
            match text.lines().next()?.split(',').next()? {
                "point" => Some(Kind::Experiment),
                "demand_factor" => Some(Kind::Compare),
                "fleet" => Some(Kind::Fleet),
                _ => None,
            }
        }
        "summary.json" => {
            let text = std::fs::read_to_string(dir.join(name)).ok()?;
            let v: serde_json::Value = serde_json::from_str(&text).ok()?;
            let o = v.as_object()?;
            if o.contains_key("plan_hash") {
                Some(Kind::Experiment)
            } else if o.contains_key("sizes") && o.contains_key("fleet") {
                Some(Kind::Fleet)
            } else if o.contains_key("baseline") {
                Some(Kind::Compare)
            } else {
                None
            }
        }
        _ => None,
    }
}

/// What `dir` holds of ours (nothing if it does not exist).
pub fn survey(dir: &Path) -> Result<Holding, ResultsError> {
    if !dir.is_dir() {
        return Ok(Holding::default());
    }
    let manifest = read_manifest(dir)?;
    let files = STUDY_FILES
        .iter()
        .filter(|f| dir.join(f).is_file())
        .map(|f| (f.to_string(), kind_of_file(dir, f)))
        .collect();
    Ok(Holding { manifest, files })
}

/// How a command may use a folder that already holds results.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mode {
    /// Only an empty folder, or one holding nothing of ours (the default).
    Fresh,
    /// `--force`: delete the study files there (and only those), then write afresh.
    Force,
    /// `experiment --resume` (or a merge into one of its own inputs): a
    /// folder of the same kind is continued; one of another kind is refused.
    Continue,
}

/// Create `dir` (and parents) if missing, before any simulation runs, so a
/// bad path fails in a second rather than after an hour; refuse a folder
/// that holds another study's results (by its manifest, or without one by
/// the files a study writes), unless `mode` is [`Mode::Force`], which
/// deletes them first. Returns what the folder held.
pub fn prepare(dir: &Path, kind: Kind, mode: Mode) -> Result<Holding, ResultsError> {
    std::fs::create_dir_all(dir).map_err(|e| {
        ResultsError::Input(format!("--out {}: cannot create the directory: {e}", dir.display()))
    })?;
    if !dir.is_dir() {
        return Err(ResultsError::Input(format!("--out {}: not a directory", dir.display())));
    }
    let held = survey(dir)?;
    if held.is_empty() {
        return Ok(held);
    }
    if mode == Mode::Force {
        clear(dir, &held)?;
        return Ok(held);
    }
    let how = "choose another folder, or add --force to replace them (it deletes only these files)";
    if let Some(why) = held.mixed(dir) {
        return Err(ResultsError::Input(format!("--out {why}; {how}")));
    }
    let what = match held.kind() {
        Some(k) => format!("results of `{}`", k.command()),
        None => "a study's results".to_string(),
    };
    let same = held.kind() == Some(kind);
    if mode == Mode::Continue && same {
        return Ok(held);
    }
    let mut msg =
        format!("--out {}: the folder already holds {what} ({}); {how}", dir.display(), held.names());
    if !same {
        msg.push_str("; two studies are never mixed in one folder");
    }
    if same && kind == Kind::Experiment {
        msg.push_str(
            "; an experiment that stopped continues with `layflow experiment PLAN --out DIR --resume`",
        );
    }
    Err(ResultsError::Input(msg))
}

/// Refuse to overwrite `file` (given with `flag`) unless `force`: a picture
/// or layout file a user kept is not silently replaced by the next run.
/// Called before any simulation or search runs.
pub fn check_new_file(file: &Path, flag: &str, force: bool) -> Result<(), ResultsError> {
    if file.is_dir() {
        return Err(ResultsError::Input(format!("{flag} {}: a folder, not a file name", file.display())));
    }
    if file.exists() && !force {
        return Err(ResultsError::Input(format!(
            "{flag} {}: the file already exists; add --force to replace it, or name another file",
            file.display()
        )));
    }
    Ok(())
}

/// Delete the study files and the manifest `held` found in `dir`, nothing else.
pub fn clear(dir: &Path, held: &Holding) -> Result<(), ResultsError> {
    let mut names: Vec<&str> = held.files.iter().map(|(f, _)| f.as_str()).collect();
    if held.manifest.is_some() {
        names.push(MANIFEST);
    }
    for name in names {
        let path = dir.join(name);
        std::fs::remove_file(&path).or_else(|e| {
            if e.kind() == std::io::ErrorKind::NotFound {
                Ok(())
            } else {
                Err(ResultsError::Write(format!("--force: cannot delete {}: {e}", path.display())))
            }
        })?;
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
    write_manifest_for(dir, kind, files, None)
}

/// Write the manifest, recording the SHA-256 of the scenario text the study ran.
pub fn write_manifest_for(
    dir: &Path,
    kind: Kind,
    files: &[&str],
    scenario_sha256: Option<String>,
) -> Result<(), ResultsError> {
    let m = Manifest {
        kind,
        layflow_version: env!("CARGO_PKG_VERSION").to_string(),
        files: files.iter().map(|f| f.to_string()).collect(),
        scenario_sha256,
    };
    let json = serde_json::to_string_pretty(&m).expect("a manifest serialises") + "\n";
    write_atomic(dir, MANIFEST, json.as_bytes())
}

/// Write `bytes` to `dir/name` atomically: temp file in `dir`, flush, sync, rename.
pub fn write_atomic(dir: &Path, name: &str, bytes: &[u8]) -> Result<(), ResultsError> {
    let target = dir.join(name);
    let fail = |e: std::io::Error| ResultsError::Write(format!("cannot write {}: {e}", target.display()));
    // The message names the file the user asked for, not the temporary one
    // (tempfile's own errors add "at path .NAME.XXXX", which means nothing to them).
    let mut tmp = tempfile::Builder::new().prefix(&format!(".{name}.")).tempfile_in(dir).map_err(|e| {
        let text = e.to_string();
        let plain = text.split(" at path ").next().unwrap_or(&text).to_string();
        fail(std::io::Error::new(e.kind(), plain))
    })?;
    tmp.as_file_mut().write_all(bytes).map_err(fail)?;
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
