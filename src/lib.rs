//! attest: preregister a two-group comparison, lock it, run it unchanged,
//! and render an audit-ready report.
//!
//! The pipeline reads top to bottom: `plan` → `lock` → `data` → `stats` →
//! `results` → `render`, driven by `pipeline` and exposed by `cli`.
#![warn(missing_docs)]

pub mod analysis;
pub mod cli;
pub mod data;
pub mod error;
pub mod lock;
pub mod output;
pub mod pipeline;
pub mod plan;
pub mod planning;
pub mod render;
pub mod results;
pub mod seal;
pub mod starter;
pub mod stats;
pub mod values;
pub mod verify;
pub mod witness;
