//! Memory estimate of a job, printed before it runs and checked against the machine.
//!
//! Each step's figure comes from the estimator the library itself checks before allocating,
//! so the plan and the step cannot disagree:
//! - grid: `observe::gridding::gridding_memory_bytes` (node layers, points) plus the analysis
//!   of the gridded field, `sht::plan::analysis_memory_bytes`;
//! - fit: the bytes of the solver `observe::fit::plan_solver` picks, as the step does: the
//!   direct one's `unknowns_memory_bytes` (three u-square matrices, five with GCV; u = (L+1)²,
//!   doubled with secular variation, plus the external terms) or the matrix-free one's
//!   `iterative_memory_bytes`; where the rows may be scalar or vector components (known once
//!   the data are read), which changes the iterative time estimate, the larger plan;
//! - analyze: `sht::plan::plan_memory_bytes` and `analysis_memory_bytes` on the smallest grid
//!   that resolves the degree (the input grid's own size is checked when it is read);
//! - synthesize: `field::synthesis::synthesis_memory_bytes` on the Gauss grid the step maps.
//!
//! Steps run one at a time except the syntheses of one level, so the peak is the largest step
//! (or the level's syntheses together) plus the models and point sets kept for later steps.

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::Path;

use super::config::{Config, Input, Step};
use crate::error::{Error, Result};
use crate::field::quantity::Quantity;
use crate::field::synthesis::{longitude_densified, synthesis_memory_bytes};
use crate::observe::fit::{plan_solver, Regularization, RowPass, SolverKind, SolverRequest};
use crate::observe::gridding::gridding_memory_bytes;
use crate::sht::plan::{analysis_memory_bytes, plan_memory_bytes};
use crate::sht::GaussGrid;

/// Bytes of one coefficient set (C, S and their sigmas) to `lmax`.
pub fn coefficient_bytes(lmax: usize) -> u64 {
    (crate::coeffs::packed_len(lmax) * 4 * 8) as u64
}

/// Bytes of a point set of `points` points in memory (latitude, longitude, value, sigma).
pub fn point_set_bytes(points: u64) -> u64 {
    points * 4 * 8
}

/// One step's estimate.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct StepMemory {
    pub step: String,
    /// What the figure counts, for the plan.
    pub what: String,
    pub bytes: u64,
}

/// Per-step estimates and the resulting peak.
#[derive(Debug, Clone, Default)]
pub struct MemoryEstimate {
    pub items: Vec<StepMemory>,
    /// Steps whose size is only known once their inputs are read (not counted).
    pub unknown: Vec<(String, String)>,
    pub peak_bytes: u64,
}

impl MemoryEstimate {
    pub fn describe(&self) -> String {
        let mut s = String::from("memory estimate (largest arrays per step):\n");
        for item in &self.items {
            let _ = writeln!(
                s,
                "  {:<18} {:>10}  {}",
                item.step,
                human_bytes(item.bytes),
                item.what
            );
        }
        for (step, why) in &self.unknown {
            let _ = writeln!(s, "  {step:<18} {:>10}  {why}", "?");
        }
        let _ = writeln!(s, "  peak about {}", human_bytes(self.peak_bytes));
        s
    }

    /// The estimate of step `name`, if it has one.
    pub fn bytes_of(&self, name: &str) -> Option<u64> {
        self.items.iter().find(|i| i.step == name).map(|i| i.bytes)
    }
}

/// "12.3 MiB"-style size.
pub fn human_bytes(bytes: u64) -> String {
    let b = bytes as f64;
    if b < 1024.0 {
        format!("{bytes} B")
    } else if b < 1024.0 * 1024.0 {
        format!("{:.1} KiB", b / 1024.0)
    } else if b < 1024.0 * 1024.0 * 1024.0 {
        format!("{:.1} MiB", b / 1024.0 / 1024.0)
    } else {
        format!("{:.2} GiB", b / 1024.0 / 1024.0 / 1024.0)
    }
}

