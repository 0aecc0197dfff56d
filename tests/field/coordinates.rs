//! Geodetic ↔ geocentric coordinates on the built-in ellipsoids.

use kugel::field::ellipsoid::Geocentric;
use kugel::field::Ellipsoid;

#[test]
fn poles_and_equator_hit_the_published_axes() {
    // Moritz (2000): GRS80 a = 6 378 137 m, b = 6 356 752.3141 m (0.1 mm given).
    let e = Ellipsoid::grs80();
    let pole = e.geodetic_to_geocentric(90f64.to_radians(), 0.0, 0.0);
    assert!(
        (pole.radius_m - 6_356_752.314_1).abs() < 6e-5,
        "{}",
        pole.radius_m
    );
    assert!(pole.colatitude_rad.abs() < 1e-15);
    let south = e.geodetic_to_geocentric(-90f64.to_radians(), 0.0, 100.0);
    assert!((south.radius_m - 6_356_852.314_1).abs() < 6e-5);
    let eq = e.geodetic_to_geocentric(0.0, 1.0, 0.0);
    assert_eq!(eq.radius_m, 6_378_137.0);
    assert!((eq.colatitude_rad - std::f64::consts::FRAC_PI_2).abs() < 1e-16);
}

#[test]
fn geocentric_latitude_on_the_ellipsoid() {
    // Any geodesy text (e.g. Heiskanen & Moritz ch. 5): on the ellipsoid (h = 0)
    // tan ψ = (1 − e²) tan φ; at φ = 45° the difference φ − ψ is about 11.5′ (common practice).
    let e = Ellipsoid::wgs84();
    for lat in [-75.0f64, -45.0, 1.0, 45.0, 60.0] {
        let g = e.geodetic_to_geocentric(lat.to_radians(), 0.0, 0.0);
        let psi = std::f64::consts::FRAC_PI_2 - g.colatitude_rad;
        let want = ((1.0 - e.e2()) * lat.to_radians().tan()).atan();
        assert!((psi - want).abs() < 1e-15, "{lat}: {psi} vs {want}");
    }
    let g = e.geodetic_to_geocentric(45f64.to_radians(), 0.0, 0.0);
    let diff_arcmin = (45.0 - (90.0 - g.colatitude_rad.to_degrees())) * 60.0;
    assert!((diff_arcmin - 11.5).abs() < 0.1, "{diff_arcmin}");
}

#[test]
fn round_trip_over_latitudes_and_heights() {
    // common practice: the conversion and its inverse agree to ~1e-9 m (well below 1 mm) for
    // heights from the deep ocean floor to far above the surface, poles included.
    for e in [
        Ellipsoid::grs80(),
        Ellipsoid::wgs84(),
        Ellipsoid::parse("custom:3396190,169.8,4.2828e13,7.088e-5").unwrap(),
    ] {
        for lat in [-90.0f64, -89.9999, -60.0, -1e-9, 0.0, 33.3, 89.0, 90.0] {
            for h in [-11_000.0, 0.0, 8_848.0, 400e3, 35_786e3] {
                let g: Geocentric = e.geodetic_to_geocentric(lat.to_radians(), 0.3, h);
                let (lat2, lon2, h2) = e.geocentric_to_geodetic(&g);
                assert!(
                    (lat2 - lat.to_radians()).abs() < 1e-14,
                    "{} {lat} {h}: {lat2}",
                    e.name
                );
                assert!(
                    (h2 - h).abs() < 1e-8 * (1.0 + h.abs() / 1e6),
                    "{} {lat} {h}: {h2}",
                    e.name
                );
                assert_eq!(lon2, 0.3);
            }
        }
    }
}
