//! Experiments: a plan of factors over one scenario, run as independent seeded units, recorded durably, merged exactly.
//!
//! - [`plan`]: the plan file, its design points, and the plant each runs;
//! - [`journal`]: the results file, one durable JSON line per finished unit;
//! - [`results`]: tidy CSV and the summary, computed from the units alone;
//! - [`runs`]: the record of each run on a folder (host, shard, times, speed), apart from the results.
//!
//! A unit is one replication of one design point. Its random streams come
//! from (plan seed, replication): with common random numbers on (the
//! default), replication r of every design point sees the same lots, times
//! and routing choices, so design points are compared as `compare` compares
//! layouts; with them off, the design point is mixed into the seed too.

pub mod journal;
pub mod plan;
pub mod results;
pub mod runs;

pub use journal::{Header, Shard, Unit};
pub use plan::{load, Experiment, PlanError};
