//! Grids ↔ coefficients: analysis of a user's array on its own coordinates (the layout rules of
//! the command line's grid reader, `kugel::io::grid::layout`) and synthesis of quantities on a
//! Gauss–Legendre or regular grid (`kugel::field::synthesize_on_grid`, as `kugel synthesize`).
//! Grids, recognised layouts and transform plans come from `plan_cache`, so a loop over fields
//! of one shape builds them once.

use std::path::PathBuf;
use std::sync::Arc;

use numpy::{PyArray1, PyArray2, PyReadonlyArray1, PyReadonlyArray2};
use pyo3::prelude::*;
use pyo3::types::{PyDict, PyList};

use crate::errors::IntoPyResult;
use crate::field_options::{target_surface, FieldOptions};
use crate::model::{coefficients_of, model_dict};
use crate::plan_cache::{self, Axes, GridSpec};
use kugel::coeffs::{Coefficients, Normalization};
use kugel::error::Error;
use kugel::field::cautions;
use kugel::field::synthesis::{longitude_densified, synthesize_on_densified_plan};
use kugel::io::grid::layout::{engine_grid, engine_order_field, engine_order_view, first_infinite};
use kugel::io::grid::read::{check_grid_degree, UserGrid};
use kugel::io::grid::write::grid_kind_name;
use kugel::progress::Silent;
use kugel::sht::GridKind;
use kugel::spectral::continuation::DEFAULT_MAX_AMPLIFICATION;

/// Mean Earth radius (IUGG R1 = 6 371 008.8 m rounded; common practice): the reference radius
/// recorded when neither the caller nor the grid gives one, as `kugel analyze` does.
const EARTH_MEAN_RADIUS_M: f64 = 6_371_000.0;

/// What `analyze_grid` is told about the array besides its values.
struct GridSource {
    /// How messages name the input (e.g. `xarray.DataArray`).
    source: String,
    variable: String,
    units: String,
    lat_name: String,
    lon_name: String,
}

/// The layout of a user's array from its coordinates, after checking that its shape matches
/// them (as the command line's grid reader does).
fn user_axes(
    field: numpy::ndarray::ArrayView2<'_, f64>,
    lat_deg: &[f64],
    lon_deg: &[f64],
    lat_first: bool,
    src: &GridSource,
) -> kugel::Result<Arc<Axes>> {
    let path = PathBuf::from(&src.source);
    let name = &src.variable;
    let with_var = |e: Error| match e {
        Error::InvalidInput(m) => Error::format(&path, format!("variable '{name}': {m}")),
        other => other,
    };
    let expected = if lat_first {
        [lat_deg.len(), lon_deg.len()]
    } else {
        [lon_deg.len(), lat_deg.len()]
    };
    if field.shape() != expected {
        return Err(Error::ShapeMismatch(format!(
            "{}: variable '{name}' has shape {:?} but its coordinates '{}' ({}) and '{}' ({}) need {:?}",
            src.source,
            field.shape(),
            src.lat_name,
            lat_deg.len(),
            src.lon_name,
            lon_deg.len(),
            expected
        )));
    }
    plan_cache::layout(
        lat_deg,
        lon_deg,
        &format!("latitude coordinate '{}'", src.lat_name),
        &format!("longitude coordinate '{}'", src.lon_name),
    )
    .map_err(with_var)
}

/// The user's values by (latitude row, longitude column) of their coordinates.
fn by_lat_lon(
    field: numpy::ndarray::ArrayView2<'_, f64>,
    lat_first: bool,
) -> numpy::ndarray::ArrayView2<'_, f64> {
    if lat_first {
        field
    } else {
        field.reversed_axes()
    }
}

