//! The compiled variants of the block kernels, as a plain description: which one a plan runs
//! is chosen once, when the plan is built (see `TransformPlan::with_kernel_path`).

/// Which compiled variant of the kernels runs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum KernelPath {
    /// Plain Rust, 8 lanes per recursion block (any CPU). Fused multiply–add where the target has it in hardware
    /// (always on aarch64; on x86-64 when built with the `fma` target feature), separate
    /// multiply and add elsewhere, where `mul_add` would be a slow software call.
    Portable,
    /// AVX2 with fused multiply–add, 16 lanes per recursion block (x86-64, detected at run
    /// time).
    Avx2Fma,
    /// AVX-512F with fused multiply–add, 32 lanes per recursion block (x86-64, detected at run
    /// time).
    Avx512,
}

/// Whether the portable variant is compiled with fused multiply–add.
pub(crate) const PORTABLE_FUSED: bool = cfg!(any(target_arch = "aarch64", target_feature = "fma"));

impl KernelPath {
    /// The fastest path this CPU supports.
    pub fn detect() -> KernelPath {
        [KernelPath::Avx512, KernelPath::Avx2Fma]
            .into_iter()
            .find(|p| p.is_supported())
            .unwrap_or(KernelPath::Portable)
    }

    /// Whether this CPU can run the path.
    pub fn is_supported(self) -> bool {
        match self {
            KernelPath::Portable => true,
            #[cfg(target_arch = "x86_64")]
            KernelPath::Avx2Fma => {
                std::is_x86_feature_detected!("avx2") && std::is_x86_feature_detected!("fma")
            }
            #[cfg(target_arch = "x86_64")]
            KernelPath::Avx512 => {
                std::is_x86_feature_detected!("avx512f") && KernelPath::Avx2Fma.is_supported()
            }
            #[cfg(not(target_arch = "x86_64"))]
            KernelPath::Avx2Fma | KernelPath::Avx512 => false,
        }
    }

    /// Every path this CPU can run (the portable one always).
    pub fn available() -> Vec<KernelPath> {
        KernelPath::all()
            .into_iter()
            .filter(|p| p.is_supported())
            .collect()
    }

    /// Every path there is, supported here or not.
    pub fn all() -> [KernelPath; 3] {
        [
            KernelPath::Portable,
            KernelPath::Avx2Fma,
            KernelPath::Avx512,
        ]
    }

    /// Short name, as the benchmark prints and accepts it.
    pub fn name(self) -> &'static str {
        match self {
            KernelPath::Portable => "portable",
            KernelPath::Avx2Fma => "avx2+fma",
            KernelPath::Avx512 => "avx512",
        }
    }

    /// The path of a [`KernelPath::name`].
    pub fn from_name(name: &str) -> Option<KernelPath> {
        KernelPath::all().into_iter().find(|p| p.name() == name)
    }

    /// Lanes (rings, or mirror pairs of rings) whose recursions run together in one block:
    /// four registers' worth on the SIMD paths, so that four independent dependency chains
    /// hide the latency of the fused steps.
    pub fn lanes(self) -> usize {
        match self {
            KernelPath::Portable => 8,
            KernelPath::Avx2Fma => 16,
            KernelPath::Avx512 => 32,
        }
    }

    /// Whether the path's multiply–adds are fused (one rounding each).
    pub fn fused_multiply_add(self) -> bool {
        match self {
            KernelPath::Portable => PORTABLE_FUSED,
            KernelPath::Avx2Fma | KernelPath::Avx512 => true,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_portable_is_always_there() {
        for p in KernelPath::all() {
            assert_eq!(KernelPath::from_name(p.name()), Some(p));
        }
        assert_eq!(KernelPath::from_name("sse9"), None);
        assert!(KernelPath::available().contains(&KernelPath::Portable));
        assert!(KernelPath::detect().is_supported());
        // aarch64 has FMA in every core (common practice), so its portable path fuses
        if cfg!(target_arch = "aarch64") {
            assert!(KernelPath::Portable.fused_multiply_add());
        }
    }
}
