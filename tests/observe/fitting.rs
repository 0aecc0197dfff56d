//! Fits of functionals at altitude recover a known model within their posterior σ.
//!
//! The truth is a seeded random model; observations are its values (through the observation
//! rows, which `functionals.rs` checks against an independent script) plus Gaussian noise of
//! known σ. Statistical tolerances: each estimate is normal about the truth with its formal σ,
//! so |error|/σ < 4.5 over a few hundred coefficients fails by chance with p ≈ 1e-3; χ²/dof has
//! standard deviation sqrt(2/dof), and we accept ±5 of those.

use kugel::coeffs::Coefficients;
use kugel::field::degree_factors::PotentialScale;
use kugel::field::{GeocentricPoint, Quantity};
use kugel::observe::fit::functional::{ModelSpace, RowBuilder};
use kugel::observe::fit::parameters::ParameterLayout;
use kugel::observe::fit::{
    fit_observations, FitSetup, Observation, ObservationSet, Regularization, Robust,
};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

pub(crate) const R: f64 = 2.1e6;
pub(crate) const GM: f64 = 1.1e13;

fn gravity_space() -> ModelSpace {
    ModelSpace::Gravity(PotentialScale {
        reference_radius_m: R,
        gm_m3_s2: GM,
    })
}

fn magnetic_space() -> ModelSpace {
    ModelSpace::Magnetic {
        reference_radius_m: R,
    }
}

/// A site uniform on the sphere.
pub(crate) fn site(rng: &mut ChaCha8Rng, altitude_m: f64) -> GeocentricPoint {
    let z: f64 = rng.gen_range(-1.0..1.0);
    let lon: f64 = rng.gen_range(-180.0..180.0);
    GeocentricPoint::from_degrees(z.asin().to_degrees(), lon, R + altitude_m)
}

/// Random full unknown vector with RMS `rms(l)` per coefficient (free unknowns only).
pub(crate) fn truth(layout: &ParameterLayout, rms: impl Fn(usize) -> f64, seed: u64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let free: Vec<f64> = layout
        .free_kinds()
        .iter()
        .map(|&(_, l)| Normal::new(0.0, rms(l)).unwrap().sample(&mut rng))
        .collect();
    layout.expand(&free)
}

fn observe(
    builder: &RowBuilder,
    x: &[f64],
    set: &mut ObservationSet,
    template: Observation,
    sigma: f64,
    rng: &mut ChaCha8Rng,
) {
    let mut sc = builder.scratch();
    let exact = builder.predict(&template, x, &mut sc).unwrap();
    let noise = if sigma > 0.0 {
        Normal::new(0.0, sigma).unwrap().sample(rng)
    } else {
        0.0
    };
    set.observations.push(Observation {
        value: exact + noise,
        sigma: (sigma > 0.0).then_some(sigma),
        ..template
    });
}

pub(crate) fn obs(position: GeocentricPoint, quantity: Quantity, dataset: usize) -> Observation {
    Observation {
        position,
        quantity,
        value: 0.0,
        sigma: None,
        time_year: None,
        dataset,
        source_line: 0,
    }
}

/// z-scores of a fitted block against the truth: (max |z|, count).
fn z_scores(
    model: &Coefficients,
    x: &[f64],
    layout: &kugel::observe::fit::design::UnknownLayout,
    offset: usize,
    lmin: usize,
) -> (f64, usize) {
    let mut worst = 0.0f64;
    let mut n = 0;
    for l in lmin..=layout.lmax {
        for m in 0..=l {
            let (sc, ss) = model.sigma(l, m).unwrap();
            let zc = (model.c(l, m) - x[offset + layout.c_index(l, m)]) / sc;
            worst = worst.max(zc.abs());
            n += 1;
            if m > 0 {
                let zs = (model.s(l, m) - x[offset + layout.s_index(l, m)]) / ss;
                worst = worst.max(zs.abs());
                n += 1;
            }
        }
    }
    (worst, n)
}

