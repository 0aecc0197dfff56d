//! The spectra named in filter specs (`wiener:SIGNAL,NOISE`): read from degree-table files
//! and handed to `spectral::filter` as numbers, so the filter code reads no files.

use std::path::Path;

use super::csv_table::read_csv_table;
use super::degree_table::read_degree_table;
use crate::error::{Error, Result};
use crate::spectral::filter::FilterChain;

/// Parses a filter spec or `+` chain, reading the spectra of `wiener` specs from their files;
/// relative paths are resolved against `base` (a config file's folder) when given.
pub fn parse_filter_chain(spec: &str, base: Option<&Path>) -> Result<FilterChain> {
    FilterChain::parse_with(spec, base, &read_degree_variance_spectrum)
}

/// Several specs (repeated `--filter`), reading the spectra of `wiener` specs from their files.
pub fn filter_chain_from_specs(specs: &[String]) -> Result<FilterChain> {
    FilterChain::from_specs_with(specs, &read_degree_variance_spectrum)
}

/// Reads a degree-variance spectrum (the CSV or NetCDF that `kugel spectrum` writes): returns
/// S_l, the column `degree_variance`, indexed by degree 0..=max degree.
///
/// Every degree from 0 to the largest one present must appear exactly once (a spectrum with
/// gaps cannot define a filter); values must be finite and ≥ 0. Errors name the file and the
/// degree (CSV: also the line).
pub fn read_degree_variance_spectrum(path: &Path) -> Result<Vec<f64>> {
    let table = read_degree_table(path)?;
    let degrees = &table.columns[0].values;
    let variances = &table
        .column("degree_variance")
        .ok_or_else(|| {
            let names: Vec<&str> = table.columns.iter().map(|c| c.name.as_str()).collect();
            Error::format(
                path,
                format!(
                    "no column 'degree_variance' (columns are: {})",
                    names.join(", ")
                ),
            )
        })?
        .values;
    // CSV rows keep their file lines for the messages; NetCDF rows are named by degree only
    let lines = read_csv_table(path).ok().map(|t| t.line_numbers);
    let row_err = |row: usize, message: String| match lines.as_ref().and_then(|l| l.get(row)) {
        Some(&line) => Error::Line {
            path: path.to_path_buf(),
            line,
            message,
        },
        None => Error::format(path, message),
    };
    let mut values: Vec<Option<f64>> = Vec::new();
    for (row, (&d, &v)) in degrees.iter().zip(variances).enumerate() {
        let degree = d as usize;
        if !(v.is_finite() && v >= 0.0) {
            return Err(row_err(
                row,
                format!("degree {degree}: degree_variance {v} is not a finite number ≥ 0"),
            ));
        }
        if values.len() <= degree {
            values.resize(degree + 1, None);
        }
        if values[degree].replace(v).is_some() {
            return Err(row_err(row, format!("degree {degree} appears twice")));
        }
    }
    if values.is_empty() {
        return Err(Error::format(path, "no spectrum rows after the header"));
    }
    values
        .iter()
        .enumerate()
        .map(|(l, v)| {
            v.ok_or_else(|| {
                Error::format(
                    path,
                    format!("degree {l} is missing (spectra must list every degree)"),
                )
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::PathBuf;

    fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
        let p = dir.join(name);
        std::fs::write(&p, text).unwrap();
        p
    }

    #[test]
    fn spectra_of_a_spec_are_read_from_files() {
        let dir = tempfile::tempdir().unwrap();
        write(
            dir.path(),
            "s.csv",
            "degree,degree_amplitude,degree_variance\n0,0,0\n1,1,3\n2,1,1\n",
        );
        write(
            dir.path(),
            "n.csv",
            "degree,degree_variance\n2,3\n1,1\n0,0\n",
        );
        let chain = parse_filter_chain("wiener:s.csv,n.csv", Some(dir.path())).unwrap();
        // W_l = S_l/(S_l + N_l) (Wiener 1949)
        assert_eq!(chain.weights(2, 1.0).unwrap(), vec![0.0, 0.75, 0.25]);
        let specs = [format!(
            "wiener:{},noise=1",
            dir.path().join("s.csv").display()
        )];
        let chain = filter_chain_from_specs(&specs).unwrap();
        assert_eq!(chain.weights(2, 1.0).unwrap(), vec![0.0, 0.75, 0.5]);
    }

    #[test]
    fn bad_spectrum_files_name_file_and_line() {
        let dir = tempfile::tempdir().unwrap();
        let p = write(dir.path(), "a.csv", "degree,power\n0,1\n");
        let msg = read_degree_variance_spectrum(&p).unwrap_err().to_string();
        assert!(
            msg.contains("a.csv") && msg.contains("no column 'degree_variance'"),
            "{msg}"
        );
        let p = write(dir.path(), "b.csv", "degree,degree_variance\n0,1\n1,-2\n");
        let msg = read_degree_variance_spectrum(&p).unwrap_err().to_string();
        assert!(msg.contains("b.csv, line 3") && msg.contains("-2"), "{msg}");
        let p = write(dir.path(), "c.csv", "degree,degree_variance\n0,1\n2,1\n");
        let msg = read_degree_variance_spectrum(&p).unwrap_err().to_string();
        assert!(msg.contains("degree 1 is missing"), "{msg}");
        let msg = parse_filter_chain("wiener:none.csv,noise=1e-3", Some(dir.path()))
            .unwrap_err()
            .to_string();
        assert!(msg.contains("none.csv"), "{msg}");
    }
}
