//! Latitude–longitude grid descriptions with their quadrature weights.
//!
//! Inside the engine, rows run in colatitude order (north to south) and columns in longitude
//! from `lon0_rad` eastwards with spacing 2π/nlon (docs/conventions.md §1).

use crate::error::{Error, Result};
use ndarray::ArrayView2;
use std::f64::consts::PI;

/// Whether every value of a field is finite, in any layout: row by row with
/// `coeffs::all_finite` (vector compares, no early exit inside a block of eight), so the
/// common case, a clean field, costs one pass at memory speed.
pub fn all_finite_field(field: ArrayView2<'_, f64>) -> bool {
    field.rows().into_iter().all(|row| match row.as_slice() {
        Some(values) => crate::coeffs::all_finite(values),
        None => row.iter().all(|v| v.is_finite()),
    })
}

/// How a grid's latitudes were laid out; decides which quadrature is exact on it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum GridKind {
    /// Gauss–Legendre latitudes: exact for band limit ≤ nlat − 1.
    Gauss,
    /// Equally spaced latitudes including both poles (node-registered).
    EquiangularNodes,
    /// Equally spaced latitudes at cell centres (cell-registered), no pole rows.
    EquiangularCells,
    /// Latitudes with caller-supplied weights.
    Custom,
}

/// A global grid: colatitudes, quadrature weights in the measure d(cos θ) (Σ w = 2) and an
/// equally spaced longitude circle.
#[derive(Debug, Clone, PartialEq)]
pub struct Grid {
    pub kind: GridKind,
    /// Colatitudes in radians, ascending (north to south).
    pub colatitude_rad: Vec<f64>,
    /// Quadrature weights, one per latitude row, Σ w = 2.
    pub weights: Vec<f64>,
    /// Number of longitudes.
    pub nlon: usize,
    /// Longitude of the first column, radians.
    pub lon0_rad: f64,
    /// Highest degree analysed exactly by this grid's quadrature.
    pub max_exact_degree: usize,
}

impl Grid {
    pub fn nlat(&self) -> usize {
        self.colatitude_rad.len()
    }

    pub fn shape(&self) -> (usize, usize) {
        (self.nlat(), self.nlon)
    }

    /// Longitude of column k, radians.
    pub fn longitude_rad(&self, k: usize) -> f64 {
        self.lon0_rad + 2.0 * PI * k as f64 / self.nlon as f64
    }

    pub fn longitudes_rad(&self) -> Vec<f64> {
        (0..self.nlon).map(|k| self.longitude_rad(k)).collect()
    }

    pub fn longitudes_deg(&self) -> Vec<f64> {
        (0..self.nlon)
            .map(|k| self.longitude_rad(k).to_degrees())
            .collect()
    }

    /// Latitudes of the rows in degrees (north to south, engine order).
    pub fn latitudes_deg(&self) -> Vec<f64> {
        self.colatitude_rad
            .iter()
            .map(|&t| 90.0 - t.to_degrees())
            .collect()
    }

    /// Checks that a field array has this grid's shape.
    pub fn check_shape(&self, rows: usize, cols: usize) -> Result<()> {
        if (rows, cols) != self.shape() {
            return Err(Error::ShapeMismatch(format!(
                "field is {rows} x {cols} (lat x lon) but the grid is {} x {}",
                self.nlat(),
                self.nlon
            )));
        }
        Ok(())
    }
}

/// The Gauss–Legendre grid for band limit L: nlat = L + 1, nlon = the smallest FFT-friendly
/// length ≥ 2L + 1 (factors 2, 3, 5 only).
pub struct GaussGrid;

impl GaussGrid {
    // `GaussGrid` only names the layout; what it builds is a plain `Grid`
    #[allow(clippy::new_ret_no_self)]
    pub fn new(lmax: usize) -> Grid {
        let nlat = lmax + 1;
        let (theta, w) = super::gauss_legendre::colatitudes_and_weights(nlat);
        Grid {
            kind: GridKind::Gauss,
            colatitude_rad: theta,
            weights: w,
            nlon: fft_friendly_length(2 * lmax + 1),
            lon0_rad: 0.0,
            max_exact_degree: lmax,
        }
    }
}

/// Smallest n ≥ `min` whose only prime factors are 2, 3 and 5.
///
/// Panics only if no such length fits in a `usize` (min beyond about 1.8e19); see
/// [`checked_fft_friendly_length`].
pub fn fft_friendly_length(min: usize) -> usize {
    checked_fft_friendly_length(min).expect("a 2-3-5-smooth length of this size fits a usize")
}

/// Smallest n ≥ `min` of the form 2^a 3^b 5^c, or `None` when it does not fit in a `usize`.
/// Enumerates the O(log³ min) candidates instead of stepping through the integers (the gaps
/// between such numbers grow with their size).
pub fn checked_fft_friendly_length(min: usize) -> Option<usize> {
    let target = min.max(1) as u128;
    let mut best = u128::MAX;
    let mut p5: u128 = 1;
    while p5 < 2 * target {
        let mut p35 = p5;
        while p35 < 2 * target {
            let mut n = p35;
            while n < target {
                n *= 2;
            }
            best = best.min(n);
            p35 *= 3;
        }
        p5 *= 5;
    }
    usize::try_from(best).ok()
}
