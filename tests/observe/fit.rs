//! Least-squares fits recover a known band-limited field.
//!
//! Field: f = 0.8·P̄_20(cos θ) + 0.5·P̄_31(cos θ) cos λ − 0.3·P̄_22(cos θ) sin 2λ, with the fully
//! normalised closed forms P̄_20 = √5 (3t² − 1)/2, P̄_31 = √(21/8) u (5t² − 1),
//! P̄_22 = (√15/2) u² (t = cos θ, u = sin θ; any geodesy text, e.g. Heiskanen & Moritz 1967
//! §1-14 with the 4π normalisation). Sampled at seeded random points with Gaussian noise of
//! known σ.
//!
//! Statistical tolerances: with correct σ each estimate is normal about the truth with its
//! formal σ, so |error|/σ < 4.5 for all 25 coefficients fails by chance with p ≈ 2e-4;
//! χ²/dof has standard deviation sqrt(2/dof) ≈ 0.032 at dof ≈ 1975, and we accept ±5 of those.

use kugel::observe::{fit, FitOptions, PointSet, Regularization};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

fn true_field(lat_deg: f64, lon_deg: f64) -> f64 {
    let theta = (90.0 - lat_deg).to_radians();
    let (u, t) = theta.sin_cos();
    let lam = lon_deg.to_radians();
    let p20 = 5f64.sqrt() * (3.0 * t * t - 1.0) / 2.0;
    let p31 = (21.0f64 / 8.0).sqrt() * u * (5.0 * t * t - 1.0);
    let p22 = 15f64.sqrt() / 2.0 * u * u;
    0.8 * p20 + 0.5 * p31 * lam.cos() - 0.3 * p22 * (2.0 * lam).sin()
}

fn truth(l: usize, m: usize) -> (f64, f64) {
    match (l, m) {
        (2, 0) => (0.8, 0.0),
        (3, 1) => (0.5, 0.0),
        (2, 2) => (0.0, -0.3),
        _ => (0.0, 0.0),
    }
}

fn samples(n: usize, sigma: f64, seed: u64) -> PointSet {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let noise = Normal::new(0.0, sigma).unwrap();
    let (mut lat, mut lon, mut val) = (vec![], vec![], vec![]);
    for _ in 0..n {
        // uniform on the sphere: z uniform in [−1, 1]
        let z: f64 = rng.gen_range(-1.0..1.0);
        let a = z.asin().to_degrees();
        let o: f64 = rng.gen_range(-180.0..180.0);
        lat.push(a);
        lon.push(o);
        val.push(true_field(a, o) + noise.sample(&mut rng));
    }
    PointSet::from_vectors(lat, lon, val, Some(vec![sigma; n]))
        .unwrap()
        .0
}

#[test]
fn unregularised_fit_recovers_coefficients_within_formal_sigma() {
    let points = samples(2000, 0.01, 7);
    let result = fit(&points, 4, &FitOptions::default()).unwrap();
    assert!(!result.sigmas_scaled);
    for l in 0..=4 {
        for m in 0..=l {
            let (c, s) = truth(l, m);
            let (sc, ss) = result.model.sigma(l, m).unwrap();
            assert!(sc > 0.0 && sc < 0.01, "σ(C{l}{m}) = {sc}");
            let zc = (result.model.c(l, m) - c) / sc;
            assert!(
                zc.abs() < 4.5,
                "C_{l}{m}: {} vs {c}, {zc:.2} σ",
                result.model.c(l, m)
            );
            if m > 0 {
                let zs = (result.model.s(l, m) - s) / ss;
                assert!(
                    zs.abs() < 4.5,
                    "S_{l}{m}: {} vs {s}, {zs:.2} σ",
                    result.model.s(l, m)
                );
            }
        }
    }
    let dof = 2000.0 - 25.0;
    let tol = 5.0 * (2.0f64 / dof).sqrt();
    assert!(
        (result.chi2_per_dof - 1.0).abs() < tol,
        "χ²/dof = {}",
        result.chi2_per_dof
    );
    assert!(
        (result.residual_rms - 0.01).abs() < 0.001,
        "rms {}",
        result.residual_rms
    );
    assert!((result.effective_parameters - 25.0).abs() < 1e-6);
    assert!(
        result.condition_estimate > 1.0 && result.condition_estimate < 100.0,
        "{}",
        result.condition_estimate
    );
    assert!(result.warnings.is_empty(), "{:?}", result.warnings);
}

