//! The symmetric rank-k update of the normal matrix, lower triangle: N ← N + B Bᵀ, with B
//! the u × k block of weighted design columns (u unknowns, k observations).
//!
//! Two versions that give the same result up to rounding:
//!
//! - [`lower_rank_update_reference`]: one triangular product (faer's
//!   `linalg::matmul::triangular::matmul`, lower-triangular destination), the reference;
//! - [`lower_rank_update_tiled`]: the lower triangle of N cut into square tiles of
//!   [`TILE_UNKNOWNS`] (the last row and column of tiles narrower when u is not a multiple),
//!   every tile below the diagonal updated by faer's general product
//!   (`linalg::matmul::matmul`, the fast kernel), every diagonal tile by the triangular one;
//!   tiles run in parallel on the rayon pool, each product single-threaded. This is the usual
//!   blocked form of the symmetric rank-k update (common practice: the level-3 BLAS `SYRK` is
//!   built this way from the general product, Goto & van de Geijn, "Anatomy of
//!   high-performance matrix multiplication", ACM TOMS 34(3), 2008).
//!
//! Summation order: in both, each entry N_rc gets Σ_j B_rj B_cj over the k columns of the
//! block, accumulated inside faer's kernel (in its own k-blocking), then added to N_rc; the
//! blocks of a fit are added in point order. The two differ only in the order of the sum over
//! j inside the kernel, so they agree to a few units of rounding of ‖B‖² (tested).

use faer::linalg::matmul::matmul;
use faer::linalg::matmul::triangular::{matmul as tri_matmul, BlockStructure};
use faer::{MatMut, MatRef, Parallelism};
use rayon::prelude::*;

mod micro;
pub mod packed;

use self::packed::{MicroKernel, PackedRankUpdate};

/// The update the assembly runs: the packed one on the AVX-512 micro-kernel
/// ([`packed::PackedRankUpdate`]) where the CPU has AVX-512F, else faer's tiles
/// ([`lower_rank_update_tiled`]; faer's kernels are as wide as AVX2 on the stable compiler).
pub enum RankUpdater {
    Packed(PackedRankUpdate),
    Tiled,
}

impl RankUpdater {
    /// The fastest update for `unknowns` rows on this CPU.
    pub fn new(unknowns: usize) -> RankUpdater {
        match MicroKernel::avx512() {
            Some(kernel) => RankUpdater::Packed(PackedRankUpdate::new(unknowns, kernel)),
            None => RankUpdater::Tiled,
        }
    }

    /// N ← N + B Bᵀ on the lower triangle of `n` (u × u), B = `b` (u × k).
    pub fn update(&mut self, n: MatMut<'_, f64>, b: MatRef<'_, f64>) {
        match self {
            RankUpdater::Packed(packed) if n.row_stride() == 1 => packed.update(n, b),
            _ => lower_rank_update_tiled(n, b),
        }
    }

    /// Bytes the update allocates besides N and B for `unknowns` (at most; faer's tiles use
    /// its own small per-thread workspace).
    pub fn buffer_bytes(unknowns: usize) -> u64 {
        PackedRankUpdate::buffer_bytes(unknowns)
    }

    /// Which one runs, for reports.
    pub fn name(&self) -> &'static str {
        match self {
            RankUpdater::Packed(_) => "packed, AVX-512 micro-kernel",
            RankUpdater::Tiled => "tiled, faer general product",
        }
    }
}

/// Width of the square tiles of [`lower_rank_update_tiled`]: wide enough that packing B's
/// rows (2 T k copies per tile) is small against the tile's T² k multiply–adds, narrow enough
/// that the two cores get many tiles to share (u = 3721 at L = 60 gives 120 tiles).
pub const TILE_UNKNOWNS: usize = 256;

