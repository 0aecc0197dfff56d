//! The Wiener filter reads the spectrum files kugel writes (CSV with a units comment, and the
//! NetCDF twin) and gives W_l = S_l/(S_l + N_l) (Wiener 1949).

use kugel::io::degree_table::{
    write_degree_table_csv, write_degree_table_netcdf, DegreeColumn, DegreeTable,
};
use kugel::io::provenance::Provenance;
use kugel::spectral::filter::FilterChain;

fn spectrum(values: Vec<f64>) -> DegreeTable {
    let col = |name: &str, units: &str, values: Vec<f64>| DegreeColumn {
        name: name.to_string(),
        units: units.to_string(),
        long_name: name.to_string(),
        values,
    };
    let n = values.len();
    DegreeTable {
        columns: vec![
            col("degree", "1", (0..n).map(|l| l as f64).collect()),
            col(
                "degree_amplitude",
                "m",
                values.iter().map(|v| v.sqrt()).collect(),
            ),
            col("degree_variance", "m2", values),
        ],
        attributes: vec![],
    }
}

#[test]
fn reads_spectra_written_as_csv_and_netcdf() {
    let dir = tempfile::tempdir().unwrap();
    // a Kaula-like signal and a noise floor rising with degree (invented demo numbers)
    let signal: Vec<f64> = (0..=60)
        .map(|l| 1e-10 * (2 * l + 1) as f64 / (1.0 + (l as f64).powi(4)))
        .collect();
    let noise: Vec<f64> = (0..=60)
        .map(|l| 1e-16 * (2 * l + 1) as f64 * (1.0 + l as f64))
        .collect();
    let s_csv = dir.path().join("signal.csv");
    let n_nc = dir.path().join("noise.nc");
    write_degree_table_csv(&s_csv, &spectrum(signal.clone())).unwrap();
    write_degree_table_netcdf(&n_nc, &spectrum(noise.clone()), &Provenance::default()).unwrap();

    let chain =
        FilterChain::parse(&format!("wiener:{},{}", s_csv.display(), n_nc.display())).unwrap();
    let w = chain.weights(60, 6_371_000.0).unwrap();
    for l in 0..=60 {
        let expect = signal[l] / (signal[l] + noise[l]);
        assert!(
            (w[l] - expect).abs() <= 2.0 * f64::EPSILON,
            "l={l}: {} vs {expect}",
            w[l]
        );
    }
    // signal dominates at low degrees, noise at high: the weight falls through ½
    assert!(w[2] > 0.99 && w[60] < 0.1);
    assert_eq!(
        chain.describe(),
        format!("wiener:{},{}", s_csv.display(), n_nc.display())
    );

    // a model above the spectrum's last degree is refused, naming the file
    let msg = chain.weights(61, 6_371_000.0).unwrap_err().to_string();
    assert!(
        msg.contains("signal.csv") && msg.contains("degree 60"),
        "{msg}"
    );
}
