//! Benchmarks of the scattered-data steps: gridding and least-squares fits (`kugel bench
//! --case grid|fit`). Points are seeded uniform random positions on the sphere carrying a
//! smooth synthetic field plus noise, so runs are reproducible.
//!
//! Goals (2-core machine): 1,000,000 points onto the L = 1023 Gauss grid in ≤ 30 s and
//! ≤ 2 GiB; the fit case (gravity disturbances at 250–450 km altitude, invented) at 1,000,000
//! points to L = 100 in ≤ 5 min and ≤ 4 GiB, and the direct assembly at 100,000 points to
//! L = 60 at ≥ 0.40 of the FMA peak.

use std::time::Instant;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use kugel::field::degree_factors::PotentialScale;
use kugel::field::{GeocentricPoint, Quantity};
use kugel::observe::fit::functional::{ModelSpace, RowBuilder};
use kugel::observe::fit::parameters::ParameterLayout;
use kugel::observe::fit::{
    fit_observations, predict_all, FitSetup, Observation, ObservationSet, Regularization,
    SolverKind, SolverRequest,
};
use kugel::observe::gaps::GapPolicy;
use kugel::observe::gridding::{
    default_radius_km, grid_points, GriddingMethod, GriddingOptions, EARTH_MEAN_RADIUS_M,
};
use kugel::observe::points::PointSet;

use super::fma_peak::measure_fma_peak;

/// Sizes for the scattered-data benchmarks.
#[derive(Debug, Clone)]
pub struct ObserveBenchArgs {
    pub points: usize,
    pub lmax: usize,
    pub repeat: usize,
    pub json: bool,
    pub seed: u64,
    /// Solver of the fit case.
    pub solver: SolverRequest,
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

/// GM of the benchmark's invented Earth-sized body, m³ s⁻² (the value of the Earth, from memory).
const BENCH_GM_M3_S2: f64 = 3.986_004_418e14;
/// Kaula-type rule of the synthetic truth and of the fit's prior: RMS 1e-5·l⁻² per
/// dimensionless coefficient (Kaula 1966, *Theory of Satellite Geodesy*).
const BENCH_KAULA: Regularization = Regularization::Kaula { a: 1e-5, p: 2.0 };
/// Noise of the synthetic gravity disturbances, mGal.
const BENCH_NOISE_MGAL: f64 = 0.01;

/// Invented satellite campaign: `n` gravity disturbances at uniform random positions and
/// altitudes of 250–450 km over an Earth-sized body, from a random degree-`lmax` model
/// drawn from the Kaula rule (degrees ≥ 2), plus N(0, 0.01²) mGal noise; σ = 0.01 mGal.
/// Returns the observations, the fit's setup and the truth (full unknown vector).
pub fn synthetic_orbit(
    n: usize,
    lmax: usize,
    seed: u64,
) -> anyhow::Result<(ObservationSet, FitSetup, Vec<f64>)> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let space = ModelSpace::Gravity(PotentialScale {
        reference_radius_m: EARTH_MEAN_RADIUS_M,
        gm_m3_s2: BENCH_GM_M3_S2,
    });
    let layout = ParameterLayout::new(lmax, false, None, &[0, 1]);
    let free: Vec<f64> = layout
        .free_kinds()
        .iter()
        .map(|&(_, l)| {
            let rms = 1e-5 / (l.max(1) as f64).powi(2);
            rng.sample::<f64, _>(rand_distr::StandardNormal) * rms
        })
        .collect();
    let truth = layout.expand(&free);
    let mut set = ObservationSet::default();
    let d = set.add_dataset("orbit (invented)", 1.0, true)?;
    for i in 0..n {
        let z: f64 = rng.gen_range(-1.0..1.0);
        let lon: f64 = rng.gen_range(-180.0..180.0);
        let altitude_m: f64 = rng.gen_range(250e3..450e3);
        set.observations.push(Observation {
            position: GeocentricPoint::from_degrees(
                z.asin().to_degrees(),
                lon,
                EARTH_MEAN_RADIUS_M + altitude_m,
            ),
            quantity: Quantity::GravityDisturbance,
            value: 0.0,
            sigma: Some(BENCH_NOISE_MGAL),
            time_year: None,
            dataset: d,
            source_line: i + 1,
        });
    }
    let builder = RowBuilder::new(space, layout, 0.0, &[]);
    let values = predict_all(&builder, &set, &truth)?;
    for (o, v) in set.observations.iter_mut().zip(values) {
        o.value = v + rng.sample::<f64, _>(rand_distr::StandardNormal) * BENCH_NOISE_MGAL;
    }
    let setup = FitSetup {
        space,
        fixed_degrees: vec![0, 1],
        ..FitSetup::generic(lmax, EARTH_MEAN_RADIUS_M, BENCH_KAULA)
    };
    Ok((set, setup, truth))
}

