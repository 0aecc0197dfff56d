//! The machine's sustained FP64 fused multiply–add rate, measured in the same run as the
//! transforms so that their speed can be stated as a fraction of it.
//!
//! The loop: `CHAINS` = 12 independent accumulators, each a vector of `W` doubles, updated as
//! a ← a·c + d (one FMA per lane, 2 flops), on every thread of the pool at once. Twelve chains
//! cover the FMA latency (4 cycles) times the FMA ports (2) of current x86-64 cores with room to
//! spare; c = 1 − 2⁻²⁰ and d = 2⁻³⁰ keep every accumulator near d/(1 − c) = 2⁻¹⁰, far from
//! overflow and from subnormals. The vector width is that of the widest instruction set the
//! transform kernels use on this CPU (`KernelPath::detect`): 8 doubles (zmm) for AVX-512, 4 (ymm)
//! for AVX2+FMA, 2 with plain multiply and add for the portable path (whose kernels do not fuse
//! unless the target has FMA). Flops counted: 2 · CHAINS · W per iteration and thread.
//!
//! The AVX2 and AVX-512 copies are `#[target_feature]` functions; they are only called after
//! the runtime CPU check of the same kernel path the transforms run.

use std::time::Instant;

use kugel::sht::KernelPath;

/// Independent accumulator chains per thread.
const CHAINS: usize = 12;

/// Result of one peak measurement.
#[derive(Debug, Clone, Copy)]
pub struct FmaPeak {
    /// Sustained rate on all threads, GFLOP/s (an FMA counts as 2 flops).
    pub gflops: f64,
    /// The kernel path whose instruction set the loop used.
    pub path: KernelPath,
}

#[inline(always)]
fn chains<const W: usize, const FUSED: bool>(iterations: u64, seed: f64) -> f64 {
    let c = [1.0 - 1.0 / 1_048_576.0; W];
    let d = [1.0 / 1_073_741_824.0; W];
    let mut acc = [[0.0f64; W]; CHAINS];
    for (i, chain) in acc.iter_mut().enumerate() {
        for (l, a) in chain.iter_mut().enumerate() {
            *a = seed * (1 + i * W + l) as f64;
        }
    }
    for _ in 0..iterations {
        for chain in acc.iter_mut() {
            for l in 0..W {
                chain[l] = if FUSED {
                    chain[l].mul_add(c[l], d[l])
                } else {
                    chain[l] * c[l] + d[l]
                };
            }
        }
    }
    // the sum keeps every chain alive
    acc.iter().flatten().sum()
}

// The AVX2 copy is written with intrinsics: the generic loop over arrays above left its
// accumulators in memory there, which measures store-to-load latency instead of the FMA
// ports (seen: 8.6 GFLOP/s on two Zen 3 cores, less than the transforms reached). Twelve
// named registers keep every chain in a register.

// AVX-512 intrinsics are newer than the workspace's minimum Rust version, so that copy stays
// the generic loop; it was not measured on an AVX-512 machine since the AVX2 finding.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn chains_avx512(iterations: u64, seed: f64) -> f64 {
    chains::<8, true>(iterations, seed)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn chains_avx2(iterations: u64, seed: f64) -> f64 {
    use std::arch::x86_64::*;
    let c = _mm256_set1_pd(1.0 - 1.0 / 1_048_576.0);
    let d = _mm256_set1_pd(1.0 / 1_073_741_824.0);
    let mut acc = [_mm256_setzero_pd(); CHAINS];
    for (i, a) in acc.iter_mut().enumerate() {
        let mut start = [0.0f64; 4];
        for (l, v) in start.iter_mut().enumerate() {
            *v = seed * (1 + i * 4 + l) as f64;
        }
        *a = _mm256_loadu_pd(start.as_ptr());
    }
    let [mut a0, mut a1, mut a2, mut a3, mut a4, mut a5, mut a6, mut a7, mut a8, mut a9, mut a10, mut a11] =
        acc;
    for _ in 0..iterations {
        a0 = _mm256_fmadd_pd(a0, c, d);
        a1 = _mm256_fmadd_pd(a1, c, d);
        a2 = _mm256_fmadd_pd(a2, c, d);
        a3 = _mm256_fmadd_pd(a3, c, d);
        a4 = _mm256_fmadd_pd(a4, c, d);
        a5 = _mm256_fmadd_pd(a5, c, d);
        a6 = _mm256_fmadd_pd(a6, c, d);
        a7 = _mm256_fmadd_pd(a7, c, d);
        a8 = _mm256_fmadd_pd(a8, c, d);
        a9 = _mm256_fmadd_pd(a9, c, d);
        a10 = _mm256_fmadd_pd(a10, c, d);
        a11 = _mm256_fmadd_pd(a11, c, d);
    }
    acc = [a0, a1, a2, a3, a4, a5, a6, a7, a8, a9, a10, a11];
    let mut sum = 0.0;
    for a in acc {
        let mut lanes = [0.0f64; 4];
        _mm256_storeu_pd(lanes.as_mut_ptr(), a);
        sum += lanes.iter().sum::<f64>();
    }
    sum
}

