//! Benchmarks of the scattered-data steps: gridding and least-squares fits (`kugel bench
//! --case grid|fit`). Points are seeded uniform random positions on the sphere carrying a
//! smooth synthetic field plus noise, so runs are reproducible.
//!
//! Goals (issue 4; 2-core machine): 1,000,000 points onto the L = 1023 Gauss grid in ≤ 30 s
//! and ≤ 2 GiB; 100,000 points fitted to L = 60 in ≤ 3 min and ≤ 2 GiB.

use std::time::Instant;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use kugel::observe::fit::{fit, FitOptions, Regularization};
use kugel::observe::gaps::GapPolicy;
use kugel::observe::gridding::{
    default_radius_km, grid_points, GriddingMethod, GriddingOptions, EARTH_MEAN_RADIUS_M,
};
use kugel::observe::points::PointSet;

/// Sizes for the scattered-data benchmarks.
#[derive(Debug, Clone)]
pub struct ObserveBenchArgs {
    pub points: usize,
    pub lmax: usize,
    pub repeat: usize,
    pub json: bool,
    pub seed: u64,
}

/// Seeded random observations: uniform on the sphere, value = a smooth field of degree ≤ 3
/// plus N(0, 0.01²) noise, σ = 0.01.
pub fn synthetic_points(n: usize, seed: u64) -> PointSet {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let (mut lat, mut lon, mut value) = (
        Vec::with_capacity(n),
        Vec::with_capacity(n),
        Vec::with_capacity(n),
    );
    for _ in 0..n {
        let z: f64 = rng.gen_range(-1.0..1.0);
        let o: f64 = rng.gen_range(-180.0..180.0);
        let (t, u) = (z, (1.0 - z * z).sqrt());
        let noise: f64 = rng.sample::<f64, _>(rand_distr::StandardNormal) * 0.01;
        lat.push(z.asin().to_degrees());
        lon.push(o);
        value.push(
            0.8 * (3.0 * t * t - 1.0)
                + 0.5 * u * (5.0 * t * t - 1.0) * o.to_radians().cos()
                + noise,
        );
    }
    PointSet {
        lat_deg: lat,
        lon_deg: lon,
        value,
        sigma: Some(vec![0.01; n]),
        source_lines: (0..n).collect(),
        extras: Default::default(),
    }
}

fn print_result(args: &ObserveBenchArgs, case: &str, seconds: &[f64], extra: &[(&str, String)]) {
    let best = seconds.iter().cloned().fold(f64::INFINITY, f64::min);
    let rss = kugel::memory::peak_rss_mib().unwrap_or(f64::NAN);
    if args.json {
        let mut obj = serde_json::json!({
            "case": case, "points": args.points, "lmax": args.lmax, "seed": args.seed,
            "repeat": args.repeat, "best_seconds": best, "seconds": seconds, "peak_rss_mib": rss,
            "threads": rayon::current_num_threads(),
        });
        for (k, v) in extra {
            obj[*k] = serde_json::Value::String(v.clone());
        }
        println!("{obj}");
    } else {
        println!(
            "{case}: {} points, L = {}, {} thread(s): best {best:.2} s of {} run(s), peak RSS {rss:.0} MiB",
            args.points,
            args.lmax,
            rayon::current_num_threads(),
            seconds.len()
        );
        for (k, v) in extra {
            println!("  {k}: {v}");
        }
    }
}

/// Grids `points` random observations onto the Gauss grid of `lmax`; prints times and memory.
/// Timed: building the k-d tree, the node means and gap filling (nearest); not the point
/// generation.
pub fn run_gridding_bench(args: &ObserveBenchArgs) -> anyhow::Result<()> {
    let points = synthetic_points(args.points, args.seed);
    let radius_km = default_radius_km(args.lmax, EARTH_MEAN_RADIUS_M);
    let options = GriddingOptions {
        method: GriddingMethod::Kernel { radius_km },
        gaps: GapPolicy::Nearest,
        body_radius_m: EARTH_MEAN_RADIUS_M,
    };
    let mut seconds = Vec::new();
    let mut summary = String::new();
    for _ in 0..args.repeat.max(1) {
        let start = Instant::now();
        let field = grid_points(&points, args.lmax, &options)?;
        seconds.push(start.elapsed().as_secs_f64());
        summary = field.report.summary();
    }
    print_result(args, "grid", &seconds, &[("report", summary)]);
    Ok(())
}

/// Fits `points` random observations to coefficients up to `lmax`; prints times and memory.
/// Timed: normal-equation assembly, Cholesky, covariance diagonal, condition estimate and
/// residuals (no regularisation).
pub fn run_fit_bench(args: &ObserveBenchArgs) -> anyhow::Result<()> {
    let points = synthetic_points(args.points, args.seed);
    let options = FitOptions {
        regularization: Regularization::None,
        body_radius_m: EARTH_MEAN_RADIUS_M,
    };
    let mut seconds = Vec::new();
    let mut extra = Vec::new();
    for _ in 0..args.repeat.max(1) {
        let start = Instant::now();
        let result = fit(&points, args.lmax, &options)?;
        seconds.push(start.elapsed().as_secs_f64());
        extra = vec![
            ("chi2_per_dof", format!("{:.4}", result.chi2_per_dof)),
            ("residual_rms", format!("{:.4e}", result.residual_rms)),
            (
                "condition_estimate",
                format!("{:.3e}", result.condition_estimate),
            ),
        ];
    }
    print_result(args, "fit", &seconds, &extra);
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn small_benchmarks_run() {
        let args = ObserveBenchArgs {
            points: 2000,
            lmax: 8,
            repeat: 1,
            json: true,
            seed: 1,
        };
        run_gridding_bench(&args).unwrap();
        run_fit_bench(&args).unwrap();
    }
}
