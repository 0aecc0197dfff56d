//! The config-driven pipeline: schema, validation, step orchestration, progress, provenance.
//! Holds no numerical code.

pub mod checks;
pub mod config;
pub mod dag;
pub mod demo;
pub mod estimate;
pub mod job;
pub mod progress;
pub mod schema;
pub mod suggest;

pub use job::Job;
