//! Complex coefficient sets a_lm (m = −l..l) across the boundary, as `kugel convert --form
//! complex` writes them and every command reads them back (`kugel::complex_coeffs`). In numpy a
//! set is one complex array of shape (L+1, 2L+1) indexed [l, L + m], zero where |m| > l.

use numpy::{PyArray2, PyReadonlyArray2};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use crate::errors::IntoPyResult;
use crate::model::{coefficients_of, model_dict};
use kugel::coeffs::Normalization;
use kugel::complex_coeffs::ComplexCoefficients;
use kugel::error::Error;

/// Bytes of the real and imaginary (L+1) × (2L+1) arrays.
fn complex_arrays_bytes(lmax: usize) -> u64 {
    let l1 = lmax as u64 + 1;
    kugel::memory::saturating_product(&[l1, 2 * l1 - 1, 8, 2])
}

/// Real and imaginary parts of a complex set, its normalisation name and phase.
type ComplexArrays<'py> = (
    Bound<'py, PyArray2<f64>>,
    Bound<'py, PyArray2<f64>>,
    String,
    bool,
);

/// The complex form of a model: real and imaginary parts as (L+1, 2L+1) arrays, and the
/// normalisation and phase they are in. `normalization` defaults to the model's; the phase
/// to the model's when the normalisation stays, else to the customary one for the new
/// normalisation (as `kugel convert` chooses).
#[pyfunction]
#[pyo3(signature = (model, normalization=None, condon_shortley=None))]
pub fn to_complex<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    normalization: Option<&str>,
    condon_shortley: Option<bool>,
) -> PyResult<ComplexArrays<'py>> {
    let coeffs = coefficients_of(model)?;
    let target = match normalization {
        Some(n) => n.parse::<Normalization>().py_err()?,
        None => coeffs.normalization,
    };
    let phase = match condon_shortley {
        Some(p) => p,
        None if target != coeffs.normalization => target.default_condon_shortley(),
        None => coeffs.condon_shortley,
    };
    let lmax = coeffs.lmax();
    kugel::memory::check_fits("the complex coefficient arrays", complex_arrays_bytes(lmax))
        .py_err()?;
    let (re, im) = py
        .detach(|| -> kugel::Result<_> {
            let set = ComplexCoefficients::from_real(&coeffs, target, phase)?;
            let width = 2 * lmax + 1;
            let mut re = ndarray::Array2::zeros((lmax + 1, width));
            let mut im = ndarray::Array2::zeros((lmax + 1, width));
            for l in 0..=lmax {
                for m in -(l as i64)..=(l as i64) {
                    let column = (lmax as i64 + m) as usize;
                    let (a, b) = set.get(l, m);
                    re[[l, column]] = a;
                    im[[l, column]] = b;
                }
            }
            Ok((re, im))
        })
        .py_err()?;
    Ok((
        PyArray2::from_owned_array(py, re),
        PyArray2::from_owned_array(py, im),
        target.name().to_string(),
        phase,
    ))
}

/// The real model of the field a complex set describes, in the set's normalisation and
/// phase (as a complex table is read). `re` and `im` are (L+1, 2L+1) arrays indexed
/// [l, L + m]; entries with |m| > l must be 0, and the set must describe a real field.
#[pyfunction]
#[pyo3(signature = (re, im, normalization, condon_shortley, reference_radius_m, gm_m3_s2, units))]
#[allow(clippy::too_many_arguments)]
pub fn from_complex<'py>(
    py: Python<'py>,
    re: PyReadonlyArray2<'py, f64>,
    im: PyReadonlyArray2<'py, f64>,
    normalization: &str,
    condon_shortley: bool,
    reference_radius_m: f64,
    gm_m3_s2: Option<f64>,
    units: String,
) -> PyResult<Bound<'py, PyDict>> {
    let normalization: Normalization = normalization.parse().py_err()?;
    let (re, im) = (re.as_array(), im.as_array());
    let rows = re.nrows();
    if rows == 0 || re.shape() != [rows, 2 * rows - 1] || im.shape() != re.shape() {
        return Err(Error::ShapeMismatch(format!(
            "complex coefficients have shape {:?} (real part) and {:?} (imaginary part); a set of degree L needs (L+1, 2L+1), indexed [l, L + m]",
            re.shape(),
            im.shape()
        )))
        .py_err();
    }
    let lmax = rows - 1;
    let mut set = ComplexCoefficients::zeros(lmax, normalization, condon_shortley);
    set.reference_radius_m = reference_radius_m;
    set.gm_m3_s2 = gm_m3_s2;
    set.units = units;
    for l in 0..=lmax {
        for column in 0..2 * lmax + 1 {
            let m = column as i64 - lmax as i64;
            let (a, b) = (re[[l, column]], im[[l, column]]);
            if !(a.is_finite() && b.is_finite()) {
                return Err(Error::invalid(format!(
                    "complex coefficient a_({l},{m}) = {a} + {b}i is not finite"
                )))
                .py_err();
            }
            if m.unsigned_abs() as usize > l {
                if a != 0.0 || b != 0.0 {
                    return Err(Error::invalid(format!(
                        "complex coefficient a_({l},{m}) = {a} + {b}i lies outside |m| <= l (column {column}) and must be 0"
                    )))
                    .py_err();
                }
                continue;
            }
            set.set(l, m, a, b);
        }
    }
    let real = py
        .detach(|| {
            set.to_real()
                .and_then(|r| r.converted(set.normalization, set.condon_shortley))
        })
        .py_err()?;
    model_dict(py, &real)
}