#[test]
fn orbital_and_ground_gravity_recover_the_truth_within_sigma() {
    let lmax = 10;
    let layout = ParameterLayout::new(lmax, false, None, &[0, 1]);
    let x = truth(&layout, |l| 1e-5 / (l * l) as f64, 3);
    let builder = RowBuilder::new(gravity_space(), layout.clone(), 0.0, &[]);
    let mut rng = ChaCha8Rng::seed_from_u64(17);
    let mut set = ObservationSet::default();
    let orbit = set.add_dataset("orbit", 1.0, true).unwrap();
    let ground = set.add_dataset("ground", 0.5, true).unwrap();
    for _ in 0..1500 {
        let altitude_m = rng.gen_range(250e3..450e3);
        let p = site(&mut rng, altitude_m);
        observe(
            &builder,
            &x,
            &mut set,
            obs(p, Quantity::GravityDisturbance, orbit),
            0.02,
            &mut rng,
        );
    }
    for _ in 0..800 {
        let altitude_m = rng.gen_range(0.0..3e3);
        let p = site(&mut rng, altitude_m);
        observe(
            &builder,
            &x,
            &mut set,
            obs(p, Quantity::GravityAnomaly, ground),
            1.0,
            &mut rng,
        );
    }
    for _ in 0..300 {
        let p = site(&mut rng, 10e3);
        let q = if rng.gen_bool(0.5) {
            Quantity::Geoid
        } else {
            Quantity::RadialGradient
        };
        let sigma = if q == Quantity::Geoid { 0.05 } else { 0.01 };
        observe(&builder, &x, &mut set, obs(p, q, ground), sigma, &mut rng);
    }
    let setup = FitSetup {
        fixed_degrees: vec![0, 1],
        space: gravity_space(),
        ..FitSetup::generic(lmax, R, Regularization::None)
    };
    let result = fit_observations(&set, &setup).unwrap();
    // the weight factor 0.5 on the ground set scales its χ² by 0.5
    let dof = (set.len() - layout.free_len()) as f64;
    let expected = (1500.0 + 0.5 * 1100.0) / set.len() as f64;
    assert!(
        (result.chi2_per_dof / expected - 1.0).abs() < 5.0 * (2.0 / dof).sqrt(),
        "χ²/dof {} (expected ≈ {expected})",
        result.chi2_per_dof
    );
    assert!((result.datasets[0].chi2_per_observation - 1.0).abs() < 5.0 * (2.0f64 / 1500.0).sqrt());
    assert!(
        (result.datasets[1].chi2_per_observation - 0.5).abs()
            < 5.0 * 0.5 * (2.0f64 / 1100.0).sqrt()
    );
    assert_eq!(result.model.gm_m3_s2, Some(GM));
    assert_eq!(result.model.c(1, 0), 0.0, "fixed degree 1 stays zero");
    let (worst, n) = z_scores(&result.model, &x, &layout.internal, 0, 2);
    assert!(worst < 4.5, "largest |z| {worst} over {n} coefficients");
}

