//! Assembly of the weighted normal equations N = Aᵀ W A, b = Aᵀ W y, W = diag(1/σ²).
//!
//! Points are taken in blocks of `BLOCK_POINTS`. For each block the design rows are filled in
//! parallel (rayon) as the columns of B = (√w_i a_i) (unknowns × points, column-major), and
//! the lower triangle of N is updated by the symmetric rank-k update N += B Bᵀ
//! ([`super::rank_update::RankUpdater`]: tiles in parallel, on our AVX-512 micro-kernel or
//! faer's general product), the right-hand side by b += B (√w y). This replaces n rank-one updates by
//! n/block products. Summation order: blocks in point order; within a block, each entry's
//! sum over the block's points in the kernel's order (see [`super::rank_update`]).

use faer::Mat;
use rayon::prelude::*;

use super::design::{design_row, LegendreTable, UnknownLayout};
use super::rank_update::RankUpdater;
use crate::coeffs::packed_len;
use crate::observe::points::PointSet;
use crate::progress::Progress;

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

/// Assembles the normal equations for all points (plain values on the sphere, the
/// [`design_row`] of each point).
pub fn assemble(
    points: &PointSet,
    layout: &UnknownLayout,
    progress: &dyn Progress,
) -> NormalEquations {
    let table = LegendreTable::new(layout.lmax);
    assemble_rows(
        layout.len(),
        points.len(),
        || vec![0.0; packed_len(layout.lmax)],
        |i, p, col| {
            design_row(layout, &table, points.lat_deg[i], points.lon_deg[i], p, col);
            Ok((points.weight(i), points.value[i]))
        },
        progress,
    )
    .expect("plain design rows do not fail")
}

/// Assembles the normal equations of `count` observations with `u` unknowns. `row(i,
/// scratch, col)` writes observation i's design row into `col` and returns its weight and
/// (reduced) observed value; `scratch` comes from `init`, one per thread. A weight of 0 leaves
/// the observation out.
pub fn assemble_rows<S, I, F>(
    u: usize,
    count: usize,
    init: I,
    row: F,
    progress: &dyn Progress,
) -> crate::error::Result<NormalEquations>
where
    I: Fn() -> S + Sync + Send,
    F: Fn(usize, &mut S, &mut [f64]) -> crate::error::Result<(f64, f64)> + Sync + Send,
{
    let mut n = Mat::<f64>::zeros(u, u);
    let mut b = vec![0.0; u];
    let mut y_w_y = 0.0;
    let mut block = vec![0.0; u * BLOCK_POINTS];
    let mut sqrt_wy = vec![0.0; BLOCK_POINTS];
    let mut used = 0usize;
    let mut updater = RankUpdater::new(u);
    progress.stage("assembling normals", count.div_ceil(BLOCK_POINTS) as u64);
    for start in (0..count).step_by(BLOCK_POINTS) {
        let end = (start + BLOCK_POINTS).min(count);
        let nb = end - start;
        let cols = &mut block[..u * nb];
        let wy = fill_weighted_columns(u, cols, |k| start + k, &init, &row)?;
        for (k, (sw, v)) in wy.into_iter().enumerate() {
            sqrt_wy[k] = v;
            used += usize::from(sw > 0.0);
        }
        let bmat = faer::mat::from_column_major_slice::<f64, _, _>(cols, u, nb);
        updater.update(n.as_mut(), bmat);
        for (k, &wy) in sqrt_wy[..nb].iter().enumerate() {
            y_w_y += wy * wy;
            let col = &cols[k * u..(k + 1) * u];
            b.iter_mut().zip(col).for_each(|(bi, a)| *bi += a * wy);
        }
        progress.advance(1);
    }
    Ok(NormalEquations {
        n,
        b,
        y_w_y,
        observations: used,
    })
}

