//! The matrix-free solver (preconditioned conjugate gradients) and the direct one (Cholesky of
//! the assembled normal matrix) solve the same regularised normal equations.
//!
//! Stated tolerance: the conjugate gradients stop at a relative residual
//! ‖b − (N + λP)x‖/‖b‖ ≤ `CG_TOLERANCE`; the relative error of x is then bounded by the
//! condition number κ of N + λP times that residual (common practice: the standard
//! perturbation bound for linear systems, e.g. Golub & Van Loan, *Matrix Computations*,
//! §2.6.2). Each check compares against the direct solution with that bound, κ taken from the
//! direct solver's own estimate.

use kugel::coeffs::Coefficients;
use kugel::field::degree_factors::PotentialScale;
use kugel::field::{GeocentricPoint, Quantity};
use kugel::observe::fit::functional::{ModelSpace, RowBuilder};
use kugel::observe::fit::iterative::CG_TOLERANCE;
use kugel::observe::fit::parameters::ParameterLayout;
use kugel::observe::fit::{
    fit_observations, FitResult, FitSetup, Observation, ObservationSet, Regularization, SolverKind,
    SolverRequest,
};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

use crate::fitting::{obs, site, truth, GM, R};

/// An observation of the first data set at a position, with a time when given.
fn observation(
    position: GeocentricPoint,
    quantity: Quantity,
    time_year: Option<f64>,
) -> Observation {
    Observation {
        time_year,
        ..obs(position, quantity, 0)
    }
}

/// Every coefficient (and σ) of two models, packed C then S.
fn values(model: &Coefficients) -> (Vec<f64>, Vec<f64>) {
    let mut v = model.c_packed().to_vec();
    v.extend_from_slice(model.s_packed());
    let (cs, ss) = model.sigmas().expect("fits carry σ");
    let mut s = cs.to_vec();
    s.extend_from_slice(ss);
    (v, s)
}

fn relative_difference(a: &[f64], b: &[f64]) -> f64 {
    let d: f64 = a.iter().zip(b).map(|(x, y)| (x - y).powi(2)).sum();
    let n: f64 = b.iter().map(|y| y * y).sum();
    (d / n).sqrt()
}

/// Fits `set` both ways and checks the agreement; returns (direct, iterative).
fn both(set: &ObservationSet, setup: &FitSetup) -> (FitResult, FitResult) {
    let direct = fit_observations(
        set,
        &FitSetup {
            solver: SolverRequest::Direct,
            ..setup.clone()
        },
    )
    .unwrap();
    let iterative = fit_observations(
        set,
        &FitSetup {
            solver: SolverRequest::Iterative,
            ..setup.clone()
        },
    )
    .unwrap();
    assert_eq!(direct.solver.plan.kind, SolverKind::Direct);
    assert_eq!(iterative.solver.plan.kind, SolverKind::Iterative);
    let residual = iterative.solver.relative_residual.unwrap();
    assert!(
        residual <= CG_TOLERANCE,
        "relative residual {residual:e} above the tolerance {CG_TOLERANCE:e}"
    );
    let kappa = direct.condition_estimate;
    assert!(kappa.is_finite() && kappa >= 1.0, "κ {kappa}");
    let mut pairs = vec![(&direct.model, &iterative.model)];
    if let (Some(a), Some(b)) = (&direct.rates, &iterative.rates) {
        pairs.push((a, b));
    }
    let (mut xd, mut xi) = (Vec::new(), Vec::new());
    for (d, i) in pairs {
        xd.extend(values(d).0);
        xi.extend(values(i).0);
    }
    if let (Some(a), Some(b)) = (&direct.external, &iterative.external) {
        xd.extend(values(a).0);
        xi.extend(values(b).0);
    }
    let error = relative_difference(&xi, &xd);
    assert!(
        error <= kappa * residual.max(f64::EPSILON) * 10.0 + 1e-13,
        "relative difference {error:e} exceeds κ·residual = {kappa:e}·{residual:e}"
    );
    (direct, iterative)
}

#[test]
fn iterative_and_direct_agree_on_orbital_gravity_with_a_kaula_prior() {
    let lmax = 12;
    let layout = ParameterLayout::new(lmax, false, None, &[0, 1]);
    let kaula = |l: usize| 1e-5 / (l.max(1) as f64).powi(2);
    let x = truth(&layout, kaula, 3);
    let space = ModelSpace::Gravity(PotentialScale {
        reference_radius_m: R,
        gm_m3_s2: GM,
    });
    let builder = RowBuilder::new(space, layout.clone(), 0.0, &[]);
    let mut sc = builder.scratch();
    let mut rng = ChaCha8Rng::seed_from_u64(4);
    let mut set = ObservationSet::default();
    set.add_dataset("orbit", 1.0, true).unwrap();
    let noise = Normal::new(0.0, 0.05).unwrap();
    for _ in 0..3000 {
        let altitude_m = rng.gen_range(0.0..500e3);
        let o = observation(
            site(&mut rng, altitude_m),
            Quantity::GravityDisturbance,
            None,
        );
        let value = builder.predict(&o, &x, &mut sc).unwrap() + noise.sample(&mut rng);
        set.observations.push(Observation {
            value,
            sigma: Some(0.05),
            ..o
        });
    }
    let setup = FitSetup {
        space,
        fixed_degrees: vec![0, 1],
        ..FitSetup::generic(lmax, R, Regularization::Kaula { a: 1e-5, p: 2.0 })
    };
    let (direct, iterative) = both(&set, &setup);
    // same data, same model: the same χ² (to the solution's agreement)
    assert!((direct.chi2_per_dof - iterative.chi2_per_dof).abs() < 1e-2 * direct.chi2_per_dof);
    // the approximate σ (block-diagonal inverse) against the exact ones: for data spread
    // evenly in longitude the orders hardly couple, so they agree closely
    let (_, sd) = values(&direct.model);
    let (_, si) = values(&iterative.model);
    let ratios: Vec<f64> = sd
        .iter()
        .zip(&si)
        .filter(|(d, _)| **d > 0.0)
        .map(|(d, i)| i / d)
        .collect();
    let worst = ratios.iter().fold(0.0f64, |a, r| a.max((r - 1.0).abs()));
    assert!(
        worst < 0.25,
        "approximate σ off by up to {:.1}%",
        100.0 * worst
    );
    assert!(iterative.warnings.iter().any(|w| w.contains("approximate")));
}