/// An upper bound on the number of points in a point file, without parsing it: the number of
/// lines of a text file, or for a NetCDF file its size over 8 bytes (a point has at least a
/// 4-byte latitude and longitude).
pub fn point_count_bound(path: &Path) -> Result<u64> {
    let is_netcdf = path
        .extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("nc"));
    if is_netcdf {
        let meta = std::fs::metadata(path).map_err(|e| Error::io(path, e))?;
        return Ok(meta.len() / 8);
    }
    use std::io::Read as _;
    let mut file = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut buffer = vec![0u8; 1 << 16];
    let mut lines = 1u64;
    loop {
        let n = file.read(&mut buffer).map_err(|e| Error::io(path, e))?;
        if n == 0 {
            return Ok(lines);
        }
        lines += buffer[..n].iter().filter(|&&b| b == b'\n').count() as u64;
    }
}

/// Shape (nlat, nlon) of the Gauss grid for `lmax`.
fn gauss_shape(lmax: usize) -> (usize, usize) {
    (
        lmax + 1,
        crate::sht::grid::fft_friendly_length(2 * lmax + 1),
    )
}

/// Bytes of the window family of a region: a cap's per-order problems, or the dense problem of
/// a mask or polygon (its rows taken as a polygon's; a mask's are checked when it is read).
fn region_windows_bytes(region: &str, lw: usize) -> u64 {
    match region.parse::<crate::regional::RegionSpec>() {
        Ok(crate::regional::RegionSpec::Cap { .. }) | Err(_) => {
            crate::regional::cap::taper_set_bytes(lw)
        }
        Ok(_) => crate::regional::concentration::concentration_cost(lw, 4 * (lw + 1) + 200).0,
    }
}

/// The windows and the windowed products of a regional spectrum or comparison.
fn regional_bytes(
    region: &str,
    lw: usize,
    models: &[&String],
    model_lmax: &BTreeMap<String, usize>,
) -> (String, u64) {
    let windows = region_windows_bytes(region, lw);
    let degree = models
        .iter()
        .filter_map(|m| model_lmax.get(m.as_str()))
        .max();
    match degree {
        Some(&l) => (
            format!(
                "windows of degree {lw} in {region} and windowed products of degree {}",
                l + lw
            ),
            windows.max(crate::regional::multitaper::localised_memory_bytes(
                l,
                lw,
                models.len(),
            )),
        ),
        None => (
            format!("windows of degree {lw} in {region} (the models' degrees are known once read)"),
            windows,
        ),
    }
}