/// Fills the columns of `cols` (u × k, column-major) with the weighted design rows √w_i a_i
/// of observations `index(0..k)`, in parallel, and returns (√w_i, √w_i y_i) per column.
pub(super) fn fill_weighted_columns<S, I, F>(
    u: usize,
    cols: &mut [f64],
    index: impl Fn(usize) -> usize + Sync + Send,
    init: &I,
    row: &F,
) -> crate::error::Result<Vec<(f64, f64)>>
where
    I: Fn() -> S + Sync + Send,
    F: Fn(usize, &mut S, &mut [f64]) -> crate::error::Result<(f64, f64)> + Sync + Send,
{
    cols.par_chunks_mut(u)
        .enumerate()
        .map_init(init, |scratch, (k, col)| {
            let (w, y) = row(index(k), scratch, col)?;
            let sw = w.sqrt();
            col.iter_mut().for_each(|v| *v *= sw);
            Ok((sw, sw * y))
        })
        .collect()
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

#[cfg(test)]
mod tests {
    use super::*;

    /// Reference: N and b by point-by-point rank-one updates, the textbook definition.
    fn rank_one_reference(points: &PointSet, layout: &UnknownLayout) -> (Vec<Vec<f64>>, Vec<f64>) {
        let u = layout.len();
        let table = LegendreTable::new(layout.lmax);
        let (mut p, mut row) = (vec![0.0; packed_len(layout.lmax)], vec![0.0; u]);
        let mut n = vec![vec![0.0; u]; u];
        let mut b = vec![0.0; u];
        for i in 0..points.len() {
            design_row(
                layout,
                &table,
                points.lat_deg[i],
                points.lon_deg[i],
                &mut p,
                &mut row,
            );
            let w = points.weight(i);
            for r in 0..u {
                b[r] += w * row[r] * points.value[i];
                for c in 0..u {
                    n[r][c] += w * row[r] * row[c];
                }
            }
        }
        (n, b)
    }

    /// The direct solver's memory estimate holds what the assembly allocates: N, the block
    /// of design columns and the rank-k update's packing buffer (u from small to L = 100).
    #[test]
    fn memory_estimate_covers_the_assembly() {
        for u in [1usize, 16, 3721, 10_201] {
            let assembly = (u * u * 8 + u * BLOCK_POINTS * 8) as u64
                + super::super::rank_update::RankUpdater::buffer_bytes(u);
            let estimate =
                super::super::unknowns_memory_bytes(u as u64, &super::super::Regularization::None);
            assert!(estimate >= assembly, "u {u}: {estimate} < {assembly}");
        }
    }

    #[test]
    fn blocked_assembly_matches_rank_one_updates() {
        // More points than one block, so block boundaries are exercised.
        let count = BLOCK_POINTS + 37;
        let lat: Vec<f64> = (0..count)
            .map(|i| -89.0 + 178.0 * ((i * 37) % count) as f64 / count as f64)
            .collect();
        let lon: Vec<f64> = (0..count)
            .map(|i| -180.0 + 359.0 * ((i * 11) % count) as f64 / count as f64)
            .collect();
        let value: Vec<f64> = (0..count).map(|i| (i as f64 * 0.37).sin()).collect();
        let sigma: Vec<f64> = (0..count).map(|i| 0.5 + (i % 3) as f64 * 0.25).collect();
        let points = PointSet {
            lat_deg: lat,
            lon_deg: lon,
            value,
            sigma: Some(sigma),
            source_lines: vec![0; count],
            extras: Default::default(),
        };
        let layout = UnknownLayout::new(5);
        let fast = assemble(&points, &layout, &crate::progress::Silent);
        let (n, b) = rank_one_reference(&points, &layout);
        let scale = n.iter().flatten().fold(0.0f64, |a, v| a.max(v.abs()));
        for r in 0..layout.len() {
            assert!((fast.b[r] - b[r]).abs() < 1e-11 * scale, "b[{r}]");
            for (c, &expected) in n[r].iter().enumerate().take(r + 1) {
                assert!(
                    (fast.n[(r, c)] - expected).abs() < 1e-11 * scale,
                    "N[{r},{c}]"
                );
            }
        }
    }
}
