//! `kugel bench --case points`: synthesis of a seeded degree-L model at seeded random points,
//! as `kugel evaluate` runs it: values alone (`evaluate_point_values`, scalar quantities) and
//! values with both gradient components (`evaluate_points`, horizontal vector components).
//!
//! The rates are points · (L+1)(L+2)/2 / time: one (l, m) term per point counts once, whatever
//! is computed for it (`values_terms_per_s`: the column recursion and the value sums;
//! `terms_per_s`: also the gradient sums). Beside them the machine's FMA peak measured in the
//! same run (`fma_peak`) and each rate as a fraction of it, counting the flops the kernels do
//! per term and point: the recursion step 7 (three products, two fused multiply–adds), the
//! value sums 4 (two fused), the gradient sums 8 more (four fused).

use std::time::Instant;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use kugel::sht::budget::coefficient_set_bytes;
use kugel::sht::points::point_synthesis_bytes;
use kugel::sht::{evaluate_point_values, evaluate_points};

use super::fma_peak::measure_fma_peak;
use super::transform::{bench_threads, random_coefficients};

/// Flops per (l, m) term and point of the values kernel and of the values-and-gradients kernel
/// (see the module doc).
const VALUE_FLOPS_PER_TERM: f64 = 11.0;
const GRADIENT_FLOPS_PER_TERM: f64 = 19.0;

/// Sizes of the point-synthesis benchmark.
#[derive(Debug, Clone)]
pub struct PointsBenchArgs {
    pub points: usize,
    pub lmax: usize,
    pub threads: usize,
    pub repeat: usize,
    pub seed: u64,
}

/// One result.
#[derive(Debug, Clone, serde::Serialize)]
pub struct PointsBenchResult {
    pub case: &'static str,
    pub lmax: usize,
    pub points: usize,
    pub threads: usize,
    pub repeat: usize,
    /// The instruction-set path of the kernels.
    pub kernel: String,
    /// Median time of one evaluation of the values alone at all points, seconds.
    pub values_s: f64,
    /// points · (L+1)(L+2)/2 / `values_s`.
    pub values_terms_per_s: f64,
    /// Median time of one evaluation of values and both gradient components, seconds.
    pub evaluate_s: f64,
    /// points · (L+1)(L+2)/2 / `evaluate_s`.
    pub terms_per_s: f64,
    /// All-thread FP64 FMA rate of this machine, measured in this run (see `fma_peak`).
    pub fma_peak_gflops: f64,
    /// `values_terms_per_s` · 11 flops / the peak.
    pub values_peak_fraction: f64,
    /// `terms_per_s` · 19 flops / the peak.
    pub peak_fraction: f64,
    pub peak_rss_mb: f64,
}

/// Seeded positions, uniform on the sphere, as (colatitude, longitude) in radians.
pub fn random_positions(n: usize, seed: u64) -> Vec<(f64, f64)> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    (0..n)
        .map(|_| {
            let z: f64 = rng.gen_range(-1.0..1.0);
            let lon: f64 = rng.gen_range(0.0..std::f64::consts::TAU);
            (z.acos(), lon)
        })
        .collect()
}

pub fn run_points_bench(args: &PointsBenchArgs) -> anyhow::Result<PointsBenchResult> {
    let threads = bench_threads(args.threads)?;
    // the model and its geodesy copy, the points, and the synthesis's tables and results
    let bytes = coefficient_set_bytes(args.lmax, 2.0)
        + args.points as f64 * 16.0
        + point_synthesis_bytes(args.lmax, args.points, true) as f64;
    kugel::memory::check_fits(
        &format!(
            "the point-synthesis benchmark ({} points, degree {})",
            args.points, args.lmax
        ),
        bytes as u64,
    )?;
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()?;
    pool.install(|| {
        let model = random_coefficients(args.lmax, args.seed);
        let points = random_positions(args.points, args.seed ^ 0x5eed);
        let (mut values_times, mut times) = (Vec::new(), Vec::new());
        for _ in 0..args.repeat.max(1) {
            let t = Instant::now();
            let values = evaluate_point_values(&model, &points)?;
            values_times.push(t.elapsed().as_secs_f64());
            std::hint::black_box(values);
            let t = Instant::now();
            let values = evaluate_points(&model, &points)?;
            times.push(t.elapsed().as_secs_f64());
            std::hint::black_box(values);
        }
        let median = |mut v: Vec<f64>| {
            v.sort_by(f64::total_cmp);
            v[v.len() / 2]
        };
        let (values_s, evaluate_s) = (median(values_times), median(times));
        let peak = measure_fma_peak(3, 0.2);
        let l1 = args.lmax as f64 + 1.0;
        let terms = args.points as f64 * l1 * (l1 + 1.0) / 2.0;
        let fraction = |rate: f64, flops: f64| rate * flops / (peak.gflops * 1e9);
        Ok(PointsBenchResult {
            case: "points",
            lmax: args.lmax,
            points: args.points,
            threads,
            repeat: args.repeat.max(1),
            kernel: kugel::sht::KernelPath::detect().name().to_string(),
            values_s,
            values_terms_per_s: terms / values_s,
            evaluate_s,
            terms_per_s: terms / evaluate_s,
            fma_peak_gflops: peak.gflops,
            values_peak_fraction: fraction(terms / values_s, VALUE_FLOPS_PER_TERM),
            peak_fraction: fraction(terms / evaluate_s, GRADIENT_FLOPS_PER_TERM),
            peak_rss_mb: kugel::memory::peak_rss_mib().unwrap_or(f64::NAN),
        })
    })
}

/// Prints a result as one line of text or one JSON line.
pub fn print_points_result(r: &PointsBenchResult, json: bool) -> anyhow::Result<()> {
    super::print_line_or_json(r, json, || {
        format!(
            "point synthesis: {} points at degree {} on {} threads ({} kernels, medians of {}): values {:.3} s, {:.2e} (l, m) terms/s ({:.2} of the FMA peak); values and gradients {:.3} s, {:.2e} terms/s ({:.2}); FMA peak {:.0} GFLOP/s; peak RSS {:.0} MiB",
            r.points,
            r.lmax,
            r.threads,
            r.kernel,
            r.repeat,
            r.values_s,
            r.values_terms_per_s,
            r.values_peak_fraction,
            r.evaluate_s,
            r.terms_per_s,
            r.peak_fraction,
            r.fma_peak_gflops,
            r.peak_rss_mb
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_points_bench_counts_terms() {
        let r = run_points_bench(&PointsBenchArgs {
            points: 100,
            lmax: 10,
            threads: 1,
            repeat: 1,
            seed: 3,
        })
        .unwrap();
        // (L+1)(L+2)/2 = 66 terms per point
        let expected = 100.0 * 66.0 / r.evaluate_s;
        assert!((r.terms_per_s - expected).abs() <= 1e-9 * expected);
        let expected = 100.0 * 66.0 / r.values_s;
        assert!((r.values_terms_per_s - expected).abs() <= 1e-9 * expected);
        assert!(r.fma_peak_gflops > 0.0 && r.peak_fraction > 0.0);
    }
}
