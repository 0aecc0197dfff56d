//! One-model spectra: Parseval against quadrature of a synthesised grid, recovery of a known
//! power law, invariance under normalisation changes, error degree variance.

use crate::support::random_model;
use kugel::sht::{GaussGrid, TransformPlan};
use kugel::spectral::power_law::fit_power_law;
use kugel::spectral::{degree_variance, Spectrum, SpectrumOptions};
use kugel::Normalization;

#[test]
fn parseval_mean_square_of_grid_equals_sum_of_degree_variances() {
    // Parseval for 4π-normalised harmonics (common practice; CONVENTIONS.md §2): the mean square
    // of f over the sphere is Σ_l S_l. The mean square is taken by Gauss–Legendre quadrature of
    // the synthesised grid, exact for the band-limited f² (CONVENTIONS.md §4).
    let lmax = 48;
    let model = random_model(lmax, 7, |l| 1e-3 / (1.0 + l as f64).powi(2));
    let grid = GaussGrid::new(lmax);
    let plan = TransformPlan::new(lmax, &grid).unwrap();
    let field = plan.synthesise(&model).unwrap();
    let nlon = grid.nlon as f64;
    let mean_square: f64 = field
        .outer_iter()
        .zip(&grid.weights)
        .map(|(row, w)| 0.5 * w * row.iter().map(|v| v * v).sum::<f64>() / nlon)
        .sum();
    let total: f64 = degree_variance(&model).iter().sum();
    assert!(
        (mean_square / total - 1.0).abs() < 1e-12,
        "{mean_square} vs {total}"
    );
    // The same field given in Schmidt normalisation has the same physical power.
    let schmidt = model.converted(Normalization::Schmidt, false).unwrap();
    let total_schmidt: f64 = degree_variance(&schmidt).iter().sum();
    assert!((total_schmidt / total - 1.0).abs() < 1e-13);
}

#[test]
fn normalisation_and_phase_leave_the_spectrum_unchanged() {
    let model = random_model(60, 11, |l| 1.0 / (1.0 + l as f64));
    let base = Spectrum::compute(&model, &SpectrumOptions::default()).unwrap();
    for norm in Normalization::ALL {
        for cs in [false, true] {
            let other = model.converted(norm, cs).unwrap();
            let s = Spectrum::compute(&other, &SpectrumOptions::default()).unwrap();
            for l in 0..=60 {
                let (a, b) = (base.degree_variance[l], s.degree_variance[l]);
                assert!(
                    (a - b).abs() <= 1e-12 * a,
                    "{norm} cs={cs} l={l}: {a} vs {b}"
                );
            }
        }
    }
}

fn power_law_variance(l: usize) -> f64 {
    // invented scenario: per-coefficient power 2.5e-11 · l^-3.6
    if l == 0 {
        0.0
    } else {
        2.5e-11 * (l as f64).powf(-3.6)
    }
}

#[test]
fn power_law_fit_recovers_known_law_within_stated_uncertainty() {
    let model = random_model(180, 2024, power_law_variance);
    let opts = SpectrumOptions {
        fit_range: Some((2, 180)),
        ..Default::default()
    };
    let fit = Spectrum::compute(&model, &opts).unwrap().power_law.unwrap();
    let z_p = (fit.exponent - 3.6) / fit.exponent_sigma;
    let z_a = (fit.amplitude - 2.5e-11) / fit.amplitude_sigma;
    eprintln!("fit: {fit:?}, z exponent {z_p:.2}, z amplitude {z_a:.2}");
    assert!(z_p.abs() < 3.0 && z_a.abs() < 3.0, "{fit:?}");
    assert!(fit.exponent_sigma < 0.05, "{fit:?}");
    assert!((fit.reduced_chi2 - 1.0).abs() < 0.5, "{fit:?}");
}

#[test]
fn power_law_uncertainties_are_calibrated_over_many_seeds() {
    // If the stated σ is honest, about 68% of fits land within 1σ of the truth (normal
    // coverage; with 200 trials the binomial sd of the fraction is 0.033).
    let trials = 200;
    let (mut inside_p, mut inside_a) = (0, 0);
    for seed in 0..trials {
        let model = random_model(120, 1000 + seed, power_law_variance);
        let power: Vec<f64> = degree_variance(&model)
            .iter()
            .enumerate()
            .map(|(l, s)| s / (2 * l + 1) as f64)
            .collect();
        let fit = fit_power_law(&power, 2, 120).unwrap();
        inside_p += ((fit.exponent - 3.6).abs() < fit.exponent_sigma) as usize;
        inside_a += ((fit.amplitude - 2.5e-11).abs() < fit.amplitude_sigma) as usize;
    }
    let (fp, fa) = (
        inside_p as f64 / trials as f64,
        inside_a as f64 / trials as f64,
    );
    eprintln!("1-sigma coverage: exponent {fp}, amplitude {fa}");
    assert!((0.58..=0.78).contains(&fp), "exponent coverage {fp}");
    assert!((0.58..=0.78).contains(&fa), "amplitude coverage {fa}");
}

#[test]
fn confidence_band_covers_true_power_at_its_level() {
    // (2l+1)Ŝ_l/S_l ~ χ²(2l+1): a 90% band should contain the true S_l in about 90% of degrees.
    let lmax = 400;
    let (mut covered, mut count) = (0, 0);
    for seed in 90..95 {
        let model = random_model(lmax, seed, |l| 1.0 / (1.0 + l as f64).powi(2));
        let opts = SpectrumOptions {
            confidence: 0.9,
            ..Default::default()
        };
        let s = Spectrum::compute(&model, &opts).unwrap();
        for l in 0..=lmax {
            let truth = (2 * l + 1) as f64 / (1.0 + l as f64).powi(2);
            covered += (s.band_lower[l] <= truth && truth <= s.band_upper[l]) as usize;
            count += 1;
        }
    }
    let frac = covered as f64 / count as f64;
    eprintln!("90% band coverage: {frac}");
    // binomial sd at n = 2005: 0.0067
    assert!((0.875..=0.925).contains(&frac), "coverage {frac}");
}

#[test]
fn error_degree_variance_and_signal_to_noise_from_sigmas() {
    let mut model = random_model(20, 5, |_| 4.0);
    let n = kugel::coeffs::packed_len(20);
    model.set_sigmas(vec![0.5; n], vec![0.5; n]).unwrap();
    let s = Spectrum::compute(&model, &SpectrumOptions::default()).unwrap();
    let e = s.error_degree_variance.as_ref().unwrap();
    let snr = s.signal_to_noise.as_ref().unwrap();
    for l in 0..=20 {
        // Σ_m σ_C² + Σ_{m>0} σ_S² = (2l+1)·0.25
        assert!((e[l] - 0.25 * (2 * l + 1) as f64).abs() < 1e-12);
        assert!((snr[l] - (s.degree_variance[l] / e[l]).sqrt()).abs() < 1e-12);
    }
    let table = s.to_table();
    assert_eq!(table.columns[0].name, "degree");
    for name in [
        "degree_variance",
        "error_degree_variance",
        "signal_to_noise",
        "half_wavelength_km",
    ] {
        assert!(table.column(name).is_some(), "{name}");
    }
}
