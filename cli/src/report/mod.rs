//! The HTML report: one self-contained page; for now only its replay of a day from a trace.

pub mod replay;
