//! Normal gravity of the built-in level ellipsoids: the zonal series (through kugel's own
//! synthesis) plus the centrifugal term against Somigliana's closed formula and the published
//! equatorial and polar values.

use kugel::field::{evaluate_at_points, Ellipsoid, GeocentricPoint, Quantity, SynthesisRequest};
use kugel::sht::evaluate_points;
use kugel::{Coefficients, Normalization};

/// The ellipsoid's normal gravitational potential as a `geodesy` model (R = a, GM).
fn normal_model(e: &Ellipsoid, lmax: usize) -> Coefficients {
    let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
    for (l, v) in e.even_zonals(lmax) {
        c.set(l, 0, v, 0.0);
    }
    c.reference_radius_m = e.semi_major_axis_m;
    c.gm_m3_s2 = Some(e.gm_m3_s2);
    c
}

/// |∇(V + Φ)| on the ellipsoid at geodetic latitude φ: V from the zonal series, Φ = ½ω²r²sin²θ.
fn series_gravity(e: &Ellipsoid, lat_deg: f64) -> f64 {
    let lmax = 24; // (E/r)^{2n} ≤ 0.0067^12 ≈ 1e-26: the series is converged far below 1 ulp
    let model = normal_model(e, lmax);
    let p = GeocentricPoint::from_geodetic(e, lat_deg, 0.0, 0.0);
    // Radial part through the library: the "gravity disturbance" of the normal potential is
    // −∂V/∂r (mGal).
    let req = SynthesisRequest::new(vec![Quantity::GravityDisturbance]);
    let minus_dv_dr = evaluate_at_points(&model, &[p], &req).unwrap()[0][0] * 1e-5;
    // Tangential part: (1/r)∂V/∂θ = (GM/r²) Σ (a/r)^l C̄ dP̄/dθ.
    let (r, theta) = (p.radius_m, p.colatitude_rad);
    let mut scaled = model.clone();
    let s = e.semi_major_axis_m / r;
    scaled.scale_by_degree(|l| s.powi(l as i32));
    let d_theta = evaluate_points(&scaled, &[(theta, 0.0)]).unwrap()[0].d_theta;
    let dv_dtheta_over_r = e.gm_m3_s2 / (r * r) * d_theta;
    let w2 = e.angular_velocity_rad_s.powi(2);
    let g_r = -minus_dv_dr + w2 * r * theta.sin().powi(2);
    let g_t = dv_dtheta_over_r + w2 * r * theta.sin() * theta.cos();
    g_r.hypot(g_t)
}

#[test]
fn zonal_series_agrees_with_somigliana() {
    // Both are exact expressions of the same level-ellipsoid field (Heiskanen & Moritz 1967,
    // eqs. 2-78 and 2-92). Tolerance 1e-13 relative: a few ulps through ~25 degrees of
    // recursion and the geodetic → geocentric conversion.
    for e in [Ellipsoid::grs80(), Ellipsoid::wgs84()] {
        // Both poles included: sin θ is 0 or 1.2e-16 there, the hard case for ∂/∂θ.
        for lat in [
            -89.999, -67.5, -45.0, -10.0, 0.0, 0.5, 30.0, 45.0, 60.0, 89.9, 90.0,
        ] {
            let series = series_gravity(&e, lat);
            let closed = e.normal_gravity_somigliana(lat.to_radians());
            assert!(
                (series / closed - 1.0).abs() < 1e-13,
                "{} at {lat}°: series {series} vs Somigliana {closed}",
                e.name
            );
        }
    }
}

#[test]
fn grs80_published_normal_gravity() {
    // Moritz (2000), J. Geodesy 74:128–133: γ_a = 9.7803267715, γ_b = 9.8321863685 m s⁻²,
    // given to 1e-10: tolerance 6e-11 (half a unit in the last digit plus rounding).
    let e = Ellipsoid::grs80();
    assert!((e.equatorial_gravity_m_s2() - 9.780_326_771_5).abs() < 6e-11);
    assert!((e.polar_gravity_m_s2() - 9.832_186_368_5).abs() < 6e-11);
    assert!((series_gravity(&e, 0.0) - 9.780_326_771_5).abs() < 6e-11);
    assert!((series_gravity(&e, 90.0) - 9.832_186_368_5).abs() < 6e-11);
    // Moritz (2000): b = 6 356 752.3141 m (given to 0.1 mm).
    assert!((e.semi_minor_axis_m() - 6_356_752.314_1).abs() < 6e-5);
    // Moritz (2000), derived constants (values from memory): 1/f = 298.257222101,
    // J4 = −0.00000237091222, J6 = 0.00000000608347.
    assert!((1.0 / e.flattening - 298.257_222_101).abs() < 1e-9);
    assert!((e.j2n(2) + 2.370_912_22e-6).abs() < 1e-14);
    assert!((e.j2n(3) - 6.083_47e-9).abs() < 1e-14);
    // J2 is defining for GRS80 and must be reproduced from the derived f.
    assert!((e.j2() - 1.082_63e-3).abs() < 1e-15);
}

#[test]
fn wgs84_published_normal_gravity() {
    // NIMA TR8350.2, 3rd ed. (2000), Table 3.4: γ_e = 9.7803253359, γ_p = 9.8321849378 m s⁻²
    // (given to 1e-10). The closed formulas give γ_p = 9.832184937863, 0.63 units of the last
    // published digit away, so the tolerance is one unit there (1e-10), not half of one.
    let e = Ellipsoid::wgs84();
    assert!((e.equatorial_gravity_m_s2() - 9.780_325_335_9).abs() < 1e-10);
    assert!((e.polar_gravity_m_s2() - 9.832_184_937_8).abs() < 1e-10);
    assert!((series_gravity(&e, 0.0) - 9.780_325_335_9).abs() < 1e-10);
    assert!((series_gravity(&e, 90.0) - 9.832_184_937_8).abs() < 1e-10);
    // NIMA TR8350.2 Table 3.3 (from memory): b = 6 356 752.3142 m, C̄2,0 = −0.484166774985e-3.
    assert!((e.semi_minor_axis_m() - 6_356_752.314_2).abs() < 6e-5);
    let c20 = e.even_zonals(2)[1].1;
    assert!((c20 + 0.484_166_774_985e-3).abs() < 2e-15, "{c20:e}");
}
