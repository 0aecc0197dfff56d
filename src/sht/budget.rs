//! What a transform job needs, estimated from its shapes alone, before any node, table or grid
//! is built: a job too large for this machine is refused at once with the estimate and the
//! limit, instead of failing part-way (or aborting in an allocation).
//!
//! All arithmetic is in f64, so any degree or grid a user can type, up to 2⁶⁴ − 1, gives a
//! finite estimate and no overflow; the byte count handed to [`memory::check_fits`] saturates
//! at u64::MAX.

use crate::error::{Error, Result};
use crate::memory;

use super::grid::checked_fft_friendly_length;

/// (nlat, nlon) of `GaussGrid::new(lmax)`, without computing its nodes: L + 1 rows and the
/// smallest 2-3-5-smooth length ≥ 2L + 1 (2L + 1 itself where that does not fit a `usize`).
pub fn gauss_grid_shape(lmax: usize) -> (f64, f64) {
    let nlat = lmax as f64 + 1.0;
    let nlon = lmax
        .checked_mul(2)
        .and_then(|n| n.checked_add(1))
        .and_then(checked_fft_friendly_length)
        .map_or(2.0 * lmax as f64 + 1.0, |n| n as f64);
    (nlat, nlon)
}

/// Bytes of `sets` coefficient sets to degree `lmax` (C and S in doubles, (L+1)(L+2)/2 each).
pub fn coefficient_set_bytes(lmax: usize, sets: f64) -> f64 {
    let l1 = lmax as f64 + 1.0;
    sets * l1 * (l1 + 1.0) / 2.0 * 16.0
}

/// Bytes of `grids` fields of nlat × nlon doubles.
pub fn grid_bytes(nlat: f64, nlon: f64, grids: f64) -> f64 {
    grids * nlat * nlon * 8.0
}

/// Bytes of a plan's own tables besides its grids: colatitudes and weights, the ring lanes,
/// the per-order factors, the column-start table (at most one 24-byte event per order and
/// ring, and never more than one field of the grid or 64 MiB: `kernel::column_starts`) and,
/// per thread, the recursion scratch and one ring's FFT buffers.
pub fn plan_table_bytes(lmax: usize, nlat: f64, nlon: f64) -> f64 {
    let l2 = lmax as f64 + 2.0;
    let threads = rayon::current_num_threads() as f64;
    let column_starts = ((lmax as f64 + 1.0) * nlat * 25.0)
        .min(grid_bytes(nlat, nlon, 1.0).max(64.0 * 1024.0 * 1024.0));
    nlat * 8.0 * 8.0
        + l2 * 3.0 * 16.0
        + column_starts
        + threads * (l2 * 64.0 + 4096.0 + nlon * 48.0)
}

/// Bound on the bytes a synthesis into `grids` grids of `nlat` rings stages its Fourier entries
/// in (`kernel::fourier_columns`: 32 MiB per group of orders, but never fewer than 16 orders).
pub fn synthesis_staging_bytes(grids: f64, nlat: f64) -> f64 {
    (32.0 * 1024.0 * 1024.0f64).max(16.0 * grids * nlat * 16.0)
}

/// Refuses, before anything is allocated, a job holding `grids` nlat × nlon fields and
/// `coefficient_sets` coefficient sets to degree `lmax` (plus the plan's tables) when it does
/// not fit in the available memory. `what` names the job in the message.
pub fn check_transform_job(
    what: &str,
    lmax: usize,
    (nlat, nlon): (f64, f64),
    grids: f64,
    coefficient_sets: f64,
) -> Result<()> {
    let bytes = grid_bytes(nlat, nlon, grids)
        + coefficient_set_bytes(lmax, coefficient_sets)
        + plan_table_bytes(lmax, nlat, nlon);
    memory::check_fits(
        &format!("{what} (degree {lmax}, {nlat} x {nlon} grid)"),
        bytes as u64,
    )
}

/// `n` as a `usize` count, or an error naming `what` when it is not one (beyond 2⁶⁴).
pub fn as_count(n: f64, what: &str) -> Result<usize> {
    if n.is_finite() && n >= 0.0 && n < usize::MAX as f64 {
        Ok(n as usize)
    } else {
        Err(Error::invalid(format!("{what}: {n} is not a usable count")))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sht::GaussGrid;

    #[test]
    fn shape_without_nodes_matches_the_built_grid() {
        // common practice: L + 1 Gauss rows; the longitudes are GaussGrid's own choice
        for lmax in [0usize, 1, 7, 100, 511, 1023, 10_800] {
            let g = GaussGrid::new(lmax);
            assert_eq!(
                gauss_grid_shape(lmax),
                (g.nlat() as f64, g.nlon as f64),
                "L = {lmax}"
            );
        }
        // the largest degrees give finite estimates, not overflow
        let (nlat, nlon) = gauss_grid_shape(usize::MAX);
        assert!(nlat.is_finite() && nlon >= nlat);
        assert!(coefficient_set_bytes(usize::MAX, 1.0).is_finite());
    }

    #[test]
    fn huge_jobs_are_refused_with_their_size() {
        let err = check_transform_job("a test", 2_000_000, gauss_grid_shape(2_000_000), 1.0, 2.0)
            .unwrap_err()
            .to_string();
        assert!(err.contains("a test") && err.contains("MiB"), "{err}");
        let err = check_transform_job("a test", usize::MAX, gauss_grid_shape(usize::MAX), 1.0, 1.0)
            .unwrap_err();
        assert!(matches!(err, Error::InsufficientMemory { .. }), "{err}");
    }
}