/// (lanes per chain, checksum) of `iterations` rounds of the loop on one thread, in `path`'s
/// instruction set.
fn run_chains(path: KernelPath, iterations: u64, seed: f64) -> (usize, f64) {
    match path {
        #[cfg(target_arch = "x86_64")]
        // SAFETY: only reached for a path that `is_supported` confirmed on this CPU (the
        // callers take it from `KernelPath::detect`), and avx512 implies avx2 and fma there.
        KernelPath::Avx512 if path.is_supported() => {
            (8, unsafe { chains_avx512(iterations, seed) })
        }
        #[cfg(target_arch = "x86_64")]
        // SAFETY: as above, avx2 and fma were detected at run time.
        KernelPath::Avx2Fma if path.is_supported() => (4, unsafe { chains_avx2(iterations, seed) }),
        _ if path.fused_multiply_add() => (2, chains::<2, true>(iterations, seed)),
        _ => (2, chains::<2, false>(iterations, seed)),
    }
}

/// Measures the all-thread FMA rate in the current rayon pool: best of `trials` runs of about
/// `seconds_per_trial` each.
pub fn measure_fma_peak(trials: usize, seconds_per_trial: f64) -> FmaPeak {
    measure_fma_peak_on(KernelPath::detect(), trials, seconds_per_trial)
}

/// As [`measure_fma_peak`] in the instruction set of `path` (which this CPU must have: see
/// `KernelPath::is_supported`), e.g. the AVX2 rate on an AVX-512 machine, the ceiling of a
/// kernel that only uses 256-bit vectors.
pub fn measure_fma_peak_on(path: KernelPath, trials: usize, seconds_per_trial: f64) -> FmaPeak {
    // calibrate the iteration count on one thread
    let mut iterations: u64 = 1 << 16;
    let per_iteration_s = loop {
        let t = Instant::now();
        std::hint::black_box(run_chains(path, iterations, 1e-3));
        let s = t.elapsed().as_secs_f64();
        if s > 0.02 || iterations >= 1 << 40 {
            break s / iterations as f64;
        }
        iterations *= 4;
    };
    let iterations = ((seconds_per_trial / per_iteration_s) as u64).max(1);
    let mut best = 0.0f64;
    for _ in 0..trials.max(1) {
        let t = Instant::now();
        // one copy of the loop on every thread of the pool at once
        let lanes: Vec<usize> = rayon::broadcast(|ctx| {
            let (w, sum) = run_chains(path, iterations, 1e-3 * (ctx.index() + 1) as f64);
            std::hint::black_box(sum);
            w
        });
        let s = t.elapsed().as_secs_f64();
        let flops: f64 = lanes
            .iter()
            .map(|&w| 2.0 * (CHAINS * w) as f64 * iterations as f64)
            .sum();
        best = best.max(flops / s / 1e9);
    }
    FmaPeak { gflops: best, path }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_loop_computes_the_affine_recursion() {
        // a_{k+1} = a_k·c + d has the closed form a_k = a* + (a_0 − a*)·c^k with a* = d/(1 − c)
        // (common practice); the checksum of the loop must match it on every path
        let (c, d) = (1.0 - 1.0 / 1_048_576.0, 1.0 / 1_073_741_824.0);
        let fixed = d / (1.0 - c);
        let k = 1000u64;
        for path in KernelPath::available() {
            let (w, sum) = run_chains(path, k, 1e-3);
            let expected: f64 = (0..CHAINS * w)
                .map(|j| fixed + (1e-3 * (1 + j) as f64 - fixed) * c.powi(k as i32))
                .sum();
            assert!(
                (sum - expected).abs() < 1e-12 * expected,
                "{path:?}: {sum} vs {expected}"
            );
        }
    }
}
