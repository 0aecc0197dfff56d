//! Integration tests of the library, area `pipeline`: The config-driven pipeline: config validation, typed steps and their memory estimates.
//! One test binary per area; each module below was a test file of its own.

mod config;
mod config_fuzz;
mod steps;
