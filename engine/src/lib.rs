//! layflow-engine: a small, general discrete-event kernel — calendar, random
//! streams, statistics and output analysis. It knows nothing of plants.

pub mod calendar;
pub mod heap;
pub mod model;
pub mod output;
pub mod select;
pub mod stats;
pub mod streams;
pub mod warmup;

pub use calendar::{Calendar, Time};
pub use model::{run_until, Model};
pub use output::{interval, paired_difference, t_quantile, Interval};
pub use select::{kn_eta, kn_h2, Goal, KimNelson, SelectError};
pub use stats::{Tally, TickHistogram, TimeWeighted};
pub use streams::{splitmix64, stream, stream_seed, Stream};
pub use warmup::{mser, mser5, mser_batched, mser_statistic, Truncation};
