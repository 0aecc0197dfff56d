//! Point synthesis, normalisation at the API edge and the sharding seams.

use crate::common;
use common::sample;

use kugel::coeffs::Normalization;
use kugel::sht::{evaluate_points, GaussGrid, PointValue, TransformPlan};

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

/// Points from pole to pole (denser near both poles), both poles, points within 1e-4 of each
/// pole and enough of them for full groups and a partial last group on every path. The
/// longitudes have few significant bits, so m λ is exact and the reference's `sin_cos(m λ)`
/// is the trigonometric factor of the exact angle (with a general λ its own angle error, ½ ulp
/// of m λ, is as large as the kernels' rotation recurrence error and the comparison would
/// measure the reference).
fn pole_to_pole_points(n: usize) -> Vec<(f64, f64)> {
    let mut pts: Vec<(f64, f64)> = (0..n)
        .map(|i| {
            let t = i as f64 / (n - 1) as f64;
            (
                std::f64::consts::PI * t * t * (3.0 - 2.0 * t),
                0.40625 * i as f64 - 3.0,
            )
        })
        .collect();
    pts.extend([
        (1e-4, 0.3125),
        (std::f64::consts::PI - 1e-4, -1.5),
        (0.0, 2.25),
    ]);
    pts
}

/// max(|value|, |∂f/∂θ|, |(1/sin θ) ∂f/∂λ|) over the points.
fn scale_of(values: &[PointValue]) -> f64 {
    values.iter().fold(0.0f64, |m, v| {
        m.max(v.value.abs())
            .max(v.d_theta.abs())
            .max(v.d_lambda_over_sin.abs())
    })
}

/// Values and both gradient components of `got` within `rel` × the reference's scale of
/// `want`, with rel = 4 ε L^1.5 where sin θ < 0.05 (the recursion's own rounding near the
/// poles) and `interior` elsewhere.
fn assert_points_match(
    pts: &[(f64, f64)],
    got: &[PointValue],
    want: &[PointValue],
    lmax: usize,
    interior: f64,
    what: &str,
) {
    let scale = scale_of(want);
    for (k, ((theta, _), (a, b))) in pts.iter().zip(got.iter().zip(want)).enumerate() {
        let rel = if theta.sin() < 0.05 {
            4.0 * f64::EPSILON * (lmax as f64).powf(1.5)
        } else {
            interior
        };
        for (x, y) in [
            (a.value, b.value),
            (a.d_theta, b.d_theta),
            (a.d_lambda_over_sin, b.d_lambda_over_sin),
        ] {
            assert!(
                (x - y).abs() <= rel * scale,
                "{what}point {k} (θ = {theta}): {x} vs {y}"
            );
        }
    }
}

#[test]
fn every_instruction_set_path_matches_the_scalar_reference() {
    // Every compiled path of the point kernels against the scalar reference
    // (`reference::points`: one-point columns of `legendre::column_with_derivative`, checked
    // against mpmath in `legendre.rs`, summed term by term with compensation), at L = 300 with
    // 69 points (full groups and a last group of 5, which runs on the 8-lane copies). Tolerance 1e-13 of the
    // scale away from the poles (summation order and the rotation recurrence of cos mλ,
    // sin mλ); within sin θ < 0.05 the recursion's own rounding grows like L^1.5 ulp (double
    // characteristic root at x = 1), and the two sides round differently: 4 ε L^1.5 there.
    use kugel::sht::{evaluate_points_with_path, reference, KernelPath};
    let lmax = 300;
    let c = sample(lmax, 21);
    let pts = pole_to_pole_points(66);
    let want = reference::points(&c, &pts);
    let scale = scale_of(&want);
    assert!(scale > 0.0);
    let mut compared = 0;
    for path in KernelPath::available() {
        let got = evaluate_points_with_path(&c, &pts, path).unwrap();
        assert_eq!(got.len(), pts.len());
        assert_points_match(
            &pts,
            &got,
            &want,
            lmax,
            1e-13,
            &format!("{}: ", path.name()),
        );
        compared += 1;
    }
    assert!(compared >= 1);
}

