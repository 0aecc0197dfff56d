//! Legendre polynomials and associated functions against outside sources.

use kugel::coeffs::Normalization;
use kugel::sht::gauss_legendre::nodes_and_weights;
use kugel::sht::legendre::{
    associated, associated_all, associated_with_derivative, geodesy_value, legendre_polynomial,
};
use std::f64::consts::PI;

#[test]
fn polynomials_match_closed_forms_and_parity() {
    // Closed forms of P_0..P_7 (Abramowitz & Stegun 1964, Table 22.9 / §8 closed forms).
    let closed: [fn(f64) -> f64; 8] = [
        |_| 1.0,
        |x| x,
        |x| (3.0 * x * x - 1.0) / 2.0,
        |x| (5.0 * x.powi(3) - 3.0 * x) / 2.0,
        |x| (35.0 * x.powi(4) - 30.0 * x * x + 3.0) / 8.0,
        |x| (63.0 * x.powi(5) - 70.0 * x.powi(3) + 15.0 * x) / 8.0,
        |x| (231.0 * x.powi(6) - 315.0 * x.powi(4) + 105.0 * x * x - 5.0) / 16.0,
        |x| (429.0 * x.powi(7) - 693.0 * x.powi(5) + 315.0 * x.powi(3) - 35.0 * x) / 16.0,
    ];
    for (l, f) in closed.iter().enumerate() {
        for k in 0..=20 {
            let x = -1.0 + 0.1 * k as f64;
            // 1e-14: a few ulp of the closed form's own rounding
            assert!(
                (legendre_polynomial(l, x) - f(x)).abs() < 1e-14,
                "P_{l}({x})"
            );
            // parity P_l(−x) = (−1)^l P_l(x) (common practice)
            let sign = if l % 2 == 0 { 1.0 } else { -1.0 };
            assert!((legendre_polynomial(l, -x) - sign * legendre_polynomial(l, x)).abs() < 1e-14);
        }
        assert!((legendre_polynomial(l, 1.0) - 1.0).abs() < 1e-15); // P_l(1) = 1
    }
}

/// Ferrers' functions without phase for l ≤ 4 in closed form (any text, e.g. Arfken, Table
/// 12.2 / DLMF 14.5): returns P_lm(cos θ) unnormalised.
fn ferrers_closed(l: usize, m: usize, th: f64) -> f64 {
    let (x, s) = (th.cos(), th.sin());
    match (l, m) {
        (0, 0) => 1.0,
        (1, 0) => x,
        (1, 1) => s,
        (2, 0) => 0.5 * (3.0 * x * x - 1.0),
        (2, 1) => 3.0 * x * s,
        (2, 2) => 3.0 * s * s,
        (3, 0) => 0.5 * (5.0 * x.powi(3) - 3.0 * x),
        (3, 1) => 1.5 * (5.0 * x * x - 1.0) * s,
        (3, 2) => 15.0 * x * s * s,
        (3, 3) => 15.0 * s.powi(3),
        (4, 0) => (35.0 * x.powi(4) - 30.0 * x * x + 3.0) / 8.0,
        (4, 1) => 2.5 * (7.0 * x.powi(3) - 3.0 * x) * s,
        (4, 2) => 7.5 * (7.0 * x * x - 1.0) * s * s,
        (4, 3) => 105.0 * x * s.powi(3),
        (4, 4) => 105.0 * s.powi(4),
        _ => unreachable!(),
    }
}

fn factorial(n: usize) -> f64 {
    (1..=n).map(|k| k as f64).product()
}

/// N_lm of docs/conventions.md §2 for each normalisation.
fn norm_factor(norm: Normalization, l: usize, m: usize) -> f64 {
    let d = if m == 0 { 1.0 } else { 2.0 };
    let r = factorial(l - m) / factorial(l + m);
    match norm {
        Normalization::Geodesy => (d * (2 * l + 1) as f64 * r).sqrt(),
        Normalization::Schmidt => (d * r).sqrt(),
        Normalization::Orthonormal => (d * (2 * l + 1) as f64 / (4.0 * PI) * r).sqrt(),
        Normalization::Unnormalized => 1.0,
    }
}

#[test]
fn associated_functions_l_le_4_every_normalisation_and_phase() {
    // closed forms above × N_lm (docs/conventions.md §2) × (−1)^m with the phase; 1e-13 relative
    for &norm in &Normalization::ALL {
        for cs in [false, true] {
            for l in 0..=4 {
                for m in 0..=l {
                    for th in [0.0, 1e-3, 0.4, PI / 2.0, 2.2, PI - 1e-3, PI] {
                        let sign = if cs && m % 2 == 1 { -1.0 } else { 1.0 };
                        let expect = sign * norm_factor(norm, l, m) * ferrers_closed(l, m, th);
                        let got = associated(l, m, th, norm, cs);
                        assert!(
                            (got - expect).abs() <= 1e-13 * expect.abs().max(1.0),
                            "{norm} cs={cs} l={l} m={m} θ={th}: {got} vs {expect}"
                        );
                    }
                }
            }
        }
    }
}

