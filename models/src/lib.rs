//! layflow-models: the plant — scenario format, layouts, routings, fleets, static analysis and the simulation model.

pub mod analysis;
pub mod dist;
pub mod experiment;
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
pub mod travel;
pub mod units;

pub use scenario::{load_scenario, parse_scenario, ScenarioError};
