//! Runtime choice of the instruction set for the block kernels. The same generic code
//! (`order.rs`, `block.rs`) is compiled three times: portable (baseline x86-64 or any other
//! target, no FMA), AVX2+FMA (8 lanes) and AVX-512 (16 lanes). `KernelPath::detect` picks the
//! best the running CPU supports; tests run every available path against the scalar reference.

use super::order::{analysis_order, synth_order, AnalysisJob, OrderScratch, SynthJob};

/// Which compiled variant of the kernels runs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum KernelPath {
    /// Plain Rust, 8 lanes, separate multiply and add (any CPU).
    Portable,
    /// AVX2 with fused multiply–add, 8 lanes.
    Avx2Fma,
    /// AVX-512F, 16 lanes.
    Avx512,
}

impl KernelPath {
    /// The fastest path this CPU supports.
    pub fn detect() -> KernelPath {
        #[cfg(target_arch = "x86_64")]
        {
            if std::is_x86_feature_detected!("avx512f")
                && std::is_x86_feature_detected!("avx2")
                && std::is_x86_feature_detected!("fma")
            {
                return KernelPath::Avx512;
            }
            if std::is_x86_feature_detected!("avx2") && std::is_x86_feature_detected!("fma") {
                return KernelPath::Avx2Fma;
            }
        }
        KernelPath::Portable
    }

    /// Whether this CPU can run the path.
    pub fn is_supported(self) -> bool {
        match self {
            KernelPath::Portable => true,
            KernelPath::Avx2Fma => {
                #[cfg(target_arch = "x86_64")]
                {
                    std::is_x86_feature_detected!("avx2") && std::is_x86_feature_detected!("fma")
                }
                #[cfg(not(target_arch = "x86_64"))]
                {
                    false
                }
            }
            KernelPath::Avx512 => {
                #[cfg(target_arch = "x86_64")]
                {
                    std::is_x86_feature_detected!("avx512f") && KernelPath::Avx2Fma.is_supported()
                }
                #[cfg(not(target_arch = "x86_64"))]
                {
                    false
                }
            }
        }
    }

    /// Every path this CPU can run.
    pub fn available() -> Vec<KernelPath> {
        [
            KernelPath::Portable,
            KernelPath::Avx2Fma,
            KernelPath::Avx512,
        ]
        .into_iter()
        .filter(|p| p.is_supported())
        .collect()
    }

    pub fn name(self) -> &'static str {
        match self {
            KernelPath::Portable => "portable",
            KernelPath::Avx2Fma => "avx2+fma",
            KernelPath::Avx512 => "avx512",
        }
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn synth_avx2<const GRAD: bool>(job: &SynthJob, m: usize, sc: &mut OrderScratch) {
    synth_order::<8, true, GRAD>(job, m, sc)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn synth_avx512<const GRAD: bool>(job: &SynthJob, m: usize, sc: &mut OrderScratch) {
    synth_order::<16, true, GRAD>(job, m, sc)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn analysis_avx2(job: &AnalysisJob, m: usize, sc: &mut OrderScratch) {
    analysis_order::<8, true>(job, m, sc)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn analysis_avx512(job: &AnalysisJob, m: usize, sc: &mut OrderScratch) {
    analysis_order::<16, true>(job, m, sc)
}

/// Synthesis of one order on the chosen path. The caller has checked `path.is_supported()`.
pub fn synth(path: KernelPath, grad: bool, job: &SynthJob, m: usize, sc: &mut OrderScratch) {
    match (path, grad) {
        #[cfg(target_arch = "x86_64")]
        // SAFETY: the plan only selects a path the CPU supports (checked at construction).
        (KernelPath::Avx512, false) => unsafe { synth_avx512::<false>(job, m, sc) },
        #[cfg(target_arch = "x86_64")]
        (KernelPath::Avx512, true) => unsafe { synth_avx512::<true>(job, m, sc) },
        #[cfg(target_arch = "x86_64")]
        (KernelPath::Avx2Fma, false) => unsafe { synth_avx2::<false>(job, m, sc) },
        #[cfg(target_arch = "x86_64")]
        (KernelPath::Avx2Fma, true) => unsafe { synth_avx2::<true>(job, m, sc) },
        (_, false) => synth_order::<8, false, false>(job, m, sc),
        (_, true) => synth_order::<8, false, true>(job, m, sc),
    }
}

/// Analysis of one order on the chosen path.
pub fn analysis(path: KernelPath, job: &AnalysisJob, m: usize, sc: &mut OrderScratch) {
    match path {
        #[cfg(target_arch = "x86_64")]
        // SAFETY: as above.
        KernelPath::Avx512 => unsafe { analysis_avx512(job, m, sc) },
        #[cfg(target_arch = "x86_64")]
        KernelPath::Avx2Fma => unsafe { analysis_avx2(job, m, sc) },
        _ => analysis_order::<8, false>(job, m, sc),
    }
}
