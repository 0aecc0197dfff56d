//! Equiangular latitude–longitude grids and the exact quadrature of their layout.
//!
//! Two layouts (Driscoll & Healy 1994, "Computing Fourier transforms and convolutions on the
//! 2-sphere", Adv. Appl. Math. 15:202–250, discuss sampling theorems on such grids):
//! - node-registered with both poles, θ_j = jπ/(n−1), j = 0..n−1: Clenshaw–Curtis weights
//!   (Clenshaw & Curtis 1960, Numer. Math. 2:197–205; closed form as in Waldvogel 2006, BIT
//!   46:195–202), with N = n − 1, c_0 = c_N = 1, c_j = 2 otherwise, b_k = 1 for 2k = N, else 2:
//!   w_j = (c_j / N) · [1 − Σ_{k=1}^{⌊N/2⌋} b_k cos(2kθ_j) / (4k² − 1)];
//! - cell-centred, θ_j = (j + ½)π/n: Fejér's first rule (Fejér 1933; Waldvogel 2006):
//!   w_j = (2 / n) · [1 − 2 Σ_{k=1}^{⌊n/2⌋} cos(2kθ_j) / (4k² − 1)].
//!
//! Weights are for the measure d(cos θ) on [−1, 1] (Σ w = 2). With n latitudes either rule
//! integrates every polynomial in cos θ of degree ≤ n − 1 exactly. Analysis integrates products
//! of two band-limited functions (degree ≤ 2L in cos θ), so it is exact for
//! L ≤ ⌊(n − 1)/2⌋, provided also nlon ≥ 2L + 1; `max_exact_degree` is the smaller bound.

use std::f64::consts::PI;

use super::grid::{Grid, GridKind};
use crate::error::{Error, Result};

/// Where the latitudes of an equiangular grid sit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EquiangularLayout {
    /// Node-registered, both poles included: n rows spaced π/(n − 1).
    Nodes,
    /// Cell-centred: n rows at the centres of cells of height π/n; no pole rows.
    Cells,
}

/// Colatitudes (north to south, radians) of an equiangular layout with `nlat` rows.
pub fn colatitudes(nlat: usize, layout: EquiangularLayout) -> Vec<f64> {
    match layout {
        EquiangularLayout::Nodes => {
            let n1 = (nlat - 1) as f64;
            (0..nlat)
                .map(|j| {
                    if j + 1 == nlat {
                        PI
                    } else {
                        PI * j as f64 / n1
                    }
                })
                .collect()
        }
        EquiangularLayout::Cells => (0..nlat)
            .map(|j| PI * (j as f64 + 0.5) / nlat as f64)
            .collect(),
    }
}

/// Clenshaw–Curtis weights for the `n` node-registered colatitudes (n ≥ 2).
pub fn clenshaw_curtis_weights(n: usize) -> Vec<f64> {
    assert!(n >= 2, "Clenshaw–Curtis needs at least the two pole nodes");
    let big_n = n - 1;
    let theta = colatitudes(n, EquiangularLayout::Nodes);
    let half = big_n / 2;
    let mut w: Vec<f64> = theta
        .iter()
        .enumerate()
        .map(|(j, &t)| {
            let c = if j == 0 || j == big_n { 1.0 } else { 2.0 };
            let mut sum = 0.0;
            for k in 1..=half {
                let b = if 2 * k == big_n { 1.0 } else { 2.0 };
                let kk = k as f64;
                sum += b * (2.0 * kk * t).cos() / (4.0 * kk * kk - 1.0);
            }
            c / big_n as f64 * (1.0 - sum)
        })
        .collect();
    symmetrise(&mut w);
    w
}

/// Fejér first-rule weights for the `n` cell-centred colatitudes (n ≥ 1).
pub fn fejer_weights(n: usize) -> Vec<f64> {
    assert!(n >= 1, "Fejér's rule needs at least one node");
    let theta = colatitudes(n, EquiangularLayout::Cells);
    let mut w: Vec<f64> = theta
        .iter()
        .map(|&t| {
            let mut sum = 0.0;
            for k in 1..=n / 2 {
                let kk = k as f64;
                sum += (2.0 * kk * t).cos() / (4.0 * kk * kk - 1.0);
            }
            2.0 / n as f64 * (1.0 - 2.0 * sum)
        })
        .collect();
    symmetrise(&mut w);
    w
}

/// Both rules are symmetric about the equator; averaging mirrored pairs removes the rounding
/// asymmetry of cos(2kθ) at θ and π − θ.
fn symmetrise(w: &mut [f64]) {
    let n = w.len();
    for j in 0..n / 2 {
        let m = 0.5 * (w[j] + w[n - 1 - j]);
        w[j] = m;
        w[n - 1 - j] = m;
    }
}

/// Highest degree the layout analyses exactly: ⌊(nlat − 1)/2⌋ from the latitude rule, and
/// ⌊(nlon − 1)/2⌋ from the longitude sampling.
pub fn max_exact_degree(nlat: usize, nlon: usize) -> usize {
    ((nlat.saturating_sub(1)) / 2).min(nlon.saturating_sub(1) / 2)
}

