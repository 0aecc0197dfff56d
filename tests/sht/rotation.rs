//! Rotation of coefficient sets (`kugel::rotate`): Wigner d-functions against sympy, degree 1
//! against the Cartesian rotation matrix, invariance of the degree variance, rotation and its
//! inverse, and values at rotated points.

use kugel::coeffs::{Coefficients, Normalization};
use kugel::rotate::{rotate, EulerAngles, WignerSmallD, WignerSmallDHalf};
use kugel::sht::points::evaluate_points;
use kugel::spectral::degree_variance;

use crate::common::sample;

#[test]
fn wigner_d_matches_sympy_to_degree_20() {
    // source: sympy 1.14 Rotation.d (tests/reference/rotate_wigner_sympy.py), 20 digits, l ≤ 20.
    // 1e-14 absolute: |d| ≤ 1 and the recursion adds a few ulps per degree.
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/rotate/wigner_d_sympy.txt"
    ))
    .unwrap();
    let mut rows: Vec<(usize, isize, isize, f64, f64)> = Vec::new();
    for line in text.lines().filter(|l| !l.starts_with('#')) {
        let f: Vec<&str> = line.split_whitespace().collect();
        rows.push((
            f[0].parse().unwrap(),
            f[1].parse().unwrap(),
            f[2].parse().unwrap(),
            f[3].parse().unwrap(),
            f[4].parse().unwrap(),
        ));
    }
    assert!(rows.len() > 300, "fixture too small: {}", rows.len());
    let mut betas: Vec<f64> = rows.iter().map(|r| r.3).collect();
    betas.dedup();
    let mut checked = 0;
    let mut max_err: f64 = 0.0;
    for beta in betas {
        let mut d = WignerSmallD::new(beta, 20);
        for l in 0..=20 {
            if l > 0 {
                d.next_degree();
            }
            for &(_, mp, m, _, want) in rows.iter().filter(|r| r.0 == l && r.3 == beta) {
                let got = d.get(mp, m);
                max_err = max_err.max((got - want).abs());
                assert!(
                    (got - want).abs() < 1e-14,
                    "d^{l}_({mp},{m})({beta}) = {got}, sympy {want}"
                );
                checked += 1;
            }
        }
    }
    assert_eq!(checked, rows.len());
    eprintln!("{checked} sympy values, max error {max_err:e}");
}

#[test]
fn degree_one_rotates_like_a_cartesian_vector() {
    // closed form: f = √3 (C11 x + S11 y + C10 z) in geodesy normalisation (common practice),
    // so g(r) = f(R⁻¹ r) has the vector R v.
    let angles = EulerAngles::from_degrees(40.0, 70.0, -25.0).unwrap();
    let mut f = Coefficients::zeros(1, Normalization::Geodesy);
    let v = [0.3, -0.8, 0.5];
    f.set(1, 1, v[0], v[1]);
    f.set(1, 0, v[2], 0.0);
    let g = rotate(&f, &angles).unwrap();
    let r = angles.matrix();
    let want: Vec<f64> = (0..3)
        .map(|i| r[i][0] * v[0] + r[i][1] * v[1] + r[i][2] * v[2])
        .collect();
    let got = [g.c(1, 1), g.s(1, 1), g.c(1, 0)];
    for i in 0..3 {
        assert!((got[i] - want[i]).abs() < 1e-15, "{got:?} vs {want:?}");
    }
    assert_eq!(g.c(0, 0), 0.0);
}

#[test]
fn degree_variance_is_preserved_in_any_normalisation() {
    // common practice: rotations are unitary on each degree. 1e-13 relative.
    let angles = EulerAngles::from_degrees(12.0, 101.0, 233.0).unwrap();
    let base = sample(150, 3);
    for (norm, phase) in [
        (Normalization::Geodesy, false),
        (Normalization::Schmidt, true),
        (Normalization::Orthonormal, true),
    ] {
        let f = base.converted(norm, phase).unwrap();
        let g = rotate(&f, &angles).unwrap();
        assert_eq!((g.normalization, g.condon_shortley), (norm, phase));
        let (sf, sg) = (degree_variance(&f), degree_variance(&g));
        for l in 0..=150 {
            let rel = (sf[l] - sg[l]).abs() / sf[l];
            assert!(rel < 1e-13, "{norm} degree {l}: {} vs {}", sf[l], sg[l]);
        }
    }
}

