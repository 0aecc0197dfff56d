//! Spectra, comparisons and degree-domain filters of models, as `kugel spectrum`,
//! `kugel compare` and `kugel filter` compute them.

use pyo3::prelude::*;
use pyo3::types::PyDict;

use crate::errors::IntoPyResult;
use crate::model::{coefficients_of, model_dict};
use crate::tables::table_dict;
use kugel::error::Error;
use kugel::spectral::compare::{CompareOptions, Comparison};
use kugel::spectral::{Spectrum, SpectrumOptions};

/// The degree-variance spectrum with its χ² band; optionally a power-law fit over
/// `fit_range` = (lmin, lmax) and the Lowes–Mauersberger spectrum at `lowes_radius_km`.
#[pyfunction]
#[pyo3(signature = (model, confidence=0.95, fit_range=None, lowes_radius_km=None))]
pub fn spectrum<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    confidence: f64,
    fit_range: Option<(usize, usize)>,
    lowes_radius_km: Option<f64>,
) -> PyResult<Bound<'py, PyDict>> {
    let coeffs = coefficients_of(model)?;
    if let Some(r) = lowes_radius_km {
        if !(r > 0.0 && r.is_finite()) {
            return Err(Error::invalid(format!(
                "lowes_radius_km must be a positive radius in km, got {r}"
            )))
            .py_err();
        }
    }
    let options = SpectrumOptions {
        confidence,
        fit_range,
        lowes_radius_m: lowes_radius_km.map(|km| km * 1000.0),
    };
    let (table, summary) = py
        .detach(|| Spectrum::compute(&coeffs, &options).map(|s| (s.to_table(), s.summary())))
        .py_err()?;
    table_dict(py, table, summary)
}

/// Degree-by-degree comparison of `reference` (A) and `other` (B).
#[pyfunction]
#[pyo3(signature = (reference, other, confidence=0.95, force=false, reference_label="A".to_string(), other_label="B".to_string()))]
pub fn compare<'py>(
    py: Python<'py>,
    reference: &Bound<'py, PyAny>,
    other: &Bound<'py, PyAny>,
    confidence: f64,
    force: bool,
    reference_label: String,
    other_label: String,
) -> PyResult<Bound<'py, PyDict>> {
    let a = coefficients_of(reference)?;
    let b = coefficients_of(other)?;
    let options = CompareOptions { confidence, force };
    let (table, summary) = py
        .detach(|| {
            Comparison::compute(&a, &b, &options).map(|mut c| {
                c.reference_label = reference_label;
                c.other_label = other_label;
                (c.to_table(), c.summary())
            })
        })
        .py_err()?;
    table_dict(py, table, summary)
}

/// The model with a chain of degree-domain filters applied (`gauss:300`, `lowpass:40-50`, …,
/// the command line's `--filter` syntax), and the combined weight per degree.
#[pyfunction]
pub fn filter_model<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    specs: Vec<String>,
) -> PyResult<(Bound<'py, PyDict>, Vec<f64>, String)> {
    let mut coeffs = coefficients_of(model)?;
    let chain = kugel::io::filter_spectra::filter_chain_from_specs(&specs).py_err()?;
    if chain.is_empty() {
        return Err(Error::invalid(
            "nothing to do: give at least one filter spec",
        ))
        .py_err();
    }
    let (weights, description) = py
        .detach(|| -> kugel::Result<(Vec<f64>, String)> {
            let weights = chain.weights(coeffs.lmax(), coeffs.reference_radius_m)?;
            chain.apply(&mut coeffs)?;
            coeffs.check_finite()?;
            Ok((weights, chain.describe()))
        })
        .py_err()?;
    coeffs
        .attributes
        .insert("kugel_filter".into(), description.clone());
    Ok((model_dict(py, &coeffs)?, weights, description))
}
