//! layflow-models: the plant — scenario format, layouts, routings, fleets, static analysis and the simulation model.
//!
//! Where each question lives: `scenario` reads a plant, `sim` runs it,
//! `metrics` defines and computes every reported number, `study` holds the
//! procedures over many replications (warm-up, compare, select, fleet
//! sizing, targets), `results` writes and reads results folders,
//! `analysis`, `sizing` and `search` are the static picture, the analytic
//! fleet size and the layout search, and `experiment` runs plans durably.

pub mod analysis;
pub mod areas;
pub mod crew_load;
pub mod datetime;
pub mod decimals;
pub mod dist;
pub mod experiment;
pub mod generate;
pub mod limits;
pub mod measured;
pub mod metrics;
pub mod network;
pub mod plant;
pub mod results;
pub mod scenario;
pub mod search;
pub mod sim;
pub mod sizing;
pub mod study;
pub mod suggest;
pub mod text;
pub mod textfile;
pub mod timebuckets;
pub mod travel;
pub mod units;

pub use scenario::{load_scenario, measured_source, parse_scenario, MeasuredSource, ScenarioError};
