//! Equiangular quadrature (sht::equiangular) against an outside source and in the transform.

use kugel::coeffs::{Coefficients, Normalization};
use kugel::sht::equiangular::{
    clenshaw_curtis_weights, equiangular_grid, fejer_weights, EquiangularLayout,
};
use kugel::sht::TransformPlan;

#[test]
fn weights_match_mpmath_moment_solution() {
    // source: tests/reference/io_equiangular_weights.py (mpmath 1.3.0, 50 digits, moment
    // equations); tolerance 2e-15: a few ulps of weights of size ≤ 1
    let text = std::fs::read_to_string("tests/fixtures/io/equiangular_weights.json").unwrap();
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    let cases = v["cases"].as_array().unwrap();
    assert!(cases.len() >= 10);
    for case in cases {
        let n = case["n"].as_u64().unwrap() as usize;
        let expected: Vec<f64> = case["weights"]
            .as_array()
            .unwrap()
            .iter()
            .map(|s| s.as_str().unwrap().parse().unwrap())
            .collect();
        let got = match case["layout"].as_str().unwrap() {
            "nodes" => clenshaw_curtis_weights(n),
            "cells" => fejer_weights(n),
            other => panic!("unknown layout {other}"),
        };
        assert_eq!(got.len(), n);
        for (j, (g, e)) in got.iter().zip(&expected).enumerate() {
            assert!(
                (g - e).abs() < 2e-15,
                "{} n={n} j={j}: {g} vs {e}",
                case["layout"]
            );
        }
    }
}

fn test_model(lmax: usize) -> Coefficients {
    let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
    for l in 0..=lmax {
        for m in 0..=l {
            let x = ((3 * l + 5 * m) as f64 * 0.7).cos() / (1.0 + l as f64);
            c.set(l, m, x, if m > 0 { 0.5 * x } else { 0.0 });
        }
    }
    c
}

#[test]
fn analysis_is_exact_up_to_the_layout_limit() {
    // common practice (Driscoll & Healy 1994): with n latitudes, exact for L ≤ (n-1)/2.
    // Tolerance 1e-12: round-off of the reference transform at degree 16.
    for (nlat, nlon, layout) in [
        (33usize, 64usize, EquiangularLayout::Nodes),
        (33, 66, EquiangularLayout::Cells),
        (34, 40, EquiangularLayout::Cells),
    ] {
        let grid = equiangular_grid(nlat, nlon, layout);
        let lmax = grid.max_exact_degree;
        assert_eq!(lmax, 16.min((nlon - 1) / 2));
        let c = test_model(lmax);
        let plan = TransformPlan::new(lmax, &grid).unwrap();
        let f = plan.synthesise(&c).unwrap();
        let back = plan.analyse(&f).unwrap();
        let err = c
            .c_packed()
            .iter()
            .zip(back.c_packed())
            .chain(c.s_packed().iter().zip(back.s_packed()))
            .map(|(a, b)| (a - b).abs())
            .fold(0.0, f64::max);
        assert!(err < 1e-12, "{layout:?} {nlat}x{nlon}: max error {err}");
    }
}

#[test]
fn analysis_beyond_the_limit_is_not_exact() {
    // the same check one degree too high must fail, or the test above proves nothing
    let grid = equiangular_grid(17, 64, EquiangularLayout::Nodes);
    let lmax = grid.max_exact_degree + 2;
    let mut g2 = grid.clone();
    g2.max_exact_degree = lmax; // bypass the guard to measure the aliasing
    let c = test_model(lmax);
    let plan = TransformPlan::new(lmax, &g2).unwrap();
    let back = plan.analyse(&plan.synthesise(&c).unwrap()).unwrap();
    let err = c
        .c_packed()
        .iter()
        .zip(back.c_packed())
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    assert!(err > 1e-6, "error {err}");
    // and the real guard refuses it
    let plan = TransformPlan::new(lmax, &grid).unwrap();
    assert!(plan.analyse(&plan.synthesise(&c).unwrap()).is_err());
}
