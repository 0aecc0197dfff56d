//! Point synthesis, normalisation at the API edge and the sharding seams.

use crate::common;
use common::sample;

use kugel::coeffs::Normalization;
use kugel::sht::{evaluate_points, GaussGrid, TransformPlan};

#[test]
fn points_agree_with_grid_synthesis_values_and_gradients() {
    // The grid and the point paths are independent implementations (blocked SIMD kernel with
    // the two-term derivative vs per-point columns with the three-column derivative); they
    // must agree to rounding: 1e-11 of the field scale.
    let lmax = 48;
    let grid = GaussGrid::new(lmax);
    let plan = TransformPlan::new(lmax, &grid).unwrap();
    let c = sample(lmax, 5);
    let f = plan.synthesise(&c).unwrap();
    let (dt, dl) = plan.synthesise_gradient(&c).unwrap();
    let scale = f.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    let gscale = dt
        .iter()
        .chain(dl.iter())
        .fold(0.0f64, |m, v| m.max(v.abs()));
    let picks = [(0, 0), (3, 17), (24, 50), (48, 96)];
    let pts: Vec<(f64, f64)> = picks
        .iter()
        .map(|&(j, k)| (grid.colatitude_rad[j], grid.longitude_rad(k)))
        .collect();
    let vals = evaluate_points(&c, &pts).unwrap();
    for (&(j, k), v) in picks.iter().zip(&vals) {
        assert!(
            (v.value - f[[j, k]]).abs() < 1e-11 * scale,
            "value at {j},{k}"
        );
        assert!(
            (v.d_theta - dt[[j, k]]).abs() < 1e-11 * gscale,
            "dθ at {j},{k}"
        );
        assert!(
            (v.d_lambda_over_sin - dl[[j, k]]).abs() < 1e-11 * gscale,
            "dλ at {j},{k}"
        );
    }
}

#[test]
fn pole_gradient_is_the_meridian_limit() {
    // f = P̄_11(cos θ) cos λ = sqrt3 sin θ cos λ (closed form): at the north pole along
    // meridian λ, ∂f/∂θ = sqrt3 cos λ and (1/sin θ)∂f/∂λ = −sqrt3 sin λ.
    let mut c = kugel::coeffs::Coefficients::zeros(3, Normalization::Geodesy);
    c.set(1, 1, 1.0, 0.0);
    let lam = 0.7;
    let v = evaluate_points(&c, &[(0.0, lam)]).unwrap()[0];
    assert!(v.value.abs() < 1e-15);
    assert!((v.d_theta - 3f64.sqrt() * lam.cos()).abs() < 1e-14);
    assert!((v.d_lambda_over_sin + 3f64.sqrt() * lam.sin()).abs() < 1e-14);
}

#[test]
fn other_normalisations_synthesise_the_same_field() {
    // the field is invariant under conversion (docs/conventions.md §2): 1e-12 of the scale
    let lmax = 20;
    let plan = TransformPlan::new(lmax, &GaussGrid::new(lmax)).unwrap();
    let c = sample(lmax, 9);
    let f = plan.synthesise(&c).unwrap();
    let scale = f.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    for norm in [
        Normalization::Schmidt,
        Normalization::Orthonormal,
        Normalization::Unnormalized,
    ] {
        let other = c.converted(norm, true).unwrap();
        let g = plan.synthesise(&other).unwrap();
        let d = f
            .iter()
            .zip(&g)
            .fold(0.0f64, |m, (a, b)| m.max((a - b).abs()));
        assert!(d < 1e-12 * scale, "{norm}: {d}");
    }
}

#[test]
fn order_and_ring_ranges_add_up_to_the_whole() {
    // sharding seams: disjoint order ranges (synthesis) and ring ranges (analysis) sum to the
    // full transform; 1e-13 (only the summation order differs)
    let lmax = 30;
    let grid = GaussGrid::new(lmax);
    let plan = TransformPlan::new(lmax, &grid).unwrap();
    let c = sample(lmax, 2);
    let full = plan.synthesise(&c).unwrap();
    let parts =
        plan.synthesise_orders(&c, 0..7).unwrap() + plan.synthesise_orders(&c, 7..31).unwrap();
    let d = full
        .iter()
        .zip(&parts)
        .fold(0.0f64, |m, (a, b)| m.max((a - b).abs()));
    assert!(
        d < 1e-13 * full.iter().fold(0.0f64, |m, v| m.max(v.abs())),
        "{d}"
    );
    let whole = plan.analyse(&full).unwrap();
    let mut sum = plan.analyse_rings(&full, 0..5).unwrap();
    sum.add_scaled(&plan.analyse_rings(&full, 5..31).unwrap(), 1.0)
        .unwrap();
    let e = whole
        .c_packed()
        .iter()
        .zip(sum.c_packed())
        .fold(0.0f64, |m, (a, b)| m.max((a - b).abs()));
    assert!(e < 1e-13, "{e}");
}

#[test]
fn every_instruction_set_path_matches_the_portable_points() {
    // The AVX copies of the point groups (fused multiply–add) against the portable copy
    // (separate multiply and add unless the target fuses), at L = 300 with points from pole to
    // pole, both poles and a partial last group. Tolerance as for the grouped-vs-column check:
    // 1e-12 of the value scale away from the poles; within sin θ < 0.05 the recursion's own
    // rounding grows like L^1.5 ulp (double characteristic root at x = 1): 4 ε L^1.5 there.
    use kugel::sht::{evaluate_points_with_path, KernelPath};
    let lmax = 300;
    let c = sample(lmax, 21);
    let mut pts: Vec<(f64, f64)> = (0..45)
        .map(|i| {
            let t = i as f64 / 44.0;
            (
                std::f64::consts::PI * t * t * (3.0 - 2.0 * t),
                0.41 * i as f64 - 3.0,
            )
        })
        .collect();
    pts.push((1e-4, 0.3));
    let reference = evaluate_points_with_path(&c, &pts, KernelPath::Portable).unwrap();
    let scale = reference.iter().fold(0.0f64, |m, v| {
        m.max(v.value.abs())
            .max(v.d_theta.abs())
            .max(v.d_lambda_over_sin.abs())
    });
    assert!(scale > 0.0);
    let mut compared = 0;
    for path in KernelPath::available() {
        let got = evaluate_points_with_path(&c, &pts, path).unwrap();
        for (k, ((theta, _), (a, b))) in pts.iter().zip(got.iter().zip(&reference)).enumerate() {
            let rel = if theta.sin() < 0.05 {
                4.0 * f64::EPSILON * (lmax as f64).powf(1.5)
            } else {
                1e-12
            };
            for (x, y) in [
                (a.value, b.value),
                (a.d_theta, b.d_theta),
                (a.d_lambda_over_sin, b.d_lambda_over_sin),
            ] {
                assert!(
                    (x - y).abs() <= rel * scale,
                    "{}: point {k} (θ = {theta}): {x} vs {y}",
                    path.name()
                );
            }
        }
        compared += 1;
    }
    assert!(compared >= 1);
}
