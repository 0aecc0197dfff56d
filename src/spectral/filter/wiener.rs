//! Wiener filter from a signal and a noise degree-variance spectrum.
//!
//! For a signal with degree variance S_l observed with independent noise of degree variance
//! N_l, the weights that minimise the expected mean-square error of the filtered field are
//! (Wiener 1949, *Extrapolation, Interpolation and Smoothing of Stationary Time Series*; on
//! the sphere e.g. Sjöberg 1980, or any geodesy text on optimal filtering — common practice):
//!
//!   W_l = S_l / (S_l + N_l),   and W_l = 0 where S_l = N_l = 0.
//!
//! S_l is the spectrum of the signal alone; passing the spectrum of the noisy observations
//! instead gives (S+N)/(S+2N), a milder filter. Spectra are read from the files `kugel
//! spectrum` writes (CSV with a first column `degree` and a column `degree_variance`, `#`
//! comment lines allowed, or the NetCDF twin), one row per degree. A constant noise level
//! (`noise=1e-18`) is the degree variance N_l at every degree.

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::io::csv_table::read_csv_table;
use crate::io::degree_table::read_degree_table;

/// The noise part of a Wiener filter.
#[derive(Debug, Clone, PartialEq)]
pub enum NoiseLevel {
    /// Degree variances read from a spectrum file (index = degree).
    Spectrum {
        path: PathBuf,
        degree_variance: Vec<f64>,
    },
    /// The same noise degree variance at every degree.
    Constant(f64),
}

#[derive(Debug, Clone, PartialEq)]
pub struct WienerFilter {
    pub signal_path: PathBuf,
    /// Signal degree variance S_l, index = degree.
    pub signal: Vec<f64>,
    pub noise: NoiseLevel,
}

impl WienerFilter {
    /// Reads the signal spectrum (and the noise spectrum when given as a file).
    pub fn load(signal_path: &Path, noise: NoiseSource) -> Result<Self> {
        let signal = read_spectrum_file(signal_path)?;
        let noise = match noise {
            NoiseSource::File(p) => NoiseLevel::Spectrum {
                degree_variance: read_spectrum_file(&p)?,
                path: p,
            },
            NoiseSource::Constant(v) => {
                if !(v.is_finite() && v >= 0.0) {
                    return Err(Error::invalid(format!(
                        "wiener noise level must be a finite degree variance ≥ 0, got {v}"
                    )));
                }
                NoiseLevel::Constant(v)
            }
        };
        Ok(WienerFilter {
            signal_path: signal_path.to_path_buf(),
            signal,
            noise,
        })
    }

    /// The spec that rebuilds this filter.
    pub fn spec(&self) -> String {
        let noise = match &self.noise {
            NoiseLevel::Spectrum { path, .. } => path.display().to_string(),
            NoiseLevel::Constant(v) => format!("noise={v:e}"),
        };
        format!("wiener:{},{noise}", self.signal_path.display())
    }

    /// W_0..=W_lmax; an error names the file that lacks a degree up to `lmax`.
    pub fn weights(&self, lmax: usize) -> Result<Vec<f64>> {
        let need = |path: &Path, values: &[f64]| -> Result<()> {
            if values.len() <= lmax {
                return Err(Error::format(
                    path,
                    format!(
                        "spectrum ends at degree {} but the model needs degrees up to {lmax} \
                         for the wiener filter",
                        values.len() as isize - 1
                    ),
                ));
            }
            Ok(())
        };
        need(&self.signal_path, &self.signal)?;
        if let NoiseLevel::Spectrum {
            path,
            degree_variance,
        } = &self.noise
        {
            need(path, degree_variance)?;
        }
        Ok((0..=lmax)
            .map(|l| {
                let s = self.signal[l];
                let n = match &self.noise {
                    NoiseLevel::Spectrum {
                        degree_variance, ..
                    } => degree_variance[l],
                    NoiseLevel::Constant(v) => *v,
                };
                if s + n > 0.0 {
                    s / (s + n)
                } else {
                    0.0
                }
            })
            .collect())
    }
}

/// Where the noise spectrum comes from, before it is read.
#[derive(Debug, Clone, PartialEq)]
pub enum NoiseSource {
    File(PathBuf),
    Constant(f64),
}

/// Reads a degree-variance spectrum (the CSV or NetCDF that `kugel spectrum` writes, through
/// `io::degree_table`): returns S_l indexed by degree 0..=max degree.
///
/// Every degree from 0 to the largest one present must appear exactly once (a spectrum with
/// gaps cannot define a filter); values must be finite and ≥ 0. Errors name the file and the
/// degree (CSV: also the line).
pub fn read_spectrum_file(path: &Path) -> Result<Vec<f64>> {
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

    fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
        let p = dir.join(name);
        std::fs::write(&p, text).unwrap();
        p
    }

    #[test]
    fn weights_are_signal_over_total() {
        let dir = tempfile::tempdir().unwrap();
        let s = write(
            dir.path(),
            "s.csv",
            "# spectrum\ndegree,degree_amplitude,degree_variance\n0,0,0\n1,1,3\n2,1,1\n",
        );
        let n = write(
            dir.path(),
            "n.csv",
            "degree,degree_variance\n2,3\n1,1\n0,0\n",
        );
        let f = WienerFilter::load(&s, NoiseSource::File(n)).unwrap();
        assert_eq!(f.weights(2).unwrap(), vec![0.0, 0.75, 0.25]);
        let c = WienerFilter::load(&s, NoiseSource::Constant(1.0)).unwrap();
        assert_eq!(c.weights(2).unwrap(), vec![0.0, 0.75, 0.5]);
        let msg = f.weights(3).unwrap_err().to_string();
        assert!(msg.contains("s.csv") && msg.contains("degree 2"), "{msg}");
    }

    #[test]
    fn bad_spectrum_files_name_file_and_line() {
        let dir = tempfile::tempdir().unwrap();
        let p = write(dir.path(), "a.csv", "degree,power\n0,1\n");
        let msg = read_spectrum_file(&p).unwrap_err().to_string();
        assert!(
            msg.contains("a.csv") && msg.contains("no column 'degree_variance'"),
            "{msg}"
        );
        let p = write(dir.path(), "b.csv", "degree,degree_variance\n0,1\n1,-2\n");
        let msg = read_spectrum_file(&p).unwrap_err().to_string();
        assert!(msg.contains("b.csv, line 3") && msg.contains("-2"), "{msg}");
        let p = write(dir.path(), "c.csv", "degree,degree_variance\n0,1\n2,1\n");
        let msg = read_spectrum_file(&p).unwrap_err().to_string();
        assert!(msg.contains("degree 1 is missing"), "{msg}");
    }
}
