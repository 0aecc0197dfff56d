//! A reusable transform plan for one (lmax, grid) pair.
//!
//! Analysis: C_lm − i S_lm = (1/4π) Σ_j w_j P̄_lm(cos θ_j) G_m(θ_j), with
//! G_m = (2π/nlon) Σ_k f_jk e^{−imλ_k} (CONVENTIONS.md §4). Synthesis is its transpose.
//! Coefficients are `geodesy` without phase inside; other conventions are converted at the edge.

use std::sync::Arc;

use ndarray::Array2;
use realfft::num_complex::Complex64;
use realfft::{ComplexToReal, RealFftPlanner, RealToComplex};

use crate::coeffs::{Coefficients, Normalization};
use crate::error::{Error, Result};

use super::grid::Grid;
use super::legendre;

/// Transform plan: grid, degree and FFT plans. `Send + Sync`; build once, reuse for every
/// field of this shape.
pub struct TransformPlan {
    lmax: usize,
    grid: Grid,
    forward: Arc<dyn RealToComplex<f64>>,
    inverse: Arc<dyn ComplexToReal<f64>>,
}

impl TransformPlan {
    /// Builds a plan for band limit `lmax` on `grid`. Fails if the grid cannot resolve `lmax`
    /// (nlon < 2·lmax + 1).
    pub fn new(lmax: usize, grid: &Grid) -> Result<Self> {
        if grid.nlon < 2 * lmax + 1 {
            return Err(Error::invalid(format!(
                "a grid with {} longitudes resolves degree {} at most, not {lmax}",
                grid.nlon,
                (grid.nlon.saturating_sub(1)) / 2
            )));
        }
        let mut planner = RealFftPlanner::<f64>::new();
        Ok(TransformPlan {
            lmax,
            grid: grid.clone(),
            forward: planner.plan_fft_forward(grid.nlon),
            inverse: planner.plan_fft_inverse(grid.nlon),
        })
    }

    pub fn lmax(&self) -> usize {
        self.lmax
    }

    pub fn grid(&self) -> &Grid {
        &self.grid
    }

    /// Analyses a field (nlat × nlon, rows north to south) into `geodesy` coefficients.
    pub fn analyse(&self, field: &Array2<f64>) -> Result<Coefficients> {
        let (nlat, nlon) = field.dim();
        self.grid.check_shape(nlat, nlon)?;
        if self.lmax > self.grid.max_exact_degree {
            return Err(Error::invalid(format!(
                "this grid's quadrature is exact to degree {} only, not {}",
                self.grid.max_exact_degree, self.lmax
            )));
        }
        let l = self.lmax;
        let mut out = Coefficients::zeros(l, Normalization::Geodesy);
        let mut spectrum = self.forward.make_output_vec();
        let mut row = self.forward.make_input_vec();
        let mut col = vec![0.0; l + 1];
        let scale = 2.0 * std::f64::consts::PI / nlon as f64 / (4.0 * std::f64::consts::PI);
        for j in 0..nlat {
            row.copy_from_slice(field.row(j).as_slice().unwrap_or(&field.row(j).to_vec()));
            self.forward
                .process(&mut row, &mut spectrum)
                .map_err(|e| Error::invalid(format!("FFT failed: {e}")))?;
            let theta = self.grid.colatitude_rad[j];
            let (t, u) = (theta.cos(), theta.sin());
            let w = self.grid.weights[j] * scale;
            for m in 0..=l {
                let g = spectrum[m] * Complex64::from_polar(1.0, -(m as f64) * self.grid.lon0_rad);
                legendre::column(m, l, t, u, &mut col);
                for deg in m..=l {
                    let p = col[deg - m] * w;
                    let i = crate::coeffs::packed_index(deg, m);
                    out.c_packed_mut()[i] += p * g.re;
                    if m > 0 {
                        out.s_packed_mut()[i] -= p * g.im;
                    }
                }
            }
        }
        Ok(out)
    }

    /// Synthesises `coeffs` (any normalisation; truncated or zero-padded to the plan's lmax)
    /// on the plan's grid.
    pub fn synthesise(&self, coeffs: &Coefficients) -> Result<Array2<f64>> {
        self.synthesise_with(coeffs, false)
    }