/// An equiangular grid of `nlat` × `nlon` cells. Longitudes start at 0 for `Nodes` and at
/// half a step (π/nlon) for `Cells`, the usual registration of each layout.
pub fn equiangular_grid(nlat: usize, nlon: usize, layout: EquiangularLayout) -> Grid {
    let (kind, weights, lon0_rad) = match layout {
        EquiangularLayout::Nodes => (
            GridKind::EquiangularNodes,
            clenshaw_curtis_weights(nlat),
            0.0,
        ),
        EquiangularLayout::Cells => (
            GridKind::EquiangularCells,
            fejer_weights(nlat),
            PI / nlon as f64,
        ),
    };
    Grid {
        kind,
        colatitude_rad: colatitudes(nlat, layout),
        weights,
        nlon,
        lon0_rad,
        max_exact_degree: max_exact_degree(nlat, nlon),
    }
}

/// The node-registered grid with spacing `step_deg` in latitude and longitude, both poles
/// included (`regular:1` is 181 × 360). 180/step must be a whole number.
pub fn regular_grid_by_step(step_deg: f64) -> Result<Grid> {
    let (nlat, nlon) = regular_grid_shape_by_step(step_deg)?;
    crate::memory::check_fits(
        &format!("the regular grid of {step_deg} degrees ({nlat} x {nlon})"),
        (nlat * nlon * 16.0) as u64,
    )?;
    let (nlat, nlon) = (
        super::budget::as_count(nlat, "grid rows")?,
        super::budget::as_count(nlon, "grid columns")?,
    );
    Ok(equiangular_grid(nlat, nlon, EquiangularLayout::Nodes))
}

/// (rows, columns) of [`regular_grid_by_step`] without building it (in f64: a tiny step gives
/// a huge but finite shape, for the memory check to refuse).
pub fn regular_grid_shape_by_step(step_deg: f64) -> Result<(f64, f64)> {
    if !(step_deg.is_finite() && step_deg > 0.0 && step_deg <= 90.0) {
        return Err(Error::invalid(format!(
            "grid step {step_deg} degrees: expected a step in (0, 90]"
        )));
    }
    let rows = 180.0 / step_deg;
    let r = rows.round();
    if (rows - r).abs() > 1e-9 * rows.max(1.0) {
        return Err(Error::invalid(format!(
            "grid step {step_deg} degrees does not divide 180 degrees into whole rows; \
             choose a step such as 1, 0.5, 0.25 or 2"
        )));
    }
    Ok((r + 1.0, 2.0 * r))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// ∫_{-1}^{1} x^k dx = 2/(k+1) for even k, 0 for odd k (closed form).
    fn moment(k: usize) -> f64 {
        if k % 2 == 1 {
            0.0
        } else {
            2.0 / (k as f64 + 1.0)
        }
    }

    fn quadrature(theta: &[f64], w: &[f64], k: usize) -> f64 {
        theta
            .iter()
            .zip(w)
            .map(|(t, w)| w * t.cos().powi(k as i32))
            .sum()
    }

    #[test]
    fn simpson_is_clenshaw_curtis_with_three_nodes() {
        // common practice: 3-point Clenshaw–Curtis on [-1, 1] is Simpson's rule (1/3, 4/3, 1/3)
        let w = clenshaw_curtis_weights(3);
        for (a, b) in w.iter().zip([1.0 / 3.0, 4.0 / 3.0, 1.0 / 3.0]) {
            assert!((a - b).abs() < 1e-15, "{a} vs {b}");
        }
    }

    #[test]
    fn both_rules_integrate_monomials_to_degree_n_minus_1() {
        // closed-form moments; tolerance 1e-13: sums of n terms of size ≤ 1
        for n in [2usize, 3, 4, 7, 10, 17, 32, 61] {
            for (layout, w) in [
                (EquiangularLayout::Nodes, clenshaw_curtis_weights(n)),
                (EquiangularLayout::Cells, fejer_weights(n)),
            ] {
                let theta = colatitudes(n, layout);
                assert!((w.iter().sum::<f64>() - 2.0).abs() < 1e-13);
                for k in 0..n {
                    let q = quadrature(&theta, &w, k);
                    assert!(
                        (q - moment(k)).abs() < 1e-13,
                        "{layout:?} n={n} k={k}: {q} vs {}",
                        moment(k)
                    );
                }
            }
        }
    }

    #[test]
    fn rules_are_not_exact_beyond_their_degree() {
        // the checks above would pass for a rule that is exact everywhere only if the code
        // were wrong: show the error at degree n + 1 (even) is visible
        let n = 6;
        let w = fejer_weights(n);
        let theta = colatitudes(n, EquiangularLayout::Cells);
        let k = n + (n % 2); // next even degree beyond exactness
        let q = quadrature(&theta, &w, k + 2);
        assert!((q - moment(k + 2)).abs() > 1e-6);
    }

    #[test]
    fn regular_grid_by_step_shapes() {
        let g = regular_grid_by_step(1.0).unwrap();
        assert_eq!(g.shape(), (181, 360));
        assert_eq!(g.kind, GridKind::EquiangularNodes);
        assert_eq!(g.colatitude_rad[0], 0.0);
        assert_eq!(g.colatitude_rad[180], PI);
        assert_eq!(g.max_exact_degree, 90);
        assert_eq!(regular_grid_by_step(0.25).unwrap().shape(), (721, 1440));
        let err = regular_grid_by_step(0.7).unwrap_err().to_string();
        assert!(err.contains("0.7"), "{err}");
        assert!(regular_grid_by_step(-1.0).is_err());
    }
}
