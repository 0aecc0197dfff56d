//! Gridding onto the Gauss grid, then analysis, recovers a known field to the tolerance the
//! kernel implies; coverage layers agree with exhaustive search; gap policies behave.
//!
//! Field: f = 0.8·P̄_20 + 0.5·P̄_31 cos λ, with the closed forms P̄_20 = √5 (3t² − 1)/2 and
//! P̄_31 = √(21/8) u (5t² − 1) (t = cos θ, u = sin θ; any geodesy text with the 4π
//! normalisation, e.g. Heiskanen & Moritz 1967 §1-14).
//!
//! Expected attenuation: for dense, even sampling the kernel mean is the convolution with the
//! normalised kernel, so C_lm → W_l C_lm with W_l the kernel's degree response (Funk–Hecke
//! theorem, common practice), here computed by `GaussianKernel::degree_response` and checked
//! against its planar limit in `observe::averaging_kernel`. Random sampling adds scatter of order
//! (field variation over a cap)/sqrt(points per cap); with ~1400 points per cap we accept 1%
//! of the largest coefficient.

use kugel::observe::averaging_kernel::GaussianKernel;
use kugel::observe::gaps::{fill_gaps, GapPolicy};
use kugel::observe::gridding::{grid_points, GriddingMethod, GriddingOptions, EARTH_MEAN_RADIUS_M};
use kugel::observe::spatial::{brute_force_within, unit_vector, SphereIndex};
use kugel::observe::PointSet;
use kugel::progress::Silent;
use kugel::sht::{GaussGrid, TransformPlan};
use kugel::Coefficients;
use ndarray::Array2;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

fn field(lat_deg: f64, lon_deg: f64) -> f64 {
    let theta = (90.0 - lat_deg).to_radians();
    let (u, t) = theta.sin_cos();
    0.8 * 5f64.sqrt() * (3.0 * t * t - 1.0) / 2.0
        + 0.5 * (21.0f64 / 8.0).sqrt() * u * (5.0 * t * t - 1.0) * lon_deg.to_radians().cos()
}

fn random_points(n: usize, seed: u64, max_lat: f64) -> PointSet {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let (mut lat, mut lon, mut val) = (vec![], vec![], vec![]);
    while lat.len() < n {
        let a = rng.gen_range(-1.0f64..1.0).asin().to_degrees();
        if a > max_lat {
            continue;
        }
        let o = rng.gen_range(0.0..360.0);
        lat.push(a);
        lon.push(o);
        val.push(field(a, o));
    }
    PointSet::from_vectors(lat, lon, val, None).unwrap().0
}

#[test]
fn kernel_gridding_then_analysis_recovers_attenuated_coefficients() {
    let points = random_points(40_000, 1, 90.0);
    let radius_km = 3000.0;
    let options = GriddingOptions {
        method: GriddingMethod::Kernel { radius_km },
        gaps: GapPolicy::Nearest,
        body_radius_m: EARTH_MEAN_RADIUS_M,
    };
    let lmax = 12;
    let gridded = grid_points(&points, lmax, &options).unwrap();
    assert_eq!(gridded.report.gap_nodes, 0);
    let coeffs = TransformPlan::new(lmax, &gridded.grid)
        .unwrap()
        .analyse(&gridded.value)
        .unwrap();
    let w = GaussianKernel::for_search_radius(radius_km, EARTH_MEAN_RADIUS_M).degree_response(lmax);
    // the kernel really attenuates: the test would fail if the smoothing were ignored
    assert!(w[3] < 0.85, "W_3 = {}", w[3]);
    let tol = 0.01 * 0.8;
    assert!(
        (coeffs.c(2, 0) - 0.8 * w[2]).abs() < tol,
        "C20 {} vs {}",
        coeffs.c(2, 0),
        0.8 * w[2]
    );
    assert!(
        (coeffs.c(3, 1) - 0.5 * w[3]).abs() < tol,
        "C31 {} vs {}",
        coeffs.c(3, 1),
        0.5 * w[3]
    );
    for (l, m, c, s) in coeffs.iter() {
        if (l, m) != (2, 0) && (l, m) != (3, 1) {
            assert!(c.abs() < tol && s.abs() < tol, "({l},{m}): {c} {s}");
        }
    }
}

#[test]
fn count_and_nearest_match_exhaustive_search() {
    let points = random_points(3000, 2, 90.0);
    let radius_km = 500.0;
    let options = GriddingOptions {
        method: GriddingMethod::Kernel { radius_km },
        gaps: GapPolicy::Mean,
        body_radius_m: EARTH_MEAN_RADIUS_M,
    };
    let g = grid_points(&points, 10, &options).unwrap();
    let unit: Vec<[f64; 3]> = (0..points.len())
        .map(|i| unit_vector(points.lat_deg[i], points.lon_deg[i]))
        .collect();
    let lats = g.grid.latitudes_deg();
    let lons = g.grid.longitudes_deg();
    let r = radius_km * 1000.0 / EARTH_MEAN_RADIUS_M;
    for (j, &lat) in lats.iter().enumerate() {
        for k in (0..lons.len()).step_by(3) {
            let q = unit_vector(lat, lons[k]);
            let inside = brute_force_within(&unit, &q, r);
            assert!(
                (g.count[(j, k)] - inside.len() as f64).abs() <= 1.0,
                "node ({j},{k})"
            );
            let nearest = unit
                .iter()
                .map(|p| kugel::observe::spatial::angle_between(p, &q))
                .fold(f64::INFINITY, f64::min);
            assert!((g.nearest_km[(j, k)] - nearest * EARTH_MEAN_RADIUS_M / 1000.0).abs() < 1e-3);
        }
    }
}

