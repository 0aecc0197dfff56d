//! Gaussian filter weights against two sources outside the filter code:
//! 1. direct numerical integration of the normalised kernel (Jekeli 1981; Wahr et al. 1998),
//!    W_l = 2π ∫ w(ψ) P_l(cos ψ) sin ψ dψ, by composite Gauss–Legendre quadrature in ψ with
//!    Legendre polynomials from Bonnet's recursion written here;
//! 2. mpmath `besseli` at 60 digits (tests/reference/filter_gauss_weights.py), including
//!    weights far below 1e-100.

use kugel::spectral::filter::gauss::{gauss_weights, kernel_parameter};
use kugel::spectral::filter::FilterChain;

/// Weights by quadrature: b/(1 − e^{−2b}) ∫₀^ψmax e^{−b(1 − cos ψ)} P_l(cos ψ) sin ψ dψ, with ψmax
/// where the kernel has fallen by e^{−745} (below the smallest double) — the rest of the
/// integral cannot be represented anyway.
fn weights_by_quadrature(lmax: usize, half_width_m: f64, radius_m: f64) -> Vec<f64> {
    let b = kernel_parameter(half_width_m, radius_m).unwrap();
    let cos_max = (1.0 - 745.0 / b).max(-1.0);
    let psi_max = cos_max.acos();
    // panels short enough to hold ≤ ~2 oscillations of P_2000 and ≤ ~15 e-folds of the kernel
    let panels = 192;
    let (x, wq) = kugel::sht::gauss_legendre::nodes_and_weights(48);
    let h = psi_max / panels as f64;
    let norm = b / (1.0 - (-2.0 * b).exp());
    let mut acc = vec![0.0; lmax + 1];
    let mut p = vec![0.0; lmax + 1];
    for k in 0..panels {
        let mid = (k as f64 + 0.5) * h;
        for (xi, wi) in x.iter().zip(&wq) {
            let psi = mid + 0.5 * h * xi;
            let t = psi.cos();
            let weight = 0.5 * h * wi * norm * (-b * (1.0 - t)).exp() * psi.sin();
            // Bonnet: (l+1) P_{l+1} = (2l+1) t P_l − l P_{l−1}
            p[0] = 1.0;
            if lmax >= 1 {
                p[1] = t;
            }
            for l in 1..lmax {
                p[l + 1] = ((2 * l + 1) as f64 * t * p[l] - l as f64 * p[l - 1]) / (l + 1) as f64;
            }
            for (a, v) in acc.iter_mut().zip(&p) {
                *a += weight * v;
            }
        }
    }
    acc
}

#[test]
fn weights_match_direct_integration_of_the_kernel() {
    // Tolerance: the quadrature sums terms of size ≤ 1 whose P_l carry ~l·ε rounding, so it
    // resolves W_l only to about 1e-13 absolute; hence relative 1e-9 where W_l ≥ 1e-3 and
    // absolute 5e-13 below.
    let lmax = 2000;
    for radius_km in [6371.0, 2000.0] {
        for half_width_km in [100.0, 250.0, 500.0, 1000.0] {
            let w = gauss_weights(lmax, half_width_km * 1e3, radius_km * 1e3).unwrap();
            let q = weights_by_quadrature(lmax, half_width_km * 1e3, radius_km * 1e3);
            let mut worst_rel: f64 = 0.0;
            let mut worst_abs: f64 = 0.0;
            for l in 0..=lmax {
                let err = (w[l] - q[l]).abs();
                if q[l].abs() >= 1e-3 {
                    worst_rel = worst_rel.max(err / q[l].abs());
                } else {
                    worst_abs = worst_abs.max(err);
                }
            }
            eprintln!(
                "r = {half_width_km} km, R = {radius_km} km: rel {worst_rel:e} abs {worst_abs:e}"
            );
            assert!(
                worst_rel < 1e-9 && worst_abs < 5e-13,
                "r = {half_width_km} km on R = {radius_km} km: worst relative {worst_rel:e}, \
                 worst absolute {worst_abs:e}"
            );
        }
    }
}

struct FixtureRow {
    half_width_km: f64,
    radius_km: f64,
    b: f64,
    degree: usize,
    weight: f64,
}

fn fixture() -> Vec<FixtureRow> {
    let text = include_str!("../fixtures/filter/gauss_weights.csv");
    text.lines()
        .filter(|l| !l.starts_with('#') && !l.starts_with("half_width_km"))
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            FixtureRow {
                half_width_km: f[0].parse().unwrap(),
                radius_km: f[1].parse().unwrap(),
                b: f[2].parse().unwrap(),
                degree: f[3].parse().unwrap(),
                // values below ~1e-324 parse to 0, the double they round to
                weight: f[4].parse().unwrap(),
            }
        })
        .collect()
}

#[test]
fn weights_match_mpmath_at_every_magnitude() {
    // Tolerance 1e-12 relative for normal doubles: the backward ratio recurrence plus the
    // product over ≤ 3000 ratios accumulates a few hundred ulps; b itself is correct to
    // ~1 ulp, which moves ln W_l by |ln W_l|·ε. Subnormal and underflowed values: ≤ 1e-307.
    let rows = fixture();
    assert!(rows.len() >= 90);
    let mut tiny_checked = 0;
    let mut worst: f64 = 0.0;
    for row in &rows {
        let b = kernel_parameter(row.half_width_km * 1e3, row.radius_km * 1e3).unwrap();
        assert!((b / row.b - 1.0).abs() < 1e-14, "b {b} vs {}", row.b);
        let w = gauss_weights(row.degree, row.half_width_km * 1e3, row.radius_km * 1e3).unwrap();
        let got = w[row.degree];
        let what = format!(
            "r = {} km, R = {} km, l = {}: {got:e} vs mpmath {:e}",
            row.half_width_km, row.radius_km, row.degree, row.weight
        );
        if row.weight >= f64::MIN_POSITIVE {
            let rel = (got / row.weight - 1.0).abs();
            worst = worst.max(rel);
            assert!(rel < 1e-12, "{what}");
            if row.weight < 1e-100 {
                tiny_checked += 1;
            }
        } else {
            assert!((0.0..1e-307).contains(&got), "{what}");
        }
    }
    eprintln!("worst relative deviation from mpmath: {worst:e}");
    assert!(tiny_checked >= 3, "fixture should reach W_l < 1e-100");
}

#[test]
fn gauss_spec_uses_the_model_radius() {
    let chain = FilterChain::parse("gauss:300").unwrap();
    let on_earth = chain.weights(100, 6_371_000.0).unwrap();
    let direct = gauss_weights(100, 300e3, 6_371_000.0).unwrap();
    assert_eq!(on_earth, direct);
    let on_moon = chain.weights(100, 1_737_400.0).unwrap();
    assert!(on_moon[50] < on_earth[50]);
}
