//! Rotation of models and regional analysis, as `kugel rotate`, `kugel tapers`,
//! `kugel spectrum --region` and `kugel compare --region` compute them.

use numpy::{PyArray1, PyArray3};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use crate::errors::IntoPyResult;
use crate::model::{coefficients_of, model_dict};
use crate::tables::table_dict;
use kugel::error::Error;
use kugel::io::tapers::taper_coefficient_cube;
use kugel::progress::Silent;
use kugel::regional::{
    estimate_windows, localised_comparison, localised_spectrum_with_expected, RegionSpec,
    TaperChoice, TaperSet,
};
use kugel::rotate::{rotate, EulerAngles, ROTATION_ATTRIBUTE};

/// The model rotated by Euler angles `euler` = (α, β, γ) in degrees, or by the rotation that
/// moves `pole` = (lat, lon) to the north pole and then turns by `azimuth_deg` about it (the
/// conventions of `kugel rotate --help`). Returns the rotated model's fields and whether
/// standard errors were dropped (rotating them needs their covariances).
#[pyfunction]
#[pyo3(signature = (model, pole=None, azimuth_deg=0.0, euler=None))]
pub fn rotate_model<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    pole: Option<(f64, f64)>,
    azimuth_deg: f64,
    euler: Option<(f64, f64, f64)>,
) -> PyResult<(Bound<'py, PyDict>, bool)> {
    let coeffs = coefficients_of(model)?;
    let angles = match (pole, euler) {
        (Some((lat, lon)), None) => EulerAngles::moving_to_north_pole(lat, lon, azimuth_deg),
        (None, Some((a, b, g))) => EulerAngles::from_degrees(a, b, g),
        _ => Err(Error::invalid(
            "say which rotation: pole=(lat, lon) or euler=(alpha, beta, gamma), one of them",
        )),
    }
    .py_err()?;
    let mut rotated = py.detach(|| rotate(&coeffs, &angles)).py_err()?;
    rotated
        .attributes
        .insert(ROTATION_ATTRIBUTE.into(), angles.degrees_text());
    Ok((model_dict(py, &rotated)?, coeffs.sigmas().is_some()))
}

/// The windows of bandwidth `lmax_window` best concentrated in the cap of radius
/// `cap_radius_deg` about `centre` (lat, lon; default the north pole), sorted by
/// concentration, the first `keep` or all: `{"concentration", "C", "S", "attributes"}` with
/// C and S of shape (taper, degree, order), as `kugel tapers` writes them.
#[pyfunction]
#[pyo3(signature = (cap_radius_deg, lmax_window, centre=None, keep=None))]
pub fn cap_tapers<'py>(
    py: Python<'py>,
    cap_radius_deg: f64,
    lmax_window: usize,
    centre: Option<(f64, f64)>,
    keep: Option<usize>,
) -> PyResult<Bound<'py, PyDict>> {
    let (lat, lon) = centre.unwrap_or((90.0, 0.0));
    let region = RegionSpec::cap(lat, lon, cap_radius_deg).py_err()?;
    let (set, c, s) = py
        .detach(|| -> kugel::Result<_> {
            let set = region.taper_set(lmax_window, keep.map(TaperChoice::Count), &Silent)?;
            if set.tapers.is_empty() {
                return Err(Error::invalid("no windows were produced"));
            }
            let l1 = set.lmax_window as u64 + 1;
            kugel::memory::check_fits(
                "the windows as (taper, degree, order) arrays",
                kugel::memory::saturating_product(&[set.tapers.len() as u64, l1, l1, 16]),
            )?;
            let c = taper_coefficient_cube(&set, false);
            let s = taper_coefficient_cube(&set, true);
            Ok((set, c, s))
        })
        .py_err()?;
    let l1 = set.lmax_window + 1;
    let shape = (set.tapers.len(), l1, l1);
    let cube = |values: Vec<f64>| -> PyResult<Bound<'py, PyArray3<f64>>> {
        let array = ndarray::Array3::from_shape_vec(shape, values)
            .map_err(|e| pyo3::exceptions::PyRuntimeError::new_err(e.to_string()))?;
        Ok(PyArray3::from_owned_array(py, array))
    };
    let out = PyDict::new(py);
    out.set_item(
        "concentration",
        PyArray1::from_vec(py, set.concentrations()),
    )?;
    out.set_item("C", cube(c)?)?;
    out.set_item("S", cube(s)?)?;
    let attributes = PyDict::new(py);
    attributes.set_item("shannon_number", set.shannon_number)?;
    attributes.set_item("region", set.region.clone())?;
    attributes.set_item("centre_lat_deg", set.centre_deg.0)?;
    attributes.set_item("centre_lon_deg", set.centre_deg.1)?;
    attributes.set_item("lmax_window", set.lmax_window)?;
    attributes.set_item("windows_total", set.total_windows)?;
    attributes.set_item("normalization", "geodesy")?;
    attributes.set_item("condon_shortley_phase", 0)?;
    out.set_item("attributes", attributes)?;
    Ok(out)
}