/// Reads a user's array on its coordinates into engine order and checks it as the command
/// line's grid reader does (non-finite values, masked cells): the general path, which copies.
fn user_grid(
    field: numpy::ndarray::ArrayView2<'_, f64>,
    axes: &Axes,
    lat_deg: &[f64],
    lon_deg: &[f64],
    lat_first: bool,
    src: &GridSource,
) -> kugel::Result<UserGrid> {
    let path = PathBuf::from(&src.source);
    let name = &src.variable;
    let (lat_axis, lon_axis) = (&axes.0, &axes.1);
    let mut notes = Vec::new();
    if lon_axis.dropped_wrap_column {
        notes.push("dropped the duplicated wrap-around longitude column".to_string());
    }
    let grid = engine_grid(lat_axis, lon_axis);
    let values = engine_order_field(lat_axis, lon_axis, by_lat_lon(field, lat_first));
    if let Some((i, k)) = first_infinite(&values, lat_axis, lon_axis) {
        return Err(Error::format(
            &path,
            format!(
                "variable '{name}' holds an infinite value at latitude {}, longitude {}",
                lat_deg[i], lon_deg[k]
            ),
        ));
    }
    let mask = values.mapv(f64::is_nan);
    Ok(UserGrid {
        path,
        field: values,
        grid,
        mask,
        variable: name.clone(),
        units: src.units.clone(),
        attributes: Vec::new(),
        notes,
        reference_radius_m: None,
    })
}

/// Analyses a 2-D array given on latitude and longitude coordinates (degrees) into a model, as
/// `kugel analyze` does a NetCDF grid: the layout's exact quadrature, band limit `lmax`
/// (default: the highest the layout analyses exactly), output in `normalization`.
#[pyfunction]
#[pyo3(signature = (field, lat_deg, lon_deg, lat_first, lmax, variable, units, lat_name, lon_name,
                    source, reference_radius_m=None, normalization="geodesy", condon_shortley=None))]
#[allow(clippy::too_many_arguments)]
pub fn analyze_grid<'py>(
    py: Python<'py>,
    field: PyReadonlyArray2<'py, f64>,
    lat_deg: PyReadonlyArray1<'py, f64>,
    lon_deg: PyReadonlyArray1<'py, f64>,
    lat_first: bool,
    lmax: Option<usize>,
    variable: String,
    units: String,
    lat_name: String,
    lon_name: String,
    source: String,
    reference_radius_m: Option<f64>,
    normalization: &str,
    condon_shortley: Option<bool>,
) -> PyResult<(Bound<'py, PyDict>, Vec<String>)> {
    let normalization: Normalization = normalization.parse().py_err()?;
    if let Some(r) = reference_radius_m {
        if !(r.is_finite() && r > 0.0) {
            return Err(Error::invalid(format!(
                "reference_radius_m {r} must be a positive radius in metres"
            )))
            .py_err();
        }
    }
    let src = GridSource {
        source,
        variable,
        units,
        lat_name,
        lon_name,
    };
    let view = field.as_array();
    let lat = lat_deg.as_array().to_vec();
    let lon = lon_deg.as_array().to_vec();
    let (model, notes) = py
        .detach(|| -> kugel::Result<(Coefficients, Vec<String>)> {
            let axes = user_axes(view, &lat, &lon, lat_first, &src)?;
            // A clean array whose layout differs from the engine's at most in the row order
            // is analysed where it lies (the plan reads its rows through their stride); any
            // other goes through the grid reader's checks and its one reordering copy. Both
            // give the same doubles: the same values reach the same transform.
            let general = || -> kugel::Result<(Coefficients, GridKind, Vec<String>)> {
                let user = user_grid(view, &axes, &lat, &lon, lat_first, &src)?;
                user.require_complete()?;
                let lmax = lmax.unwrap_or(user.grid.max_exact_degree);
                user.check_degree(lmax)?;
                let plan = plan_cache::plan(lmax, &user.grid)?;
                Ok((plan.analyse(&user.field)?, user.grid.kind, user.notes))
            };
            let in_place = engine_order_view(&axes.0, &axes.1, by_lat_lon(view, lat_first));
            let (mut model, grid_kind, notes) = match in_place {
                Some(values) => {
                    let grid = engine_grid(&axes.0, &axes.1);
                    let lmax = lmax.unwrap_or(grid.max_exact_degree);
                    check_grid_degree(&PathBuf::from(&src.source), &grid, lmax)?;
                    let plan = plan_cache::plan(lmax, &grid)?;
                    match plan.analyse_view_if_finite(values)? {
                        Some(model) => (model, grid.kind, Vec::new()),
                        // a value the grid reader masks or refuses: its path names it
                        None => general()?,
                    }
                }
                None => general()?,
            };
            model.reference_radius_m = reference_radius_m.unwrap_or(EARTH_MEAN_RADIUS_M);
            model.units = src.units.clone();
            model.attributes.insert(
                "title".into(),
                format!("analysis of '{}' from {}", src.variable, src.source),
            );
            model
                .attributes
                .insert("kugel_source_variable".into(), src.variable.clone());
            model
                .attributes
                .insert("kugel_source_grid".into(), grid_kind_name(grid_kind).into());
            let phase = condon_shortley.unwrap_or(normalization.default_condon_shortley());
            if (model.normalization, model.condon_shortley) != (normalization, phase) {
                model = model.converted(normalization, phase)?;
            }
            Ok((model, notes))
        })
        .py_err()?;
    Ok((model_dict(py, &model)?, notes))
}

