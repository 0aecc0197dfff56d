//! `kugel evaluate` end to end: columns kept, quantities added, residuals, cautions, refusals.

use crate::run_kugel;
use std::path::Path;

use kugel::io::model::write_model;
use kugel::io::provenance::Provenance;
use kugel::{Coefficients, Normalization};

fn dipole_model(dir: &Path) -> std::path::PathBuf {
    let mut c = Coefficients::zeros(2, Normalization::Schmidt);
    c.set(1, 0, -30_000.0, 0.0);
    c.reference_radius_m = 6_371_200.0;
    c.units = "nT".into();
    let p = dir.join("dipole.txt");
    write_model(&p, &c, &Provenance::default()).unwrap();
    p
}

#[test]
fn evaluate_keeps_columns_and_adds_quantities() {
    let dir = tempfile::tempdir().unwrap();
    let model = dipole_model(dir.path());
    let pts = dir.path().join("pts.csv");
    std::fs::write(
        &pts,
        "# survey points\nstation,lat,lon,altitude_km\nA,0,10,0\nB,60,200,400\n",
    )
    .unwrap();
    let out = dir.path().join("out.csv");
    let o = run_kugel(&[
        "evaluate",
        model.to_str().unwrap(),
        pts.to_str().unwrap(),
        "-q",
        "z,declination",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(stderr.contains("not for navigation"), "{stderr}");
    // the caution travels in the CSV's sidecar; the CSV starts with its header row
    let sidecar = kugel::io::csv_sidecar::read_sidecar(&out).unwrap().unwrap();
    assert!(
        sidecar
            .cautions
            .iter()
            .any(|c| c.starts_with("declination:")),
        "{:?}",
        sidecar.cautions
    );
    assert_eq!(sidecar.find("z").unwrap().units, "nT");
    let text = std::fs::read_to_string(&out).unwrap();
    assert!(
        text.starts_with("station,lat,lon,altitude_km,z,declination\n"),
        "{text}"
    );
    let table = kugel::io::csv_table::read_csv_table(&out).unwrap();
    assert_eq!(
        table.headers,
        ["station", "lat", "lon", "altitude_km", "z", "declination"]
    );
    let z = table.numeric_column("z").unwrap();
    // Axial dipole (any geomagnetism text): Z = −2 g10 (a/r)³ cos θ.
    assert!(z[0].abs() < 1e-9, "{}", z[0]);
    let s3 = (6_371.2f64 / 6_771.2).powi(3);
    let want = 2.0 * 30_000.0 * s3 * 30f64.to_radians().cos();
    assert!((z[1] - want).abs() < 1e-8, "{} vs {want}", z[1]);
    assert_eq!(table.rows[1][0], "B");
}

#[test]
fn value_column_gets_a_residual_and_bad_input_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let mut c = Coefficients::zeros(1, Normalization::Geodesy);
    c.set(0, 0, 100.0, 0.0);
    c.reference_radius_m = 1e6;
    c.units = "m".into();
    let model = dir.path().join("topo.txt");
    write_model(&model, &c, &Provenance::default()).unwrap();
    let pts = dir.path().join("pts.csv");
    std::fs::write(&pts, "lat,lon,value\n10,20,101.5\n-5,0,99\n").unwrap();
    let out = dir.path().join("out.csv");
    let o = run_kugel(&[
        "evaluate",
        model.to_str().unwrap(),
        pts.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let t = kugel::io::csv_table::read_csv_table(&out).unwrap();
    assert_eq!(
        t.headers,
        ["lat", "lon", "value", "value_model", "residual"]
    );
    assert_eq!(t.numeric_column("residual").unwrap(), vec![1.5, -1.0]);

    // A gravity quantity on a model without GM: refused, no output written.
    let out2 = dir.path().join("out2.csv");
    let o = run_kugel(&[
        "evaluate",
        model.to_str().unwrap(),
        pts.to_str().unwrap(),
        "-q",
        "geoid",
        "-o",
        out2.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&o.stderr).contains("gm_m3_s2"));
    assert!(!out2.exists());

    // A bad latitude names the file and line.
    std::fs::write(&pts, "lat,lon\n10,20\n95,0\n").unwrap();
    let o = run_kugel(&[
        "evaluate",
        model.to_str().unwrap(),
        pts.to_str().unwrap(),
        "-o",
        out2.to_str().unwrap(),
    ]);
    let e = String::from_utf8_lossy(&o.stderr);
    assert!(
        e.contains("pts.csv") && e.contains('3') && e.contains("[-90, 90]"),
        "{e}"
    );
    assert!(!out2.exists());

    // height_m without --ellipsoid is ambiguous.
    std::fs::write(&pts, "lat,lon,height_m\n10,20,5\n").unwrap();
    let o = run_kugel(&[
        "evaluate",
        model.to_str().unwrap(),
        pts.to_str().unwrap(),
        "-o",
        out2.to_str().unwrap(),
    ]);
    assert!(String::from_utf8_lossy(&o.stderr).contains("--ellipsoid"));
}

#[test]
fn geodetic_points_with_an_ellipsoid() {
    // At the geodetic pole the point lies at r = b (WGS84 b = 6 356 752.3142 m, NIMA TR8350.2,
    // from memory) on the axis, where the frames agree: an axial dipole gives
    // Z = −2 g10 (a/r)³ (any geomagnetism text). At the equator r = a_ellipsoid.
    let dir = tempfile::tempdir().unwrap();
    let model = dipole_model(dir.path());
    let pts = dir.path().join("geo.csv");
    std::fs::write(&pts, "lat,lon,height_m\n90,0,0\n0,45,1000\n").unwrap();
    let out = dir.path().join("geo_out.csv");
    let o = run_kugel(&[
        "evaluate",
        model.to_str().unwrap(),
        pts.to_str().unwrap(),
        "-q",
        "z,x",
        "--ellipsoid",
        "wgs84",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let t = kugel::io::csv_table::read_csv_table(&out).unwrap();
    let z = t.numeric_column("z").unwrap();
    let x = t.numeric_column("x").unwrap();
    let want_pole = 2.0 * 30_000.0 * (6_371_200.0f64 / 6_356_752.314_2).powi(3);
    // b is published to 0.1 mm: 1.6e-11 relative, ×3 through (a/r)³ → 3e-6 nT of 6e4 nT.
    assert!((z[0] - want_pole).abs() < 5e-6, "{} vs {want_pole}", z[0]);
    let want_x_eq = 30_000.0 * (6_371_200.0f64 / 6_379_137.0).powi(3);
    assert!((x[1] - want_x_eq).abs() < 1e-6, "{} vs {want_x_eq}", x[1]);
    assert!(z[1].abs() < 1e-6);
    // altitude_km together with --ellipsoid is refused.
    std::fs::write(&pts, "lat,lon,altitude_km\n10,20,5\n").unwrap();
    let o = run_kugel(&[
        "evaluate",
        model.to_str().unwrap(),
        pts.to_str().unwrap(),
        "--ellipsoid",
        "wgs84",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(3));
}

#[test]
fn evaluate_at_two_times_follows_the_secular_variation_of_an_axial_dipole() {
    // Axial dipole: V = a (a/r)² g10 cos θ, B_r = −∂V/∂r = 2 (a/r)³ g10 cos θ, so at r = a
    // Z (down) = −B_r = −2 g10 cos θ (common practice: the axial dipole field), with
    // g10(t) = g10 + (t − t₀)·dg10/dt.
    let dir = tempfile::tempdir().unwrap();
    let mut c = Coefficients::zeros(1, Normalization::Schmidt);
    c.set(1, 0, -30_000.0, 0.0);
    c.reference_radius_m = 6_371_200.0;
    c.units = "nT".into();
    let mut rates = Coefficients::zeros(1, Normalization::Schmidt);
    rates.set(1, 0, 20.0, 0.0);
    c.set_secular(2030.0, rates).unwrap();
    let pts = dir.path().join("pts.csv");
    std::fs::write(&pts, "lat,lon\n45,0\n-30,100\n").unwrap();
    for name in ["sv.nc", "sv.txt"] {
        let model = dir.path().join(name);
        write_model(&model, &c, &Provenance::default()).unwrap();
        for year in [2030.0, 2036.5] {
            let out = dir.path().join(format!("z_{name}_{year}.csv"));
            let o = run_kugel(&[
                "evaluate",
                model.to_str().unwrap(),
                pts.to_str().unwrap(),
                "-q",
                "z",
                "--time",
                &year.to_string(),
                "-o",
                out.to_str().unwrap(),
            ]);
            assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
            let table = kugel::io::csv_table::read_csv_table(&out).unwrap();
            let z = table.numeric_column("z").unwrap();
            let g10 = -30_000.0 + (year - 2030.0) * 20.0;
            for (k, lat) in [45.0f64, -30.0].into_iter().enumerate() {
                let colat = (90.0 - lat).to_radians();
                let expected = -2.0 * g10 * colat.cos();
                assert!(
                    (z[k] - expected).abs() < 1e-9 * expected.abs(),
                    "{name} {year}: Z {} vs {expected}",
                    z[k]
                );
            }
        }
    }
    // --time for a model without rates is refused, naming the model
    let plain = dipole_model(dir.path());
    let out = dir.path().join("refused.csv");
    let o = run_kugel(&[
        "evaluate",
        plain.to_str().unwrap(),
        pts.to_str().unwrap(),
        "-q",
        "z",
        "--time",
        "2031",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert!(!o.status.success());
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(
        stderr.contains("dipole.txt") && stderr.contains("no secular variation"),
        "{stderr}"
    );
    assert!(!out.exists());
}