    /// ∂f/∂θ and (1/sin θ) ∂f/∂λ on the plan's grid.
    pub fn synthesise_gradient(&self, coeffs: &Coefficients) -> Result<(Array2<f64>, Array2<f64>)> {
        let dtheta = self.synthesise_with(coeffs, true)?;
        let dlambda = self.synthesise_dlambda(coeffs)?;
        Ok((dtheta, dlambda))
    }

    fn prepared(&self, coeffs: &Coefficients) -> Result<Coefficients> {
        coeffs.check_finite()?;
        Ok(coeffs.to_geodesy()?.resized(self.lmax))
    }

    fn synthesise_with(&self, coeffs: &Coefficients, d_theta: bool) -> Result<Array2<f64>> {
        let g = self.prepared(coeffs)?;
        let kind = if d_theta { RingKind::DTheta } else { RingKind::Value };
        self.synthesise_rings(&g, kind)
    }

    fn synthesise_dlambda(&self, coeffs: &Coefficients) -> Result<Array2<f64>> {
        let g = self.prepared(coeffs)?;
        self.synthesise_rings(&g, RingKind::DLambdaOverSin)
    }

    /// Reference ring-by-ring synthesis: per ring, Fourier coefficients a_m − i b_m from the
    /// Legendre sums, then one inverse real FFT.
    fn synthesise_rings(&self, g: &Coefficients, kind: RingKind) -> Result<Array2<f64>> {
        let (nlat, nlon) = self.grid.shape();
        let l = self.lmax;
        let mut out = Array2::zeros((nlat, nlon));
        let mut spectrum = self.inverse.make_input_vec();
        let mut row = self.inverse.make_output_vec();
        let mut col = vec![0.0; l + 1];
        let mut dcol = vec![0.0; l + 1];
        for j in 0..nlat {
            let theta = self.grid.colatitude_rad[j];
            let (t, u) = (theta.cos(), theta.sin());
            spectrum.iter_mut().for_each(|z| *z = Complex64::new(0.0, 0.0));
            for m in 0..=l {
                legendre::column(m, l, t, u, &mut col);
                let p: &[f64] = if kind == RingKind::DTheta {
                    super::points::derivative_column(m, l, t, u, &col, &mut dcol);
                    &dcol
                } else {
                    &col
                };
                let (mut a, mut b) = (0.0, 0.0);
                for deg in m..=l {
                    a += g.c(deg, m) * p[deg - m];
                    b += g.s(deg, m) * p[deg - m];
                }
                if kind == RingKind::DLambdaOverSin {
                    // ∂/∂λ of a cos mλ + b sin mλ = m b cos mλ − m a sin mλ
                    let inv_u = if u > 0.0 { 1.0 / u } else { 0.0 };
                    (a, b) = (m as f64 * b * inv_u, -(m as f64) * a * inv_u);
                }
                let half = if m == 0 { 1.0 } else { 0.5 };
                spectrum[m] = Complex64::new(a * half, -b * half)
                    * Complex64::from_polar(1.0, m as f64 * self.grid.lon0_rad);
            }
            spectrum[0].im = 0.0;
            if let Some(last) = spectrum.last_mut() {
                if nlon % 2 == 0 {
                    last.im = 0.0;
                }
            }
            self.inverse
                .process(&mut spectrum, &mut row)
                .map_err(|e| Error::invalid(format!("FFT failed: {e}")))?;
            out.row_mut(j).assign(&ndarray::ArrayView1::from(&row[..]));
        }
        Ok(out)
    }
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum RingKind {
    Value,
    DTheta,
    DLambdaOverSin,
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sht::GaussGrid;

    #[test]
    fn reference_round_trip_small() {
        // common practice: Gauss–Legendre analysis inverts synthesis for band-limited fields
        let lmax = 20;
        let grid = GaussGrid::new(lmax);
        let plan = TransformPlan::new(lmax, &grid).unwrap();
        let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
        for (i, (l, m)) in (0..=lmax).flat_map(|l| (0..=l).map(move |m| (l, m))).enumerate() {
            c.set(l, m, ((i * 7919) % 13) as f64 - 6.0, ((i * 104729) % 11) as f64 - 5.0);
        }
        let f = plan.synthesise(&c).unwrap();
        let back = plan.analyse(&f).unwrap();
        for (a, b) in c.c_packed().iter().zip(back.c_packed()) {
            assert!((a - b).abs() < 1e-12, "{a} {b}");
        }
        for (a, b) in c.s_packed().iter().zip(back.s_packed()) {
            assert!((a - b).abs() < 1e-12, "{a} {b}");
        }
    }
}
