//! `kugel synthesize` end to end: one CF variable per quantity with units, standard names
//! only where CF has one, cautions, altitude, and refusals that leave no file.

use crate::run_kugel;
use kugel::field::{Ellipsoid, NormalField};
use kugel::io::model::write_model;
use kugel::io::provenance::Provenance;
use kugel::{Coefficients, Normalization};
use netcdf_reader::NcFile;

fn attr(attrs: &[netcdf_reader::NcAttribute], name: &str) -> Option<String> {
    attrs
        .iter()
        .find(|a| a.name == name)
        .and_then(|a| a.value.as_string())
}

const R: f64 = 6_378_137.0;
const GM: f64 = 3.986_005e14;
const C21: f64 = 3e-6;

/// GRS80's normal potential plus one harmonic C̄_21, in the ellipsoid's own R and GM.
fn gravity_model() -> Coefficients {
    let mut c = Coefficients::zeros(8, Normalization::Geodesy);
    c.reference_radius_m = R;
    c.gm_m3_s2 = Some(GM);
    for (l, v) in NormalField::Ellipsoid(Ellipsoid::grs80()).zonals_for(8, R, GM) {
        c.set(l, 0, v, 0.0);
    }
    c.set(2, 1, C21, 0.0);
    c
}

#[test]
fn gravity_quantities_with_units_standard_names_and_caution() {
    let dir = tempfile::tempdir().unwrap();
    let model = dir.path().join("g.txt");
    write_model(&model, &gravity_model(), &Provenance::default()).unwrap();
    let out = dir.path().join("map.nc");
    let o = run_kugel(&[
        "synthesize",
        model.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
        "--quantity",
        "geoid,gravity-anomaly,radial-gradient",
        "--normal-field",
        "grs80",
        "--grid",
        "regular:30",
        "--altitude-km",
        "0",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(String::from_utf8_lossy(&o.stderr).contains("legal height"));
    let f = NcFile::open(&out).unwrap();
    let geoid = f.variable("geoid").unwrap();
    assert_eq!(attr(geoid.attributes(), "units").as_deref(), Some("m"));
    assert_eq!(
        attr(geoid.attributes(), "standard_name").as_deref(),
        Some("geoid_height_above_reference_ellipsoid")
    );
    let anomaly = f.variable("gravity_anomaly").unwrap();
    assert_eq!(attr(anomaly.attributes(), "units").as_deref(), Some("mGal"));
    assert!(attr(anomaly.attributes(), "standard_name").is_none());
    assert_eq!(
        attr(f.variable("radial_gradient").unwrap().attributes(), "units").as_deref(),
        Some("E")
    );
    let globals = f.global_attributes().unwrap();
    assert!(attr(globals, "caution").unwrap().contains("engineering"));
    // After removing GRS80 only C̄_21 remains: N = R C̄_21 P̄_21 cos λ, P̄_21 = sqrt(5/3)·3 sinθ cosθ
    // (closed form, any text) — docs/conventions.md §6 with s = 1.
    let lat = f.read_variable_as_f64("lat").unwrap();
    let lon = f.read_variable_as_f64("lon").unwrap();
    let n = f.read_variable_as_f64("geoid").unwrap();
    assert_eq!(n.shape(), &[lat.len(), lon.len()]);
    let n: Vec<f64> = n.iter().copied().collect(); // row-major (lat, lon)
    for (i, &la) in lat.iter().enumerate() {
        for (k, &lo) in lon.iter().enumerate() {
            let th = (90.0 - la).to_radians();
            let want =
                R * C21 * (5.0f64 / 3.0).sqrt() * 3.0 * th.sin() * th.cos() * lo.to_radians().cos();
            assert!(
                (n[i * lon.len() + k] - want).abs() < 1e-8,
                "({la},{lo}): {} vs {want}",
                n[i * lon.len() + k]
            );
        }
    }
}

#[test]
fn magnetic_map_and_refusals() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = Coefficients::zeros(3, Normalization::Schmidt);
    c.set(1, 0, -29_400.0, 0.0);
    c.set(1, 1, -1_450.0, 4_650.0);
    c.reference_radius_m = 6_371_200.0;
    c.units = "nT".into();
    let model = dir.path().join("mag.txt");
    write_model(&model, &c, &Provenance::default()).unwrap();
    let out = dir.path().join("mag.nc");
    let o = run_kugel(&[
        "synthesize",
        model.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
        "-q",
        "declination,f",
        "--altitude-km",
        "400",
        "--lon-range",
        "-180-180",
        "--png",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(String::from_utf8_lossy(&o.stderr).contains("not for navigation"));
    let png = std::fs::read(dir.path().join("mag_declination.png")).unwrap();
    assert_eq!(&png[..4], b"\x89PNG");
    assert!(dir.path().join("mag_f.png").exists());
    let f = NcFile::open(&out).unwrap();
    assert_eq!(
        attr(f.variable("declination").unwrap().attributes(), "units").as_deref(),
        Some("degree")
    );
    assert!(attr(f.global_attributes().unwrap(), "caution")
        .unwrap()
        .contains("navigation"));

    // Gravity quantity of a magnetic model, unknown quantity, downward beyond the cap:
    // refused with exit code 3 and no file.
    let bad = dir.path().join("bad.nc");
    for args in [
        vec!["-q", "geoid"],
        vec!["-q", "gravitee"],
        vec!["-q", "z", "--altitude-km", "-6000"],
    ] {
        let mut all = vec![
            "synthesize",
            model.to_str().unwrap(),
            "-o",
            bad.to_str().unwrap(),
        ];
        all.extend(args.iter().copied());
        let o = run_kugel(&all);
        assert_eq!(
            o.status.code(),
            Some(3),
            "{args:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        assert!(!bad.exists());
    }
    // The output may not be the input.
    let o = run_kugel(&[
        "synthesize",
        model.to_str().unwrap(),
        "-o",
        model.to_str().unwrap(),
    ]);
    assert!(!o.status.success());
    assert!(std::fs::read_to_string(&model).unwrap().contains("nT"));
}
