//! attest: preregister a two-group comparison, lock it, run it unchanged,
//! and render an audit-ready report.
//!
//! The pipeline reads top to bottom: `plan` → `lock` → `data` → `stats` →
//! `results` → `render`, driven by `pipeline` and exposed by `cli`.
#![warn(missing_docs)]

pub(crate) mod analysis;
pub mod cli;
pub mod data;
pub mod error;
pub mod files;
pub mod lock;
pub(crate) mod output;
pub(crate) mod pipeline;
pub mod plan;
pub(crate) mod rehearsal;
pub mod render;
pub mod results;
pub mod seal;
pub(crate) mod starter;
pub mod stats;
pub(crate) mod verify;
pub mod witness;
