//! The packed symmetric rank-k update N ← N + B Bᵀ (lower triangle), on our own register
//! micro-kernel (`micro.rs`), the usual blocked product (Goto & van de Geijn, "Anatomy
//! of high-performance matrix multiplication", ACM TOMS 34(3), 2008):
//!
//! 1. B (u × k) is taken [`DEPTH_COLUMNS`] columns (kc) at a time. Each slice is packed once,
//!    in parallel, into 8-row panels (`panel[p·8 + r]` = B_(8q + r, p), zero past row u, the
//!    panel count rounded up to whole 24-row strips), 64-byte aligned: both sides of the
//!    product are read from this one copy (a 24-row strip of A is three consecutive panels).
//! 2. The lower triangle of N is cut into square tiles of [`PACKED_TILE`] unknowns (as in
//!    [`super::lower_rank_update_tiled`]); tiles run in parallel on the rayon pool, largest
//!    first. Inside a tile, for each 8-column strip (kept in L1) the 24-row strips of the tile
//!    (kept in L2) pass through the micro-kernel, and its 24 × 8 result is added into N;
//!    on diagonal tiles, strips wholly above the diagonal are skipped and only entries on or
//!    below it are added.
//!
//! Summation order: entry N_rc gets, slice by slice (kc columns of B each, in order), the sum
//! Σ_p B_rp B_cp over the slice accumulated from p = 0 upwards, then added to N_rc. Against
//! the reference (one triangular product) this differs only in the order of the sum over the
//! block's columns: the same up to rounding (tested).

use faer::reborrow::ReborrowMut;
use faer::{MatMut, MatRef};
use rayon::prelude::*;

use super::lower_tiles;
use super::micro::{micro_reference, MICRO_COLS, MICRO_OUT, MICRO_ROWS, PANEL_ROWS};
use crate::sht::KernelPath;

/// Columns of B per packed slice (kc): a 24-row strip (3 · 8 · kc doubles, 24 KiB) streams
/// from L2 while the 8-column strip (8 KiB) stays in L1 beside it (48 KiB here). Measured
/// with `kugel bench --case rank-update --lmax 60 --depth 1024 --threads 1` on an AVX-512
/// core (4 December 2026, load 4–5, fractions of the FMA peak of the same run): kc = 128
/// gave 0.62–0.65, 96 and 192 0.55–0.61, 256 0.55–0.59 (the two strips no longer fit L1
/// together), 64 0.55–0.57 (the additions into N weigh more); the other loop order (8-column
/// strips inside) 0.39–0.53.
pub const DEPTH_COLUMNS: usize = 128;

/// Width of the square tiles (a multiple of the 24-row strip): a tile's strips of A
/// (192 · kc doubles, 192 KiB) stay in L2 while its 8-column strips pass (tiles of 384 and
/// 768 measured the same within the noise, 96 lower).
pub const PACKED_TILE: usize = 192;

/// Which compiled micro-kernel runs. The AVX-512 one can only be had on a CPU that has it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct MicroKernel {
    avx512: bool,
}

impl MicroKernel {
    /// The scalar reference kernel (any CPU).
    pub fn reference() -> MicroKernel {
        MicroKernel { avx512: false }
    }

    /// The AVX-512 kernel, where this CPU has AVX-512F.
    pub fn avx512() -> Option<MicroKernel> {
        KernelPath::Avx512
            .is_supported()
            .then_some(MicroKernel { avx512: true })
    }

    fn run(self, kc: usize, a: &[f64], panel_stride: usize, b: &[f64], out: &mut [f64; MICRO_OUT]) {
        #[cfg(target_arch = "x86_64")]
        if self.avx512 {
            // SAFETY: `avx512` is only set by `MicroKernel::avx512`, after the CPU check.
            #[allow(unsafe_code)]
            unsafe {
                super::micro::micro_avx512(kc, a, panel_stride, b, out)
            };
            return;
        }
        micro_reference(kc, a, panel_stride, b, out);
    }