/// Fits the invented orbital campaign of [`synthetic_orbit`] (`points` gravity disturbances
/// at 250–450 km) to degree `lmax` with the Kaula prior; prints the time, the solver chosen
/// and why, its memory estimate and the peak RSS, and for the direct solver the assembly's
/// share of the FMA peak measured in the same run (flops counted as n·u², u the unknowns).
/// Timed: the whole fit (solver choice, assembly or passes, solve, residuals); not the
/// generation of the data.
pub fn run_fit_bench(args: &ObserveBenchArgs) -> anyhow::Result<()> {
    let peak = measure_fma_peak(3, 0.2);
    let (set, mut setup, truth) = synthetic_orbit(args.points, args.lmax, args.seed)?;
    setup.solver = args.solver;
    let mut seconds = Vec::new();
    let mut extra = Vec::new();
    for _ in 0..args.repeat.max(1) {
        let start = Instant::now();
        let result = fit_observations(&set, &setup)?;
        seconds.push(start.elapsed().as_secs_f64());
        let solver = &result.solver;
        let u = result.unknowns as f64;
        let counted_flops = set.len() as f64 * u * u;
        let degree_error = truth_error(&result.model, &truth, &setup);
        extra = vec![
            ("solver", solver.plan.kind.to_string()),
            ("solver_reason", solver.plan.reason.clone()),
            (
                "memory_estimate_mib",
                format!("{:.0}", solver.plan.bytes() as f64 / kugel::memory::MIB),
            ),
            ("unknowns", result.unknowns.to_string()),
            ("assembly_s", format!("{:.2}", solver.assembly_seconds)),
            ("solve_s", format!("{:.2}", solver.solve_seconds)),
            ("fma_peak_gflops", format!("{:.1}", peak.gflops)),
            ("fma_peak_kernel", peak.path.name().to_string()),
            ("chi2_per_dof", format!("{:.4}", result.chi2_per_dof)),
            ("relative_error_vs_truth", format!("{degree_error:.3e}")),
        ];
        match solver.plan.kind {
            SolverKind::Direct => {
                let rate = counted_flops / solver.assembly_seconds / 1e9;
                extra.push(("assembly_gflops", format!("{rate:.1}")));
                extra.push((
                    "assembly_peak_fraction",
                    format!("{:.3}", rate / peak.gflops),
                ));
                extra.push((
                    "condition_estimate",
                    format!("{:.3e}", result.condition_estimate),
                ));
            }
            SolverKind::Iterative => {
                extra.push(("cg_iterations", solver.iterations.unwrap_or(0).to_string()));
                extra.push((
                    "cg_relative_residual",
                    format!("{:.2e}", solver.relative_residual.unwrap_or(f64::NAN)),
                ));
            }
        }
    }
    print_result(args, "fit", &seconds, &extra);
    Ok(())
}

/// ‖x_fit − x_true‖/‖x_true‖ over the internal coefficients.
fn truth_error(model: &kugel::coeffs::Coefficients, truth: &[f64], setup: &FitSetup) -> f64 {
    let layout = ParameterLayout::new(setup.lmax, false, None, &setup.fixed_degrees);
    let (mut diff, mut norm) = (0.0, 0.0);
    for m in 0..=setup.lmax {
        for l in m.max(2)..=setup.lmax {
            let c = truth[layout.internal.c_index(l, m)];
            diff += (model.c(l, m) - c).powi(2);
            norm += c * c;
            if m > 0 {
                let s = truth[layout.internal.s_index(l, m)];
                diff += (model.s(l, m) - s).powi(2);
                norm += s * s;
            }
        }
    }
    (diff / norm.max(f64::MIN_POSITIVE)).sqrt()
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
            solver: SolverRequest::Auto,
        };
        run_gridding_bench(&args).unwrap();
        run_fit_bench(&args).unwrap();
    }
}
