//! Complex coefficient sets in NetCDF (`kugel::io::model::complex_netcdf`): the round trip
//! real → complex file → real, a set built from the closed forms of a few Y_lm read through
//! the model reader, and files that are not a complex set of a real field.

use std::path::Path;

use kugel::coeffs::{Coefficients, Normalization};
use kugel::complex_coeffs::ComplexCoefficients;
use kugel::io::model::complex_netcdf::{read_complex_netcdf, write_complex_netcdf};
use kugel::io::model::{model_form, read_model, CoefficientForm};
use kugel::io::provenance::Provenance;
use kugel::sht::points::evaluate_points;
use netcdf_writer::{NcAttrValue, NcFileBuilder, NcWriteFormat, NcWriteOptions};

/// A degree-`lmax` set with pseudo-random coefficients (a fixed linear congruential sequence).
fn pseudo_random_model(lmax: usize, seed: u64) -> Coefficients {
    let mut state = seed
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    let mut next = || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((state >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
    };
    let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
    for l in 0..=lmax {
        for m in 0..=l {
            let s = if m == 0 { 0.0 } else { next() };
            c.set(l, m, next(), s);
        }
    }
    c.reference_radius_m = 1_737_400.0;
    c.gm_m3_s2 = Some(4.9e12);
    c.units = "1".into();
    c
}

fn provenance() -> Provenance {
    Provenance::from_command_line("test".to_string())
}

#[test]
fn real_to_complex_file_to_real_is_exact_to_an_ulp() {
    // The file holds the complex set bit for bit; the conversion is a scale by √2 and the
    // normalisation's factor and their inverses per coefficient (docs/conventions.md §2), so
    // the round trip in the engine's own normalisation (geodesy: ×(1/√2), then ×√2) moves a
    // value by at most one ulp, and in the others by the few roundings of their factors.
    let dir = tempfile::tempdir().unwrap();
    let real = pseudo_random_model(40, 3);
    let mut worst_ulps: f64 = 0.0;
    let mut worst_geodesy: f64 = 0.0;
    for norm in Normalization::ALL {
        for phase in [false, true] {
            let want = real.converted(norm, phase).unwrap();
            let set = ComplexCoefficients::from_real(&want, norm, phase).unwrap();
            let path = dir.path().join(format!("set_{norm}_{phase}.nc"));
            write_complex_netcdf(&path, &set, &provenance()).unwrap();
            assert_eq!(model_form(&path).unwrap(), CoefficientForm::Complex);
            // the file holds exactly what was written
            assert_eq!(read_complex_netcdf(&path).unwrap(), set);
            let back = read_model(&path).unwrap();
            assert_eq!(back.normalization, norm);
            assert_eq!(back.condon_shortley, phase);
            assert_eq!(back.reference_radius_m, real.reference_radius_m);
            assert_eq!(back.gm_m3_s2, real.gm_m3_s2);
            for (l, m, c, s) in want.iter() {
                for (got, w) in [(back.c(l, m), c), (back.s(l, m), s)] {
                    // whole units in the last place of the wanted value (0 for 0 = 0)
                    let ulp = f64::from_bits(w.abs().to_bits() + 1) - w.abs();
                    let ulps = if got == w { 0.0 } else { (got - w).abs() / ulp };
                    worst_ulps = worst_ulps.max(ulps);
                    if norm == Normalization::Geodesy {
                        worst_geodesy = worst_geodesy.max(ulps);
                    }
                }
            }
        }
    }
    eprintln!(
        "real → complex NetCDF → real: worst {worst_geodesy:.2} ulp in geodesy, {worst_ulps:.2} ulp in any normalisation"
    );
    assert!(worst_geodesy <= 1.0, "{worst_geodesy} ulp");
    assert!(worst_ulps <= 2.0, "{worst_ulps} ulp");
}

#[test]
fn a_set_from_closed_forms_reads_as_the_same_field() {
    // Orthonormal complex harmonics with the Condon–Shortley phase (DLMF §14.30.1 with the
    // Ferrers functions of §14.5; the closed forms of a few, from memory, common practice):
    //   Y_1,0 = √(3/4π) cos θ,  Y_2,1 = −√(15/8π) sin θ cos θ e^{iλ},
    //   Y_3,3 = −√(35/64π) sin³θ e^{3iλ},  Y_l,−m = (−1)^m conj(Y_lm).
    // A real field f = a_10 Y_10 + a_21 Y_21 + a_2,−1 Y_2,−1 + a_33 Y_33 + a_3,−3 Y_3,−3 with
    // a_l,−m = (−1)^m conj(a_lm), written as a complex file and read by the model reader, must
    // evaluate to the closed-form sum everywhere.
    let pi = std::f64::consts::PI;
    let (a10, a21, a33) = (0.7, (0.3, -0.2), (0.1, 0.5));
    let mut set = ComplexCoefficients::zeros(3, Normalization::Orthonormal, true);
    set.set(1, 0, a10, 0.0);
    set.set(2, 1, a21.0, a21.1);
    set.set(2, -1, -a21.0, a21.1);
    set.set(3, 3, a33.0, a33.1);
    set.set(3, -3, -a33.0, a33.1);
    set.reference_radius_m = 1.0;
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("closed.nc");
    write_complex_netcdf(&path, &set, &provenance()).unwrap();
    let real = read_model(&path).unwrap();
    let points: Vec<(f64, f64)> = (0..40)
        .map(|k| (0.05 + 3.0 * k as f64 / 40.0, -2.9 + 0.37 * k as f64))
        .collect();
    let got = evaluate_points(&real, &points).unwrap();
    let mul = |(ar, ai): (f64, f64), (br, bi): (f64, f64)| (ar * br - ai * bi, ar * bi + ai * br);
    for ((theta, lam), v) in points.iter().zip(&got) {
        let (st, ct) = theta.sin_cos();
        let y10 = (3.0 / (4.0 * pi)).sqrt() * ct;
        let r21 = -(15.0 / (8.0 * pi)).sqrt() * st * ct;
        let r33 = -(35.0 / (64.0 * pi)).sqrt() * st.powi(3);
        let e1 = (lam.cos(), lam.sin());
        let e3 = ((3.0 * lam).cos(), (3.0 * lam).sin());
        let y21 = (r21 * e1.0, r21 * e1.1);
        let y2m1 = (-y21.0, y21.1); // (−1)^1 conj
        let y33 = (r33 * e3.0, r33 * e3.1);
        let y3m3 = (-y33.0, y33.1);
        let terms = [
            (a10 * y10, 0.0),
            mul(a21, y21),
            mul((-a21.0, a21.1), y2m1),
            mul(a33, y33),
            mul((-a33.0, a33.1), y3m3),
        ];
        let (re, im): (f64, f64) = terms
            .iter()
            .fold((0.0, 0.0), |acc, t| (acc.0 + t.0, acc.1 + t.1));
        assert!(im.abs() < 1e-14, "the closed-form sum is not real: {im}");
        assert!(
            (v.value - re).abs() < 1e-13,
            "at θ {theta}, λ {lam}: read {} vs closed form {re}",
            v.value
        );
    }
}

/// A degree-2 complex file with the given parts (row-major 3 × 5, orders −2..2), written by
/// hand; `imag` None leaves the imaginary part out.
fn hand_file(path: &Path, real: &[f64; 15], imag: Option<&[f64; 15]>) {
    let mut b = NcFileBuilder::new();
    let dd = b.add_dimension("degree", 3).unwrap();
    let dm = b.add_dimension("order", 5).unwrap();
    let v = b.add_variable::<f64>("a_real", &[dd, dm]).unwrap();
    b.write_variable(v, real).unwrap();
    if let Some(im) = imag {
        let v = b.add_variable::<f64>("a_imag", &[dd, dm]).unwrap();
        b.write_variable(v, im).unwrap();
    }
    for (k, v) in [
        ("coefficient_form", NcAttrValue::Chars("complex".into())),
        ("normalization", NcAttrValue::Chars("orthonormal".into())),
        ("condon_shortley_phase", NcAttrValue::Ints(vec![1])),
        ("reference_radius_m", NcAttrValue::Doubles(vec![1.0])),
    ] {
        b.add_attribute(k, v).unwrap();
    }
    let bytes = b
        .to_vec(NcWriteOptions {
            format: NcWriteFormat::Nc4,
        })
        .unwrap()
        .1;
    std::fs::write(path, bytes).unwrap();
}

#[test]
fn files_that_are_not_a_complex_set_of_a_real_field_are_refused() {
    let n = f64::NAN;
    // rows l = 0, 1, 2; columns m = −2..2
    let good_re = [
        n, n, 1.0, n, n, n, 0.5, 0.25, -0.5, n, 0.1, 0.2, 0.3, -0.2, 0.1,
    ];
    let good_im = [
        n, n, 0.0, n, n, n, 0.0, 0.0, 0.0, n, -0.4, 0.6, 0.0, 0.6, 0.4,
    ];
    let dir = tempfile::tempdir().unwrap();
    let ok = dir.path().join("ok.nc");
    hand_file(&ok, &good_re, Some(&good_im));
    read_model(&ok).expect("the hand-made set is valid");

    let name = |p: &Path| p.file_name().unwrap().to_string_lossy().into_owned();
    let missing = dir.path().join("no_imag.nc");
    hand_file(&missing, &good_re, None);
    let e = read_model(&missing).unwrap_err().to_string();
    assert!(e.contains(&name(&missing)) && e.contains("a_imag"), "{e}");

    let mut im = good_im;
    im[7] = 0.3; // a_(1,0) = 0.25 + 0.3i
    let complex_zero = dir.path().join("imag_l0.nc");
    hand_file(&complex_zero, &good_re, Some(&im));
    let e = read_model(&complex_zero).unwrap_err().to_string();
    assert!(
        e.contains(&name(&complex_zero)) && e.contains("a_(1,0)") && e.contains("not real"),
        "{e}"
    );

    let mut re = good_re;
    re[10] = 0.15; // a_(2,−2) no longer (−1)² conj(a_(2,2))
    let partner = dir.path().join("partner.nc");
    hand_file(&partner, &re, Some(&good_im));
    let e = read_model(&partner).unwrap_err().to_string();
    assert!(
        e.contains(&name(&partner)) && e.contains("a_(2,2)") && e.contains("Condon–Shortley"),
        "{e}"
    );

    let mut re = good_re;
    re[2] = n; // a gap at l = 0
    let gap = dir.path().join("gap.nc");
    hand_file(&gap, &re, Some(&good_im));
    let e = read_model(&gap).unwrap_err().to_string();
    assert!(e.contains("degree 0, order 0"), "{e}");
}
