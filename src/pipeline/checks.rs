//! Checks of values whose vocabulary belongs to other modules (quantities, filters, fit
//! regularisations, gap policies): the config check calls the same parsers the run uses, so
//! the two cannot disagree.

use std::path::Path;

use crate::field::quantity::Quantity;
use crate::io::filter_spectra::parse_filter_chain;
use crate::observe::fit::Regularization;
use crate::observe::gaps::GapPolicy;

pub fn check_quantity(q: &str) -> Result<(), String> {
    q.parse::<Quantity>().map(|_| ()).map_err(|e| e.to_string())
}

/// Filter specs may name spectrum files (Wiener filters), relative to the config's folder.
pub fn check_filter(spec: &str, base: &Path) -> Result<(), String> {
    parse_filter_chain(spec, Some(base))
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
