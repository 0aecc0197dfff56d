//! The config-driven pipeline: schema, validation, step orchestration, progress, provenance.
//! Holds no numerical code.

pub mod checks;
pub mod config;
pub mod dag;
pub mod estimate;
pub mod field_names;
pub mod file_names;
pub mod input_spec;
pub mod job;
mod kinds;
pub mod outputs;
pub mod products;
pub mod report;
pub mod run;
pub mod schema;
pub mod step_spec;
pub mod steps;
pub mod suggest;

pub use job::Job;
