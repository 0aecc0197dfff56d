//! The compiled copies of the lane kernels and the choice among them: the only `unsafe` code
//! of the fit. The AVX2 and AVX-512 copies are `#[target_feature]` functions, which may only
//! be called on a CPU that has those features; [`LaneKernels`] is only made for a path that
//! `KernelPath::is_supported` (runtime CPU detection) confirms, and its field is private, so
//! every call below runs on a CPU with the copy's features.

use super::{kernels, LaneSums, LaneTable, ObservationBlock, LANES};
use crate::error::{Error, Result};
use crate::observe::fit::design::UnknownLayout;
use crate::sht::KernelPath;

/// Whether the portable copy fuses its multiply–adds (only where the target has them in
/// hardware: a software `mul_add` is a slow call).
const PORTABLE_FUSED: bool = cfg!(any(target_arch = "aarch64", target_feature = "fma"));

/// The lane kernels of one instruction-set path.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LaneKernels {
    path: KernelPath,
}

impl LaneKernels {
    /// The widest path this CPU has.
    pub fn detect() -> LaneKernels {
        LaneKernels {
            path: KernelPath::detect(),
        }
    }

    /// The kernels of `path`, refused when this CPU cannot run them.
    pub fn for_path(path: KernelPath) -> Result<LaneKernels> {
        if !path.is_supported() {
            return Err(Error::invalid(format!(
                "this CPU cannot run the {} kernels",
                path.name()
            )));
        }
        Ok(LaneKernels { path })
    }

    pub fn path(&self) -> KernelPath {
        self.path
    }

    /// Columns k_l P̄_lm (and cos mλ, sin mλ) of every lane of `block`.
    pub fn fill_columns(&self, table: &LaneTable, block: &mut ObservationBlock) {
        assert_eq!(table.lmax, block.lmax());
        match self.path {
            // SAFETY (both arms): `self.path` is supported on this CPU (see the module doc).
            #[cfg(target_arch = "x86_64")]
            #[allow(unsafe_code)]
            KernelPath::Avx512 => unsafe { fill_columns_avx512(table, block) },
            #[cfg(target_arch = "x86_64")]
            #[allow(unsafe_code)]
            KernelPath::Avx2Fma => unsafe { fill_columns_avx2(table, block) },
            _ => kernels::fill_columns::<PORTABLE_FUSED>(table, block),
        }
    }

    /// a_iᵀx of every lane of `block` (columns filled), x the unknowns of `layout`.
    pub fn synthesize(
        &self,
        block: &ObservationBlock,
        layout: &UnknownLayout,
        x: &[f64],
    ) -> [f64; LANES] {
        assert!(layout.lmax == block.lmax() && x.len() >= layout.len());
        match self.path {
            // SAFETY (both arms): `self.path` is supported on this CPU (see the module doc).
            #[cfg(target_arch = "x86_64")]
            #[allow(unsafe_code)]
            KernelPath::Avx512 => unsafe { synthesize_avx512(block, layout, x) },
            #[cfg(target_arch = "x86_64")]
            #[allow(unsafe_code)]
            KernelPath::Avx2Fma => unsafe { synthesize_avx2(block, layout, x) },
            _ => kernels::synthesize::<PORTABLE_FUSED>(block, layout, x),
        }
    }

    /// sums += Σ_g f_g a_g over the lanes of `block` (columns filled).
    pub fn accumulate(&self, block: &ObservationBlock, f: &[f64; LANES], sums: &mut LaneSums) {
        assert_eq!(sums.lmax, block.lmax());
        match self.path {
            // SAFETY (both arms): `self.path` is supported on this CPU (see the module doc).
            #[cfg(target_arch = "x86_64")]
            #[allow(unsafe_code)]
            KernelPath::Avx512 => unsafe { accumulate_avx512(block, f, sums) },
            #[cfg(target_arch = "x86_64")]
            #[allow(unsafe_code)]
            KernelPath::Avx2Fma => unsafe { accumulate_avx2(block, f, sums) },
            _ => kernels::accumulate::<PORTABLE_FUSED>(block, f, sums),
        }
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
#[allow(unsafe_code)]
unsafe fn fill_columns_avx512(table: &LaneTable, block: &mut ObservationBlock) {
    kernels::fill_columns::<true>(table, block)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
#[allow(unsafe_code)]
unsafe fn fill_columns_avx2(table: &LaneTable, block: &mut ObservationBlock) {
    kernels::fill_columns::<true>(table, block)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
#[allow(unsafe_code)]
unsafe fn synthesize_avx512(
    block: &ObservationBlock,
    layout: &UnknownLayout,
    x: &[f64],
) -> [f64; LANES] {
    kernels::synthesize::<true>(block, layout, x)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
#[allow(unsafe_code)]
unsafe fn synthesize_avx2(
    block: &ObservationBlock,
    layout: &UnknownLayout,
    x: &[f64],
) -> [f64; LANES] {
    kernels::synthesize::<true>(block, layout, x)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
#[allow(unsafe_code)]
unsafe fn accumulate_avx512(block: &ObservationBlock, f: &[f64; LANES], sums: &mut LaneSums) {
    kernels::accumulate::<true>(block, f, sums)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
#[allow(unsafe_code)]
unsafe fn accumulate_avx2(block: &ObservationBlock, f: &[f64; LANES], sums: &mut LaneSums) {
    kernels::accumulate::<true>(block, f, sums)
}
