//! Every CSV kugel writes starts with its header row, so a CSV reader with default settings
//! (first record = column names, no comment handling) reads it as meant; units and provenance
//! travel in the `NAME.csv.json` sidecar, and kugel's own readers still read the files back.
//!
//! Outside source: the `csv` crate's default `Reader` (RFC 4180 parsing, header row first).

use std::path::Path;

use crate::support::random_model;
use kugel::io::csv_sidecar::read_sidecar;
use kugel::io::csv_table::write_csv_table;
use kugel::io::degree_table::{read_degree_table, write_degree_table_csv};
use kugel::io::provenance::Provenance;
use kugel::spectral::{CompareOptions, Comparison, Spectrum, SpectrumOptions};

fn variance(l: usize) -> f64 {
    1e-9 / (1.0 + l as f64).powi(3)
}

/// Header and records as a default `csv::Reader` sees them; every record has the header's
/// width (the reader's default `flexible = false` enforces it).
fn default_read(path: &Path) -> (Vec<String>, Vec<csv::StringRecord>) {
    let mut reader = csv::Reader::from_path(path).unwrap();
    let headers = reader
        .headers()
        .unwrap()
        .iter()
        .map(str::to_string)
        .collect();
    let records = reader.records().map(|r| r.unwrap()).collect();
    (headers, records)
}

fn provenance() -> Provenance {
    Provenance::from_command_line("kugel spectrum oressa.nc --csv s.csv")
}

#[test]
fn spectrum_csv_has_its_header_first_and_units_in_the_sidecar() {
    let dir = tempfile::tempdir().unwrap();
    let mut model = random_model(30, 3, variance);
    model.units = "m2 s-2".into();
    let spectrum = Spectrum::compute(&model, &SpectrumOptions::default()).unwrap();
    let table = spectrum.to_table().to_degree_table();
    let path = dir.path().join("s.csv");
    write_degree_table_csv(&path, &table, &provenance()).unwrap();

    let (headers, records) = default_read(&path);
    let expected: Vec<&str> = table.columns.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(headers, expected);
    assert_eq!(&headers[..2], ["degree", "degree_variance"]);
    assert!(headers.iter().any(|h| h == "half_wavelength_km"));
    assert_eq!(records.len(), 31);
    for (l, r) in records.iter().enumerate() {
        assert_eq!(r[0].parse::<usize>().unwrap(), l);
        let s: f64 = r[1].parse().unwrap();
        assert_eq!(s, spectrum.to_table().columns[1].values[l]);
    }

    let sidecar = read_sidecar(&path).unwrap().expect("sidecar written");
    assert_eq!(sidecar.csv, "s.csv");
    assert_eq!(sidecar.find("degree_variance").unwrap().units, "(m2 s-2)^2");
    assert!(sidecar.attributes["history"].ends_with("kugel spectrum oressa.nc --csv s.csv"));
    assert!(sidecar.attributes["source"].starts_with("kugel "));

    // kugel's reader gets the units back from the sidecar
    let back = read_degree_table(&path).unwrap();
    assert_eq!(back.column("degree_variance").unwrap().units, "(m2 s-2)^2");
    assert_eq!(back.column("half_wavelength_km").unwrap().units, "km");
}

#[test]
fn comparison_csv_has_its_header_first() {
    let dir = tempfile::tempdir().unwrap();
    let a = random_model(20, 4, variance);
    let b = random_model(20, 5, variance);
    let cmp = Comparison::compute(&a, &b, &CompareOptions::default()).unwrap();
    let table = cmp.to_table().to_degree_table();
    let path = dir.path().join("cmp.csv");
    write_degree_table_csv(&path, &table, &provenance()).unwrap();
    let (headers, records) = default_read(&path);
    for name in [
        "degree",
        "reference_degree_variance",
        "compared_degree_variance",
        "cross_power",
        "correlation",
        "correlation_threshold",
        "admittance",
        "power_ratio",
        "difference_degree_variance",
        "half_wavelength_km",
    ] {
        assert!(
            headers.iter().any(|h| h == name),
            "no column {name}: {headers:?}"
        );
    }
    assert_eq!(headers[0], "degree");
    assert_eq!(records.len(), 21);
    // degree 0 has no half-wavelength: an empty cell, which kugel reads back as missing
    let k = headers
        .iter()
        .position(|h| h == "half_wavelength_km")
        .unwrap();
    assert_eq!(&records[0][k], "");
    assert!(read_degree_table(&path)
        .unwrap()
        .column("half_wavelength_km")
        .unwrap()
        .values[0]
        .is_nan());
    let sidecar = read_sidecar(&path).unwrap().unwrap();
    assert_eq!(sidecar.find("admittance").unwrap().units, "1");
    assert_eq!(sidecar.attributes["reference_model"], "A");
}

#[test]
fn point_tables_have_their_header_first() {
    // the writer behind residuals, demo surveys and evaluated points
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("residuals.csv");
    let rows = vec![
        vec![
            "10.5".to_string(),
            "-20".to_string(),
            "a, quoted".to_string(),
        ],
        vec![
            "-3".to_string(),
            "340.25".to_string(),
            "say \"hi\"".to_string(),
        ],
    ];
    write_csv_table(&path, &["lat_deg", "lon_deg", "note"], &rows).unwrap();
    let (headers, records) = default_read(&path);
    assert_eq!(headers, ["lat_deg", "lon_deg", "note"]);
    assert_eq!(records.len(), 2);
    assert_eq!(&records[0][2], "a, quoted");
    assert_eq!(&records[1][2], "say \"hi\"");
    assert_eq!(records[1][1].parse::<f64>().unwrap(), 340.25);
}

#[test]
fn old_csv_spectra_with_a_units_comment_are_still_read() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("old.csv");
    std::fs::write(
        &path,
        "# units: degree=1; degree_variance=m2\ndegree,degree_variance\n0,1\n1,0.5\n",
    )
    .unwrap();
    let t = read_degree_table(&path).unwrap();
    assert_eq!(t.column("degree_variance").unwrap().units, "m2");
    assert_eq!(t.column("degree_variance").unwrap().values, vec![1.0, 0.5]);
}
