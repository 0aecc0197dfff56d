//! A region in memory, ready for the concentration problem: a cap (separable by order,
//! [`super::cap`]), a spherical polygon ([`super::polygon`]) or a mask on a global grid. The
//! last two are described on circles of latitude ([`LatitudeRows`]) and solved as one dense
//! problem ([`super::concentration`]). Files are read by `io::region`, not here.

use ndarray::Array2;

use super::concentration::{check_concentration_cost, region_tapers, LatitudeRows};
use super::multitaper::TaperChoice;
use super::polygon::SphericalPolygon;
use super::tapers::{cap_taper_set_with_progress, TaperSet};
use crate::error::{Error, Result};
use crate::progress::Progress;
use crate::sht::gauss_legendre::nodes_and_weights;
use crate::sht::Grid;

/// A region of the sphere marked on a global grid: `inside[(row, column)]` in engine order
/// (rows north to south, columns eastwards from `grid.lon0_rad`). Each marked cell covers its
/// longitude cell of width 2π/nlon about its node on its row.
#[derive(Debug, Clone, PartialEq)]
pub struct MaskRegion {
    pub grid: Grid,
    pub inside: Array2<bool>,
    /// Name for messages, e.g. `mask:basin.nc`.
    pub source: String,
}

impl MaskRegion {
    /// Checks the shape and that at least one cell is inside.
    pub fn new(grid: Grid, inside: Array2<bool>, source: &str) -> Result<Self> {
        grid.check_shape(inside.nrows(), inside.ncols())?;
        if !inside.iter().any(|&v| v) {
            return Err(Error::invalid(format!(
                "{source}: no cell of the mask is inside the region (every value is 0)"
            )));
        }
        Ok(MaskRegion {
            grid,
            inside,
            source: source.to_string(),
        })
    }

    /// The rows of the mask's grid with its quadrature weights, and the marked cells merged
    /// into longitude intervals.
    pub fn latitude_rows(&self) -> LatitudeRows {
        let g = &self.grid;
        let step = 2.0 * std::f64::consts::PI / g.nlon as f64;
        let mut rows = LatitudeRows::default();
        for (r, theta) in g.colatitude_rad.iter().enumerate() {
            let mut iv: Vec<(f64, f64)> = Vec::new();
            for k in 0..g.nlon {
                if !self.inside[(r, k)] {
                    continue;
                }
                let start = g.longitude_rad(k) - 0.5 * step;
                match iv.last_mut() {
                    Some(last) if (last.1 - start).abs() < 1e-12 => last.1 = start + step,
                    _ => iv.push((start, start + step)),
                }
            }
            if !iv.is_empty() {
                rows.z.push(theta.cos());
                rows.weight.push(g.weights[r]);
                rows.intervals.push(iv);
            }
        }
        rows
    }
}

/// Most stretches a polygon's latitude rule is split into; a ring with more kinks has nearby
/// ones merged (its rule then converges algebraically at the merged kinks).
pub const MAX_STRETCHES: usize = 4000;