#[test]
fn inverse_distance_uses_k_neighbours_and_honours_exact_hits() {
    // A point exactly on a node dominates its IDW mean.
    let grid = GaussGrid::new(4);
    let lat0 = grid.latitudes_deg()[1];
    let mut points = random_points(500, 3, 90.0);
    points.lat_deg.push(lat0);
    points.lon_deg.push(0.0);
    points.value.push(1234.0);
    let options = GriddingOptions {
        method: GriddingMethod::Nearest { k: 6 },
        ..Default::default()
    };
    let g = grid_points(&points, 4, &options).unwrap();
    assert!(g.count.iter().all(|&c| c == 6.0));
    assert!(
        (g.value[(1, 0)] - 1234.0).abs() < 1.0,
        "{}",
        g.value[(1, 0)]
    );
    assert!(g.nearest_km[(1, 0)] < 1e-6);
}

#[test]
fn iterative_gap_filling_restores_a_band_limited_field() {
    // Exact samples of a degree-6 field on the L = 12 Gauss grid, the northernmost two rows
    // blanked, filled with band limit 6: per order m the 7 − m unknowns are fixed by the 11
    // remaining latitudes, so the completion is unique and alternating projections
    // (Gerchberg 1974; Papoulis 1975) must converge to the true values there.
    let lmax = 6;
    let grid = GaussGrid::new(12);
    let plan = TransformPlan::new(12, &grid).unwrap();
    let mut c = Coefficients::zeros(6, kugel::Normalization::Geodesy);
    c.set(2, 0, 0.8, 0.0);
    c.set(3, 1, 0.5, -0.2);
    c.set(6, 4, 0.1, 0.3);
    let truth = plan.synthesise(&c).unwrap();
    let mut gap = Array2::from_elem(truth.dim(), false);
    gap.row_mut(0).fill(true);
    gap.row_mut(1).fill(true);
    let mut work = truth.clone();
    work.zip_mut_with(&gap, |v, &g| {
        if g {
            *v = f64::NAN
        }
    });
    let points = random_points(10, 4, 90.0);
    let index = SphereIndex::new(&points.lat_deg, &points.lon_deg);
    let policy = GapPolicy::Iterative {
        tol: 1e-9,
        max_iter: 3000,
    };
    let report = fill_gaps(
        &mut work, &gap, &grid, lmax, &policy, &index, &points, &Silent,
    )
    .unwrap();
    assert!(report.converged, "{report:?}");
    assert!(report.iterations > 1);
    let err = work
        .iter()
        .zip(truth.iter())
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    assert!(
        err < 1e-5,
        "max error {err} after {} iterations",
        report.iterations
    );
    assert!(
        report.describe().contains("iterations"),
        "{}",
        report.describe()
    );
}

#[test]
fn gaps_are_counted_and_filled_by_policy() {
    // No data north of 30°N and a small kernel: the northern cap is a gap.
    let points = random_points(4000, 5, 30.0);
    for policy in [GapPolicy::Nearest, GapPolicy::Mean] {
        let options = GriddingOptions {
            method: GriddingMethod::Kernel { radius_km: 400.0 },
            gaps: policy,
            body_radius_m: EARTH_MEAN_RADIUS_M,
        };
        let g = grid_points(&points, 20, &options).unwrap();
        assert!(g.report.gap_nodes > 0);
        assert!(g.value.iter().all(|v| v.is_finite()));
        assert_eq!(g.count[(0, 0)], 0.0);
        // the northernmost row is at least (its latitude − 30°) from any observation
        let bound_km =
            (g.grid.latitudes_deg()[0] - 30.0).to_radians() * EARTH_MEAN_RADIUS_M / 1000.0;
        assert!(
            g.nearest_km[(0, 0)] >= bound_km - 1e-6,
            "{} vs {bound_km}",
            g.nearest_km[(0, 0)]
        );
    }
}

#[test]
fn bad_gridding_options_are_refused_with_reasons() {
    let points = random_points(50, 6, 90.0);
    let run = |method| {
        grid_points(
            &points,
            8,
            &GriddingOptions {
                method,
                ..Default::default()
            },
        )
        .unwrap_err()
        .to_string()
    };
    assert!(run(GriddingMethod::Kernel { radius_km: -1.0 })
        .contains("--radius-km -1 must be a positive"));
    assert!(run(GriddingMethod::Kernel {
        radius_km: 30_000.0
    })
    .contains("exceeds half the body's circumference"));
    assert!(run(GriddingMethod::Nearest { k: 0 }).contains("--neighbours must be at least 1"));
    assert!(
        run(GriddingMethod::Nearest { k: 51 }).contains("exceeds the number of observations (50)")
    );
    let tiny = GriddingOptions {
        method: GriddingMethod::Kernel { radius_km: 1.0 },
        ..Default::default()
    };
    let sparse = random_points(1, 7, 90.0);
    let err = grid_points(&sparse, 8, &tiny).unwrap_err().to_string();
    assert!(err.contains("no grid node has an observation"), "{err}");
    assert!(GapPolicy::parse("zero")
        .unwrap_err()
        .to_string()
        .contains("expected nearest, mean or iterative"));
}

#[test]
fn default_degree_follows_the_data_spacing() {
    // 20,000 random points: median nearest-neighbour distance ≈ 0.47/sqrt(ρ), so
    // L = π/(2 d) ≈ π sqrt(n/4π)/(2·0.47) ≈ 133 (Clark & Evans 1954 for the Poisson pattern).
    let points = random_points(20_000, 8, 90.0);
    let (l, reason) = kugel::observe::default_lmax(&points, EARTH_MEAN_RADIUS_M);
    assert!((120..=150).contains(&l), "{l}: {reason}");
    assert!(
        reason.contains("median nearest-neighbour distance"),
        "{reason}"
    );
}
