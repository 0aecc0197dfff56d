//! The lane passes of the iterative solver (`observe::fit::lane_normal`, kernels in
//! `observe::fit::lanes`) against their references, on every instruction-set path this CPU
//! has: N p against the pass over full rows built by the row builder (the definition of the
//! rows) and against the per-point operator of `scalar_normal`; b = Aᵀ W y and yᵀ W y against
//! the same pass over full rows; model values against `RowBuilder::predict`, point by point.
//!
//! Stated bound: 1e-13 relative (2-norm of the difference over the 2-norm of the reference).
//! The lanes differ from the references only by fused multiply–adds, the order of the sums and
//! cos mλ, sin mλ from the rotation recurrence (restarted every 64 orders) instead of `sin_cos`
//! per order, each a few ulp per term.

use kugel::field::degree_factors::PotentialScale;
use kugel::field::{GeocentricPoint, Quantity};
use kugel::observe::fit::functional::{ModelSpace, RowBuilder, RowScratch};
use kugel::observe::fit::iterative::RowSource;
use kugel::observe::fit::lane_normal::LaneNormalOperator;
use kugel::observe::fit::parameters::ParameterLayout;
use kugel::observe::fit::scalar_normal::ScalarNormalOperator;
use kugel::observe::fit::{Observation, ObservationSet};
use kugel::sht::KernelPath;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

use crate::fitting::{obs, site, truth, GM, R};

const BOUND: f64 = 1e-13;

fn relative_difference(a: &[f64], b: &[f64]) -> f64 {
    assert_eq!(a.len(), b.len());
    let d: f64 = a.iter().zip(b).map(|(x, y)| (x - y).powi(2)).sum();
    let n: f64 = b.iter().map(|y| y * y).sum();
    assert!(
        n > 0.0,
        "the reference is zero: the check would assert nothing"
    );
    (d / n).sqrt()
}

/// `count` observations of every scalar gravity quantity at 0–500 km, one at each pole and
/// one exactly on the equator at longitude 0, with values; weights 0 for every 17th.
fn mixed_set(count: usize, seed: u64) -> (ObservationSet, Vec<f64>) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut set = ObservationSet::default();
    set.add_dataset("mixed (invented)", 1.0, true).unwrap();
    let quantities = [
        Quantity::GravityDisturbance,
        Quantity::GravityAnomaly,
        Quantity::Geoid,
        Quantity::Potential,
        Quantity::RadialGradient,
    ];
    let mut push = |p: GeocentricPoint, q: Quantity, value: f64| {
        set.observations.push(Observation {
            value,
            ..obs(p, q, 0)
        })
    };
    for lat in [90.0, -90.0] {
        push(
            GeocentricPoint::from_degrees(lat, 0.0, R + 1e5),
            Quantity::GravityDisturbance,
            1.0,
        );
    }
    push(
        GeocentricPoint::from_degrees(0.0, 0.0, R),
        Quantity::Potential,
        -2.0,
    );
    for k in 0..count {
        let altitude_m = rng.gen_range(0.0..500e3);
        let p = site(&mut rng, altitude_m);
        push(p, quantities[k % 5], rng.gen_range(-3.0..3.0));
    }
    let weights = (0..set.len())
        .map(|i| {
            if i % 17 == 5 {
                0.0
            } else {
                0.5 + (i % 5) as f64
            }
        })
        .collect();
    (set, weights)
}

fn gravity_builder(lmax: usize, normal_zonals: &[(usize, f64)]) -> RowBuilder {
    let space = ModelSpace::Gravity(PotentialScale {
        reference_radius_m: R,
        gm_m3_s2: GM,
    });
    RowBuilder::new(
        space,
        ParameterLayout::new(lmax, false, None, &[0, 1]),
        0.0,
        normal_zonals,
    )
}

#[allow(clippy::type_complexity)] // the two closures of a row source
fn full_rows<'a>(
    builder: &'a RowBuilder,
    set: &'a ObservationSet,
    weights: &'a [f64],
) -> RowSource<
    impl Fn() -> RowScratch + Sync + Send + 'a,
    impl Fn(usize, &mut RowScratch, &mut [f64]) -> kugel::error::Result<(f64, f64)> + Sync + Send + 'a,
> {
    RowSource {
        unknowns: builder.layout.free_len(),
        observations: set.len(),
        init: || builder.scratch(),
        row: move |i: usize, sc: &mut RowScratch, col: &mut [f64]| {
            let o = &set.observations[i];
            let offset = builder.fill(o, None, sc)?;
            builder.layout.gather(&sc.row, col);
            Ok((weights[i], o.value - offset))
        },
    }
}