#[test]
fn without_sigma_the_covariance_is_scaled_by_the_variance_factor() {
    let with = samples(1500, 0.02, 11);
    let without = PointSet {
        sigma: None,
        ..with.clone()
    };
    let a = fit(&with, 3, &FitOptions::default()).unwrap();
    let b = fit(&without, 3, &FitOptions::default()).unwrap();
    assert!(b.sigmas_scaled);
    // unit weights: χ²/dof estimates σ² = 4e-4
    assert!(
        (b.chi2_per_dof / 4e-4 - 1.0).abs() < 0.2,
        "{}",
        b.chi2_per_dof
    );
    // same estimate, and σ agree within the scatter of the variance factor (±20%)
    let (sa, _) = a.model.sigma(2, 0).unwrap();
    let (sb, _) = b.model.sigma(2, 0).unwrap();
    assert!((a.model.c(2, 0) - b.model.c(2, 0)).abs() < 1e-12);
    assert!((sb / sa - 1.0).abs() < 0.1, "{sa} vs {sb}");
}

#[test]
fn under_determined_fit_is_refused_without_regularisation_and_warned_with_it() {
    let points = samples(20, 0.01, 3);
    let err = fit(&points, 6, &FitOptions::default())
        .unwrap_err()
        .to_string();
    assert!(err.contains("not positive definite"), "{err}");
    assert!(err.contains("regularise"), "{err}");
    let options = FitOptions {
        regularization: Regularization::Damping(1e2),
        ..Default::default()
    };
    let result = fit(&points, 6, &options).unwrap();
    assert!(
        result
            .warnings
            .iter()
            .any(|w| w.contains("under-determined") && w.contains("49 unknowns")),
        "{:?}",
        result.warnings
    );
    assert!(
        result.warnings.iter().any(|w| w.contains("data gaps")),
        "{:?}",
        result.warnings
    );
    assert!(result.effective_parameters < 20.0);
}

#[test]
fn gcv_picks_little_damping_for_well_determined_data() {
    // Over-determined and noisy at a known level: GCV should not damp the signal away. The
    // recovered coefficients stay within 4.5 formal σ plus the damping bias, which for the
    // chosen λ is below 1% of the coefficient (checked directly).
    let points = samples(1500, 0.01, 5);
    let options = FitOptions {
        regularization: Regularization::Gcv,
        ..Default::default()
    };
    let result = fit(&points, 4, &options).unwrap();
    assert!(result.lambda > 0.0);
    assert!(
        (result.model.c(2, 0) - 0.8).abs() < 0.01,
        "{}",
        result.model.c(2, 0)
    );
    assert!(
        (result.model.s(2, 2) + 0.3).abs() < 0.01,
        "{}",
        result.model.s(2, 2)
    );
    assert!(
        (result.chi2_per_dof - 1.0).abs() < 0.2,
        "{}",
        result.chi2_per_dof
    );
}

#[test]
fn kaula_prior_shrinks_high_degrees_more() {
    let points = samples(300, 0.05, 9);
    let options = FitOptions {
        regularization: Regularization::Kaula { a: 1.0, p: 2.0 },
        ..Default::default()
    };
    let result = fit(&points, 8, &options).unwrap();
    // Posterior σ can never exceed the prior RMS a·l^−p (the data only add information).
    for l in 1..=8 {
        let (sc, _) = result.model.sigma(l, 0).unwrap();
        assert!(sc <= (l as f64).powi(-2) * (1.0 + 1e-9), "l={l}: {sc}");
    }
    assert!((result.model.c(2, 0) - 0.8).abs() < 0.05);
}

#[test]
fn regularization_specs_parse_and_bad_ones_are_named() {
    assert_eq!(Regularization::parse("none").unwrap(), Regularization::None);
    assert_eq!(
        Regularization::parse("damping:0.5").unwrap(),
        Regularization::Damping(0.5)
    );
    assert_eq!(
        Regularization::parse("kaula:1e-5,2").unwrap(),
        Regularization::Kaula { a: 1e-5, p: 2.0 }
    );
    assert_eq!(
        Regularization::parse("kaula:1e-5,2:gcv").unwrap(),
        Regularization::KaulaGcv { a: 1e-5, p: 2.0 }
    );
    assert_eq!(Regularization::parse("GCV").unwrap(), Regularization::Gcv);
    let err = Regularization::parse("damping:-1").unwrap_err().to_string();
    assert!(
        err.contains("damping:-1") && err.contains("not a positive number"),
        "{err}"
    );
    assert!(Regularization::parse("ridge")
        .unwrap_err()
        .to_string()
        .contains("expected none"));
}