    /// Adds the 24 × 8 product into rows ra.., columns cb.. of `dest` (which must hold them)
    /// in the kernel itself; false (nothing done) for the reference kernel, whose result the
    /// caller adds from [`MicroKernel::run`].
    #[allow(clippy::too_many_arguments)]
    fn add_into(
        self,
        kc: usize,
        a: &[f64],
        panel_stride: usize,
        b: &[f64],
        dest: MatMut<'_, f64>,
        ra: usize,
        cb: usize,
    ) -> bool {
        #[cfg(target_arch = "x86_64")]
        if self.avx512 {
            assert!(ra + MICRO_ROWS <= dest.nrows() && cb + MICRO_COLS <= dest.ncols());
            assert!(dest.row_stride() == 1 && dest.col_stride() >= MICRO_ROWS as isize);
            let ldc = dest.col_stride() as usize;
            let c = dest.ptr_at_mut(ra, cb);
            // SAFETY: `avx512` is only set after the CPU check; the 24 × 8 block at c
            // (unit row stride, columns ldc apart) lies inside `dest` (asserted above), which
            // this call borrows exclusively.
            #[allow(unsafe_code)]
            unsafe {
                super::micro::micro_avx512_add(kc, a, panel_stride, b, c, ldc)
            };
            return true;
        }
        let _ = (kc, a, panel_stride, b, dest, ra, cb);
        false
    }
}

/// The packed update with its packing buffer, kept from block to block (a fresh buffer per
/// slice would be fresh pages each time).
pub struct PackedRankUpdate {
    kernel: MicroKernel,
    unknowns: usize,
    /// Panels of one slice (a multiple of 3).
    panels: usize,
    buffer: Vec<f64>,
}

impl PackedRankUpdate {
    /// For `unknowns` rows of B, with `kernel`.
    pub fn new(unknowns: usize, kernel: MicroKernel) -> PackedRankUpdate {
        let panels = unknowns.div_ceil(MICRO_ROWS) * (MICRO_ROWS / PANEL_ROWS);
        PackedRankUpdate {
            kernel,
            unknowns,
            panels,
            buffer: Vec::new(),
        }
    }

    /// Bytes of the packing buffer for `unknowns` (what [`PackedRankUpdate::update`]
    /// allocates), for the memory estimate.
    /// Saturating, so that any size can be estimated.
    pub fn buffer_bytes(unknowns: usize) -> u64 {
        let rows = (unknowns.div_ceil(MICRO_ROWS) * MICRO_ROWS) as u64;
        crate::memory::saturating_product(&[rows, DEPTH_COLUMNS as u64, 8])
            .saturating_add(PANEL_ROWS as u64 * 8)
    }

    /// N ← N + B Bᵀ on the lower triangle of `n` (u × u, unit row stride), B = `b` (u × k).
    /// The strict upper triangle of `n` is not touched.
    pub fn update(&mut self, mut n: MatMut<'_, f64>, b: MatRef<'_, f64>) {
        let u = self.unknowns;
        assert!(n.nrows() == u && n.ncols() == u && b.nrows() == u);
        assert_eq!(
            n.row_stride(),
            1,
            "the packed update writes columns of N as slices"
        );
        if u == 0 {
            return;
        }
        for p0 in (0..b.ncols()).step_by(DEPTH_COLUMNS) {
            let kc = DEPTH_COLUMNS.min(b.ncols() - p0);
            let stride = kc * PANEL_ROWS;
            let kernel = self.kernel;
            let packed = self.pack(b, p0, kc);
            let mut tiles = lower_tiles(n.rb_mut(), PACKED_TILE);
            tiles.sort_by_key(|t| std::cmp::Reverse(t.dest.nrows() * t.dest.ncols()));
            tiles
                .into_par_iter()
                .with_max_len(1)
                .for_each(|t| update_tile(t.row0, t.col0, t.dest, packed, stride, kc, kernel));
        }
    }

