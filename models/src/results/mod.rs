//! Results folders: the one place that writes and reads what a study leaves on disk.
//!
//! `folder.rs` creates a folder, writes each file atomically and labels the
//! folder with a manifest; `compare.rs`, `experiment.rs` and `fleet.rs` write each
//! study's files; `check.rs` refuses a folder mixing two studies; `segments.rs` reads per-segment figures back for drawing.

pub mod check;
pub mod compare;
pub mod experiment;
pub mod fleet;
pub mod folder;
pub mod segments;

pub use folder::{
    prepare, read_manifest, survey, write_atomic, Holding, Kind, Manifest, Mode, ResultsError, MANIFEST,
};
