//! The coefficient model across the boundary: a Python `kugel.Model` (numpy C, S of shape
//! (L+1, L+1), zero above the diagonal, plus metadata) ↔ the library's packed
//! `Coefficients`; and the model file functions.

use std::collections::BTreeMap;
use std::path::PathBuf;

use ndarray::{Array2, ArrayView2};
use numpy::{PyArray2, PyReadonlyArray2};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use crate::errors::IntoPyResult;
use kugel::coeffs::{packed_len, Coefficients, Normalization};
use kugel::error::Error;
use kugel::io::provenance::Provenance;

/// The lower triangle (m ≤ l) of a square (L+1, L+1) array in packed order.
fn packed(name: &str, a: ArrayView2<'_, f64>, lmax: usize) -> kugel::Result<Vec<f64>> {
    if a.shape() != [lmax + 1, lmax + 1] {
        return Err(Error::ShapeMismatch(format!(
            "{name} has shape {:?}; a model of degree {lmax} needs ({}, {})",
            a.shape(),
            lmax + 1,
            lmax + 1
        )));
    }
    let mut out = Vec::with_capacity(packed_len(lmax));
    // row l holds (l, 0..=l), the packed layout's next l + 1 entries: copied as slices when
    // the rows are contiguous, as every array numpy creates in C order is
    for (l, row) in a.rows().into_iter().enumerate() {
        match row.as_slice() {
            Some(values) => out.extend_from_slice(&values[..=l]),
            None => out.extend(row.iter().take(l + 1)),
        }
    }
    debug_assert_eq!(out.len(), packed_len(lmax));
    Ok(out)
}

/// The square (L+1, L+1) arrays of several packed triangles, made in parallel
/// (`coeffs::squares_from_packed`).
fn squares(packed: &[&[f64]], lmax: usize) -> Vec<Array2<f64>> {
    let n = lmax + 1;
    kugel::coeffs::squares_from_packed(packed, lmax)
        .into_iter()
        .map(|v| Array2::from_shape_vec((n, n), v).expect("(L+1)² values"))
        .collect()
}

fn array_attr<'py>(
    model: &Bound<'py, PyAny>,
    name: &str,
) -> PyResult<Option<PyReadonlyArray2<'py, f64>>> {
    let value = model.getattr(name)?;
    if value.is_none() {
        return Ok(None);
    }
    Ok(Some(value.extract()?))
}

/// The library's coefficient set from a `kugel.Model` (any object with its attributes).
pub fn coefficients_of(model: &Bound<'_, PyAny>) -> PyResult<Coefficients> {
    let c = array_attr(model, "C")?
        .ok_or_else(|| pyo3::exceptions::PyValueError::new_err("the model has no C array"))?;
    let s = array_attr(model, "S")?
        .ok_or_else(|| pyo3::exceptions::PyValueError::new_err("the model has no S array"))?;
    let rows = c.as_array().nrows();
    if rows == 0 {
        return Err(pyo3::exceptions::PyValueError::new_err(
            "C is empty; a model needs at least degree 0",
        ));
    }
    let lmax = rows - 1;
    let normalization: Normalization = model
        .getattr("normalization")?
        .extract::<String>()?
        .parse()
        .py_err()?;
    let mut out = Coefficients::from_packed(
        lmax,
        packed("C", c.as_array(), lmax).py_err()?,
        packed("S", s.as_array(), lmax).py_err()?,
        normalization,
    )
    .py_err()?;
    match (array_attr(model, "C_sigma")?, array_attr(model, "S_sigma")?) {
        (Some(cs), Some(ss)) => out
            .set_sigmas(
                packed("C_sigma", cs.as_array(), lmax).py_err()?,
                packed("S_sigma", ss.as_array(), lmax).py_err()?,
            )
            .py_err()?,
        (None, None) => {}
        _ => {
            return Err(pyo3::exceptions::PyValueError::new_err(
                "give both C_sigma and S_sigma, or neither",
            ))
        }
    }
    out.condon_shortley = model.getattr("condon_shortley_phase")?.extract()?;
    out.reference_radius_m = model.getattr("reference_radius_m")?.extract()?;
    out.gm_m3_s2 = model.getattr("gm_m3_s2")?.extract()?;
    out.units = model.getattr("units")?.extract()?;
    out.attributes = model
        .getattr("attributes")?
        .extract::<BTreeMap<String, String>>()?;
    Ok(out)
}

