//! Procedures over many replications: replicate, choose a warm-up, compare layouts, select the best, size a fleet; messages for runs that stop early.
//!
//! Each procedure takes a compiled plant and plain settings and returns data;
//! the command line only resolves flags into settings and draws the data.
//! Long procedures report progress through [`Progress`].

pub mod compare;
pub mod deadlock;
pub mod fleet;
pub mod overload;
pub mod progress;
pub mod replicate;
pub mod select;
pub mod targets;
pub mod warmup;

pub use deadlock::{deadlock_message, replication_deadlock};
pub use overload::CapTally;
pub use progress::{Progress, Silent, StudyError};
pub use replicate::{replicate, replicate_fold, replicate_range};
