//! Analytic dipole fields against kugel's magnetic components, at the surface and at altitude,
//! on a grid and at points.
//!
//! Source: the potential of a dipole in Schmidt Gauss coefficients, V = a (a/r)² [g10 cos θ +
//! (g11 cos λ + h11 sin λ) sin θ], and B = −∇V (Merrill, McElhinny & McFadden 1996, *The
//! Magnetic Field of the Earth*, ch. 2; any geomagnetism text). With s = a/r:
//!   X = −s³ [g10 (−sin θ) … ] i.e. X = s³ (−g10 sin θ + (g11 cos λ + h11 sin λ) cos θ),
//!   Y = s³ (g11 sin λ − h11 cos λ),
//!   Z = −2 s³ (g10 cos θ + (g11 cos λ + h11 sin λ) sin θ).
//! For the axial dipole tan I = 2 cot θ and D = 0.

use kugel::field::{
    evaluate_at_points, synthesize_on_grid, GeocentricPoint, Quantity, SynthesisRequest,
    TargetSurface,
};
use kugel::sht::GaussGrid;
use kugel::{Coefficients, Normalization};

const A_M: f64 = 6_371_200.0;

fn dipole(g10: f64, g11: f64, h11: f64) -> Coefficients {
    let mut c = Coefficients::zeros(3, Normalization::Schmidt);
    c.set(1, 0, g10, 0.0);
    c.set(1, 1, g11, h11);
    c.reference_radius_m = A_M;
    c.units = "nT".into();
    c
}

/// (X, Y, Z) of the dipole, geocentric frame, nT (see the module comment).
fn analytic_xyz(g10: f64, g11: f64, h11: f64, r: f64, theta: f64, lam: f64) -> (f64, f64, f64) {
    let s3 = (A_M / r).powi(3);
    let e = g11 * lam.cos() + h11 * lam.sin();
    let x = s3 * (-g10 * theta.sin() + e * theta.cos());
    let y = s3 * (g11 * lam.sin() - h11 * lam.cos());
    let z = -2.0 * s3 * (g10 * theta.cos() + e * theta.sin());
    (x, y, z)
}

const ALL_MAGNETIC: [Quantity; 10] = [
    Quantity::Br,
    Quantity::Btheta,
    Quantity::Blambda,
    Quantity::X,
    Quantity::Y,
    Quantity::Z,
    Quantity::H,
    Quantity::F,
    Quantity::Declination,
    Quantity::Inclination,
];

fn expected(q: Quantity, (x, y, z): (f64, f64, f64)) -> f64 {
    let h = x.hypot(y);
    match q {
        Quantity::Br => -z,
        Quantity::Btheta => -x,
        Quantity::Blambda => y,
        Quantity::X => x,
        Quantity::Y => y,
        Quantity::Z => z,
        Quantity::H => h,
        Quantity::F => h.hypot(z),
        Quantity::Declination => y.atan2(x).to_degrees(),
        Quantity::Inclination => z.atan2(h).to_degrees(),
        _ => unreachable!(),
    }
}

