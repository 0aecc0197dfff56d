//! `kugel spectrum` and `kugel compare` end to end: files written (NetCDF, CSV, SVG) with the
//! documented columns and units, the summary printed, bad input refused with a named cause and
//! no partial output.

use crate::run_kugel;
use std::path::Path;

use crate::support::{correlated_partner, random_model};
use kugel::io::degree_table::read_degree_table;
use kugel::io::model::write_model;
use kugel::io::provenance::Provenance;

fn variance(l: usize) -> f64 {
    if l < 2 {
        0.0
    } else {
        1e-10 * (l as f64).powf(-4.0)
    }
}

fn write_gravity_model(
    path: &Path,
    seed: u64,
    partner_of: Option<&kugel::Coefficients>,
) -> kugel::Coefficients {
    let mut c = match partner_of {
        Some(a) => correlated_partner(a, seed, variance, |l| if l < 40 { 0.999 } else { 0.2 }),
        None => random_model(90, seed, variance),
    };
    c.reference_radius_m = 6_378_137.0;
    c.gm_m3_s2 = Some(3.986_004_418e14);
    write_model(path, &c, &Provenance::default()).unwrap();
    c
}

#[test]
fn spectrum_command_writes_netcdf_csv_and_svg() {
    let dir = tempfile::tempdir().unwrap();
    let model = dir.path().join("model.nc");
    write_gravity_model(&model, 1, None);
    let (nc, csv, svg) = (
        dir.path().join("spec.nc"),
        dir.path().join("spec.csv"),
        dir.path().join("spec.svg"),
    );
    let out = run_kugel(&[
        "spectrum",
        model.to_str().unwrap(),
        "-o",
        nc.to_str().unwrap(),
        "--csv",
        csv.to_str().unwrap(),
        "--plot",
        svg.to_str().unwrap(),
        "--fit",
        "5-80",
    ]);
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(stdout.contains("power law over degrees 5-80"), "{stdout}");
    let from_nc = read_degree_table(&nc).unwrap();
    let from_csv = read_degree_table(&csv).unwrap();
    assert_eq!(from_nc.columns[0].name, "degree");
    assert_eq!(from_csv.columns[0].name, "degree");
    let csv_text = std::fs::read_to_string(&csv).unwrap();
    let header = csv_text.lines().find(|l| !l.starts_with('#')).unwrap();
    assert!(header.starts_with("degree,degree_variance"), "{header}");
    for name in [
        "degree_variance",
        "degree_variance_lower",
        "half_wavelength_km",
        "power_law_per_coefficient",
    ] {
        let a = from_nc
            .column(name)
            .unwrap_or_else(|| panic!("NetCDF lacks {name}"));
        let b = from_csv
            .column(name)
            .unwrap_or_else(|| panic!("CSV lacks {name}"));
        assert_eq!(a.units, b.units, "{name}");
        assert_eq!(a.values.len(), 91);
        for (x, y) in a.values.iter().zip(&b.values) {
            assert!(
                (x.is_nan() && y.is_nan()) || (x - y).abs() <= 1e-15 * x.abs(),
                "{name}: {x} vs {y}"
            );
        }
    }
    assert_eq!(from_nc.column("half_wavelength_km").unwrap().units, "km");
    let svg_text = std::fs::read_to_string(&svg).unwrap();
    assert!(svg_text.starts_with("<?xml") && svg_text.contains("<svg"));
}

#[test]
fn compare_command_reports_agreement_and_writes_correlation() {
    let dir = tempfile::tempdir().unwrap();
    let (a_path, b_path) = (dir.path().join("north.nc"), dir.path().join("south.nc"));
    let a = write_gravity_model(&a_path, 2, None);
    write_gravity_model(&b_path, 3, Some(&a));
    let csv = dir.path().join("cmp.csv");
    let out = run_kugel(&[
        "compare",
        a_path.to_str().unwrap(),
        b_path.to_str().unwrap(),
        "--csv",
        csv.to_str().unwrap(),
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(stdout.contains("agree up to degree"), "{stdout}");
    let table = read_degree_table(&csv).unwrap();
    let r = &table.column("correlation").unwrap().values;
    assert!(r[10] > 0.99 && r[80] < 0.6, "{} {}", r[10], r[80]);
}

#[test]
fn incompatible_units_are_refused_with_exit_code_3_and_no_output() {
    let dir = tempfile::tempdir().unwrap();
    let (a_path, b_path) = (dir.path().join("a.nc"), dir.path().join("b.nc"));
    let mut a = random_model(10, 4, variance);
    a.units = "m".into();
    write_model(&a_path, &a, &Provenance::default()).unwrap();
    a.units = "mGal".into();
    write_model(&b_path, &a, &Provenance::default()).unwrap();
    let nc = dir.path().join("cmp.nc");
    let out = run_kugel(&[
        "compare",
        a_path.to_str().unwrap(),
        b_path.to_str().unwrap(),
        "-o",
        nc.to_str().unwrap(),
    ]);
    assert_eq!(out.status.code(), Some(3));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stderr.contains("--force") && stderr.contains("mGal"),
        "{stderr}"
    );
    assert!(!nc.exists());
    let leftovers: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
    assert_eq!(leftovers.len(), 2, "only the two inputs remain");
}

#[test]
fn bad_options_name_what_is_wrong() {
    let dir = tempfile::tempdir().unwrap();
    let model = dir.path().join("model.nc");
    write_gravity_model(&model, 5, None);
    let m = model.to_str().unwrap();
    let out = run_kugel(&["spectrum", m, "--fit", "5..80"]);
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains("LMIN-LMAX"));
    let out = run_kugel(&["spectrum", m, "--fit", "5-500"]);
    assert!(
        String::from_utf8_lossy(&out.stderr).contains("90"),
        "names the model's lmax"
    );
    let out = run_kugel(&["spectrum", m, "--confidence", "95"]);
    assert!(String::from_utf8_lossy(&out.stderr).contains("confidence"));
    let out = run_kugel(&["spectrum", m, "-o", m]);
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains("same file as input"));
    // without outputs the CSV goes to standard output
    let out = run_kugel(&["spectrum", m, "--quiet"]);
    assert!(out.status.success());
    assert!(String::from_utf8_lossy(&out.stdout).starts_with("degree,degree_variance,"));
}