/// N ← N + B Bᵀ on the lower triangle of `n` (u × u), B = `b` (u × k), by one triangular
/// product on faer's parallelism: the reference of [`lower_rank_update_tiled`]. The strict
/// upper triangle of `n` is not touched.
pub fn lower_rank_update_reference(n: MatMut<'_, f64>, b: MatRef<'_, f64>) {
    assert_eq!(n.nrows(), b.nrows());
    assert_eq!(n.ncols(), b.nrows());
    tri_matmul(
        n,
        BlockStructure::TriangularLower,
        b,
        BlockStructure::Rectangular,
        b.transpose(),
        BlockStructure::Rectangular,
        Some(1.0),
        1.0,
        Parallelism::Rayon(0),
    );
}

/// N ← N + B Bᵀ on the whole of `n` (u × u), B = `b` (u × k), by faer's general product on
/// its parallelism: twice the work of the lower triangle, at the rate of the kernel the tiles
/// are built from (for the benchmark, `kugel bench --case rank-update`).
pub fn full_rank_update_general(n: MatMut<'_, f64>, b: MatRef<'_, f64>) {
    assert_eq!(n.nrows(), b.nrows());
    assert_eq!(n.ncols(), b.nrows());
    matmul(n, b, b.transpose(), Some(1.0), 1.0, Parallelism::Rayon(0));
}

/// N ← N + B Bᵀ on the lower triangle of `n` (u × u), B = `b` (u × k), tile by tile (see the
/// module). The strict upper triangle of `n` is not touched.
pub fn lower_rank_update_tiled(n: MatMut<'_, f64>, b: MatRef<'_, f64>) {
    lower_rank_update_tiles(n, b, TILE_UNKNOWNS);
}

/// [`lower_rank_update_tiled`] with tiles of `tile` unknowns (≥ 1).
pub fn lower_rank_update_tiles(n: MatMut<'_, f64>, b: MatRef<'_, f64>, tile: usize) {
    let u = b.nrows();
    assert_eq!(n.nrows(), u);
    assert_eq!(n.ncols(), u);
    assert!(tile > 0, "tiles need at least one unknown");
    if u == 0 || b.ncols() == 0 {
        return;
    }
    let mut tiles = lower_tiles(n, tile);
    // largest first, so the narrow tiles of the last row and column fill the gaps at the end
    tiles.sort_by_key(|t| std::cmp::Reverse(t.dest.nrows() * t.dest.ncols()));
    tiles.into_par_iter().with_max_len(1).for_each(|t| {
        let rows = b.subrows(t.row0, t.dest.nrows());
        let cols = b.subrows(t.col0, t.dest.ncols());
        if t.row0 == t.col0 {
            tri_matmul(
                t.dest,
                BlockStructure::TriangularLower,
                rows,
                BlockStructure::Rectangular,
                cols.transpose(),
                BlockStructure::Rectangular,
                Some(1.0),
                1.0,
                Parallelism::None,
            );
        } else {
            matmul(
                t.dest,
                rows,
                cols.transpose(),
                Some(1.0),
                1.0,
                Parallelism::None,
            );
        }
    });
}

/// One tile of the lower triangle: rows `row0..`, columns `col0..` of N.
struct Tile<'a> {
    row0: usize,
    col0: usize,
    dest: MatMut<'a, f64>,
}