/// The grid named by `gauss` or a regular step in degrees (node-registered, both poles), for
/// a model of degree `lmax`; `None` is gauss.
fn grid_spec(spec: Option<&Bound<'_, PyAny>>, lmax: usize) -> PyResult<GridSpec> {
    let Some(spec) = spec else {
        return Ok(GridSpec::Gauss(lmax));
    };
    if let Ok(text) = spec.extract::<String>() {
        let text = text.trim();
        if text.eq_ignore_ascii_case("gauss") {
            return Ok(GridSpec::Gauss(lmax));
        }
        return Err(Error::invalid(format!(
            "grid '{text}': expected \"gauss\" or a step in degrees such as 1 or 0.5"
        )))
        .py_err();
    }
    let step: f64 = spec.extract().map_err(|_| {
        pyo3::exceptions::PyTypeError::new_err(
            "grid must be \"gauss\" or a step in degrees (a number)",
        )
    })?;
    Ok(GridSpec::StepDeg(step.to_bits()))
}

/// Quantities of a model on a grid, as `kugel synthesize` computes them. Returns the grid's
/// latitudes and longitudes (degrees, rows north to south), one entry per quantity (name,
/// long name, units, CF standard name, values) and the global attributes of the map.
#[pyfunction]
#[pyo3(signature = (model, grid=None, quantity="value",
                    altitude_km=None, radius_km=None, filter=Vec::new(), normal_field="none",
                    downward=None, max_amplification=DEFAULT_MAX_AMPLIFICATION))]
#[allow(clippy::too_many_arguments)]
pub fn synthesize_grid<'py>(
    py: Python<'py>,
    model: &Bound<'py, PyAny>,
    grid: Option<Bound<'py, PyAny>>,
    quantity: &str,
    altitude_km: Option<f64>,
    radius_km: Option<f64>,
    filter: Vec<String>,
    normal_field: &str,
    downward: Option<String>,
    max_amplification: f64,
) -> PyResult<Bound<'py, PyDict>> {
    let coeffs = coefficients_of(model)?;
    let options = FieldOptions::parse(
        quantity,
        normal_field,
        &filter,
        downward.as_deref(),
        max_amplification,
    )
    .py_err()?;
    let surface = target_surface(altitude_km, radius_km).py_err()?;
    let spec = grid_spec(grid.as_ref(), coeffs.lmax())?;
    let request = options.request(surface);
    let (grid, fields) = py
        .detach(|| -> kugel::Result<_> {
            // `synthesize_on_grid` with the grid and plan from the cache
            let grid = plan_cache::grid(spec)?;
            let (dense, stride) = longitude_densified(&grid, coeffs.lmax());
            let plan = plan_cache::plan(coeffs.lmax(), &dense)?;
            let fields = synthesize_on_densified_plan(&coeffs, &plan, stride, &request, &Silent)?;
            Ok((grid, fields))
        })
        .py_err()?;

    let radius_m = surface.radius_m(coeffs.reference_radius_m);
    let removed = options.normal_field.ellipsoid().is_some();
    let out = PyDict::new(py);
    out.set_item("lat", PyArray1::from_vec(py, grid.latitudes_deg()))?;
    out.set_item("lon", PyArray1::from_vec(py, grid.longitudes_deg()))?;
    let variables = PyList::empty(py);
    for (q, data) in fields {
        let v = PyDict::new(py);
        v.set_item("name", q.variable_name())?;
        v.set_item("quantity", q.name())?;
        v.set_item("long_name", q.long_name())?;
        v.set_item(
            "units",
            q.units()
                .map_or_else(|| coeffs.units.clone(), str::to_string),
        )?;
        v.set_item("standard_name", q.standard_name_given(removed))?;
        v.set_item("caution", cautions::caution_for(q))?;
        v.set_item("data", PyArray2::from_owned_array(py, data))?;
        variables.append(v)?;
    }
    out.set_item("variables", variables)?;
    let attributes = PyDict::new(py);
    attributes.set_item("kugel_grid", grid_kind_name(grid.kind))?;
    attributes.set_item("kugel_radius_m", radius_m)?;
    attributes.set_item("kugel_altitude_m", radius_m - coeffs.reference_radius_m)?;
    attributes.set_item("kugel_reference_radius_m", coeffs.reference_radius_m)?;
    if let Some(gm) = coeffs.gm_m3_s2 {
        attributes.set_item("kugel_model_gm_m3_s2", gm)?;
    }
    attributes.set_item("kugel_lmax", coeffs.lmax())?;
    attributes.set_item("kugel_normal_field", options.normal_field.to_string())?;
    if let Some(f) = &options.filter {
        attributes.set_item("kugel_filter", f.describe())?;
    }
    out.set_item("attributes", attributes)?;
    Ok(out)
}

