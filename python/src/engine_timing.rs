//! The engine's own transform time, measured inside this process: what `kugel bench` times
//! (the plan's synthesis of a coefficient set on the Gauss–Legendre grid of its degree, then
//! the analysis of that grid), with the plan from the same cache the public calls use. The
//! per-call overhead benchmark (`python/bench/overhead.py`) alternates it with the public
//! `kugel.synthesize` / `kugel.analyze` calls, so that both see the same machine load.

use std::time::Instant;

use pyo3::prelude::*;

use crate::errors::IntoPyResult;
use crate::model::coefficients_of;
use crate::plan_cache::{self, GridSpec};

/// Seconds of the plan's synthesis and analysis of `model` (one of each), on the Gauss grid
/// for the model's degree, with the GIL released.
#[pyfunction]
pub fn engine_transform_seconds(py: Python<'_>, model: &Bound<'_, PyAny>) -> PyResult<(f64, f64)> {
    let coeffs = coefficients_of(model)?;
    py.detach(|| -> kugel::Result<(f64, f64)> {
        let grid = plan_cache::grid(GridSpec::Gauss(coeffs.lmax()))?;
        let plan = plan_cache::plan(coeffs.lmax(), &grid)?;
        let t = Instant::now();
        let field = plan.synthesise(&coeffs)?;
        let synthesis_s = t.elapsed().as_secs_f64();
        let t = Instant::now();
        let back = plan.analyse(&field)?;
        let analysis_s = t.elapsed().as_secs_f64();
        drop((field, back));
        Ok((synthesis_s, analysis_s))
    })
    .py_err()
}
