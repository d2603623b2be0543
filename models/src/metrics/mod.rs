//! Every metric layflow reports, defined once: the registry, each replication's values, and summaries.
//!
//! `registry.rs` names every metric (name, table label, unit, better
//! direction, scope); `compute.rs` is the only place a replication's value of
//! a metric is computed; `list.rs` says which metrics a plant has and reads a
//! name a user typed; `estimate.rs` turns replications into intervals;
//! `summary.rs` is what `run` reports per layout.

pub mod by_bucket;
pub mod compute;
pub mod estimate;
pub mod list;
pub mod registry;
pub mod summary;

pub use by_bucket::{bucket_metrics, bucket_values, BucketAccumulator, BucketSummary, Peak};
pub use compute::{observed, value};
pub use estimate::{dur, est, est_with_se, DurationEstimate, Estimate, Moments, CONFIDENCE};
pub use list::{
    every_metric, find_metric, metrics, segment_subject, subjects, values, values_mean, Features, Metric,
};
pub use registry::{canonical, Better, Def, Id, Kind, Scope, Unit, DEFS};
pub use summary::{
    summarize, CrewSummary, DepartmentSummary, FleetSummary, KitSummary, LayoutAccumulator, LayoutSummary,
    ProductSummary, SegmentSummary,
};