/// The keyword arguments of `kugel.Model` for a coefficient set; the arrays are handed to
/// numpy without a copy.
pub fn model_dict<'py>(py: Python<'py>, coeffs: &Coefficients) -> PyResult<Bound<'py, PyDict>> {
    let lmax = coeffs.lmax();
    let d = PyDict::new(py);
    let mut packed = vec![coeffs.c_packed(), coeffs.s_packed()];
    if let Some((cs, ss)) = coeffs.sigmas() {
        packed.extend([cs, ss]);
    }
    let mut arrays = py.detach(|| squares(&packed, lmax)).into_iter();
    let mut next = || PyArray2::from_owned_array(py, arrays.next().expect("one per triangle"));
    d.set_item("C", next())?;
    d.set_item("S", next())?;
    if coeffs.sigmas().is_some() {
        d.set_item("C_sigma", next())?;
        d.set_item("S_sigma", next())?;
    } else {
        d.set_item("C_sigma", py.None())?;
        d.set_item("S_sigma", py.None())?;
    }
    d.set_item("normalization", coeffs.normalization.name())?;
    d.set_item("condon_shortley_phase", coeffs.condon_shortley)?;
    d.set_item("reference_radius_m", coeffs.reference_radius_m)?;
    d.set_item("gm_m3_s2", coeffs.gm_m3_s2)?;
    d.set_item("units", coeffs.units.clone())?;
    d.set_item("attributes", coeffs.attributes.clone())?;
    Ok(d)
}

/// Reads a model file (NetCDF or text table, recognised as the command line does).
#[pyfunction]
pub fn read_model<'py>(py: Python<'py>, path: PathBuf) -> PyResult<Bound<'py, PyDict>> {
    let coeffs = py.detach(|| kugel::io::model::read_model(&path)).py_err()?;
    model_dict(py, &coeffs)
}

/// Writes a model file: NetCDF-4 for `.nc`, a text table otherwise (atomically).
#[pyfunction]
pub fn write_model(
    py: Python<'_>,
    model: &Bound<'_, PyAny>,
    path: PathBuf,
    history: String,
) -> PyResult<()> {
    let coeffs = coefficients_of(model)?;
    py.detach(|| {
        let mut provenance = Provenance::from_command_line(history);
        provenance.lmax = Some(coeffs.lmax());
        provenance.normalization = Some(coeffs.normalization.name().to_string());
        kugel::io::model::write_model(&path, &coeffs, &provenance)
    })
    .py_err()
}

/// The model in another normalisation and phase convention.
#[pyfunction]
#[pyo3(signature = (model, normalization, condon_shortley=None))]
pub fn convert_model<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    normalization: &str,
    condon_shortley: Option<bool>,
) -> PyResult<Bound<'py, PyDict>> {
    let coeffs = coefficients_of(model)?;
    let to: Normalization = normalization.parse().py_err()?;
    let phase = condon_shortley.unwrap_or(to.default_condon_shortley());
    let out = py.detach(|| coeffs.converted(to, phase)).py_err()?;
    model_dict(py, &out)
}

/// The model truncated (or zero-padded) to degree `lmax`.
#[pyfunction]
pub fn resize_model<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    lmax: usize,
) -> PyResult<Bound<'py, PyDict>> {
    let coeffs = coefficients_of(model)?;
    let side = (lmax as u64 + 1).saturating_mul(lmax as u64 + 1);
    // packed C, S and the two square arrays handed to numpy
    let bytes = side.saturating_mul(8 * 3);
    kugel::memory::check_fits("the resized model", bytes).py_err()?;
    model_dict(py, &coeffs.resized(lmax))
}

/// Checks that a model's arrays and metadata are what the library accepts.
#[pyfunction]
pub fn check_model(model: &Bound<'_, PyAny>) -> PyResult<()> {
    coefficients_of(model).map(|_| ())
}