/// One line on the windows a localised estimate of a degree-`lmax` model used.
fn windows_summary(set: &TaperSet, count: usize, lmax: usize) -> String {
    let lw = set.lmax_window;
    format!(
        "{count} windows of degree {lw} in {}, Shannon number {:.2}; degrees {lw}..{} reliable",
        set.region,
        set.shannon_number,
        lmax.saturating_sub(lw)
    )
}

/// The region of a localised estimate from its text (the command line's `--region` syntax).
fn region_of(text: &str) -> PyResult<RegionSpec> {
    text.parse::<RegionSpec>().py_err()
}

/// The multitaper spectrum of `model` inside `region` with windows of bandwidth
/// `window_lmax` (the first `tapers`, or every window with concentration ≥ 0.99), with the
/// spectrum expected from the model's global spectrum, as `kugel spectrum --region` computes.
#[pyfunction]
#[pyo3(signature = (model, region, window_lmax, tapers=None))]
pub fn localised_spectrum<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    region: &str,
    window_lmax: usize,
    tapers: Option<usize>,
) -> PyResult<Bound<'py, PyDict>> {
    let coeffs = coefficients_of(model)?;
    let region = region_of(region)?;
    let (table, summary) = py
        .detach(|| -> kugel::Result<_> {
            let (set, choice) =
                estimate_windows(&region, window_lmax, tapers, coeffs.lmax(), &Silent)?;
            let (local, expected) =
                localised_spectrum_with_expected(&coeffs, &set, choice, &Silent)?;
            let mut table = local.to_table(Some(&expected));
            table.attribute(
                "title",
                format!("localised degree-variance spectrum in {}", set.region),
            );
            table.number_attribute("shannon_number", set.shannon_number);
            let summary = windows_summary(&set, local.taper_count, local.lmax);
            Ok((table, summary))
        })
        .py_err()?;
    table_dict(py, table, summary)
}

/// The multitaper comparison of `reference` (A) and `other` (B) inside `region`, as
/// `kugel compare --region` computes it.
#[pyfunction]
#[pyo3(signature = (reference, other, region, window_lmax, tapers=None))]
pub fn localised_compare<'py>(
    py: Python<'py>,
    reference: &Bound<'py, PyAny>,
    other: &Bound<'py, PyAny>,
    region: &str,
    window_lmax: usize,
    tapers: Option<usize>,
) -> PyResult<Bound<'py, PyDict>> {
    let a = coefficients_of(reference)?;
    let b = coefficients_of(other)?;
    let region = region_of(region)?;
    let (table, summary) = py
        .detach(|| -> kugel::Result<_> {
            let lmax = a.lmax().min(b.lmax());
            let (set, choice) = estimate_windows(&region, window_lmax, tapers, lmax, &Silent)?;
            let cmp = localised_comparison(&a, &b, &set, choice, &Silent)?;
            let mut table = cmp.to_table();
            table.attribute("title", format!("localised comparison in {}", set.region));
            table.number_attribute("shannon_number", set.shannon_number);
            let summary = windows_summary(&set, cmp.taper_count, cmp.lmax);
            Ok((table, summary))
        })
        .py_err()?;
    table_dict(py, table, summary)
}
