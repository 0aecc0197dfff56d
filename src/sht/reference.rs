//! Scalar reference transforms: ring by ring, order by order, degree by degree, with the
//! stable columns of `legendre::column` (at the colatitude: the low part of cos θ included,
//! every step rounded as by fused multiply–add, so at least as accurate as any kernel path)
//! and the non-singular derivative. Deliberately simple and obviously right; O(L³) per ring set
//! with no blocking, symmetry or SIMD. The fast kernels are tested against these.

use ndarray::Array2;
use realfft::num_complex::Complex64;
use realfft::RealFftPlanner;

use crate::coeffs::{Coefficients, Normalization};
use crate::error::Result;

use super::grid::Grid;
use super::legendre;

/// Reference analysis of `field` on `grid` to degree `lmax` (`geodesy`, no phase).
pub fn analyse(lmax: usize, grid: &Grid, field: &Array2<f64>) -> Result<Coefficients> {
    let (nlat, nlon) = field.dim();
    grid.check_shape(nlat, nlon)?;
    let fft = RealFftPlanner::<f64>::new().plan_fft_forward(nlon);
    let mut out = Coefficients::zeros(lmax, Normalization::Geodesy);
    let mut row = fft.make_input_vec();
    let mut spectrum = fft.make_output_vec();
    let mut col = vec![0.0; lmax + 1];
    for j in 0..nlat {
        row.iter_mut().zip(field.row(j)).for_each(|(r, v)| *r = *v);
        fft.process(&mut row, &mut spectrum)
            .expect("sizes from the plan");
        let theta = grid.colatitude_rad[j];
        let w = grid.weights[j] * (2.0 * std::f64::consts::PI / nlon as f64)
            / (4.0 * std::f64::consts::PI);
        for m in 0..=lmax {
            let g = spectrum[m] * Complex64::from_polar(1.0, -(m as f64) * grid.lon0_rad);
            legendre::column_at_colatitude(m, lmax, theta, &mut col);
            for l in m..=lmax {
                let p = col[l - m] * w;
                let (c, s) = (out.c(l, m) + p * g.re, out.s(l, m) - p * g.im);
                out.set(l, m, c, s);
            }
        }
    }
    Ok(out)
}

/// What a reference synthesis produces per ring.
#[derive(Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    Value,
    DTheta,
    DLambdaOverSin,
}

/// Reference synthesis of `geodesy` coefficients on `grid` (value or one gradient component).
pub fn synthesise(g: &Coefficients, grid: &Grid, quantity: Quantity) -> Array2<f64> {
    let lmax = g.lmax();
    let (nlat, nlon) = grid.shape();
    let ifft = RealFftPlanner::<f64>::new().plan_fft_inverse(nlon);
    let mut out = Array2::zeros((nlat, nlon));
    let mut spectrum = ifft.make_input_vec();
    let mut row = ifft.make_output_vec();
    for j in 0..nlat {
        let theta = grid.colatitude_rad[j];
        let pole = legendre::Pole::at(theta);
        spectrum
            .iter_mut()
            .for_each(|z| *z = Complex64::new(0.0, 0.0));
        for m in 0..=lmax {
            let (p, d) = legendre::column_with_derivative(m, lmax, theta);
            let (mut a, mut b) = (0.0, 0.0);
            for l in m..=lmax {
                let f = match quantity {
                    Quantity::Value => p[l - m],
                    Quantity::DTheta => d[l - m],
                    Quantity::DLambdaOverSin => match pole {
                        None => m as f64 * p[l - m] / theta.sin(),
                        Some(pole) if m == 1 => legendre::order_one_over_sin_at_pole(l, pole),
                        Some(_) => 0.0,
                    },
                };
                a += g.c(l, m) * f;
                b += g.s(l, m) * f;
            }
            if quantity == Quantity::DLambdaOverSin {
                (a, b) = (b, -a);
            }
            let half = if m == 0 { 1.0 } else { 0.5 };
            spectrum[m] = Complex64::new(a * half, -b * half)
                * Complex64::from_polar(1.0, m as f64 * grid.lon0_rad);
        }
        spectrum[0].im = 0.0;
        ifft.process(&mut spectrum, &mut row)
            .expect("sizes from the plan");
        out.row_mut(j)
            .iter_mut()
            .zip(&row)
            .for_each(|(o, r)| *o = *r);
    }
    out
}

/// Reference synthesis of `geodesy` coefficients at points (colatitude, longitude) in radians:
/// for every point and order the one-point columns of `legendre::column_with_derivative` (the
/// value, and ∂/∂θ by the three-column relation), combined with `sin_cos(m λ)` term by term;
/// (1/sin θ) ∂f/∂λ is Σ m (S cos mλ − C sin mλ) P̄_lm / sin θ, and at a pole its limit along the
/// meridian λ (order 1 only, `legendre::order_one_over_sin_at_pole`). The terms of each sum are
/// added with Neumaier's (1974) compensated summation, so the sums carry only the rounding of
/// their terms, not that of O(L²) additions. O(L²) per point with three columns per order; the
/// point kernels are tested against it.
pub fn points(g: &Coefficients, points: &[(f64, f64)]) -> Vec<super::points::PointValue> {
    let lmax = g.lmax();
    points
        .iter()
        .map(|&(theta, lambda)| {
            let pole = legendre::Pole::at(theta);
            let (mut value, mut d_theta, mut d_lambda) = (
                CompensatedSum::default(),
                CompensatedSum::default(),
                CompensatedSum::default(),
            );
            for m in 0..=lmax {
                let (p, d) = legendre::column_with_derivative(m, lmax, theta);
                let (sm, cm) = (m as f64 * lambda).sin_cos();
                for l in m..=lmax {
                    let (c, s) = (g.c(l, m), g.s(l, m));
                    value.add(p[l - m] * (c * cm + s * sm));
                    d_theta.add(d[l - m] * (c * cm + s * sm));
                    let over_sin = match pole {
                        None => m as f64 * p[l - m] / theta.sin(),
                        Some(pole) if m == 1 => legendre::order_one_over_sin_at_pole(l, pole),
                        Some(_) => 0.0,
                    };
                    d_lambda.add(over_sin * (s * cm - c * sm));
                }
            }
            super::points::PointValue {
                value: value.total(),
                d_theta: d_theta.total(),
                d_lambda_over_sin: d_lambda.total(),
            }
        })
        .collect()
}

/// Neumaier's (1974) improved Kahan summation: the running sum and the accumulated rounding
/// errors of its additions.
#[derive(Default, Clone, Copy)]
struct CompensatedSum {
    sum: f64,
    compensation: f64,
}

impl CompensatedSum {
    fn add(&mut self, x: f64) {
        let t = self.sum + x;
        self.compensation += if self.sum.abs() >= x.abs() {
            (self.sum - t) + x
        } else {
            (x - t) + self.sum
        };
        self.sum = t;
    }

    fn total(self) -> f64 {
        self.sum + self.compensation
    }
}