#[test]
fn dipoles_at_points_surface_altitude_and_poles() {
    // 1e-9 relative: the synthesis is a short sum of exact terms (few ulps).
    for (g10, g11, h11) in [(-29_400.0, 0.0, 0.0), (-29_400.0, -1_450.0, 4_650.0)] {
        let axial = g11 == 0.0;
        let model = dipole(g10, g11, h11);
        for alt_km in [0.0, 400.0, 35_786.0] {
            let r = A_M + alt_km * 1e3;
            let pts: Vec<GeocentricPoint> = [-80.0, -30.0, 0.0, 10.0, 45.0, 89.0]
                .iter()
                .map(|&lat| GeocentricPoint::from_degrees(lat, 77.0, r))
                .chain([-90.0, 90.0].map(|lat| GeocentricPoint::from_degrees(lat, 77.0, r)))
                .collect();
            let req = SynthesisRequest::new(ALL_MAGNETIC.to_vec());
            let got = evaluate_at_points(&model, &pts, &req).unwrap();
            for (qi, &q) in ALL_MAGNETIC.iter().enumerate() {
                for (pi, p) in pts.iter().enumerate() {
                    let xyz = analytic_xyz(g10, g11, h11, r, p.colatitude_rad, p.longitude_rad);
                    let want = expected(q, xyz);
                    let scale = if matches!(q, Quantity::Declination | Quantity::Inclination) {
                        1.0
                    } else {
                        29_400.0 * (A_M / r).powi(3)
                    };
                    assert!(
                        (got[qi][pi] - want).abs() <= 1e-9 * scale,
                        "{q} at alt {alt_km} km, colat {}: got {} want {want}",
                        p.colatitude_rad,
                        got[qi][pi]
                    );
                }
            }
            if !axial {
                continue;
            }
            // Inclination of an axial dipole: tan I = 2 cot θ; declination 0.
            let ii = ALL_MAGNETIC
                .iter()
                .position(|q| *q == Quantity::Inclination)
                .unwrap();
            for (pi, p) in pts.iter().enumerate() {
                let want = (2.0 / p.colatitude_rad.tan()).atan().to_degrees();
                assert!(
                    (got[ii][pi] - want).abs() < 1e-9,
                    "{} vs {want}",
                    got[ii][pi]
                );
            }
        }
    }
}

#[test]
fn tilted_dipole_on_a_grid_matches_analytic_components() {
    // A tilted dipole exercises all terms, including declination; a Gauss grid of lmax 3
    // has rings near both poles. 1e-9 relative as above.
    let (g10, g11, h11) = (-29_400.0, -1_450.0, 4_650.0);
    let model = dipole(g10, g11, h11);
    let grid = GaussGrid::new(3);
    for alt_km in [0.0, 450.0] {
        let mut req = SynthesisRequest::new(ALL_MAGNETIC.to_vec());
        req.surface = TargetSurface::Altitude {
            altitude_m: alt_km * 1e3,
        };
        let out = synthesize_on_grid(&model, &grid, &req).unwrap();
        let r = A_M + alt_km * 1e3;
        for (q, field) in &out {
            for (j, &theta) in grid.colatitude_rad.iter().enumerate() {
                for k in 0..grid.nlon {
                    let want = expected(
                        *q,
                        analytic_xyz(g10, g11, h11, r, theta, grid.longitude_rad(k)),
                    );
                    let scale = if matches!(q, Quantity::Declination | Quantity::Inclination) {
                        1.0
                    } else {
                        3e4 * (A_M / r).powi(3)
                    };
                    assert!(
                        (field[[j, k]] - want).abs() <= 1e-9 * scale,
                        "{q} ring {j} lon {k}: {} vs {want}",
                        field[[j, k]]
                    );
                }
            }
        }
    }
}

#[test]
fn geodetic_points_rotate_x_and_z_but_keep_f_and_y() {
    // common practice: components at geodetic coordinates are given in the frame of the
    // ellipsoid normal; the rotation about the east axis leaves Y and F unchanged.
    let model = dipole(-29_400.0, -1_450.0, 4_650.0);
    let e = kugel::field::Ellipsoid::wgs84();
    let p = GeocentricPoint::from_geodetic(&e, 45.0, 10.0, 0.0);
    let mut sph = p;
    sph.tilt_rad = 0.0;
    let req = SynthesisRequest::new(vec![Quantity::X, Quantity::Y, Quantity::Z, Quantity::F]);
    let a = evaluate_at_points(&model, &[p], &req).unwrap();
    let b = evaluate_at_points(&model, &[sph], &req).unwrap();
    assert!(
        p.tilt_rad > 0.003 && p.tilt_rad < 0.0034,
        "tilt {}",
        p.tilt_rad
    ); // ≈ 11.5′ at 45°
    let (d, x, z) = (p.tilt_rad, b[0][0], b[2][0]);
    assert!((a[0][0] - (x * d.cos() + z * d.sin())).abs() < 1e-8);
    assert!((a[2][0] - (z * d.cos() - x * d.sin())).abs() < 1e-8);
    assert!((a[1][0] - b[1][0]).abs() < 1e-9);
    assert!((a[3][0] - b[3][0]).abs() < 1e-8);
    assert!((a[0][0] - x).abs() > 1.0, "the tilt must change X");
}