#[test]
fn iterative_and_direct_agree_on_vector_data_with_secular_variation_and_external_terms() {
    let (lmax, epoch) = (5, 2031.5);
    let layout = ParameterLayout::new(lmax, true, Some(2), &[0]);
    let mut x = truth(&layout, |l| 3e4 / 4f64.powi(l as i32), 5);
    for v in &mut x[layout.rate_offset()..layout.external_offset()] {
        *v *= 1e-3;
    }
    let space = ModelSpace::Magnetic {
        reference_radius_m: R,
    };
    let builder = RowBuilder::new(space, layout.clone(), epoch, &[]);
    let mut sc = builder.scratch();
    let mut rng = ChaCha8Rng::seed_from_u64(6);
    let mut set = ObservationSet::default();
    set.add_dataset("orbit", 1.0, true).unwrap();
    let noise = Normal::new(0.0, 2.0).unwrap();
    for _ in 0..600 {
        let altitude_m = rng.gen_range(300e3..500e3);
        let p = site(&mut rng, altitude_m);
        let t = rng.gen_range(2028.0..2035.0);
        for q in [Quantity::X, Quantity::Y, Quantity::Z] {
            let o = observation(p, q, Some(t));
            let value = builder.predict(&o, &x, &mut sc).unwrap() + noise.sample(&mut rng);
            set.observations.push(Observation {
                value,
                sigma: Some(2.0),
                ..o
            });
        }
    }
    let setup = FitSetup {
        space,
        external_lmax: Some(2),
        secular_epoch_year: Some(epoch),
        ..FitSetup::generic(lmax, R, Regularization::None)
    };
    let (_, iterative) = both(&set, &setup);
    assert!(iterative.solver.iterations.unwrap() > 0);
}

#[test]
fn the_iterative_solver_refuses_gcv() {
    let mut set = ObservationSet::default();
    set.add_dataset("few", 1.0, false).unwrap();
    for k in 0..40 {
        let p = GeocentricPoint::from_degrees(-80.0 + 4.0 * k as f64, 9.0 * k as f64, R);
        set.observations.push(Observation {
            value: 1.0,
            ..observation(p, Quantity::Value, None)
        });
    }
    let setup = FitSetup {
        solver: SolverRequest::Iterative,
        ..FitSetup::generic(2, R, Regularization::Gcv)
    };
    let err = fit_observations(&set, &setup).unwrap_err().to_string();
    assert!(
        err.contains("GCV") && err.contains("--solver direct"),
        "{err}"
    );
}

#[test]
fn the_scalar_normal_kernel_matches_the_pass_over_full_rows() {
    // reference: N p = Σ w a (aᵀ p) with every row built by the row builder (the definition)
    use kugel::observe::fit::iterative::RowSource;
    use kugel::observe::fit::scalar_normal::ScalarNormalOperator;
    let lmax = 9;
    let layout = ParameterLayout::new(lmax, false, None, &[0, 1]);
    let space = ModelSpace::Gravity(PotentialScale {
        reference_radius_m: R,
        gm_m3_s2: GM,
    });
    let builder = RowBuilder::new(space, layout.clone(), 0.0, &[]);
    let mut rng = ChaCha8Rng::seed_from_u64(9);
    let mut set = ObservationSet::default();
    set.add_dataset("mixed", 1.0, true).unwrap();
    let quantities = [
        Quantity::GravityDisturbance,
        Quantity::GravityAnomaly,
        Quantity::Geoid,
        Quantity::Potential,
        Quantity::RadialGradient,
    ];
    for k in 0..700 {
        let altitude_m = rng.gen_range(0.0..500e3);
        let p = site(&mut rng, altitude_m);
        set.observations
            .push(observation(p, quantities[k % 5], None));
    }
    // one observation at each pole
    for lat in [90.0, -90.0] {
        set.observations.push(observation(
            GeocentricPoint::from_degrees(lat, 0.0, R + 1e5),
            Quantity::GravityDisturbance,
            None,
        ));
    }
    let weights: Vec<f64> = (0..set.len())
        .map(|i| {
            if i % 17 == 0 {
                0.0
            } else {
                0.5 + (i % 5) as f64
            }
        })
        .collect();
    let source = RowSource {
        unknowns: layout.free_len(),
        observations: set.len(),
        init: || builder.scratch(),
        row: |i: usize, sc: &mut kugel::observe::fit::functional::RowScratch, col: &mut [f64]| {
            builder.fill(&set.observations[i], None, sc)?;
            layout.gather(&sc.row, col);
            Ok((weights[i], 0.0))
        },
    };
    let fast = ScalarNormalOperator {
        set: &set,
        builder: &builder,
        weights: &weights,
    };
    let p: Vec<f64> = (0..layout.free_len())
        .map(|k| ((k as f64) * 0.37).sin() * 1e-6)
        .collect();
    let reference = source.normal_times(&p).unwrap();
    let got = fast.normal_times(&p).unwrap();
    let error = relative_difference(&got, &reference);
    assert!(error < 1e-13, "relative difference {error:e}");
}
