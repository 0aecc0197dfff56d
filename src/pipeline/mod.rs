//! The config-driven pipeline: schema, validation, step orchestration, progress, provenance.
//! Holds no numerical code.

pub mod checks;
pub mod config;
pub mod dag;
pub mod estimate;
pub mod job;
pub mod outputs;
pub mod products;
pub mod report;
pub mod run;
pub mod schema;
pub mod steps;
pub mod suggest;

pub use job::Job;