/// Estimates every step of `config`, given the model degrees known before the run and an upper
/// bound on the size of each point input (see [`point_count_bound`]).
pub fn estimate(
    config: &Config,
    model_lmax: &BTreeMap<String, usize>,
    point_counts: &BTreeMap<String, u64>,
) -> Result<MemoryEstimate> {
    let mut estimate = MemoryEstimate::default();
    let mut syntheses = 0u64;
    let mut largest = 0u64;
    for (name, step) in &config.steps {
        let (what, bytes) = match step {
            Step::Grid(s) => {
                let points = point_counts.get(&s.input).copied().unwrap_or(0);
                let (nlat, nlon) = gauss_shape(s.lmax);
                let bytes = gridding_memory_bytes(points as usize, s.lmax)
                    + analysis_memory_bytes(s.lmax, nlon, nlat.div_ceil(2));
                (
                    format!(
                        "gridding up to {points} points on a {nlat} x {nlon} Gauss grid, and its analysis"
                    ),
                    bytes,
                )
            }
            Step::Fit(s) => {
                let regularization = Regularization::parse(s.regularization_spec())?;
                let request = SolverRequest::parse(s.solver_spec())?;
                // rates double the internal unknowns; external terms add (Le+1)²
                let internal = (s.lmax + 1) * (s.lmax + 1);
                let unknowns = internal * if s.epoch.is_some() { 2 } else { 1 }
                    + s.external_lmax.map_or(0, |l| (l + 1) * (l + 1));
                let observations: u64 = s
                    .input_names()
                    .iter()
                    .map(|n| point_counts.get(*n).copied().unwrap_or(0))
                    .sum();
                // rows with rates or external terms are built whole; otherwise scalar rows
                // go through the lane kernels, and magnetic components (known only once the
                // data are read) are built whole: the larger of the two plans is estimated
                let passes = if s.epoch.is_some() || s.external_lmax.is_some() {
                    vec![RowPass::Full(unknowns)]
                } else {
                    vec![RowPass::Lanes(unknowns), RowPass::Full(unknowns)]
                };
                let mut plan: Option<crate::observe::fit::SolverPlan> = None;
                for rows in passes {
                    let p = plan_solver(
                        request,
                        observations as usize,
                        unknowns,
                        rows,
                        &regularization,
                        crate::memory::available_bytes(),
                        rayon::current_num_threads(),
                    )?;
                    if plan.as_ref().is_none_or(|q| p.bytes() > q.bytes()) {
                        plan = Some(p);
                    }
                }
                let plan = plan.expect("at least one row pass");
                (
                    match plan.kind {
                        SolverKind::Direct => format!(
                            "normal matrices of {unknowns} unknowns ({}; direct solver)",
                            regularization.describe()
                        ),
                        SolverKind::Iterative => format!(
                            "matrix-free solver for {unknowns} unknowns ({}; conjugate gradients)",
                            regularization.describe()
                        ),
                    },
                    plan.bytes(),
                )
            }
            Step::Analyze(s) => {
                let (nlat, nlon) = gauss_shape(s.lmax);
                (
                    format!(
                        "analysis to degree {} (at least; the input grid's size is checked when read)",
                        s.lmax
                    ),
                    plan_memory_bytes(s.lmax, nlat, nlon)
                        + analysis_memory_bytes(s.lmax, nlon, nlat.div_ceil(2)),
                )
            }
            Step::Synthesize(s) => {
                let Some(&model_l) = model_lmax.get(&s.model) else {
                    estimate.unknown.push((
                        name.clone(),
                        format!(
                            "maps of '{}', whose degree is known once it is read",
                            s.model
                        ),
                    ));
                    continue;
                };
                let quantities = s
                    .quantities
                    .iter()
                    .map(|q| q.parse::<Quantity>())
                    .collect::<Result<Vec<_>>>()?;
                let grid_l = s.grid_lmax.unwrap_or(model_l);
                let (grid, _) = longitude_densified(&GaussGrid::new(grid_l), model_l);
                let (nlat, nlon) = grid.shape();
                let bytes = synthesis_memory_bytes(model_l, &quantities, nlat, nlon);
                syntheses += bytes;
                (
                    format!(
                        "{} map(s) of degree {model_l} on a {nlat} x {nlon} grid",
                        quantities.len()
                    ),
                    bytes,
                )
            }
            Step::Tapers(s) => (
                format!("the windows of {} of degree {}", s.region, s.window_lmax),
                region_windows_bytes(&s.region, s.window_lmax),
            ),
            Step::RegionalSpectrum(s) => {
                regional_bytes(&s.region, s.window_lmax, &[&s.model], model_lmax)
            }
            Step::RegionalCompare(s) => {
                let models: Vec<&String> = s.models.iter().collect();
                regional_bytes(&s.region, s.window_lmax, &models, model_lmax)
            }
            Step::Spectrum(_) | Step::Compare(_) | Step::Filter(_) | Step::Evaluate(_) => continue,
        };
        largest = largest.max(bytes);
        estimate.items.push(StepMemory {
            step: name.clone(),
            what,
            bytes,
        });
    }
    let models: u64 = model_lmax.values().map(|&l| coefficient_bytes(l)).sum();
    let points: u64 = config
        .inputs
        .iter()
        .filter(|(_, i)| matches!(i, Input::Points(_)))
        .map(|(n, _)| point_set_bytes(point_counts.get(n).copied().unwrap_or(0)))
        .sum();
    estimate.peak_bytes = largest.max(syntheses) + models + points;
    Ok(estimate)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_follow_the_formulas() {
        // degree 10: 121 packed coefficients × 4 arrays × 8 bytes
        assert_eq!(coefficient_bytes(10), 66 * 4 * 8);
        assert_eq!(human_bytes(3 * 1024 * 1024), "3.0 MiB");
        assert_eq!(human_bytes(512), "512 B");
    }

    #[test]
    fn point_count_bound_counts_lines() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("p.csv");
        std::fs::write(&p, "lat,lon,value\n0,0,1\n1,1,2\n").unwrap();
        // header + 2 rows + the empty tail: an upper bound on the 2 rows
        assert_eq!(point_count_bound(&p).unwrap(), 4);
    }
}