#[test]
fn rotation_then_inverse_restores_every_coefficient() {
    // common practice: R⁻¹ R = identity. L = 400 here (the benchmark runs L = 2,000);
    // 1e-11 relative to the largest coefficient.
    let lmax = 400;
    let f = sample(lmax, 11);
    let angles = EulerAngles::from_degrees(-63.0, 137.0, 29.0).unwrap();
    let back = rotate(&rotate(&f, &angles).unwrap(), &angles.inverse()).unwrap();
    let largest = f.c_packed().iter().fold(0.0f64, |a, v| a.max(v.abs()));
    let mut worst: f64 = 0.0;
    for (l, m, c, s) in f.iter() {
        worst = worst
            .max((back.c(l, m) - c).abs())
            .max((back.s(l, m) - s).abs());
    }
    eprintln!(
        "round trip at L = {lmax}: worst error {:e} of the largest",
        worst / largest
    );
    assert!(worst / largest < 1e-11, "worst {worst:e}");
}

#[test]
fn values_follow_the_rotated_points() {
    // common practice: g(R p) = f(p), checked with the engine's point synthesis at L = 60.
    let f = sample(60, 5)
        .converted(Normalization::Schmidt, false)
        .unwrap();
    let angles = EulerAngles::from_degrees(75.0, -48.0, 160.0).unwrap();
    let g = rotate(&f, &angles).unwrap();
    let points: Vec<(f64, f64)> = (0..40)
        .map(|i| (0.01 + 3.1 * (i as f64 / 40.0), -3.0 + 0.37 * i as f64))
        .collect();
    let moved: Vec<(f64, f64)> = points
        .iter()
        .map(|&(t, l)| angles.rotate_point(t, l))
        .collect();
    let fv = evaluate_points(&f, &points).unwrap();
    let gv = evaluate_points(&g, &moved).unwrap();
    let scale = fv.iter().fold(0.0f64, |a, v| a.max(v.value.abs()));
    for (i, (a, b)) in fv.iter().zip(&gv).enumerate() {
        assert!(
            (a.value - b.value).abs() < 1e-11 * scale,
            "point {i}: f(p) = {}, g(Rp) = {}",
            a.value,
            b.value
        );
    }
}

#[test]
fn the_pole_rotation_brings_the_point_to_the_north_pole() {
    // the definition of --pole: the rotated model's value at the pole is the original's at
    // (lat, lon) (common practice).
    let f = sample(80, 9);
    for (lat, lon) in [(35.0, -120.0), (-62.5, 10.0), (90.0, 0.0), (-90.0, 45.0)] {
        let angles = EulerAngles::moving_to_north_pole(lat, lon, 30.0).unwrap();
        let g = rotate(&f, &angles).unwrap();
        let at_point = evaluate_points(&f, &[((90.0f64 - lat).to_radians(), f64::to_radians(lon))])
            .unwrap()[0]
            .value;
        let at_pole = evaluate_points(&g, &[(0.0, 0.0)]).unwrap()[0].value;
        assert!(
            (at_point - at_pole).abs() < 1e-11 * at_point.abs().max(1.0),
            "({lat}, {lon}): {at_point} vs {at_pole}"
        );
    }
}

#[test]
fn half_matrix_recursion_matches_the_full_reference() {
    // reference: the full-matrix recursion (WignerSmallD, itself checked against sympy above);
    // the fast rows m' ≥ 0 must agree to a few ulps at every degree, for small angles (where
    // entries underflow and are flushed), near π, negative angles and the generic case.
    for beta in [1e-3, 0.4, 1.9, 3.1, -2.2] {
        let lmax = 260;
        let mut full = WignerSmallD::new(beta, lmax);
        let mut half = WignerSmallDHalf::new(beta, lmax);
        let mut worst: f64 = 0.0;
        for l in 0..=lmax {
            if l > 0 {
                full.next_degree();
                half.next_degree();
            }
            assert_eq!(half.degree(), l);
            let li = l as isize;
            for mp in 0..=li {
                let row = half.row(mp as usize);
                for m in -li..=li {
                    let err = (row[(li - m) as usize] - full.get(mp, m)).abs();
                    worst = worst.max(err);
                }
            }
            // the mirrored rows the accessor gives for m' < 0
            if l > 3 {
                for (mp, m) in [(-1, 2), (-li, li), (-2, -li)] {
                    worst = worst.max((half.get(mp, m) - full.get(mp, m)).abs());
                }
            }
        }
        assert!(worst < 1e-13, "β {beta}: worst difference {worst:e}");
        eprintln!("β {beta}: half-matrix vs full recursion to degree {lmax}: {worst:e}");
    }
}
