//! Drawing results for people: tables, charts, the plant picture, progress, warnings, one colour palette.

pub mod by_bucket;
pub mod check;
pub mod compare;
pub mod experiment;
pub mod fleet;
pub mod palette;
pub mod plant;
pub mod plot;
pub mod progress;
pub mod run;
pub mod search;
pub mod select;
pub mod table;
pub mod timeline;
pub mod warnings;
