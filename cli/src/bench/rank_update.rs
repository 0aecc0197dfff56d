//! `kugel bench --case rank-update`: the product at the heart of the direct fit's assembly
//! alone, N ← N + B Bᵀ with N u × u (u = (L+1)²) and B u × k (k = `--depth`, the points of
//! one assembly block), seeded uniform entries. Four versions, median time over the repeats:
//!
//! - `general`: faer's general product on the full u × u matrix
//!   (`full_rank_update_general`, 2 u² k flops counted), the rate of the kernel the tiled
//!   update is built from;
//! - `triangular`: the single triangular product (`lower_rank_update_reference`);
//! - `tiled`: faer's general product on tiles (`lower_rank_update_tiled`);
//! - `assembly`: the update the assembly runs (`RankUpdater`: on an AVX-512 CPU the packed
//!   update on our own micro-kernel, elsewhere the tiled one), named in `assembly_update`.
//!
//! The last three are counted as u² k flops (the lower triangle, as `--case fit` counts the
//! assembly). Rates are stated as fractions of the FMA peak measured in the same run, and of
//! the AVX2 FMA rate too where the CPU has AVX-512: faer's kernels use 256-bit vectors on the
//! stable compiler, so that rate is their ceiling. The tiled and assembly results are
//! compared with the reference (largest difference over the largest entry).

use std::time::Instant;

use faer::Mat;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use kugel::observe::fit::rank_update::{
    full_rank_update_general, lower_rank_update_reference, lower_rank_update_tiled, RankUpdater,
    TILE_UNKNOWNS,
};
use kugel::sht::KernelPath;

use super::fma_peak::{measure_fma_peak, measure_fma_peak_on};
use super::transform::bench_threads;

/// Sizes of the rank-update benchmark.
#[derive(Debug, Clone)]
pub struct RankUpdateBenchArgs {
    pub lmax: usize,
    pub depth: usize,
    pub threads: usize,
    pub repeat: usize,
    pub seed: u64,
}

/// One result.
#[derive(Debug, Clone, serde::Serialize)]
pub struct RankUpdateBenchResult {
    pub case: &'static str,
    /// Unknowns u = (L+1)².
    pub unknowns: usize,
    /// Columns of B (points per block).
    pub depth: usize,
    pub tile_unknowns: usize,
    pub threads: usize,
    pub repeat: usize,
    pub fma_peak_gflops: f64,
    pub fma_peak_kernel: String,
    /// The 256-bit FMA rate (equal to the peak where AVX2 is the widest path).
    pub fma_avx2_gflops: f64,
    pub general_s: f64,
    pub general_gflops: f64,
    pub general_peak_fraction: f64,
    pub triangular_s: f64,
    pub triangular_gflops: f64,
    pub triangular_peak_fraction: f64,
    pub tiled_s: f64,
    pub tiled_gflops: f64,
    pub tiled_peak_fraction: f64,
    /// max |N_tiled − N_reference| / max |N_reference| over the lower triangle.
    pub tiled_vs_reference: f64,
    /// Which update the assembly runs.
    pub assembly_update: String,
    pub assembly_s: f64,
    pub assembly_gflops: f64,
    pub assembly_peak_fraction: f64,
    /// As `tiled_vs_reference`, for the assembly's update.
    pub assembly_vs_reference: f64,
}

fn median(mut times: Vec<f64>) -> f64 {
    times.sort_by(f64::total_cmp);
    times[times.len() / 2]
}

