//! `kugel._native`: the Python package's binding to the kugel library.
//!
//! A thin layer: every function converts numpy arrays and Python values into the library's
//! types, calls the same library functions the command line calls (so the numbers agree bit
//! for bit), releases the GIL while the library computes, and turns library errors into
//! Python exceptions with the command line's messages (`errors`). The user-facing API
//! (`kugel.Model`, xarray in and out, dask helpers) is the pure-Python package on top.

use pyo3::prelude::*;

/// Large blocks freed by this module are kept for reuse (`kugel::retaining_alloc`): a loop
/// of transforms then touches the same pages every call.
#[global_allocator]
static ALLOCATOR: kugel::retaining_alloc::RetainingAlloc =
    kugel::retaining_alloc::RetainingAlloc::new();

mod complex;
mod engine_timing;
mod errors;
mod field_options;
mod model;
mod plan_cache;
mod points;
mod regional;
mod spectra;
mod tables;
mod transforms;

#[pymodule]
#[pyo3(name = "_native")]
fn native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    m.add_function(wrap_pyfunction!(model::read_model, m)?)?;
    m.add_function(wrap_pyfunction!(model::write_model, m)?)?;
    m.add_function(wrap_pyfunction!(model::convert_model, m)?)?;
    m.add_function(wrap_pyfunction!(model::resize_model, m)?)?;
    m.add_function(wrap_pyfunction!(model::check_model, m)?)?;
    m.add_function(wrap_pyfunction!(transforms::analyze_grid, m)?)?;
    m.add_function(wrap_pyfunction!(transforms::synthesize_grid, m)?)?;
    m.add_function(wrap_pyfunction!(transforms::gauss_latitudes_deg, m)?)?;
    m.add_function(wrap_pyfunction!(transforms::grid_coordinates, m)?)?;
    m.add_function(wrap_pyfunction!(transforms::grid_layout, m)?)?;
    m.add_function(wrap_pyfunction!(points::evaluate_points, m)?)?;
    m.add_function(wrap_pyfunction!(points::fit_points, m)?)?;
    m.add_function(wrap_pyfunction!(spectra::spectrum, m)?)?;
    m.add_function(wrap_pyfunction!(spectra::compare, m)?)?;
    m.add_function(wrap_pyfunction!(spectra::filter_model, m)?)?;
    m.add_function(wrap_pyfunction!(regional::rotate_model, m)?)?;
    m.add_function(wrap_pyfunction!(regional::cap_tapers, m)?)?;
    m.add_function(wrap_pyfunction!(regional::localised_spectrum, m)?)?;
    m.add_function(wrap_pyfunction!(regional::localised_compare, m)?)?;
    m.add_function(wrap_pyfunction!(complex::to_complex, m)?)?;
    m.add_function(wrap_pyfunction!(complex::from_complex, m)?)?;
    m.add_function(wrap_pyfunction!(
        engine_timing::engine_transform_seconds,
        m
    )?)?;
    Ok(())
}
