//! `kugel bench --case points`: synthesis of a seeded degree-L model (values and both gradient
//! components) at seeded random points, as `kugel evaluate` and the fit residuals run it.
//!
//! The rate is `terms_per_s` = points · (L+1)(L+2)/2 / time: one (l, m) term per point counts
//! once, whatever is computed for it (the column recursion, the value and both gradient sums).

use std::time::Instant;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use kugel::sht::budget::coefficient_set_bytes;
use kugel::sht::evaluate_points;

use super::transform::{bench_threads, random_coefficients};

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
    /// Median time of one evaluation of all points, seconds.
    pub evaluate_s: f64,
    /// points · (L+1)(L+2)/2 / `evaluate_s`.
    pub terms_per_s: f64,
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
    // the model, its per-order tables (seven packed arrays) and the points with their results
    let bytes = coefficient_set_bytes(args.lmax, 1.0 + 3.5) + args.points as f64 * (16.0 + 24.0);
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
        let mut times = Vec::new();
        for _ in 0..args.repeat.max(1) {
            let t = Instant::now();
            let values = evaluate_points(&model, &points)?;
            times.push(t.elapsed().as_secs_f64());
            std::hint::black_box(values);
        }
        times.sort_by(f64::total_cmp);
        let evaluate_s = times[times.len() / 2];
        let l1 = args.lmax as f64 + 1.0;
        let terms = args.points as f64 * l1 * (l1 + 1.0) / 2.0;
        Ok(PointsBenchResult {
            case: "points",
            lmax: args.lmax,
            points: args.points,
            threads,
            repeat: args.repeat.max(1),
            evaluate_s,
            terms_per_s: terms / evaluate_s,
            peak_rss_mb: kugel::memory::peak_rss_mib().unwrap_or(f64::NAN),
        })
    })
}

/// Prints a result as one line of text or one JSON line.
pub fn print_points_result(r: &PointsBenchResult, json: bool) -> anyhow::Result<()> {
    super::print_line_or_json(r, json, || {
        format!(
            "point synthesis: {} points at degree {} on {} threads: {:.3} s (median of {}), {:.2e} (l, m) terms/s, peak RSS {:.0} MiB",
            r.points, r.lmax, r.threads, r.evaluate_s, r.repeat, r.terms_per_s, r.peak_rss_mb
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
    }
}