#[test]
fn lane_normal_products_match_the_full_rows_on_every_path() {
    // degree 70 runs past the first restart of the cos mλ recurrence (order 64); 16·k + 3
    // observations leave a partly filled block
    for (lmax, count) in [(9, 16 * 40 + 3), (70, 16 * 12 + 3)] {
        let builder = gravity_builder(lmax, &[]);
        let (set, weights) = mixed_set(count, 11 + lmax as u64);
        let layout = &builder.layout;
        let p: Vec<f64> = (0..layout.free_len())
            .map(|k| ((k as f64) * 0.37).sin() * 1e-6)
            .collect();
        let reference = full_rows(&builder, &set, &weights)
            .normal_times(&p)
            .unwrap();
        let per_point = ScalarNormalOperator {
            set: &set,
            builder: &builder,
            weights: &weights,
        }
        .normal_times(&p)
        .unwrap();
        for path in KernelPath::available() {
            let lanes = LaneNormalOperator::with_path(&set, &builder, &weights, path).unwrap();
            let got = lanes.normal_times(&p).unwrap();
            let e = relative_difference(&got, &reference);
            assert!(e < BOUND, "L = {lmax}, {}: {e:e} vs full rows", path.name());
            let e = relative_difference(&got, &per_point);
            assert!(e < BOUND, "L = {lmax}, {}: {e:e} vs per point", path.name());
        }
    }
}

#[test]
fn lane_right_hand_side_matches_the_full_rows_with_a_normal_field() {
    // invented normal zonals: potential and radial-gradient rows are reduced by them
    let normal = [(0, 1.0), (2, -4.8e-4), (4, 7.9e-7)];
    for lmax in [12, 66] {
        let builder = gravity_builder(lmax, &normal);
        let (set, weights) = mixed_set(16 * 9 + 7, 5 + lmax as u64);
        let reference = full_rows(&builder, &set, &weights)
            .right_hand_side()
            .unwrap();
        for path in KernelPath::available() {
            let lanes = LaneNormalOperator::with_path(&set, &builder, &weights, path).unwrap();
            let got = lanes.right_hand_side().unwrap();
            let e = relative_difference(&got.b, &reference.b);
            assert!(e < BOUND, "L = {lmax}, {}: b {e:e}", path.name());
            let e = (got.y_w_y - reference.y_w_y).abs() / reference.y_w_y;
            assert!(e < BOUND, "L = {lmax}, {}: yᵀWy {e:e}", path.name());
            assert_eq!(got.observations, reference.observations);
        }
        // the zero weights leave their rows out
        assert!(reference.observations < set.len());
    }
}

#[test]
fn lane_predictions_match_the_row_builder_point_by_point() {
    let normal = [(0, 1.0), (2, -4.8e-4)];
    for lmax in [7, 80] {
        let builder = gravity_builder(lmax, &normal);
        let (set, weights) = mixed_set(16 * 5 + 9, 23 + lmax as u64);
        let x = truth(&builder.layout, |l| 1e-5 / (l.max(1) as f64).powi(2), 3);
        let mut sc = builder.scratch();
        let reference: Vec<f64> = set
            .observations
            .iter()
            .map(|o| builder.predict(o, &x, &mut sc).unwrap())
            .collect();
        for path in KernelPath::available() {
            let lanes = LaneNormalOperator::with_path(&set, &builder, &weights, path).unwrap();
            let got = lanes.predict(&x).unwrap();
            let e = relative_difference(&got, &reference);
            assert!(e < BOUND, "L = {lmax}, {}: {e:e}", path.name());
        }
    }
}

#[test]
fn lane_passes_do_not_depend_on_the_thread_count() {
    let builder = gravity_builder(20, &[]);
    let (set, weights) = mixed_set(16 * 70 + 5, 2);
    let p: Vec<f64> = (0..builder.layout.free_len())
        .map(|k| ((k as f64) * 0.11).cos() * 1e-6)
        .collect();
    let lanes = LaneNormalOperator::new(&set, &builder, &weights);
    let run = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| {
                (
                    lanes.normal_times(&p).unwrap(),
                    lanes.right_hand_side().unwrap().b,
                )
            })
    };
    let (one, three) = (run(1), run(3));
    assert_eq!(one.0, three.0);
    assert_eq!(one.1, three.1);
}
