//! Assembly of the weighted normal equations N = Aᵀ W A, b = Aᵀ W y, W = diag(1/σ²).
//!
//! Points are taken in blocks of `BLOCK_POINTS`. For each block the design rows are filled in
//! parallel (rayon) as the columns of B = (√w_i a_i) (unknowns × points, column-major), and
//! the lower triangle of N is updated by one matrix product N += B Bᵀ (faer, parallel), the
//! right-hand side by b += B (√w y). This replaces n rank-one updates by n/block products.

use faer::linalg::matmul::triangular::{matmul as tri_matmul, BlockStructure};
use faer::{Mat, Parallelism};
use rayon::prelude::*;

use super::lsq_design::{design_row, LegendreTable, UnknownLayout};
use super::points::PointSet;
use super::progress::Progress;
use crate::coeffs::packed_len;

/// Points per assembly block.
pub const BLOCK_POINTS: usize = 512;

/// The normal equations of a fit. Only the lower triangle of `n` is filled.
pub struct NormalEquations {
    pub n: Mat<f64>,
    pub b: Vec<f64>,
    /// yᵀ W y.
    pub y_w_y: f64,
    pub observations: usize,
}

/// Assembles the normal equations for all points.
pub fn assemble(points: &PointSet, layout: &UnknownLayout, progress: &Progress) -> NormalEquations {
    let u = layout.len();
    let table = LegendreTable::new(layout.lmax);
    let mut n = Mat::<f64>::zeros(u, u);
    let mut b = vec![0.0; u];
    let mut y_w_y = 0.0;
    let mut block = vec![0.0; u * BLOCK_POINTS];
    let count = points.len();
    progress.stage(count.div_ceil(BLOCK_POINTS) as u64, "assembling normals");
    for start in (0..count).step_by(BLOCK_POINTS) {
        let end = (start + BLOCK_POINTS).min(count);
        let nb = end - start;
        let cols = &mut block[..u * nb];
        cols.par_chunks_mut(u).enumerate().for_each_init(
            || vec![0.0; packed_len(layout.lmax)],
            |p, (k, col)| {
                let i = start + k;
                design_row(layout, &table, points.lat_deg[i], points.lon_deg[i], p, col);
                let sw = points.weight(i).sqrt();
                col.iter_mut().for_each(|v| *v *= sw);
            },
        );
        let bmat = faer::mat::from_column_major_slice::<f64, _, _>(cols, u, nb);
        tri_matmul(
            n.as_mut(),
            BlockStructure::TriangularLower,
            bmat,
            BlockStructure::Rectangular,
            bmat.transpose(),
            BlockStructure::Rectangular,
            Some(1.0),
            1.0,
            Parallelism::Rayon(0),
        );
        for k in 0..nb {
            let i = start + k;
            let wy = points.weight(i).sqrt() * points.value[i];
            y_w_y += wy * wy;
            let col = &cols[k * u..(k + 1) * u];
            b.iter_mut().zip(col).for_each(|(bi, a)| *bi += a * wy);
        }
        progress.inc(1);
    }
    NormalEquations { n, b, y_w_y, observations: count }
}

/// Model values A x at every point (parallel; one design row per point).
pub fn predict(points: &PointSet, layout: &UnknownLayout, x: &[f64]) -> Vec<f64> {
    let table = LegendreTable::new(layout.lmax);
    (0..points.len())
        .into_par_iter()
        .map_init(
            || (vec![0.0; packed_len(layout.lmax)], vec![0.0; layout.len()]),
            |(p, row), i| {
                design_row(layout, &table, points.lat_deg[i], points.lon_deg[i], p, row);
                row.iter().zip(x).map(|(a, xi)| a * xi).sum()
            },
        )
        .collect()
}
