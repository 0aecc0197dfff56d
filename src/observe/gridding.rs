//! Gridding scattered observations onto the Gauss–Legendre grid of a band limit.
//!
//! Per grid node, either
//! - a Gaussian-kernel weighted mean of all observations within the search radius
//!   (`observe::averaging_kernel` states the kernel and its half-width convention), or
//! - inverse-distance weighting of the k nearest observations, w ∝ 1/ψ² (Shepard 1968,
//!   Proc. 23rd ACM National Conference, with power 2),
//!
//! with each observation's weight multiplied by 1/σ² when σ is known. Nodes also get `count`
//! (observations that entered the mean) and `nearest_km` (surface distance to the nearest
//! observation). Nodes with no observation in reach are gaps and are filled by the chosen
//! `GapPolicy` (`observe::gaps`).

use ndarray::Array2;
use rayon::prelude::*;

use crate::error::{Error, Result};
use crate::sht::{GaussGrid, Grid};

use super::averaging_kernel::GaussianKernel;
use super::gaps::{fill_gaps, GapFillReport, GapPolicy};
use super::points::PointSet;
use super::spatial::SphereIndex;
use crate::progress::{Progress, Silent};

/// Mean Earth radius R₁ = 6371.0 km (IUGG; Moritz 2000, J. Geodesy 74:128–133, rounded),
/// the default body radius.
pub const EARTH_MEAN_RADIUS_M: f64 = 6_371_000.0;

/// Smallest distance used by inverse-distance weights, metres, so an observation exactly at
/// a node dominates without an infinite weight.
pub const IDW_MIN_DISTANCE_M: f64 = 1.0;

/// Default search radius, km: twice the node spacing πR/(L+1), so the kernel's half-width is
/// one node spacing.
pub fn default_radius_km(lmax: usize, body_radius_m: f64) -> f64 {
    2.0 * std::f64::consts::PI * body_radius_m / 1000.0 / (lmax + 1) as f64
}

/// How each node's value is formed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum GriddingMethod {
    /// Gaussian-kernel weighted mean within `radius_km` (half-width radius/2).
    Kernel { radius_km: f64 },
    /// Inverse-distance weighting (power 2) of the `k` nearest observations.
    Nearest { k: usize },
}

impl GriddingMethod {
    pub fn describe(&self) -> String {
        match self {
            GriddingMethod::Kernel { radius_km } => format!(
                "Gaussian-kernel mean within {radius_km:.1} km (half-width {:.1} km, weight 1/2 there; ~1/16 at the edge)",
                radius_km / super::averaging_kernel::RADIUS_PER_HALF_WIDTH
            ),
            GriddingMethod::Nearest { k } => {
                format!("inverse-distance (power 2) mean of the {k} nearest observations")
            }
        }
    }
}

/// Options of [`grid_points`].
#[derive(Debug, Clone, PartialEq)]
pub struct GriddingOptions {
    pub method: GriddingMethod,
    pub gaps: GapPolicy,
    /// Radius of the sphere the points lie on, metres (turns km into angles).
    pub body_radius_m: f64,
}

impl Default for GriddingOptions {
    fn default() -> Self {
        GriddingOptions {
            method: GriddingMethod::Nearest { k: 8 },
            gaps: GapPolicy::Nearest,
            body_radius_m: EARTH_MEAN_RADIUS_M,
        }
    }
}

/// What gridding did.
#[derive(Debug, Clone, PartialEq)]
pub struct GriddingReport {
    pub lmax: usize,
    pub nodes: usize,
    pub points: usize,
    /// Nodes with no observation in reach (filled by the gap policy).
    pub gap_nodes: usize,
    pub method: String,
    pub gap_fill: GapFillReport,
    /// Largest distance from a node to its nearest observation, km.
    pub max_nearest_km: f64,
}

