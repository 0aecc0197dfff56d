//! The k-d tree on unit vectors against exhaustive search (the reference in
//! `observe::spatial`), on random points that include clusters straddling both poles and the
//! ±180° meridian. Central angles by atan2(|p×q|, p·q) (common practice).

use kugel::observe::spatial::{
    angle_between, angle_from_chord, brute_force_nearest_k, brute_force_within, chord_from_angle,
    unit_vector, SphereIndex,
};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

fn cloud(seed: u64) -> (Vec<f64>, Vec<f64>) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let (mut lat, mut lon) = (vec![], vec![]);
    for i in 0..3000 {
        let (a, o) = match i % 3 {
            // near the poles, any longitude
            0 => (
                rng.gen_range(85.0..=90.0) * if rng.gen_bool(0.5) { 1.0 } else { -1.0 },
                rng.gen_range(-180.0..360.0),
            ),
            // across the date line, in both conventions
            1 => (
                rng.gen_range(-30.0..30.0),
                if rng.gen_bool(0.5) {
                    rng.gen_range(175.0..185.0)
                } else {
                    rng.gen_range(-180.0..-175.0)
                },
            ),
            _ => (
                (rng.gen_range(-1.0f64..1.0)).asin().to_degrees(),
                rng.gen_range(-180.0..180.0),
            ),
        };
        lat.push(a);
        lon.push(o);
    }
    (lat, lon)
}

fn queries(rng: &mut ChaCha8Rng) -> Vec<[f64; 3]> {
    let mut q = vec![
        unit_vector(90.0, 0.0),
        unit_vector(-90.0, 77.0),
        unit_vector(0.0, 180.0),
        unit_vector(0.0, -180.0),
        unit_vector(89.9, 179.9),
        unit_vector(-10.0, 359.99),
    ];
    for _ in 0..200 {
        q.push(unit_vector(
            rng.gen_range(-90.0..=90.0),
            rng.gen_range(-180.0..180.0),
        ));
    }
    q
}

#[test]
fn within_radius_matches_brute_force() {
    let (lat, lon) = cloud(1);
    let index = SphereIndex::new(&lat, &lon);
    let pts: Vec<[f64; 3]> = (0..lat.len()).map(|i| index.point(i)).collect();
    let mut rng = ChaCha8Rng::seed_from_u64(2);
    for q in queries(&mut rng) {
        for radius_deg in [0.5f64, 3.0, 12.0] {
            let r = radius_deg.to_radians();
            let mut tree: Vec<usize> = index.within(&q, r).iter().map(|n| n.index).collect();
            tree.sort_unstable();
            let brute = brute_force_within(&pts, &q, r);
            // points within 1e-12 rad of the boundary may fall either way by rounding
            let differ: Vec<usize> = tree
                .iter()
                .filter(|i| !brute.contains(i))
                .chain(brute.iter().filter(|i| !tree.contains(i)))
                .copied()
                .collect();
            for i in differ {
                assert!(
                    (angle_between(&pts[i], &q) - r).abs() < 1e-12,
                    "point {i} misclassified at r = {radius_deg}°"
                );
            }
        }
    }
}

#[test]
fn nearest_k_matches_brute_force() {
    let (lat, lon) = cloud(3);
    let index = SphereIndex::new(&lat, &lon);
    let pts: Vec<[f64; 3]> = (0..lat.len()).map(|i| index.point(i)).collect();
    let mut rng = ChaCha8Rng::seed_from_u64(4);
    for q in queries(&mut rng) {
        let tree = index.nearest_k(&q, 7);
        let brute = brute_force_nearest_k(&pts, &q, 7);
        assert_eq!(tree.len(), 7);
        for (t, b) in tree.iter().zip(&brute) {
            // compare distances (ties may swap indices); chord→angle loses ~1e-8 rad at ψ → 0
            assert!(
                (t.angle_rad - b.1).abs() < 1e-7,
                "{} vs {}",
                t.angle_rad,
                b.1
            );
        }
        let one = index.nearest(&q);
        assert!((one.angle_rad - brute[0].1).abs() < 1e-7);
    }
}

#[test]
fn date_line_and_pole_neighbours_are_close() {
    // A point at 179.99° E and one at 179.99° W are 0.02° apart, not 359.98°.
    let index = SphereIndex::new(&[0.0, 0.0, 89.999], &[179.99, -179.99, 0.0]);
    let n = index.nearest_k(&unit_vector(0.0, 179.99), 2);
    assert!((n[1].angle_rad.to_degrees() - 0.02).abs() < 1e-9);
    // near the pole, longitude is irrelevant: 89.999°N 0°E is 0.001° from the pole
    let p = index.nearest(&unit_vector(90.0, 123.0));
    assert_eq!(p.index, 2);
    assert!((p.angle_rad.to_degrees() - 0.001).abs() < 1e-9);
}

#[test]
fn chord_and_angle_are_inverse() {
    for psi in [0.0, 1e-6, 0.1, 1.0, 2.0, std::f64::consts::PI] {
        assert!((angle_from_chord(chord_from_angle(psi)) - psi).abs() < 1e-12);
    }
}
