//! Command implementations of the binary that grew beyond a few lines, one file per family of
//! commands; `main.rs` parses and dispatches.

pub mod qc;
pub mod report;

pub(crate) use super::fail;