impl GriddingReport {
    pub fn summary(&self) -> String {
        format!(
            "gridded {} points onto {} nodes (L = {}): {}; {} gap nodes ({:.2}%), {}; farthest node from data {:.1} km",
            self.points,
            self.nodes,
            self.lmax,
            self.method,
            self.gap_nodes,
            100.0 * self.gap_nodes as f64 / self.nodes.max(1) as f64,
            self.gap_fill.describe(),
            self.max_nearest_km
        )
    }
}

/// A gridded field with its coverage layers, all (nlat × nlon), rows north to south.
#[derive(Debug, Clone)]
pub struct GriddedField {
    pub grid: Grid,
    pub value: Array2<f64>,
    /// Observations that entered each node's mean (0 at gap nodes).
    pub count: Array2<f64>,
    /// Surface distance from each node to its nearest observation, km.
    pub nearest_km: Array2<f64>,
    pub report: GriddingReport,
}

/// Bytes gridding needs beyond the points: three node layers, a gap mask and the tree.
/// From the grid's shape alone (no nodes are computed), in f64 so that no degree overflows.
pub fn gridding_memory_bytes(points: usize, lmax: usize) -> u64 {
    // counted without building the grid, saturating, so that any degree can be estimated
    let nodes = crate::memory::gauss_grid_nodes_bound(lmax);
    // value, count, nearest (f64) + mask + a synthesis buffer for iterative filling
    nodes
        .saturating_mul(8 * 4 + 1)
        .saturating_add((points as u64).saturating_mul(64))
}

/// Grids the points onto `GaussGrid::new(lmax)` (no progress output).
pub fn grid_points(
    points: &PointSet,
    lmax: usize,
    options: &GriddingOptions,
) -> Result<GriddedField> {
    grid_points_with_progress(points, lmax, options, &Silent)
}

/// As [`grid_points`], reporting progress per grid row.
pub fn grid_points_with_progress(
    points: &PointSet,
    lmax: usize,
    options: &GriddingOptions,
    progress: &dyn Progress,
) -> Result<GriddedField> {
    validate_options(points, lmax, options)?;
    crate::memory::check_fits(
        &format!(
            "gridding {} points onto the L = {lmax} Gauss grid",
            points.len()
        ),
        gridding_memory_bytes(points.len(), lmax),
    )?;
    let index = SphereIndex::new(&points.lat_deg, &points.lon_deg);
    let grid = GaussGrid::new(lmax);
    let (nlat, nlon) = grid.shape();
    let km_per_rad = options.body_radius_m / 1000.0;
    let weights: Vec<f64> = (0..points.len()).map(|i| points.weight(i)).collect();
    let cos_lon: Vec<(f64, f64)> = (0..nlon).map(|k| grid.longitude_rad(k).sin_cos()).collect();

    let mut value = vec![0.0; nlat * nlon];
    let mut count = vec![0.0; nlat * nlon];
    let mut nearest = vec![0.0; nlat * nlon];
    progress.stage("gridding rows", nlat as u64);
    value
        .par_chunks_mut(nlon)
        .zip(count.par_chunks_mut(nlon))
        .zip(nearest.par_chunks_mut(nlon))
        .enumerate()
        .for_each(|(j, ((v_row, c_row), n_row))| {
            let (st, ct) = grid.colatitude_rad[j].sin_cos();
            for k in 0..nlon {
                let (sl, cl) = cos_lon[k];
                let q = [st * cl, st * sl, ct];
                let node = grid_node(
                    &index,
                    &q,
                    &options.method,
                    options.body_radius_m,
                    points,
                    &weights,
                );
                v_row[k] = node.value;
                c_row[k] = node.count as f64;
                n_row[k] = node.nearest_rad * km_per_rad;
            }
            progress.advance(1);
        });
    let mut value = Array2::from_shape_vec((nlat, nlon), value).expect("shape");
    let count = Array2::from_shape_vec((nlat, nlon), count).expect("shape");
    let nearest_km = Array2::from_shape_vec((nlat, nlon), nearest).expect("shape");
    let gap_mask = value.mapv(|v| v.is_nan());
    let gap_nodes = gap_mask.iter().filter(|&&g| g).count();
    let gap_fill = fill_gaps(
        &mut value,
        &gap_mask,
        &grid,
        lmax,
        &options.gaps,
        &index,
        points,
        progress,
    )?;
    let max_nearest_km = nearest_km.iter().cloned().fold(0.0, f64::max);
    Ok(GriddedField {
        report: GriddingReport {
            lmax,
            nodes: nlat * nlon,
            points: points.len(),
            gap_nodes,
            method: options.method.describe(),
            gap_fill,
            max_nearest_km,
        },
        grid,
        value,
        count,
        nearest_km,
    })
}

