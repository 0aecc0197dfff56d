//! Solving the regularised normal equations (N + λP) x = b by Cholesky (faer), with the
//! diagonal of the posterior covariance (N + λP)⁻¹ and a 2-norm condition estimate.
//!
//! Preconditions: `n` holds the lower triangle of a symmetric positive semi-definite matrix;
//! `prior` is the diagonal of P (≥ 0); N + λP must be positive definite, otherwise the solve
//! is refused (the problem is under-determined without more regularisation).

use faer::linalg::triangular_inverse::invert_lower_triangular;
use faer::prelude::*;
use faer::{Mat, Parallelism, Side};

use crate::error::{Error, Result};

/// A solved system.
pub struct Solution {
    pub x: Vec<f64>,
    /// diag((N + λP)⁻¹).
    pub covariance_diagonal: Vec<f64>,
    /// Estimated 2-norm condition number of N + λP (power and inverse iteration).
    pub condition_estimate: f64,
}

/// Iterations of the power and inverse-power iterations behind the condition estimate.
const CONDITION_ITERATIONS: usize = 60;

/// Builds the lower triangle of M = N + λP.
pub fn regularised_matrix(n: &Mat<f64>, prior: &[f64], lambda: f64) -> Mat<f64> {
    let mut m = n.clone();
    for (i, p) in prior.iter().enumerate() {
        m[(i, i)] += lambda * p;
    }
    m
}

/// y = M x for M given by its lower triangle.
fn symmetric_lower_times(m: &Mat<f64>, x: &[f64]) -> Vec<f64> {
    let u = x.len();
    let mut y = vec![0.0; u];
    for j in 0..u {
        let col = m.col_as_slice(j);
        // diagonal and below: y_i += M_ij x_j (i ≥ j), and the mirror y_j += M_ij x_i (i > j)
        y[j] += col[j] * x[j];
        let mut acc = 0.0;
        for i in (j + 1)..u {
            y[i] += col[i] * x[j];
            acc += col[i] * x[i];
        }
        y[j] += acc;
    }
    y
}

fn normalise(v: &mut [f64]) -> f64 {
    let norm = v.iter().map(|a| a * a).sum::<f64>().sqrt();
    if norm > 0.0 {
        v.iter_mut().for_each(|a| *a /= norm);
    }
    norm
}

/// Solves (N + λP) x = b.
pub fn solve(n: &Mat<f64>, prior: &[f64], lambda: f64, b: &[f64]) -> Result<Solution> {
    let u = b.len();
    let m = regularised_matrix(n, prior, lambda);
    let chol = m.cholesky(Side::Lower).map_err(|_| {
        Error::invalid(format!(
            "the normal matrix ({u} unknowns) is not positive definite{}: the data do not determine every \
             coefficient; lower --lmax or regularise (--regularization damping:λ, kaula:A,p or gcv)",
            if lambda > 0.0 { " even with the regularisation" } else { "" }
        ))
    })?;
    let rhs = Mat::<f64>::from_fn(u, 1, |i, _| b[i]);
    let sol = chol.solve(&rhs);
    let x: Vec<f64> = (0..u).map(|i| sol[(i, 0)]).collect();

    // diag(M⁻¹) = column sums of squares of L⁻¹, since M⁻¹ = L⁻ᵀ L⁻¹.
    let l = chol.compute_l();
    let mut linv = Mat::<f64>::zeros(u, u);
    invert_lower_triangular(linv.as_mut(), l.as_ref(), Parallelism::Rayon(0));
    let covariance_diagonal: Vec<f64> = (0..u)
        .map(|j| linv.col_as_slice(j)[j..].iter().map(|v| v * v).sum())
        .collect();
    drop(linv);

    // λ_max by power iteration on M, λ_min by inverse iteration with the Cholesky factor.
    let mut v: Vec<f64> = (0..u).map(|i| 1.0 + (i % 7) as f64 * 0.1).collect();
    normalise(&mut v);
    let mut lambda_max = 0.0;
    for _ in 0..CONDITION_ITERATIONS {
        let mut w = symmetric_lower_times(&m, &v);
        lambda_max = normalise(&mut w);
        v = w;
    }
    let mut v: Vec<f64> = (0..u).map(|i| 1.0 + (i % 5) as f64 * 0.1).collect();
    normalise(&mut v);
    let mut inv_lambda_min = 0.0;
    for _ in 0..CONDITION_ITERATIONS {
        let rhs = Mat::<f64>::from_fn(u, 1, |i, _| v[i]);
        let w = chol.solve(&rhs);
        let mut w: Vec<f64> = (0..u).map(|i| w[(i, 0)]).collect();
        inv_lambda_min = normalise(&mut w);
        v = w;
    }
    Ok(Solution {
        x,
        covariance_diagonal,
        condition_estimate: lambda_max * inv_lambda_min,
    })
}
