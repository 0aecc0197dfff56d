//! Matrix-free solution of the regularised normal equations (N + λP) x = b by preconditioned
//! conjugate gradients (Hestenes & Stiefel 1952, J. Res. Nat. Bur. Standards 49:409; the
//! preconditioned form as in Golub & Van Loan, *Matrix Computations*, 4th ed., Alg. 11.5.1).
//!
//! N is never formed. Each step applies N p = Σ_i w_i a_i (a_iᵀ p) in one pass over the
//! observations: every design row a_i is rebuilt from the same observation equations the
//! direct solver uses ([`super::functional`]: point synthesis of the row's functional at the
//! observation's own radius, and its adjoint, the accumulation of w_i (a_iᵀ p) a_i), so both
//! solvers solve exactly the same problem. The pass runs over [`OPERATOR_CHUNKS`] fixed chunks
//! of observations whose partial sums are added in chunk order, so the result does not depend
//! on the number of threads.
//!
//! **Preconditioner.** Block diagonal by order: the unknowns of each order m (C_lm and S_lm of
//! every degree, and of the rate and external blocks) form one block of N + λP. For data well
//! spread in longitude, the orthogonality of cos mλ and sin mλ makes N nearly block diagonal
//! by order, so the blocks carry most of the matrix and the iteration only resolves the coupling
//! between orders. The blocks are accumulated from at most [`PRECONDITIONER_SAMPLE`]
//! observations (every k-th, the sums scaled by n/n_sample; all of them for smaller problems),
//! regularised by λP and factorised by Cholesky.
//!
//! **Convergence.** The iteration stops when ‖b − (N + λP)x‖ ≤ [`CG_TOLERANCE`]·‖b‖, the
//! residual recomputed from x at the end (and the iteration restarted from it when the
//! recursively updated residual had drifted below the tolerance first). The relative error of x is bounded
//! by κ(N + λP) times that relative residual.
//!
//! **σ.** The iterative solver has no inverse of N + λP. The σ it reports are approximate:
//! the square roots of the diagonal of the inverse of the block-diagonal preconditioner (the
//! covariance each order would have if the orders were uncoupled). They are close to the exact
//! σ for well-covered data and too small where orders couple strongly (large gaps).

use faer::linalg::matmul::triangular::{matmul as tri_matmul, BlockStructure};
use faer::prelude::*;
use faer::{Mat, Parallelism, Side};
use rayon::prelude::*;

use super::functional::dot;
use super::normal::fill_weighted_columns;
use crate::error::{Error, Result};
use crate::progress::Progress;

/// Relative residual ‖b − (N + λP)x‖/‖b‖ at which the conjugate gradients stop.
pub const CG_TOLERANCE: f64 = 1e-10;
/// Most conjugate-gradient steps.
pub const MAX_CG_ITERATIONS: usize = 1000;
/// Fixed number of chunks of observations in each pass (their partial sums are added in order).
pub const OPERATOR_CHUNKS: usize = 64;
/// Most observations used to build the preconditioner's blocks.
pub const PRECONDITIONER_SAMPLE: usize = 20_000;
/// Restarts from the true residual when the recursive one has drifted below the tolerance.
const MAX_RESTARTS: usize = 4;
/// Rows per block while building the preconditioner.
const SAMPLE_BLOCK: usize = 512;

/// The observations as a source of weighted design rows: `row(i, scratch, out)` writes
/// observation i's row over the free unknowns into `out` and returns its weight and reduced
/// value (weight 0 leaves it out); `init` makes one scratch per thread.
pub struct RowSource<I, F> {
    pub unknowns: usize,
    pub observations: usize,
    pub init: I,
    pub row: F,
}

/// Right-hand side b = Aᵀ W y with yᵀ W y and the number of rows used.
pub struct RightHandSide {
    pub b: Vec<f64>,
    pub y_w_y: f64,
    pub observations: usize,
}

