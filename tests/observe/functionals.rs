//! Observation equations of every fitted functional against observations forward-modelled by
//! an independent script (tests/reference/observe_functionals_scipy.py: scipy's Ferrers
//! functions, a different θ-derivative relation, term-by-term radial derivatives) at altitudes
//! 0–500 km; the rows against kugel's own synthesis (`evaluate_at_points`), so that a fitted
//! model and `kugel evaluate` cannot disagree; and the axial dipole against its closed form.

use std::path::Path;

use kugel::coeffs::{Coefficients, Normalization};
use kugel::field::degree_factors::PotentialScale;
use kugel::field::{evaluate_at_points, GeocentricPoint, Quantity, SynthesisRequest};
use kugel::observe::fit::design::UnknownLayout;
use kugel::observe::fit::functional::{ModelSpace, RowBuilder};
use kugel::observe::fit::parameters::ParameterLayout;
use kugel::observe::fit::Observation;

const R: f64 = 2.1e6;
const GM: f64 = 1.1e13;
const EPOCH: f64 = 2030.0;

fn fixture(name: &str) -> String {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures/observe/functionals")
        .join(name);
    std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// Data lines of a fixture CSV, split at commas (comment and header lines skipped).
fn rows(name: &str) -> Vec<Vec<String>> {
    fixture(name)
        .lines()
        .filter(|l| !l.starts_with('#'))
        .skip(1)
        .map(|l| l.split(',').map(str::to_string).collect())
        .collect()
}

/// (l, m, C, S) rows into a block of a full unknown vector.
fn put(name: &str, layout: &UnknownLayout, offset: usize, x: &mut [f64]) {
    for r in rows(name) {
        let (l, m): (usize, usize) = (r[0].parse().unwrap(), r[1].parse().unwrap());
        let (c, s): (f64, f64) = (r[2].parse().unwrap(), r[3].parse().unwrap());
        if l <= layout.lmax {
            x[offset + layout.c_index(l, m)] = c;
            if m > 0 {
                x[offset + layout.s_index(l, m)] = s;
            }
        }
    }
}

fn model_of(name: &str, lmax: usize, normalization: Normalization) -> Coefficients {
    let mut c = Coefficients::zeros(lmax, normalization);
    for r in rows(name) {
        let (l, m): (usize, usize) = (r[0].parse().unwrap(), r[1].parse().unwrap());
        c.set(l, m, r[2].parse().unwrap(), r[3].parse().unwrap());
    }
    c.reference_radius_m = R;
    c
}

struct Row {
    lat: f64,
    lon: f64,
    altitude_km: f64,
    time: f64,
    quantity: Quantity,
    value: f64,
}

fn observations() -> Vec<Row> {
    rows("observations.csv")
        .into_iter()
        .map(|r| Row {
            lat: r[0].parse().unwrap(),
            lon: r[1].parse().unwrap(),
            altitude_km: r[2].parse().unwrap(),
            time: r[3].parse().unwrap(),
            quantity: r[4].parse().unwrap(),
            value: r[5].parse().unwrap(),
        })
        .collect()
}

fn observation(r: &Row, time: Option<f64>) -> Observation {
    Observation {
        position: GeocentricPoint::from_degrees(r.lat, r.lon, R + r.altitude_km * 1e3),
        quantity: r.quantity,
        value: r.value,
        sigma: None,
        time_year: time,
        dataset: 0,
        source_line: 0,
    }
}

fn gravity_builder(lmax: usize) -> RowBuilder {
    let space = ModelSpace::Gravity(PotentialScale {
        reference_radius_m: R,
        gm_m3_s2: GM,
    });
    RowBuilder::new(
        space,
        ParameterLayout::new(lmax, false, None, &[]),
        0.0,
        &[],
    )
}

#[test]
fn gravity_rows_match_the_independent_forward_model() {
    // source: tests/reference/observe_functionals_scipy.py (scipy lpmv, numpy)
    let builder = gravity_builder(8);
    let mut x = vec![0.0; builder.layout.full_len()];
    put("gravity_model.csv", &builder.layout.internal, 0, &mut x);
    let mut sc = builder.scratch();
    let mut checked = std::collections::BTreeSet::new();
    for r in observations() {
        if r.quantity.family() != kugel::field::quantity::QuantityFamily::Gravity {
            continue;
        }
        let got = builder
            .predict(&observation(&r, None), &x, &mut sc)
            .unwrap();
        // the script's derivatives are exact term by term: agreement to rounding
        assert!(
            (got - r.value).abs() <= 1e-10 * r.value.abs().max(1e-3),
            "{} at {} km: {got} vs {}",
            r.quantity,
            r.altitude_km,
            r.value
        );
        checked.insert((r.quantity.name(), r.altitude_km as i64));
    }
    assert_eq!(
        checked.len(),
        5 * 5,
        "every gravity functional at every altitude"
    );
}

#[test]
fn magnetic_rows_with_rates_and_external_terms_match_the_independent_forward_model() {
    // source: tests/reference/observe_functionals_scipy.py; the θ-derivative there uses
    // sin θ dP/dθ = l cos θ P_l^m − (l+m) P_{l−1}^m, kugel the non-singular three-column form.
    let space = ModelSpace::Magnetic {
        reference_radius_m: R,
    };
    let layout = ParameterLayout::new(6, true, Some(1), &[0]);
    let builder = RowBuilder::new(space, layout.clone(), EPOCH, &[]);
    let mut x = vec![0.0; layout.full_len()];
    put("magnetic_model.csv", &layout.internal, 0, &mut x);
    put(
        "magnetic_rates.csv",
        &layout.internal,
        layout.rate_offset(),
        &mut x,
    );
    let external = layout.external.clone().unwrap();
    put(
        "magnetic_external.csv",
        &external,
        layout.external_offset(),
        &mut x,
    );
    let mut sc = builder.scratch();
    let mut checked = std::collections::BTreeSet::new();
    for r in observations() {
        if r.quantity.family() != kugel::field::quantity::QuantityFamily::Magnetic {
            continue;
        }
        let got = builder
            .predict(&observation(&r, Some(r.time)), &x, &mut sc)
            .unwrap();
        assert!(
            (got - r.value).abs() <= 1e-9 * r.value.abs().max(1.0),
            "{} at {} km: {got} vs {}",
            r.quantity,
            r.altitude_km,
            r.value
        );
        checked.insert((r.quantity.name(), r.altitude_km as i64));
    }
    assert_eq!(
        checked.len(),
        7 * 5,
        "every magnetic functional at every altitude"
    );
}

#[test]
fn rows_and_synthesis_agree_for_every_functional() {
    // kugel's own synthesis at points (the path of `kugel evaluate`) against the fit's rows.
    let mut gravity = model_of("gravity_model.csv", 8, Normalization::Geodesy);
    gravity.gm_m3_s2 = Some(GM);
    let mut magnetic = model_of("magnetic_model.csv", 6, Normalization::Schmidt);
    magnetic.units = "nT".into();
    let g_builder = gravity_builder(8);
    let mut gx = vec![0.0; g_builder.layout.full_len()];
    put("gravity_model.csv", &g_builder.layout.internal, 0, &mut gx);
    let m_layout = ParameterLayout::new(6, false, None, &[0]);
    let m_builder = RowBuilder::new(
        ModelSpace::Magnetic {
            reference_radius_m: R,
        },
        m_layout.clone(),
        0.0,
        &[],
    );
    let mut mx = vec![0.0; m_layout.full_len()];
    put("magnetic_model.csv", &m_layout.internal, 0, &mut mx);
    let mut sc_g = g_builder.scratch();
    let mut sc_m = m_builder.scratch();
    // include a pole and a tilted (geodetic) frame
    let ell = kugel::field::Ellipsoid::grs80();
    let mut sites = vec![
        GeocentricPoint::from_degrees(90.0, 30.0, R + 300e3),
        GeocentricPoint::from_degrees(-37.0, 200.0, R + 50e3),
    ];
    let mut tilted = GeocentricPoint::from_geodetic(&ell, 40.0, 10.0, 1000.0);
    tilted.radius_m = R + 120e3;
    sites.push(tilted);
    for q in Quantity::ALL {
        let (model, builder, x, sc) = match q.family() {
            kugel::field::quantity::QuantityFamily::Gravity => {
                (&gravity, &g_builder, &gx, &mut sc_g)
            }
            kugel::field::quantity::QuantityFamily::Magnetic => {
                (&magnetic, &m_builder, &mx, &mut sc_m)
            }
            _ => continue,
        };
        if matches!(
            q,
            Quantity::H | Quantity::Declination | Quantity::Inclination
        ) {
            continue;
        }
        let expected = evaluate_at_points(model, &sites, &SynthesisRequest::new(vec![q]))
            .unwrap()
            .remove(0);
        for (site, e) in sites.iter().zip(expected) {
            let o = Observation {
                position: *site,
                quantity: q,
                value: 0.0,
                sigma: None,
                time_year: None,
                dataset: 0,
                source_line: 0,
            };
            let got = builder.predict(&o, x, sc).unwrap();
            assert!(
                (got - e).abs() <= 1e-10 * e.abs().max(1e-6),
                "{q} at {site:?}: row {got} vs synthesis {e}"
            );
        }
    }
}

#[test]
fn axial_dipole_at_altitude_matches_the_closed_form() {
    // common practice: V = a (a/r)² g10 cos θ gives B_r = 2 g10 (a/r)³ cos θ,
    // B_θ = g10 (a/r)³ sin θ, B_λ = 0; so X = −g10 (a/r)³ sin θ, Z = −2 g10 (a/r)³ cos θ.
    let g10 = -29_000.0;
    let layout = ParameterLayout::new(1, false, None, &[0]);
    let builder = RowBuilder::new(
        ModelSpace::Magnetic {
            reference_radius_m: R,
        },
        layout.clone(),
        0.0,
        &[],
    );
    let mut x = vec![0.0; layout.full_len()];
    x[layout.internal.c_index(1, 0)] = g10;
    let mut sc = builder.scratch();
    for (lat, alt_km) in [(0.0, 0.0), (35.0, 400.0), (-70.0, 120.0), (90.0, 250.0)] {
        let r = R + alt_km * 1e3;
        let theta = (90.0f64 - lat).to_radians();
        let f = (R / r).powi(3);
        for (q, expected) in [
            (Quantity::Br, 2.0 * g10 * f * theta.cos()),
            (Quantity::Btheta, g10 * f * theta.sin()),
            (Quantity::Blambda, 0.0),
            (Quantity::X, -g10 * f * theta.sin()),
            (Quantity::Z, -2.0 * g10 * f * theta.cos()),
            (
                Quantity::F,
                g10.abs() * f * (1.0 + 3.0 * theta.cos().powi(2)).sqrt(),
            ),
        ] {
            let o = Observation {
                position: GeocentricPoint::from_degrees(lat, 75.0, r),
                quantity: q,
                value: 0.0,
                sigma: None,
                time_year: None,
                dataset: 0,
                source_line: 0,
            };
            let got = builder.predict(&o, &x, &mut sc).unwrap();
            assert!(
                (got - expected).abs() < 1e-9 * g10.abs(),
                "{q} at lat {lat}, {alt_km} km: {got} vs {expected}"
            );
        }
    }
}

#[test]
fn geodetic_to_geocentric_matches_the_closed_form_and_a_geodesy_package() {
    let ell = kugel::field::Ellipsoid::grs80();
    // source: pymap3d.geodetic2ecef on GRS80, run by tests/reference/observe_functionals_scipy.py
    for r in rows("geodetic_grs80.csv") {
        let v: Vec<f64> = r.iter().map(|t| t.parse().unwrap()).collect();
        let p = GeocentricPoint::from_geodetic(&ell, v[0], v[1], v[2]);
        assert!(
            (p.radius_m - v[3]).abs() < 1e-6,
            "radius at {r:?}: {}",
            p.radius_m
        );
        let lat = 90.0 - p.colatitude_rad.to_degrees();
        assert!((lat - v[4]).abs() < 1e-10, "latitude at {r:?}: {lat}");
    }
    // Heiskanen & Moritz (1967) eqs. 5-3: x = (N + h) cos φ cos λ, z = (N(1 − e²) + h) sin φ,
    // N = a/sqrt(1 − e² sin²φ): on the equator r = a + h, at a pole r = b + h, and
    // tan ψ = (1 − e²) tan φ on the ellipsoid (h = 0).
    let (a, b) = (ell.semi_major_axis_m, ell.semi_minor_axis_m());
    let eq = GeocentricPoint::from_geodetic(&ell, 0.0, 10.0, 250.0);
    assert!((eq.radius_m - (a + 250.0)).abs() < 1e-6);
    let pole = GeocentricPoint::from_geodetic(&ell, 90.0, 10.0, 250.0);
    assert!((pole.radius_m - (b + 250.0)).abs() < 1e-6);
    let phi = 47.0f64.to_radians();
    let on = GeocentricPoint::from_geodetic(&ell, 47.0, 0.0, 0.0);
    let psi = std::f64::consts::FRAC_PI_2 - on.colatitude_rad;
    assert!((psi.tan() - (1.0 - ell.e2()) * phi.tan()).abs() < 1e-14);
    assert!((on.tilt_rad - (phi - psi)).abs() < 1e-15);
}