/// Rows for a polygon: a Gauss–Legendre rule on each stretch of z between the latitudes where
/// the region's width has a kink (vertices, and the extreme latitudes of edges, where the width
/// has a square-root branch), in the variable t of z = lo + (hi − lo)(1 − cos πt)/2, which
/// turns a square-root end into a smooth one. About `4 (L_W + 1) + 200` nodes are shared over
/// the stretches the region touches by length, at least 6 per stretch.
pub fn polygon_rows(polygon: &SphericalPolygon, lmax_window: usize) -> Result<LatitudeRows> {
    let budget = 4 * (lmax_window + 1) + 200;
    let breaks = polygon.latitude_breaks();
    let spacing = if breaks.len() > MAX_STRETCHES {
        2.0 / MAX_STRETCHES as f64
    } else {
        1e-12
    };
    let mut kept: Vec<f64> = Vec::with_capacity(breaks.len());
    for z in breaks {
        match kept.last() {
            Some(&last) if z - last < spacing && z < 1.0 => {}
            _ => kept.push(z),
        }
    }
    if *kept.last().expect("±1 are breaks") < 1.0 {
        kept.push(1.0);
    }
    // stretches the region touches (a stretch without kinks is either crossed by the boundary
    // on every circle or on none, so three probes suffice even after merging)
    let mut touched = Vec::new();
    for pair in kept.windows(2) {
        let (lo, hi) = (pair[0], pair[1]);
        let mut any = false;
        for f in [0.02, 0.5, 0.98] {
            any |= !polygon.intervals_at(lo + f * (hi - lo))?.is_empty();
        }
        if any {
            touched.push((lo, hi));
        }
    }
    let span: f64 = touched.iter().map(|(lo, hi)| hi - lo).sum();
    let mut rows = LatitudeRows::default();
    let pi = std::f64::consts::PI;
    for (lo, hi) in touched {
        let n = ((budget as f64 * (hi - lo) / span).ceil() as usize).max(6);
        let (x, w) = nodes_and_weights(n);
        for (xi, wi) in x.iter().zip(&w) {
            let t = 0.5 * (xi + 1.0);
            let z = lo + 0.5 * (hi - lo) * (1.0 - (pi * t).cos());
            let dz_dt = 0.5 * (hi - lo) * pi * (pi * t).sin();
            let iv = polygon.intervals_at(z)?;
            if !iv.is_empty() {
                rows.z.push(z);
                rows.weight.push(0.5 * wi * dz_dt);
                rows.intervals.push(iv);
            }
        }
    }
    Ok(rows)
}

/// A region for the concentration problem.
#[derive(Debug, Clone, PartialEq)]
pub enum Region {
    /// A spherical cap of radius `radius_deg` about (`lat_deg`, `lon_deg`).
    Cap {
        lat_deg: f64,
        lon_deg: f64,
        radius_deg: f64,
    },
    Polygon(SphericalPolygon),
    Mask(MaskRegion),
}

impl Region {
    /// The windows of bandwidth `lmax_window` for this region (those `keep` selects, or all),
    /// sorted by concentration. `name` describes the region in the set (e.g.
    /// `polygon:ring.csv`).
    pub fn taper_set(
        &self,
        name: &str,
        lmax_window: usize,
        keep: Option<TaperChoice>,
        progress: &dyn Progress,
    ) -> Result<TaperSet> {
        let rows = match self {
            Region::Cap {
                lat_deg,
                lon_deg,
                radius_deg,
            } => {
                return cap_taper_set_with_progress(
                    lmax_window,
                    *radius_deg,
                    (*lat_deg, *lon_deg),
                    keep,
                    progress,
                )
            }
            Region::Polygon(p) => {
                // refuse before the rows are built; the rows' own count is checked again below
                check_concentration_cost(lmax_window, 4 * (lmax_window + 1) + 200, name)?;
                polygon_rows(p, lmax_window)?
            }
            Region::Mask(m) => {
                let need = 2 * lmax_window;
                if m.grid.max_exact_degree < need {
                    return Err(Error::invalid(format!(
                        "{}: the mask's {} x {} grid integrates products of degree {} exactly, but windows of degree {lmax_window} need degree {need} (2·LW); use a finer mask grid or a lower window degree",
                        m.source,
                        m.grid.nlat(),
                        m.grid.nlon,
                        m.grid.max_exact_degree
                    )));
                }
                check_concentration_cost(lmax_window, m.grid.nlat(), name)?;
                m.latitude_rows()
            }
        };
        let (tapers, shannon_number) = region_tapers(&rows, lmax_window, name, progress)?;
        let total_windows = tapers.len();
        let mut set = TaperSet {
            lmax_window,
            tapers,
            shannon_number,
            centre_deg: rows.centre_deg(),
            region: name.to_string(),
            total_windows,
        };
        if let Some(choice) = keep {
            let k = choice.count(&set)?;
            set.tapers.truncate(k);
        }
        Ok(set)
    }
}