/// The Gauss–Legendre latitudes (degrees, north to south) of the engine's grid with `nlat`
/// rows: the rows a numpy array given with `grid="gauss"` is taken to have.
#[pyfunction]
pub fn gauss_latitudes_deg(py: Python<'_>, nlat: usize) -> PyResult<Bound<'_, PyArray1<f64>>> {
    if nlat < 2 {
        return Err(Error::invalid(format!(
            "a Gauss grid needs at least 2 rows, got {nlat}"
        )))
        .py_err();
    }
    let grid = py
        .detach(|| plan_cache::grid(GridSpec::Gauss(nlat - 1)))
        .py_err()?;
    Ok(PyArray1::from_vec(py, grid.latitudes_deg()))
}

/// One coordinate vector (degrees) handed to numpy.
type Coordinates<'py> = Bound<'py, PyArray1<f64>>;

/// Latitudes and longitudes (degrees; rows north to south) of the grid `synthesize_grid`
/// computes on for `grid` (`"gauss"`, a step in degrees, or None for gauss) and a model of
/// degree `lmax`: the coordinates a lazy result is labelled with before it is computed.
#[pyfunction]
#[pyo3(signature = (lmax, grid=None))]
pub fn grid_coordinates<'py>(
    py: Python<'py>,
    lmax: usize,
    grid: Option<Bound<'py, PyAny>>,
) -> PyResult<(Coordinates<'py>, Coordinates<'py>)> {
    let spec = grid_spec(grid.as_ref(), lmax)?;
    let grid = py.detach(|| plan_cache::grid(spec)).py_err()?;
    Ok((
        PyArray1::from_vec(py, grid.latitudes_deg()),
        PyArray1::from_vec(py, grid.longitudes_deg()),
    ))
}

/// The layout recognised from latitude and longitude coordinates (degrees), as the grid reader
/// recognises a file's: its name and the highest degree it analyses exactly.
#[pyfunction]
pub fn grid_layout(
    lat_deg: PyReadonlyArray1<'_, f64>,
    lon_deg: PyReadonlyArray1<'_, f64>,
    lat_name: &str,
    lon_name: &str,
) -> PyResult<(String, usize)> {
    let lat = lat_deg.as_array().to_vec();
    let lon = lon_deg.as_array().to_vec();
    let axes = plan_cache::layout(
        &lat,
        &lon,
        &format!("latitude coordinate '{lat_name}'"),
        &format!("longitude coordinate '{lon_name}'"),
    )
    .py_err()?;
    let grid = engine_grid(&axes.0, &axes.1);
    Ok((grid_kind_name(grid.kind).to_string(), grid.max_exact_degree))
}