/// Outcome of [`solve_iterative`].
pub struct IterativeSolution {
    pub x: Vec<f64>,
    /// Diagonal of the inverse of the block-diagonal preconditioner (approximate covariance).
    pub approximate_covariance_diagonal: Vec<f64>,
    /// Conjugate-gradient steps taken.
    pub iterations: usize,
    /// ‖b − (N + λP)x‖/‖b‖, recomputed from x after the last step.
    pub relative_residual: f64,
    pub converged: bool,
}

impl<S, I, F> RowSource<I, F>
where
    I: Fn() -> S + Sync + Send,
    F: Fn(usize, &mut S, &mut [f64]) -> Result<(f64, f64)> + Sync + Send,
{
    /// One pass over the observations in fixed chunks: with `x`, Σ w a (aᵀx); without, Σ w y a
    /// (and yᵀWy, the rows used).
    fn pass(&self, x: Option<&[f64]>) -> Result<(Vec<f64>, f64, usize)> {
        let (u, n) = (self.unknowns, self.observations);
        let chunks = OPERATOR_CHUNKS.min(n.max(1));
        let partial: Vec<(Vec<f64>, f64, usize)> = (0..chunks)
            .into_par_iter()
            .map(|c| -> Result<(Vec<f64>, f64, usize)> {
                let (lo, hi) = (c * n / chunks, (c + 1) * n / chunks);
                let mut scratch = (self.init)();
                let mut row = vec![0.0; u];
                let mut acc = vec![0.0; u];
                let (mut yy, mut used) = (0.0, 0usize);
                for i in lo..hi {
                    let (w, y) = (self.row)(i, &mut scratch, &mut row)?;
                    if w <= 0.0 {
                        continue;
                    }
                    used += 1;
                    let factor = match x {
                        Some(x) => w * dot(&row, x),
                        None => {
                            yy += w * y * y;
                            w * y
                        }
                    };
                    acc.iter_mut().zip(&row).for_each(|(a, r)| *a += factor * r);
                }
                Ok((acc, yy, used))
            })
            .collect::<Result<_>>()?;
        let mut total = vec![0.0; u];
        let (mut yy, mut used) = (0.0, 0);
        for (acc, y, k) in partial {
            total.iter_mut().zip(&acc).for_each(|(t, a)| *t += a);
            yy += y;
            used += k;
        }
        Ok((total, yy, used))
    }

    /// b = Aᵀ W y.
    pub fn right_hand_side(&self) -> Result<RightHandSide> {
        let (b, y_w_y, observations) = self.pass(None)?;
        Ok(RightHandSide {
            b,
            y_w_y,
            observations,
        })
    }

    /// N x (without the regularisation).
    pub fn normal_times(&self, x: &[f64]) -> Result<Vec<f64>> {
        Ok(self.pass(Some(x))?.0)
    }
}

/// The block-diagonal-by-order preconditioner: Cholesky factors of the blocks of N + λP.
pub struct OrderPreconditioner {
    groups: Vec<Vec<usize>>,
    factors: Vec<faer::linalg::solvers::Cholesky<f64>>,
}