/// The tiles on and below the diagonal of `n`, as disjoint views, tile column by tile column.
fn lower_tiles(n: MatMut<'_, f64>, tile: usize) -> Vec<Tile<'_>> {
    let u = n.nrows();
    let mut tiles = Vec::new();
    let mut rest = n;
    let mut col0 = 0;
    while col0 < u {
        let width = tile.min(u - col0);
        let (panel, right) = rest.split_at_col_mut(width);
        rest = right;
        // the panel's rows above col0 belong to the strict upper triangle: left alone
        let (_, mut below) = panel.split_at_row_mut(col0);
        let mut row0 = col0;
        while row0 < u {
            let height = tile.min(u - row0);
            let (dest, lower) = below.split_at_row_mut(height);
            below = lower;
            tiles.push(Tile { row0, col0, dest });
            row0 += height;
        }
        col0 += width;
    }
    tiles
}

#[cfg(test)]
pub(super) mod tests {
    use super::*;
    use faer::Mat;

    /// A deterministic, irregular u × k block (no structure a kernel could exploit).
    pub(super) fn block(u: usize, k: usize) -> Mat<f64> {
        Mat::from_fn(u, k, |i, j| {
            ((i * 7919 + j * 104_729) % 1_000) as f64 / 500.0 - 1.0 + 1e-3 * (i as f64).sin()
        })
    }

    /// A lower triangle already holding values, and an upper one holding a marker that the
    /// update must leave alone.
    /// The lower triangle of `got` within 1e-13 of ‖reference‖ (largest lower entry), and the
    /// strict upper triangle still at `start`'s −7.
    pub(super) fn assert_lower_matches(got: &Mat<f64>, reference: &Mat<f64>, what: &str) {
        let u = reference.nrows();
        let scale = (0..u)
            .flat_map(|c| (c..u).map(move |r| (r, c)))
            .fold(0.0f64, |a, (r, c)| a.max(reference[(r, c)].abs()));
        for c in 0..u {
            for r in 0..u {
                if r < c {
                    assert_eq!(got[(r, c)], -7.0, "upper ({r}, {c}) touched, {what}");
                    continue;
                }
                let d = (got[(r, c)] - reference[(r, c)]).abs();
                assert!(
                    d <= 1e-13 * scale,
                    "N[{r},{c}] {what}: {} vs {} (‖N‖ {scale})",
                    got[(r, c)],
                    reference[(r, c)]
                );
            }
        }
    }

    pub(super) fn start(u: usize) -> Mat<f64> {
        Mat::from_fn(u, u, |i, j| {
            if i >= j {
                ((i + 3 * j) % 11) as f64
            } else {
                -7.0
            }
        })
    }

    /// Tiled against the reference, over shapes where u is and is not a multiple of the tile,
    /// u smaller than a tile, a block smaller than a tile (k < T) and a single column.
    #[test]
    fn tiled_update_matches_the_single_triangular_product() {
        for &(u, k, tile) in &[
            (1, 1, 4),
            (5, 3, 8),
            (17, 40, 8),
            (64, 64, 16),
            (100, 7, 32),
            (300, 513, 64),
            (521, 100, TILE_UNKNOWNS),
            (700, 2, TILE_UNKNOWNS),
        ] {
            let b = block(u, k);
            let mut reference = start(u);
            lower_rank_update_reference(reference.as_mut(), b.as_ref());
            let mut tiled = start(u);
            lower_rank_update_tiles(tiled.as_mut(), b.as_ref(), tile);
            assert_lower_matches(&tiled, &reference, &format!("u {u} k {k} tile {tile}"));
        }
    }

    /// Both against the definition N_rc += Σ_j B_rj B_cj written out (the textbook sum).
    #[test]
    fn reference_update_is_the_sum_of_products() {
        let (u, k) = (23, 9);
        let b = block(u, k);
        let mut n = start(u);
        lower_rank_update_reference(n.as_mut(), b.as_ref());
        let initial = start(u);
        for c in 0..u {
            for r in c..u {
                let sum: f64 = (0..k).map(|j| b[(r, j)] * b[(c, j)]).sum();
                let expected = initial[(r, c)] + sum;
                assert!(
                    (n[(r, c)] - expected).abs() <= 1e-13 * expected.abs().max(1.0),
                    "N[{r},{c}]"
                );
            }
        }
    }

    #[test]
    fn tiles_cover_the_lower_triangle_once() {
        let u = 10;
        let mut n = Mat::<f64>::zeros(u, u);
        for t in lower_tiles(n.as_mut(), 4) {
            assert!(t.row0 >= t.col0 && t.row0 % 4 == 0 && t.col0 % 4 == 0);
            let mut dest = t.dest;
            for c in 0..dest.ncols() {
                for r in 0..dest.nrows() {
                    dest[(r, c)] += 1.0;
                }
            }
        }
        for c in 0..u {
            for r in 0..u {
                // a diagonal tile is written whole (its upper part is left to the triangular
                // product), so only tiles strictly above the diagonal band stay empty
                let tile_row = r / 4;
                let tile_col = c / 4;
                let expected = if tile_row >= tile_col { 1.0 } else { 0.0 };
                assert_eq!(n[(r, c)], expected, "({r}, {c})");
            }
        }
    }
}