#[test]
fn derivatives_match_finite_differences_and_pole_limits() {
    // central differences (common practice), step 1e-6: error ~1e-10 relative for l ≤ 40
    for (l, m) in [(1, 0), (1, 1), (4, 2), (17, 5), (40, 40), (40, 1)] {
        for th in [0.3, 1.1, 2.7] {
            let h = 1e-6;
            let fd = (geodesy_value(l, m, th + h) - geodesy_value(l, m, th - h)) / (2.0 * h);
            let d = associated_with_derivative(l, m, th, Normalization::Geodesy, false).d_theta;
            assert!(
                (d - fd).abs() < 1e-7 * fd.abs().max(1.0),
                "l={l} m={m} θ={th}: {d} vs {fd}"
            );
        }
    }
    // at the north pole dP̄_l1/dθ = sqrt((2l+1) l (l+1)/2) (from P_l^1 ≈ θ l(l+1)/2, any text)
    for l in [1usize, 5, 300] {
        let lf = l as f64;
        let d = associated_with_derivative(l, 1, 0.0, Normalization::Geodesy, false).d_theta;
        let expect = ((2.0 * lf + 1.0) * lf * (lf + 1.0) / 2.0).sqrt();
        assert!((d - expect).abs() < 1e-12 * expect, "{d} {expect}");
    }
}

#[test]
fn orthogonality_by_gauss_legendre_every_normalisation() {
    // ∫∫ [N P_lm cos mλ]² dΩ per docs/conventions.md §2; Gauss–Legendre with 40 nodes is exact for
    // the degree-≤ 2·30 integrands; cross terms (l ≠ l') vanish. 1e-12 relative.
    let lmax = 30;
    let (x, w) = nodes_and_weights(40);
    for &norm in &[
        Normalization::Geodesy,
        Normalization::Schmidt,
        Normalization::Orthonormal,
    ] {
        for cs in [false, true] {
            let tables: Vec<(Vec<f64>, Vec<f64>)> = x
                .iter()
                .map(|xi| associated_all(lmax, xi.acos(), norm, cs))
                .collect();
            for m in [0usize, 1, 7, 30] {
                for l in m..=lmax {
                    for l2 in [l, (l + 1).min(lmax), (l + 2).min(lmax)] {
                        let i = kugel::coeffs::packed_index(l, m);
                        let i2 = kugel::coeffs::packed_index(l2, m);
                        let s: f64 = tables
                            .iter()
                            .zip(&w)
                            .map(|(t, wj)| wj * t.0[i] * t.0[i2])
                            .sum();
                        let lon = if m == 0 { 2.0 * PI } else { PI };
                        let full = s * lon;
                        let expect = if l != l2 {
                            0.0
                        } else {
                            match norm {
                                Normalization::Geodesy => 4.0 * PI,
                                Normalization::Schmidt => 4.0 * PI / (2 * l + 1) as f64,
                                _ => 1.0,
                            }
                        };
                        // orthonormal: complex-Y_lm normalisation; the real form with
                        // sqrt(2) for m > 0 integrates to 1 as well (docs/conventions.md §2)
                        assert!(
                            (full - expect).abs() < 1e-12 * expect.max(1.0),
                            "{norm} l={l} l2={l2} m={m}: {full}"
                        );
                    }
                }
            }
        }
    }
}

#[test]
fn mpmath_reference_values_at_high_degree_and_near_the_poles() {
    // Fixture: tests/reference/sht_legendre_mpmath.py (mpmath, 60 digits, at the exact cosine
    // of the double colatitude: the columns carry the rounding error of fl(cos θ) themselves).
    // Tolerance, of max(|value|, 1): max(1e-12, 5e-14·l) away from the poles, where the
    // recursion's rounding error is absolute and grows about like sqrt(l) ulp (Holmes &
    // Featherstone 2002 report errors approaching 1e-11 at degree 2700); within 0.01 rad of a
    // pole max(1e-12, 3e-16·l²): there every rounded coefficient a_lm acts like a perturbation
    // of cos θ by about one ulp, which the nearly double characteristic root of the recursion
    // at x = 1 amplifies like P̄'_l ∝ l² (measured: 1.5e-9 at l = 5400, m = 0, θ = 1e-3, a
    // fifth of the bound). The same bound holds relative to the value where it is small (the
    // monotone part near the poles, where extended exponents keep full relative accuracy).
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/sht/legendre_mpmath.txt"
    ))
    .unwrap();
    let mut n = 0;
    let mut max_err: f64 = 0.0;
    for line in text.lines().filter(|l| !l.starts_with('#')) {
        let f: Vec<&str> = line.split_whitespace().collect();
        let (l, m): (usize, usize) = (f[0].parse().unwrap(), f[1].parse().unwrap());
        let theta: f64 = f[2].parse().unwrap();
        let expect: f64 = f[3].parse().unwrap();
        let got = geodesy_value(l, m, theta);
        // geodesy_value takes the double θ as exact, as the fixture does
        let err = (got - expect).abs() / expect.abs().max(1.0);
        max_err = max_err.max(err);
        let lf = l as f64;
        let tol = if theta.sin() < 0.01 {
            1e-12_f64.max(3e-16 * lf * lf)
        } else {
            1e-12_f64.max(5e-14 * lf)
        };
        assert!(
            err < tol,
            "l={l} m={m} θ={theta}: {got:e} vs {expect:e} (rel {err:e})"
        );
        n += 1;
    }
    assert!(n > 100, "fixture too small: {n}");
    eprintln!("{n} fixture values, max error {max_err:e}");
}

#[test]
fn near_pole_large_order_is_not_zero() {
    // θ = 0.02 rad, m = 200: sin^m θ ≈ 1e-340 underflows a double, yet P̄_lm at l = 10,800 is
    // of order 1e-2 (Fukushima 2012 discusses exactly this regime). A plain recursion gives 0.
    let v = geodesy_value(10_800, 200, 0.02);
    assert!(v != 0.0 && v.abs() > 1e-6, "{v}");
}