impl OrderPreconditioner {
    /// Builds the blocks of the free unknowns listed in `groups` (one list of indices per
    /// order) from a sample of the rows, adds λP and factorises each.
    pub fn new<S, I, F>(
        source: &RowSource<I, F>,
        groups: Vec<Vec<usize>>,
        prior: &[f64],
        lambda: f64,
    ) -> Result<OrderPreconditioner>
    where
        I: Fn() -> S + Sync + Send,
        F: Fn(usize, &mut S, &mut [f64]) -> Result<(f64, f64)> + Sync + Send,
    {
        let (u, n) = (source.unknowns, source.observations);
        let stride = n.div_ceil(PRECONDITIONER_SAMPLE).max(1);
        let sampled = n.div_ceil(stride);
        let mut blocks: Vec<Mat<f64>> = groups
            .iter()
            .map(|g| Mat::<f64>::zeros(g.len(), g.len()))
            .collect();
        let mut cols = vec![0.0; u * SAMPLE_BLOCK.min(sampled.max(1))];
        for first in (0..sampled).step_by(SAMPLE_BLOCK) {
            let nb = SAMPLE_BLOCK.min(sampled - first);
            let cols = &mut cols[..u * nb];
            fill_weighted_columns(u, cols, |k| (first + k) * stride, &source.init, &source.row)?;
            let cols = &*cols;
            blocks
                .par_iter_mut()
                .zip(&groups)
                .for_each(|(block, group)| {
                    let k = group.len();
                    let mut sub = vec![0.0; k * nb];
                    for c in 0..nb {
                        let col = &cols[c * u..(c + 1) * u];
                        for (j, &g) in group.iter().enumerate() {
                            sub[c * k + j] = col[g];
                        }
                    }
                    let sub = faer::mat::from_column_major_slice::<f64, _, _>(&sub, k, nb);
                    tri_matmul(
                        block.as_mut(),
                        BlockStructure::TriangularLower,
                        sub,
                        BlockStructure::Rectangular,
                        sub.transpose(),
                        BlockStructure::Rectangular,
                        Some(1.0),
                        1.0,
                        Parallelism::None,
                    );
                });
        }
        // every stride-th row was used: the sums stand for n/n_sample times as many rows
        let scale = n as f64 / sampled as f64;
        let factors = blocks
            .into_par_iter()
            .zip(&groups)
            .map(|(mut block, group)| {
                for (j, &g) in group.iter().enumerate() {
                    for i in j..group.len() {
                        block[(i, j)] *= scale;
                    }
                    block[(j, j)] += lambda * prior[g];
                }
                factorise_with_ridge(block)
            })
            .collect::<Result<Vec<_>>>()?;
        Ok(OrderPreconditioner { groups, factors })
    }

    /// z = M⁻¹ r.
    pub fn apply(&self, r: &[f64]) -> Vec<f64> {
        let mut z = vec![0.0; r.len()];
        for (group, chol) in self.groups.iter().zip(&self.factors) {
            let rhs = Mat::<f64>::from_fn(group.len(), 1, |i, _| r[group[i]]);
            let sol = chol.solve(&rhs);
            for (i, &g) in group.iter().enumerate() {
                z[g] = sol[(i, 0)];
            }
        }
        z
    }

    /// Diagonal of M⁻¹.
    pub fn inverse_diagonal(&self, u: usize) -> Vec<f64> {
        let mut d = vec![0.0; u];
        for (group, chol) in self.groups.iter().zip(&self.factors) {
            let inv = chol.inverse();
            for (i, &g) in group.iter().enumerate() {
                d[g] = inv[(i, i)];
            }
        }
        d
    }
}

/// Cholesky of a block (lower triangle filled); a block that is not positive definite (an
/// order the sample does not determine and no prior holds) gets a growing ridge of its own
/// diagonal's scale, which only weakens the preconditioner, not the solution.
fn factorise_with_ridge(mut block: Mat<f64>) -> Result<faer::linalg::solvers::Cholesky<f64>> {
    let k = block.nrows();
    let scale = (0..k).fold(0.0f64, |a, i| a.max(block[(i, i)].abs()));
    let scale = if scale > 0.0 { scale } else { 1.0 };
    let mut ridge = 0.0;
    for _ in 0..12 {
        if let Ok(chol) = block.cholesky(Side::Lower) {
            return Ok(chol);
        }
        let next = if ridge == 0.0 { 1e-12 } else { ridge * 100.0 };
        for i in 0..k {
            block[(i, i)] += (next - ridge) * scale;
        }
        ridge = next;
    }
    Err(Error::invalid(
        "internal: a block of the order preconditioner could not be factorised",
    ))
}

fn norm(a: &[f64]) -> f64 {
    dot(a, a).sqrt()
}

