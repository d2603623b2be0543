//! Placeholder for the replay of a day (replaced by the replay builder).

use std::path::Path;

use layflow_models::plant::Plant;

use crate::failure::Failure;

/// What to replay.
pub struct ReplayRequest<'a> {
    /// A `run --trace` folder.
    pub trace: &'a Path,
    /// "FROM..TO"; `None` = the busiest day.
    pub window: Option<&'a str>,
    /// Which layout's subfolder.
    pub layout: Option<&'a str>,
}

/// The replay section.
pub struct Replay {
    /// The section's HTML.
    pub html: String,
    /// The layout replayed.
    pub layout: String,
    /// The replication replayed.
    pub replication: u64,
    /// Simulated seconds replayed.
    pub window: (f64, f64),
    /// Bytes the replay adds.
    pub data_bytes: usize,
}

/// Build the replay section.
pub fn build(_plant: &Plant, _sha: &str, req: &ReplayRequest) -> Result<Replay, Failure> {
    let _ = (req.window, req.layout);
    Err(Failure::input(format!("--replay {}: not built yet", req.trace.display())))
}