fn validate_options(points: &PointSet, lmax: usize, options: &GriddingOptions) -> Result<()> {
    if points.is_empty() {
        return Err(Error::invalid("no observations to grid"));
    }
    if points.value.len() != points.len() {
        return Err(Error::invalid(
            "the points carry no values to grid (no value column)",
        ));
    }
    if lmax == 0 {
        return Err(Error::invalid("--lmax must be at least 1 for gridding"));
    }
    if !(options.body_radius_m.is_finite() && options.body_radius_m > 0.0) {
        return Err(Error::invalid(format!(
            "body radius {} m is not a positive number",
            options.body_radius_m
        )));
    }
    match options.method {
        GriddingMethod::Kernel { radius_km } => {
            if !(radius_km.is_finite() && radius_km > 0.0) {
                return Err(Error::invalid(format!(
                    "--radius-km {radius_km} must be a positive number of km"
                )));
            }
            let half_circumference_km = std::f64::consts::PI * options.body_radius_m / 1000.0;
            if radius_km > half_circumference_km {
                return Err(Error::invalid(format!(
                    "--radius-km {radius_km} exceeds half the body's circumference ({half_circumference_km:.0} km)"
                )));
            }
        }
        GriddingMethod::Nearest { k } => {
            if k == 0 {
                return Err(Error::invalid("--neighbours must be at least 1"));
            }
            if k > points.len() {
                return Err(Error::invalid(format!(
                    "--neighbours {k} exceeds the number of observations ({})",
                    points.len()
                )));
            }
        }
    }
    Ok(())
}

/// One node's result.
struct NodeValue {
    /// NaN at a gap.
    value: f64,
    count: usize,
    nearest_rad: f64,
}

fn grid_node(
    index: &SphereIndex,
    q: &[f64; 3],
    method: &GriddingMethod,
    body_radius_m: f64,
    points: &PointSet,
    weights: &[f64],
) -> NodeValue {
    match *method {
        GriddingMethod::Kernel { radius_km } => {
            let kernel = GaussianKernel::for_search_radius(radius_km, body_radius_m);
            let found = index.within(q, kernel.cutoff_rad);
            if found.is_empty() {
                return NodeValue {
                    value: f64::NAN,
                    count: 0,
                    nearest_rad: index.nearest(q).angle_rad,
                };
            }
            let (mut sw, mut swv, mut nearest) = (0.0, 0.0, f64::INFINITY);
            for n in &found {
                let w = kernel.weight_from_chord_squared(n.chord_squared) * weights[n.index];
                sw += w;
                swv += w * points.value[n.index];
                nearest = nearest.min(n.angle_rad);
            }
            NodeValue {
                value: swv / sw,
                count: found.len(),
                nearest_rad: nearest,
            }
        }
        GriddingMethod::Nearest { k } => {
            let found = index.nearest_k(q, k);
            let min_angle = IDW_MIN_DISTANCE_M / body_radius_m;
            let (mut sw, mut swv) = (0.0, 0.0);
            for n in &found {
                let d = n.angle_rad.max(min_angle);
                let w = weights[n.index] / (d * d);
                sw += w;
                swv += w * points.value[n.index];
            }
            NodeValue {
                value: swv / sw,
                count: found.len(),
                nearest_rad: found.first().map_or(f64::NAN, |n| n.angle_rad),
            }
        }
    }
}
