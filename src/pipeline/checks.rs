//! Checks of values whose vocabulary belongs to other modules (quantities, filters, fit
//! regularisations, gap policies): the config check calls the same parsers the run uses, so
//! the two cannot disagree.

use std::path::Path;

use crate::field::quantity::Quantity;
use crate::observe::fit::Regularization;
use crate::observe::gaps::GapPolicy;
use crate::spectral::filter::FilterChain;

pub fn check_quantity(q: &str) -> Result<(), String> {
    q.parse::<Quantity>().map(|_| ()).map_err(|e| e.to_string())
}

/// Filter specs may name spectrum files (Wiener filters), relative to the config's folder.
pub fn check_filter(spec: &str, base: &Path) -> Result<(), String> {
    FilterChain::parse_relative_to(spec, base)
        .map(|_| ())
        .map_err(|e| e.to_string())
}

pub fn check_regularization(spec: &str) -> Result<(), String> {
    Regularization::parse(spec)
        .map(|_| ())
        .map_err(|e| e.to_string())
}

pub fn check_gaps(spec: &str) -> Result<(), String> {
    GapPolicy::parse(spec)
        .map(|_| ())
        .map_err(|e| e.to_string())
}
