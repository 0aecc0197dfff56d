//! Choosing the regularisation weight λ by generalised cross-validation (GCV).
//!
//! Golub, Heath & Wahba (1979), Technometrics 21:215–223: minimise
//!   GCV(λ) = n ‖W^½(y − A x_λ)‖² / (n − tr H(λ))²,
//! with H(λ) = W^½ A (N + λP)⁻¹ Aᵀ W^½ the influence matrix, N = AᵀWA, P the prior.
//!
//! The trace is computed exactly, not estimated: with D = P^−½ and the eigendecomposition
//! D N D = V Λ Vᵀ (faer, once), tr H = Σ Λ_i/(Λ_i + λ), and with z = Vᵀ D b the weighted
//! residual is ‖r_λ‖² = ‖r_0‖² + Σ_i (λ/(Λ_i + λ))² z_i²/Λ_i, where ‖r_0‖² = yᵀWy − Σ z_i²/Λ_i
//! is the unregularised residual (terms with Λ_i ≤ 1e-13 Λ_max, the null space, are left out).
//! λ is located on a log grid of 241 points over [1e-14, 1e2]·Λ_max, then refined by a
//! golden-section search on log λ around the best grid point.

use faer::{Mat, Side};

/// Result of the λ search.
#[derive(Debug, Clone, PartialEq)]
pub struct GcvChoice {
    pub lambda: f64,
    pub gcv: f64,
    /// tr H at the chosen λ (effective number of parameters).
    pub trace_influence: f64,
}

/// The spectral quantities GCV needs, computed once.
pub struct GcvSpectrum {
    eigenvalues: Vec<f64>,
    z2: Vec<f64>,
    residual0: f64,
    n: f64,
}

impl GcvSpectrum {
    /// From the lower triangle of N, the prior diagonal P (> 0), b and yᵀWy.
    pub fn new(
        normal: &Mat<f64>,
        prior: &[f64],
        b: &[f64],
        y_w_y: f64,
        observations: usize,
    ) -> GcvSpectrum {
        let u = b.len();
        let d: Vec<f64> = prior.iter().map(|p| 1.0 / p.sqrt()).collect();
        let scaled = Mat::<f64>::from_fn(u, u, |i, j| {
            if i >= j {
                normal[(i, j)] * d[i] * d[j]
            } else {
                0.0
            }
        });
        let evd = scaled.selfadjoint_eigendecomposition(Side::Lower);
        let s = evd.s().column_vector();
        let v = evd.u();
        let eigenvalues: Vec<f64> = (0..u).map(|i| s[i]).collect();
        let db: Vec<f64> = (0..u).map(|i| d[i] * b[i]).collect();
        let z2: Vec<f64> = (0..u)
            .map(|k| {
                let z: f64 = (0..u).map(|i| v[(i, k)] * db[i]).sum();
                z * z
            })
            .collect();
        let max = eigenvalues.iter().cloned().fold(0.0, f64::max);
        let floor = 1e-13 * max;
        let explained: f64 = eigenvalues
            .iter()
            .zip(&z2)
            .filter(|(l, _)| **l > floor)
            .map(|(l, z)| z / l)
            .sum();
        GcvSpectrum {
            eigenvalues,
            z2,
            residual0: (y_w_y - explained).max(0.0),
            n: observations as f64,
        }
    }

    pub fn max_eigenvalue(&self) -> f64 {
        self.eigenvalues.iter().cloned().fold(0.0, f64::max)
    }

    /// (GCV(λ), tr H(λ)).
    pub fn evaluate(&self, lambda: f64) -> (f64, f64) {
        let floor = 1e-13 * self.max_eigenvalue();
        let mut trace = 0.0;
        let mut residual = self.residual0;
        for (l, z) in self.eigenvalues.iter().zip(&self.z2) {
            if *l > floor {
                trace += l / (l + lambda);
                let f = lambda / (l + lambda);
                residual += f * f * z / l;
            }
        }
        let dof = self.n - trace;
        let gcv = if dof > 0.0 {
            self.n * residual / (dof * dof)
        } else {
            f64::INFINITY
        };
        (gcv, trace)
    }

    /// The λ minimising GCV.
    pub fn choose(&self) -> GcvChoice {
        let max = self.max_eigenvalue().max(f64::MIN_POSITIVE);
        let (lo, hi) = ((max * 1e-14).log10(), (max * 1e2).log10());
        let steps = 240;
        let at = |t: f64| self.evaluate(10f64.powf(t)).0;
        let mut best = (lo, f64::INFINITY);
        for k in 0..=steps {
            let t = lo + (hi - lo) * k as f64 / steps as f64;
            let g = at(t);
            if g < best.1 {
                best = (t, g);
            }
        }
        let h = (hi - lo) / steps as f64;
        let (mut a, mut b) = (best.0 - h, best.0 + h);
        let phi = 0.5 * (5f64.sqrt() - 1.0);
        for _ in 0..60 {
            let c = b - phi * (b - a);
            let d = a + phi * (b - a);
            if at(c) < at(d) {
                b = d;
            } else {
                a = c;
            }
        }
        let t = 0.5 * (a + b);
        let (t, _) = if at(t) <= best.1 {
            (t, ())
        } else {
            (best.0, ())
        };
        let lambda = 10f64.powf(t);
        let (gcv, trace_influence) = self.evaluate(lambda);
        GcvChoice {
            lambda,
            gcv,
            trace_influence,
        }
    }
}
