//! Campaigns: workflow files, the SQLite campaign store, and the stage runner (resume, shards,
//! merge). This is the driver layer: it owns files, threads, progress and errors; the science it
//! calls (`combine`, `chem`) is pure.

pub mod calibration;
pub mod error;
pub mod ingest;
pub mod merge;
pub mod report_stage;
pub mod runner;
pub mod shortlist;
pub mod store;
pub mod workflow;

pub use error::CampaignError;
pub use runner::{Progress, RunOptions, RunSummary, Shard, run};
pub use workflow::Workflow;
