//! Refusals: missing GM, unknown quantities, quantities that do not fit the model's kind,
//! bad ellipsoid specifications.

use kugel::field::{evaluate_at_points, GeocentricPoint, NormalField, Quantity, SynthesisRequest};
use kugel::{Coefficients, Normalization};

fn err_of(model: &Coefficients, q: Quantity, nf: &str) -> String {
    let mut req = SynthesisRequest::new(vec![q]);
    req.normal_field = NormalField::parse(nf).unwrap();
    let p = GeocentricPoint::from_degrees(10.0, 20.0, model.reference_radius_m);
    evaluate_at_points(model, &[p], &req)
        .unwrap_err()
        .to_string()
}

fn model(units: &str, gm: Option<f64>) -> Coefficients {
    let mut c = Coefficients::zeros(4, Normalization::Geodesy);
    c.set(2, 1, 1e-6, 2e-6);
    c.reference_radius_m = 6.371e6;
    c.units = units.into();
    c.gm_m3_s2 = gm;
    c
}

#[test]
fn gravity_quantity_without_gm_is_refused() {
    let e = err_of(&model("1", None), Quantity::Geoid, "none");
    assert!(e.contains("geoid") && e.contains("gm_m3_s2"), "{e}");
    let e = err_of(&model("1", None), Quantity::Value, "grs80");
    assert!(e.contains("--normal-field"), "{e}");
}

#[test]
fn quantities_must_fit_the_model_kind() {
    let e = err_of(&model("1", Some(3.986e14)), Quantity::Declination, "none");
    assert!(e.contains("declination") && e.contains("nT"), "{e}");
    let e = err_of(&model("nT", None), Quantity::GravityAnomaly, "none");
    assert!(
        e.contains("gravity-anomaly") && e.contains("magnetic"),
        "{e}"
    );
    let e = err_of(&model("nT", None), Quantity::Value, "wgs84");
    assert!(e.contains("magnetic"), "{e}");
    let e = err_of(&model("m", Some(3.986e14)), Quantity::Potential, "none");
    assert!(e.contains("units") && e.contains("\"m\""), "{e}");
    // The value of any model is fine.
    let mut req = SynthesisRequest::new(vec![Quantity::Value]);
    req.normal_field = NormalField::None;
    let p = GeocentricPoint::from_degrees(0.0, 0.0, 6.371e6);
    assert!(evaluate_at_points(&model("nT", None), &[p], &req).is_ok());
}

#[test]
fn unknown_names_are_refused_with_the_choices() {
    let e = "gravity".parse::<Quantity>().unwrap_err().to_string();
    assert!(
        e.contains("`gravity`") && e.contains("gravity-disturbance"),
        "{e}"
    );
    let e = NormalField::parse("grs67").unwrap_err().to_string();
    assert!(
        e.contains("grs67") && e.contains("custom:a,f,gm,omega"),
        "{e}"
    );
    let e = NormalField::parse("custom:6378137,0.0033,abc,7e-5")
        .unwrap_err()
        .to_string();
    assert!(e.contains("gm = `abc`"), "{e}");
    let e = NormalField::parse("custom:6378137,1.5e-3,3.986e14")
        .unwrap_err()
        .to_string();
    assert!(e.contains("four"), "{e}");
    let e = NormalField::parse("custom:-1,0.003,3.986e14,7e-5")
        .unwrap_err()
        .to_string();
    assert!(e.contains("a > 0"), "{e}");
}

#[test]
fn grids_that_do_not_fit_in_memory_are_refused_with_the_estimate() {
    // 200 000 x 400 000 cells x 8 bytes x 2 arrays ≈ 1.3 TB: far above this machine's memory.
    let n = 200_000;
    let grid = kugel::sht::Grid {
        kind: kugel::sht::GridKind::Custom,
        colatitude_rad: (0..n)
            .map(|j| (j as f64 + 0.5) * std::f64::consts::PI / n as f64)
            .collect(),
        weights: vec![2.0 / n as f64; n],
        nlon: 400_000,
        lon0_rad: 0.0,
        max_exact_degree: 0,
    };
    let m = model("1", Some(3.986e14));
    let err =
        kugel::field::synthesize_on_grid(&m, &grid, &SynthesisRequest::new(vec![Quantity::Geoid]))
            .unwrap_err();
    assert!(
        matches!(err, kugel::Error::InsufficientMemory { .. }),
        "{err}"
    );
    assert!(err.to_string().contains("200000 x 400000"), "{err}");
}