#[test]
fn secular_variation_and_external_terms_are_recovered_from_several_years() {
    let lmax = 5;
    let epoch = 2031.5;
    let layout = ParameterLayout::new(lmax, true, Some(2), &[0]);
    let mut x = truth(&layout, |l| 3e4 / 4f64.powi(l as i32), 5);
    // rates and external terms of realistic size: tens of nT per year, tens of nT
    let rates = layout.rate_offset()..layout.external_offset();
    let mut rng = ChaCha8Rng::seed_from_u64(8);
    for v in &mut x[rates] {
        *v *= 1e-3;
    }
    for v in &mut x[layout.external_offset()..] {
        *v = Normal::new(0.0, 15.0).unwrap().sample(&mut rng);
    }
    let full = layout.expand(&{
        let mut f = vec![0.0; layout.free_len()];
        layout.gather(&x, &mut f);
        f
    });
    let builder = RowBuilder::new(magnetic_space(), layout.clone(), epoch, &[]);
    let mut set = ObservationSet::default();
    let d = set.add_dataset("orbit", 1.0, true).unwrap();
    for _ in 0..900 {
        let altitude_m = rng.gen_range(300e3..500e3);
        let p = site(&mut rng, altitude_m);
        let t = rng.gen_range(2028.0..2035.0);
        for q in [Quantity::X, Quantity::Y, Quantity::Z] {
            let o = Observation {
                time_year: Some(t),
                ..obs(p, q, d)
            };
            observe(&builder, &full, &mut set, o, 2.0, &mut rng);
        }
    }
    let setup = FitSetup {
        space: magnetic_space(),
        external_lmax: Some(2),
        secular_epoch_year: Some(epoch),
        ..FitSetup::generic(lmax, R, Regularization::None)
    };
    let result = fit_observations(&set, &setup).unwrap();
    let dof = (set.len() - layout.free_len()) as f64;
    assert!(
        (result.chi2_per_dof - 1.0).abs() < 5.0 * (2.0 / dof).sqrt(),
        "{}",
        result.chi2_per_dof
    );
    assert_eq!(
        result.model.normalization,
        kugel::coeffs::Normalization::Schmidt
    );
    let (worst, _) = z_scores(&result.model, &full, &layout.internal, 0, 1);
    assert!(worst < 4.5, "internal |z| {worst}");
    let rates = result.rates.as_ref().expect("rates fitted");
    let (worst, _) = z_scores(rates, &full, &layout.internal, layout.rate_offset(), 1);
    assert!(worst < 4.5, "rates |z| {worst}");
    let external = result.external.as_ref().expect("external fitted");
    let ext_layout = layout.external.clone().unwrap();
    let (worst, n) = z_scores(external, &full, &ext_layout, layout.external_offset(), 1);
    assert!(worst < 4.5 && n == 8, "external |z| {worst} over {n}");
    // the rates are resolved: their σ is far below their size
    let (s10, _) = rates.sigma(1, 0).unwrap();
    assert!(s10 < 0.05 * full[layout.rate_offset() + layout.internal.c_index(1, 0)].abs());
}

#[test]
fn total_intensity_converges_from_a_perturbed_start_to_the_vector_solution() {
    let lmax = 4;
    let layout = ParameterLayout::new(lmax, false, None, &[0]);
    let mut x = truth(&layout, |l| 3e4 / 5f64.powi(l as i32), 21);
    // a dominant axial dipole, as for a real internal field
    x[layout.internal.c_index(1, 0)] = -3e4;
    let builder = RowBuilder::new(magnetic_space(), layout.clone(), 0.0, &[]);
    let mut rng = ChaCha8Rng::seed_from_u64(4);
    let mut vector = ObservationSet::default();
    let mut intensity = ObservationSet::default();
    vector.add_dataset("vector", 1.0, true).unwrap();
    intensity.add_dataset("scalar", 1.0, true).unwrap();
    for _ in 0..600 {
        let p = site(&mut rng, 400e3);
        for q in [Quantity::X, Quantity::Y, Quantity::Z] {
            observe(&builder, &x, &mut vector, obs(p, q, 0), 1.0, &mut rng);
        }
        let p = site(&mut rng, 400e3);
        observe(
            &builder,
            &x,
            &mut intensity,
            obs(p, Quantity::F, 0),
            1.0,
            &mut rng,
        );
    }
    let base = FitSetup {
        space: magnetic_space(),
        ..FitSetup::generic(lmax, R, Regularization::None)
    };
    let from_vector = fit_observations(&vector, &base).unwrap();
    // start 10 % off in every coefficient
    let mut start = from_vector.model.clone();
    for l in 1..=lmax {
        for m in 0..=l {
            let (c, s) = (start.c(l, m), start.s(l, m));
            start.set(l, m, c * 1.1, s * 0.9);
        }
    }
    let setup = FitSetup {
        start: Some(start),
        ..base.clone()
    };
    let from_f = fit_observations(&intensity, &setup).unwrap();
    assert!(from_f.iterations.len() >= 2, "Gauss–Newton iterated");
    assert!(from_f.iterations.last().unwrap().relative_change < 1e-9);
    assert!(
        (from_f.chi2_per_dof - 1.0).abs() < 0.3,
        "{}",
        from_f.chi2_per_dof
    );
    // both estimate the same truth: they agree within their combined σ
    for l in 1..=lmax {
        for m in 0..=l {
            let (a, b) = (from_f.model.c(l, m), from_vector.model.c(l, m));
            let sa = from_f.model.sigma(l, m).unwrap().0;
            let sb = from_vector.model.sigma(l, m).unwrap().0;
            assert!(
                (a - b).abs() < 4.5 * sa.hypot(sb),
                "C{l}{m}: F {a} vs vector {b}"
            );
        }
    }
    // and with no start model and no vector rows, F is refused with the line named
    let err = fit_observations(&intensity, &base).unwrap_err().to_string();
    assert!(
        err.contains("scalar: line 0") && err.contains("--start"),
        "{err}"
    );
}