/// Solves (N + λP) x = b by preconditioned conjugate gradients from `start` (zero when
/// `None`), with the order preconditioner built over `groups` from the rows of `source`.
/// `normal_times` is N p: `source.normal_times`, or a faster kernel for the same rows
/// ([`super::scalar_normal`]).
#[allow(clippy::too_many_arguments)]
pub fn solve_iterative<S, I, F>(
    source: &RowSource<I, F>,
    normal_times: &(dyn Fn(&[f64]) -> Result<Vec<f64>> + Sync),
    rhs: &RightHandSide,
    groups: Vec<Vec<usize>>,
    prior: &[f64],
    lambda: f64,
    start: Option<&[f64]>,
    progress: &dyn Progress,
) -> Result<IterativeSolution>
where
    I: Fn() -> S + Sync + Send,
    F: Fn(usize, &mut S, &mut [f64]) -> Result<(f64, f64)> + Sync + Send,
{
    let u = source.unknowns;
    progress.stage("building the order preconditioner", 0);
    let preconditioner = OrderPreconditioner::new(source, groups, prior, lambda)?;
    let operator = |p: &[f64]| -> Result<Vec<f64>> {
        let mut q = normal_times(p)?;
        q.iter_mut()
            .zip(p.iter().zip(prior))
            .for_each(|(qi, (pi, pr))| *qi += lambda * pr * pi);
        Ok(q)
    };
    let b = &rhs.b;
    let b_norm = norm(b);
    let mut x = start.map_or_else(|| vec![0.0; u], <[f64]>::to_vec);
    let approximate_covariance_diagonal = preconditioner.inverse_diagonal(u);
    if b_norm == 0.0 {
        return Ok(IterativeSolution {
            x: vec![0.0; u],
            approximate_covariance_diagonal,
            iterations: 0,
            relative_residual: 0.0,
            converged: true,
        });
    }
    let residual_of = |x: &[f64]| -> Result<Vec<f64>> {
        let ax = operator(x)?;
        Ok(b.iter().zip(&ax).map(|(bi, a)| bi - a).collect())
    };
    let mut r = if start.is_some() {
        residual_of(&x)?
    } else {
        b.clone()
    };
    progress.stage("conjugate gradients", MAX_CG_ITERATIONS as u64);
    let mut iterations = 0;
    let mut relative_residual = norm(&r) / b_norm;
    // The recursively updated residual drifts from the true one; when the true residual is
    // still above the tolerance at the end, the iteration restarts from x with it.
    for _restart in 0..MAX_RESTARTS {
        let mut z = preconditioner.apply(&r);
        let mut p = z.clone();
        let mut rz = dot(&r, &z);
        while norm(&r) > CG_TOLERANCE * b_norm && iterations < MAX_CG_ITERATIONS {
            let q = operator(&p)?;
            let pq = dot(&p, &q);
            if pq.is_nan() || pq <= 0.0 {
                // p lies in the null space of N + λP: the data do not determine the unknowns
                break;
            }
            let alpha = rz / pq;
            x.iter_mut().zip(&p).for_each(|(xi, pi)| *xi += alpha * pi);
            r.iter_mut().zip(&q).for_each(|(ri, qi)| *ri -= alpha * qi);
            z = preconditioner.apply(&r);
            let rz_next = dot(&r, &z);
            let beta = rz_next / rz;
            rz = rz_next;
            p.iter_mut()
                .zip(&z)
                .for_each(|(pi, zi)| *pi = zi + beta * *pi);
            iterations += 1;
            progress.advance(1);
        }
        r = residual_of(&x)?;
        relative_residual = norm(&r) / b_norm;
        if relative_residual <= CG_TOLERANCE || iterations >= MAX_CG_ITERATIONS {
            break;
        }
    }
    Ok(IterativeSolution {
        x,
        approximate_covariance_diagonal,
        iterations,
        converged: relative_residual <= CG_TOLERANCE,
        relative_residual,
    })
}
