//! Scattered points: model quantities at points (`kugel evaluate`) and the least-squares fit
//! of a model to observations (`kugel fit`).

use numpy::{PyArray1, PyReadonlyArray1};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use crate::errors::IntoPyResult;
use crate::field_options::FieldOptions;
use crate::model::{coefficients_of, model_dict};
use kugel::error::Error;
use kugel::field::{evaluate_at_points, Ellipsoid, GeocentricPoint};
use kugel::observe::fit::{fit, FitOptions, Regularization};
use kugel::observe::points::PointSet;
use kugel::spectral::continuation::DEFAULT_MAX_AMPLIFICATION;

/// Quantities at points. `lat_deg`, `lon_deg` and `altitude_km` (above the reference sphere;
/// with `ellipsoid`, `lat_deg` is geodetic and `altitude_km` the ellipsoidal height) have one
/// value per point. Returns one array per quantity, in the order asked.
#[pyfunction]
#[pyo3(signature = (model, lat_deg, lon_deg, altitude_km, quantity="value", ellipsoid=None,
                    filter=Vec::new(), normal_field="none", downward=None,
                    max_amplification=DEFAULT_MAX_AMPLIFICATION))]
#[allow(clippy::too_many_arguments)]
pub fn evaluate_points<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    lat_deg: PyReadonlyArray1<'py, f64>,
    lon_deg: PyReadonlyArray1<'py, f64>,
    altitude_km: PyReadonlyArray1<'py, f64>,
    quantity: &str,
    ellipsoid: Option<&str>,
    filter: Vec<String>,
    normal_field: &str,
    downward: Option<String>,
    max_amplification: f64,
) -> PyResult<Vec<(String, Bound<'py, PyArray1<f64>>)>> {
    let coeffs = coefficients_of(model)?;
    let options = FieldOptions::parse(
        quantity,
        normal_field,
        &filter,
        downward.as_deref(),
        max_amplification,
    )
    .py_err()?;
    let ellipsoid = ellipsoid.map(Ellipsoid::parse).transpose().py_err()?;
    let (lat, lon, alt) = (
        lat_deg.as_array(),
        lon_deg.as_array(),
        altitude_km.as_array(),
    );
    if lon.len() != lat.len() || alt.len() != lat.len() {
        return Err(Error::ShapeMismatch(format!(
            "lat ({}), lon ({}) and altitude_km ({}) need one value per point",
            lat.len(),
            lon.len(),
            alt.len()
        )))
        .py_err();
    }
    let mut points = Vec::with_capacity(lat.len());
    for i in 0..lat.len() {
        if !(lat[i].is_finite() && lat[i].abs() <= 90.0 && lon[i].is_finite()) {
            return Err(Error::invalid(format!(
                "point {i}: lat must lie in [-90, 90] and lon be finite (degrees), got lat {} lon {}",
                lat[i], lon[i]
            )))
            .py_err();
        }
        let p = match &ellipsoid {
            Some(e) => GeocentricPoint::from_geodetic(e, lat[i], lon[i], alt[i] * 1e3),
            None => {
                let r = coeffs.reference_radius_m + alt[i] * 1e3;
                if r.is_nan() || r <= 0.0 {
                    return Err(Error::invalid(format!(
                        "point {i}: altitude_km {} puts the point at or below the centre",
                        alt[i]
                    )))
                    .py_err();
                }
                GeocentricPoint::from_degrees(lat[i], lon[i], r)
            }
        };
        points.push(p);
    }
    let request = options.request(Default::default());
    let values = py
        .detach(|| evaluate_at_points(&coeffs, &points, &request))
        .py_err()?;
    Ok(options
        .quantities
        .iter()
        .zip(values)
        .map(|(q, v)| (q.name().to_string(), PyArray1::from_vec(py, v)))
        .collect())
}

/// A model of degree `lmax` fitted to observations by weighted, regularised least squares
/// (`kugel fit`), with formal σ; also returns the fit's statistics.
#[pyfunction]
#[pyo3(signature = (lat_deg, lon_deg, value, lmax, sigma=None, regularization="none",
                    body_radius_m=6_371_000.0, units="1".to_string()))]
#[allow(clippy::too_many_arguments)]
pub fn fit_points<'py>(
    py: Python<'py>,
    lat_deg: PyReadonlyArray1<'py, f64>,
    lon_deg: PyReadonlyArray1<'py, f64>,
    value: PyReadonlyArray1<'py, f64>,
    lmax: usize,
    sigma: Option<PyReadonlyArray1<'py, f64>>,
    regularization: &str,
    body_radius_m: f64,
    units: String,
) -> PyResult<(Bound<'py, PyDict>, Bound<'py, PyDict>)> {
    let regularization = Regularization::parse(regularization).py_err()?;
    if !(body_radius_m.is_finite() && body_radius_m > 0.0) {
        return Err(Error::invalid(format!(
            "body_radius_m must be a positive radius in metres, got {body_radius_m}"
        )))
        .py_err();
    }
    let (points, _report) = PointSet::from_vectors(
        lat_deg.as_array().to_vec(),
        lon_deg.as_array().to_vec(),
        value.as_array().to_vec(),
        sigma.map(|s| s.as_array().to_vec()),
    )
    .py_err()?;
    let options = FitOptions {
        regularization,
        body_radius_m,
    };
    let mut result = py.detach(|| fit(&points, lmax, &options)).py_err()?;
    result.model.units = units;
    let stats = PyDict::new(py);
    stats.set_item("residual_rms", result.residual_rms)?;
    stats.set_item("chi2_per_dof", result.chi2_per_dof)?;
    stats.set_item("condition_estimate", result.condition_estimate)?;
    stats.set_item("lambda", result.lambda)?;
    stats.set_item("effective_parameters", result.effective_parameters)?;
    stats.set_item("sigmas_scaled", result.sigmas_scaled)?;
    stats.set_item("residuals", PyArray1::from_vec(py, result.residuals))?;
    stats.set_item("warnings", result.warnings)?;
    stats.set_item("points_used", points.len())?;
    Ok((model_dict(py, &result.model)?, stats))
}
