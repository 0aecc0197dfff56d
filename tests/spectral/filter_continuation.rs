//! Radial continuation of single harmonics against closed forms, the refusal of unregularised
//! downward continuation, and the bound of the regularised one.

use kugel::spectral::continuation::{
    apply_continuation, radial_factors, ContinuationOptions, DownwardRegularization,
};
use kugel::{Coefficients, Normalization};

const R: f64 = 6_371_000.0;

/// Closed forms of geodesy-normalised P̄_lm(cos θ)·cos mλ without the Condon–Shortley phase
/// (any text; N̄_lm = sqrt((2 − δ_m0)(2l + 1)(l − m)!/(l + m)!)).
fn closed_form(l: usize, m: usize, theta: f64, lambda: f64) -> f64 {
    let (t, u) = (theta.cos(), theta.sin());
    let p = match (l, m) {
        (2, 0) => 5f64.sqrt() * 0.5 * (3.0 * t * t - 1.0),
        (3, 1) => (7.0f64 / 6.0).sqrt() * 1.5 * (5.0 * t * t - 1.0) * u,
        (2, 2) => (5.0f64 / 12.0).sqrt() * 3.0 * u * u,
        (4, 3) => (2.0f64 * 9.0 / 5040.0).sqrt() * 105.0 * t * u * u * u,
        _ => unreachable!(),
    };
    p * (m as f64 * lambda).cos()
}

fn single(l: usize, m: usize) -> Coefficients {
    let mut c = Coefficients::zeros(l, Normalization::Geodesy);
    c.reference_radius_m = R;
    c.set(l, m, 1.0, 0.0);
    c
}

#[test]
fn continued_single_harmonics_equal_the_closed_form() {
    let points = [
        (0.3, 0.2),
        (1.1, 2.5),
        (2.0, 4.0),
        (std::f64::consts::FRAC_PI_2, 5.9),
    ];
    let opts = ContinuationOptions::default();
    for (l, m) in [(2, 0), (3, 1), (2, 2), (4, 3)] {
        for target in [R + 400e3, R + 35_786e3, R - 50e3] {
            let mut c = single(l, m);
            apply_continuation(&mut c, target, &opts).unwrap();
            assert_eq!(c.reference_radius_m, target);
            let vals = kugel::sht::evaluate_points(&c, &points).unwrap();
            let s = (R / target).powi(l as i32 + 1);
            for (pv, &(th, la)) in vals.iter().zip(&points) {
                let expect = s * closed_form(l, m, th, la);
                // 1e-13: a handful of roundings in the Legendre recursion and the power
                assert!(
                    (pv.value - expect).abs() <= 1e-13 * s.max(1.0),
                    "l={l} m={m} r={target}: {} vs {expect}",
                    pv.value
                );
            }
        }
    }
}

#[test]
fn potential_model_is_the_same_function_after_upward_continuation() {
    // T(r) = GM/R Σ (R/r)^{l+1} C_lm Y_lm: the re-referenced model must give the same T at
    // any radius outside the target sphere.
    let gm = 3.986004418e14;
    let mut c = Coefficients::zeros(30, Normalization::Geodesy);
    c.reference_radius_m = R;
    c.gm_m3_s2 = Some(gm);
    for l in 2..=30 {
        for m in 0..=l {
            c.set(l, m, 1e-6 / (l * l) as f64, -5e-7 / (l * l) as f64);
        }
    }
    let original = c.clone();
    let target = R + 500e3;
    apply_continuation(&mut c, target, &ContinuationOptions::default()).unwrap();
    let eval_r = R + 800e3;
    for (l, m, c0, _) in original.iter() {
        let before = gm / R * (R / eval_r).powi(l as i32 + 1) * c0;
        let after = gm / target * (target / eval_r).powi(l as i32 + 1) * c.c(l, m);
        assert!(
            (before - after).abs() <= 1e-14 * before.abs(),
            "l={l} m={m}"
        );
    }
    assert_eq!(c.attributes["continued_from_radius_m"], format!("{R}"));
}

#[test]
fn downward_continuation_is_refused_with_its_amplification() {
    let mut c = single(600, 3);
    let before = c.clone();
    let err = apply_continuation(&mut c, R - 100e3, &ContinuationOptions::default()).unwrap_err();
    let msg = err.to_string();
    // (6371/6271)^{601} = 13 469.56 (Python float arithmetic)
    let amp = (6371.0f64 / 6271.0).powi(601);
    assert!((amp - 13_469.56).abs() < 0.01, "{amp}");
    assert!(
        msg.contains(&format!("{amp:.2e}")) && msg.contains("cap 1e3"),
        "{msg}"
    );
    assert_eq!(c, before, "a refused continuation leaves the set untouched");
}

#[test]
fn regularised_downward_continuation_is_bounded() {
    let lmax = 800;
    let alpha: f64 = 1e-6;
    let bound = 1.0 / (2.0 * alpha.sqrt());
    let mut noise = Coefficients::zeros(lmax, Normalization::Geodesy);
    noise.reference_radius_m = R;
    for l in 0..=lmax {
        for m in 0..=l {
            let v = if (l + m) % 2 == 0 { 1.0 } else { -1.0 };
            noise.set(l, m, v, v);
        }
    }
    let target = R - 100e3;
    let tik = ContinuationOptions {
        regularization: Some(DownwardRegularization::Tikhonov { alpha }),
        ..Default::default()
    };
    let mut c = noise.clone();
    apply_continuation(&mut c, target, &tik).unwrap();
    let biggest = c.c_packed().iter().fold(0.0f64, |a, v| a.max(v.abs()));
    assert!(
        biggest <= bound * (1.0 + 1e-12) && biggest > 0.5 * bound,
        "{biggest} vs {bound}"
    );
    // unregularised, degree 800 alone would be amplified by ~3e5
    let plain = (R / target).powi(lmax as i32 + 1);
    assert!(plain > 100.0 * bound);

    let cut = ContinuationOptions {
        regularization: Some(DownwardRegularization::Cutoff { lmax: 300 }),
        ..Default::default()
    };
    let k = radial_factors(lmax, R, target, &cut).unwrap();
    assert!((k[300] - (R / target).powi(301)).abs() < 1e-12 * k[300]);
    assert!(k[301..].iter().all(|&v| v == 0.0));
}