#[test]
fn values_alone_are_the_values_of_the_gradient_path() {
    // The values-only kernels run the same recursion and the same value sums as the kernels
    // with gradients (the gradient sums are separate passes): the same doubles, on every path.
    use kugel::sht::{evaluate_point_values_with_path, evaluate_points_with_path, KernelPath};
    let lmax = 150;
    let c = sample(lmax, 4);
    // 61 points: a wide partial last group on the AVX paths, a narrow one on the portable
    let pts = pole_to_pole_points(58);
    for path in KernelPath::available() {
        let values = evaluate_point_values_with_path(&c, &pts, path).unwrap();
        let full = evaluate_points_with_path(&c, &pts, path).unwrap();
        assert_eq!(values.len(), pts.len());
        for (k, (v, f)) in values.iter().zip(&full).enumerate() {
            assert_eq!(v.to_bits(), f.value.to_bits(), "{}: point {k}", path.name());
        }
        // the lanes of a group are independent: a point alone (a one-point group on the
        // 8-lane copy) gets the same value as inside a group of others (== : an exact zero
        // may differ in sign)
        for (k, p) in pts.iter().enumerate().step_by(7) {
            let alone = evaluate_point_values_with_path(&c, &[*p], path).unwrap();
            assert!(alone[0] == values[k], "{}: point {k}", path.name());
            let alone = evaluate_points_with_path(&c, &[*p], path).unwrap();
            assert!(alone[0] == full[k], "{}: point {k}", path.name());
        }
    }
    // and the public entry point chooses one of them
    let detected = kugel::sht::evaluate_point_values(&c, &pts).unwrap();
    let on_path = evaluate_point_values_with_path(&c, &pts, KernelPath::detect()).unwrap();
    assert_eq!(detected, on_path);
}

#[test]
fn zonal_degree_two_and_a_tilted_dipole_match_their_closed_forms() {
    // Closed forms (common practice: P_1 = cos θ, P_2 = (3 cos²θ − 1)/2, P_1^1 = sin θ, and
    // the 4π normalisation factors √(2l+1) for m = 0, √(2(2l+1)(l−m)!/(l+m)!) otherwise, as
    // restated in docs/conventions.md §2): P̄_20 = √5 (3 cos²θ − 1)/2, so
    // ∂/∂θ = −3√5 cos θ sin θ; P̄_11 = √3 sin θ, P̄_10 = √3 cos θ. A field
    // f = a P̄_20 + P̄_10 + P̄_11 (c cos λ + s sin λ) has ∂f/∂θ = −3√5 a cos θ sin θ − √3 sin θ
    // + √3 cos θ (c cos λ + s sin λ) and (1/sin θ) ∂f/∂λ = √3 (s cos λ − c sin λ), which is
    // also its limit at the poles. Set in a degree-40 model (the other coefficients zero) so
    // that every order runs; every path, at the poles and in between: 1e-14.
    use kugel::sht::{evaluate_points_with_path, KernelPath};
    let (a, cc, ss) = (0.8, -0.35, 0.6);
    let mut model = kugel::coeffs::Coefficients::zeros(40, Normalization::Geodesy);
    model.set(2, 0, a, 0.0);
    model.set(1, 0, 1.0, 0.0);
    model.set(1, 1, cc, ss);
    let pts = pole_to_pole_points(41);
    let (r3, r5) = (3f64.sqrt(), 5f64.sqrt());
    for path in KernelPath::available() {
        let got = evaluate_points_with_path(&model, &pts, path).unwrap();
        for (&(theta, lam), v) in pts.iter().zip(&got) {
            let (ct, st) = (theta.cos(), theta.sin());
            let h = cc * lam.cos() + ss * lam.sin();
            let value = a * r5 * (3.0 * ct * ct - 1.0) / 2.0 + r3 * ct + r3 * st * h;
            let d_theta = -3.0 * r5 * a * ct * st - r3 * st + r3 * ct * h;
            let d_lambda = r3 * (ss * lam.cos() - cc * lam.sin());
            for (name, x, y) in [
                ("value", v.value, value),
                ("dθ", v.d_theta, d_theta),
                ("dλ", v.d_lambda_over_sin, d_lambda),
            ] {
                assert!(
                    (x - y).abs() < 1e-14 * 4.0,
                    "{} θ = {theta}: {name} {x} vs {y}",
                    path.name()
                );
            }
        }
    }
}

#[test]
fn high_degree_points_at_and_near_the_poles_match_the_reference() {
    // L = 2000: near the poles the columns of high order start late (extended exponents,
    // Fukushima 2012) or never; at the poles only order 0 (values, ∂/∂θ through order 1) and
    // the meridian limit of order 1 survive. Against the scalar reference, tolerance
    // 4 ε L^1.5 of the scale near the poles (the recursion's rounding, see above), 1e-12 at
    // the two points away from them.
    use kugel::sht::{evaluate_points, reference};
    let lmax = 2000;
    let c = sample(lmax, 8);
    let pts = [
        (0.0, 0.5),
        (std::f64::consts::PI, -1.25),
        (1e-6, 2.0),
        (3e-3, -0.75),
        (std::f64::consts::PI - 2e-2, 1.5),
        (0.875, 0.625),
        (2.5, -2.5),
    ];
    let got = evaluate_points(&c, &pts).unwrap();
    let want = reference::points(&c, &pts);
    assert_points_match(&pts, &got, &want, lmax, 1e-12, "");
}
