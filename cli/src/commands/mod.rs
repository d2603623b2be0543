//! One file per command: its flags, and the steps from resolved settings through a library procedure to rendering.

pub mod check;
pub mod compare;
pub mod draw;
pub mod experiment;
pub mod fleet;
pub mod generate;
pub mod run;
pub mod search;