    /// Packs columns p0..p0 + kc of `b` into the (aligned) buffer; returns the packed panels.
    fn pack(&mut self, b: MatRef<'_, f64>, p0: usize, kc: usize) -> &[f64] {
        let stride = kc * PANEL_ROWS;
        let len = self.panels * stride;
        let want = self.panels * PANEL_ROWS * DEPTH_COLUMNS + PANEL_ROWS;
        if self.buffer.len() < want {
            self.buffer = vec![0.0; want];
        }
        // 64-byte alignment, so every panel (a multiple of 64 bytes long) is aligned
        let misalign = (self.buffer.as_ptr() as usize % 64) / 8;
        let offset = (PANEL_ROWS - misalign) % PANEL_ROWS;
        let u = self.unknowns;
        let packed = &mut self.buffer[offset..offset + len];
        packed
            .par_chunks_mut(stride)
            .enumerate()
            .for_each(|(q, panel)| {
                let r0 = q * PANEL_ROWS;
                let rows = PANEL_ROWS.min(u.saturating_sub(r0));
                for p in 0..kc {
                    let dst = &mut panel[p * PANEL_ROWS..(p + 1) * PANEL_ROWS];
                    let col = b.col(p0 + p);
                    match col.try_as_slice() {
                        // a whole panel row: a fixed-length copy, which compiles to two
                        // vector moves instead of a call to memcpy
                        Some(col) if rows == PANEL_ROWS => {
                            let src: &[f64; PANEL_ROWS] =
                                col[r0..r0 + PANEL_ROWS].try_into().expect("8 values");
                            let dst: &mut [f64; PANEL_ROWS] = dst.try_into().expect("8 values");
                            *dst = *src;
                        }
                        _ => {
                            (0..rows).for_each(|r| dst[r] = col.read(r0 + r));
                            dst[rows..].iter_mut().for_each(|v| *v = 0.0);
                        }
                    }
                }
            });
        &self.buffer[offset..offset + len]
    }
}

/// Adds the products of one tile (rows `row0..`, columns `col0..` of N) for one packed slice.
fn update_tile(
    row0: usize,
    col0: usize,
    mut dest: MatMut<'_, f64>,
    packed: &[f64],
    stride: usize,
    kc: usize,
    kernel: MicroKernel,
) {
    let diagonal = row0 == col0;
    let (height, width) = (dest.nrows(), dest.ncols());
    let mut out = [0.0; MICRO_OUT];
    for cb in (0..width).step_by(MICRO_COLS) {
        let bq = (col0 + cb) / PANEL_ROWS;
        let b_strip = &packed[bq * stride..(bq + 1) * stride];
        let ncols = MICRO_COLS.min(width - cb);
        // on a diagonal tile, the strips whose rows all lie above column cb are skipped
        let first = if diagonal {
            cb / MICRO_ROWS * MICRO_ROWS
        } else {
            0
        };
        for ra in (first..height).step_by(MICRO_ROWS) {
            let a_strip = &packed[(row0 + ra) / PANEL_ROWS * stride..];
            let nrows = MICRO_ROWS.min(height - ra);
            // whole block below the diagonal: every (ra + i, cb + j) has ra + i ≥ cb + j
            let whole = nrows == MICRO_ROWS
                && ncols == MICRO_COLS
                && (!diagonal || ra + 1 >= cb + MICRO_COLS);
            if whole && kernel.add_into(kc, a_strip, stride, b_strip, dest.rb_mut(), ra, cb) {
                continue;
            }
            kernel.run(kc, a_strip, stride, b_strip, &mut out);
            for j in 0..ncols {
                // rows on or below the diagonal: ra + i ≥ cb + j
                let lo = if diagonal {
                    (cb + j).saturating_sub(ra).min(nrows)
                } else {
                    0
                };
                for i in lo..nrows {
                    let v = dest.read(ra + i, cb + j) + out[j * MICRO_ROWS + i];
                    dest.write(ra + i, cb + j, v);
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::lower_rank_update_reference;
    use super::super::tests::{assert_lower_matches, block, start};
    use super::*;

    fn check(kernel: MicroKernel) {
        for &(u, k) in &[
            (1, 1),
            (5, 3),
            (24, 8),
            (25, 300),
            (100, 7),
            (193, 257),
            (PACKED_TILE * 2 + 13, 40),
            (421, 513),
        ] {
            let b = block(u, k);
            let mut reference = start(u);
            lower_rank_update_reference(reference.as_mut(), b.as_ref());
            let mut packed = start(u);
            let mut updater = PackedRankUpdate::new(u, kernel);
            updater.update(packed.as_mut(), b.as_ref());
            assert_lower_matches(&packed, &reference, &format!("u {u} k {k} {kernel:?}"));
        }
    }

    /// The driver (packing, tiles, edges, diagonal) on the scalar reference micro-kernel,
    /// against the single triangular product: u multiple and not of the strips and tiles,
    /// smaller than a strip, k smaller than a slice and across slices.
    #[test]
    fn packed_update_on_the_reference_kernel_matches_the_triangular_product() {
        check(MicroKernel::reference());
    }

    #[test]
    fn packed_update_on_the_avx512_kernel_matches_the_triangular_product() {
        match MicroKernel::avx512() {
            Some(kernel) => check(kernel),
            None => eprintln!("no AVX-512F on this CPU: only the reference kernel was checked"),
        }
    }
}