pub fn run_rank_update_bench(args: &RankUpdateBenchArgs) -> anyhow::Result<RankUpdateBenchResult> {
    let threads = bench_threads(args.threads)?;
    let u = (args.lmax + 1)
        .checked_mul(args.lmax + 1)
        .ok_or_else(|| kugel::Error::invalid(format!("--lmax {}: too large", args.lmax)))?;
    if args.depth == 0 {
        return Err(kugel::Error::invalid("--depth must be at least 1").into());
    }
    // two u × u matrices and the u × k block
    let bytes = (2.0 * (u as f64) * (u as f64) + (u as f64) * args.depth as f64) * 8.0;
    kugel::memory::check_fits(
        &format!("the rank-update benchmark (u = {u}, k = {})", args.depth),
        bytes as u64,
    )?;
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()?;
    pool.install(|| {
        let peak = measure_fma_peak(3, 0.2);
        let avx2 = if peak.path == KernelPath::Avx512 {
            measure_fma_peak_on(KernelPath::Avx2Fma, 3, 0.2).gflops
        } else {
            peak.gflops
        };
        let mut rng = ChaCha8Rng::seed_from_u64(args.seed);
        let b = Mat::<f64>::from_fn(u, args.depth, |_, _| rng.gen_range(-1.0..1.0));
        let k = args.depth as f64;
        let lower_flops = (u as f64) * (u as f64) * k;
        let repeat = args.repeat.max(1);
        let time = |f: &mut dyn FnMut()| {
            median(
                (0..repeat)
                    .map(|_| {
                        let t = Instant::now();
                        f();
                        t.elapsed().as_secs_f64()
                    })
                    .collect(),
            )
        };
        let mut full = Mat::<f64>::zeros(u, u);
        let general_s = time(&mut || full_rank_update_general(full.as_mut(), b.as_ref()));
        drop(full);
        let mut reference = Mat::<f64>::zeros(u, u);
        let triangular_s =
            time(&mut || lower_rank_update_reference(reference.as_mut(), b.as_ref()));
        let mut tiled = Mat::<f64>::zeros(u, u);
        let tiled_s = time(&mut || lower_rank_update_tiled(tiled.as_mut(), b.as_ref()));
        let mut updater = RankUpdater::new(u);
        let mut assembly = Mat::<f64>::zeros(u, u);
        let assembly_s = time(&mut || updater.update(assembly.as_mut(), b.as_ref()));
        let assembly_vs_reference = tiled_check(&reference, &assembly);
        let tiled_vs_reference = tiled_check(&reference, &tiled);
        let rate = |flops: f64, s: f64| flops / s / 1e9;
        let general_gflops = rate(2.0 * lower_flops, general_s);
        let triangular_gflops = rate(lower_flops, triangular_s);
        let tiled_gflops = rate(lower_flops, tiled_s);
        let assembly_gflops = rate(lower_flops, assembly_s);
        Ok(RankUpdateBenchResult {
            case: "rank-update",
            unknowns: u,
            depth: args.depth,
            tile_unknowns: TILE_UNKNOWNS,
            threads,
            repeat,
            fma_peak_gflops: peak.gflops,
            fma_peak_kernel: peak.path.name().to_string(),
            fma_avx2_gflops: avx2,
            general_s,
            general_gflops,
            general_peak_fraction: general_gflops / peak.gflops,
            triangular_s,
            triangular_gflops,
            triangular_peak_fraction: triangular_gflops / peak.gflops,
            tiled_s,
            tiled_gflops,
            tiled_peak_fraction: tiled_gflops / peak.gflops,
            tiled_vs_reference,
            assembly_update: updater.name().to_string(),
            assembly_s,
            assembly_gflops,
            assembly_peak_fraction: assembly_gflops / peak.gflops,
            assembly_vs_reference,
        })
    })
}

/// max |N − R| / max |R| over the lower triangle (both updated the same number of times).
fn tiled_check(reference: &Mat<f64>, n: &Mat<f64>) -> f64 {
    let u = reference.nrows();
    let (mut diff, mut scale) = (0.0f64, 0.0f64);
    for c in 0..u {
        for r in c..u {
            diff = diff.max((n[(r, c)] - reference[(r, c)]).abs());
            scale = scale.max(reference[(r, c)].abs());
        }
    }
    if scale > 0.0 {
        diff / scale
    } else {
        diff
    }
}

/// Prints a result as a few lines of text or one JSON line.
pub fn print_rank_update_result(r: &RankUpdateBenchResult, json: bool) -> anyhow::Result<()> {
    super::print_line_or_json(r, json, || {
        format!(
            "N += B Bᵀ, u = {}, k = {}, {} threads; FMA peak {:.1} GFLOP/s ({}), AVX2 {:.1}\n\
             general product (full square): {:.3} s, {:.1} GFLOP/s, {:.3} of peak\n\
             triangular product (one call): {:.3} s, {:.1} GFLOP/s, {:.3} of peak\n\
             tiled update ({} wide tiles):  {:.3} s, {:.1} GFLOP/s, {:.3} of peak; differs from the triangular one by {:.1e} of max |N|\n\
             assembly's update ({}): {:.3} s, {:.1} GFLOP/s, {:.3} of peak; differs by {:.1e}",
            r.unknowns,
            r.depth,
            r.threads,
            r.fma_peak_gflops,
            r.fma_peak_kernel,
            r.fma_avx2_gflops,
            r.general_s,
            r.general_gflops,
            r.general_peak_fraction,
            r.triangular_s,
            r.triangular_gflops,
            r.triangular_peak_fraction,
            r.tile_unknowns,
            r.tiled_s,
            r.tiled_gflops,
            r.tiled_peak_fraction,
            r.tiled_vs_reference,
            r.assembly_update,
            r.assembly_s,
            r.assembly_gflops,
            r.assembly_peak_fraction,
            r.assembly_vs_reference
        )
    })
}