#[test]
fn huber_weights_tame_outliers() {
    let lmax = 4;
    let layout = ParameterLayout::new(lmax, false, None, &[0, 1]);
    let x = truth(&layout, |l| 1e-5 / (l * l) as f64, 9);
    let builder = RowBuilder::new(gravity_space(), layout.clone(), 0.0, &[]);
    let mut rng = ChaCha8Rng::seed_from_u64(99);
    let mut set = ObservationSet::default();
    set.add_dataset("survey", 1.0, true).unwrap();
    for i in 0..800 {
        let p = site(&mut rng, 5e3);
        observe(
            &builder,
            &x,
            &mut set,
            obs(p, Quantity::GravityAnomaly, 0),
            0.5,
            &mut rng,
        );
        if i % 40 == 0 {
            set.observations.last_mut().unwrap().value += 60.0; // blunders of 120 σ
        }
    }
    let plain = FitSetup {
        fixed_degrees: vec![0, 1],
        space: gravity_space(),
        ..FitSetup::generic(lmax, R, Regularization::None)
    };
    let robust = FitSetup {
        robust: Some(Robust::Huber { threshold: 2.0 }),
        ..plain.clone()
    };
    let a = fit_observations(&set, &plain).unwrap();
    let b = fit_observations(&set, &robust).unwrap();
    let (za, _) = z_scores(&a.model, &x, &layout.internal, 0, 2);
    let (zb, _) = z_scores(&b.model, &x, &layout.internal, 0, 2);
    assert!(za > 5.0, "the blunders spoil the plain fit (|z| {za})");
    assert!(zb < za / 2.0, "robust |z| {zb} vs plain {za}");
    assert!(
        b.downweighted_rows >= 20,
        "{} rows down-weighted",
        b.downweighted_rows
    );
    assert!(b.iterations.len() > 1);
}

#[test]
fn observations_that_do_not_fit_the_setup_are_refused_with_their_line() {
    let mut set = ObservationSet::default();
    set.add_dataset("ship.csv", 1.0, false).unwrap();
    let p = GeocentricPoint::from_degrees(10.0, 20.0, R);
    set.observations.push(Observation {
        time_year: Some(2030.0),
        source_line: 7,
        ..obs(p, Quantity::Z, 0)
    });
    let setup = FitSetup {
        space: magnetic_space(),
        ..FitSetup::generic(2, R, Regularization::None)
    };
    let err = fit_observations(&set, &setup).unwrap_err().to_string();
    assert!(
        err.contains("ship.csv: line 7") && err.contains("--secular-variation"),
        "{err}"
    );
    // a gravity quantity in a magnetic fit
    set.observations[0].time_year = None;
    set.observations[0].quantity = Quantity::Geoid;
    let err = fit_observations(&set, &setup).unwrap_err().to_string();
    assert!(err.contains("line 7") && err.contains("gravity"), "{err}");
    // a position below the centre
    set.observations[0].quantity = Quantity::Z;
    set.observations[0].position.radius_m = -5.0;
    let err = fit_observations(&set, &setup).unwrap_err().to_string();
    assert!(err.contains("line 7") && err.contains("below −R"), "{err}");
}
