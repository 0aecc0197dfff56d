//! The config-driven pipeline: schema, validation, step orchestration, progress, provenance.
//! Holds no numerical code.
