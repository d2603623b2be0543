//! How a long procedure reports progress, and how it fails: for the command line's bar and exit codes.

use crate::sim::RepStats;

/// What a procedure tells its caller as it goes; every method does nothing by default.
pub trait Progress: Sync {
    /// What is running now, e.g. `layout proposed, demand ×1.2`.
    fn stage(&self, _what: String) {}
    /// More replications to run than announced (sequential selection adds them as it goes).
    fn add_total(&self, _n: u64) {}
    /// One replication finished.
    fn done(&self, _rep: &RepStats) {}
}

/// No progress reports (tests, library users).
pub struct Silent;

impl Progress for Silent {}

/// Why a procedure stopped.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum StudyError {
    /// A setting the user gave cannot work (the command line exits 2).
    Input(String),
    /// The simulation itself failed: a deadlock, nothing observed (exits 1).
    Run(String),
}

impl std::fmt::Display for StudyError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            StudyError::Input(m) | StudyError::Run(m) => f.write_str(m),
        }
    }
}

impl std::error::Error for StudyError {}
