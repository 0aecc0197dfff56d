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
//! instead gives (S+N)/(S+2N), a milder filter. The spectra are named by path in the spec and
//! handed in as numbers by a [`SpectrumReader`] (for files,
//! `io::filter_spectra::read_degree_variance_spectrum` reads what `kugel spectrum` writes), so
//! this module reads no files. A constant noise level (`noise=1e-18`) is the degree variance
//! N_l at every degree.

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

/// Gives the degree-variance spectrum S_l (index = degree, every degree from 0) named by a
/// path in a `wiener` spec; errors name the path.
pub type SpectrumReader<'a> = &'a dyn Fn(&Path) -> Result<Vec<f64>>;

/// A [`SpectrumReader`] for parsers that must not touch files: refuses every spectrum.
pub fn no_spectrum_files(path: &Path) -> Result<Vec<f64>> {
    Err(Error::invalid(format!(
        "spectrum {}: this parser is given no spectra; parse wiener filters through \
         io::filter_spectra, which reads the files",
        path.display()
    )))
}

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
    /// The filter of the signal spectrum at `signal_path` and the noise, the spectra given by
    /// `read`. Spectrum values must be finite and ≥ 0.
    pub fn load(signal_path: &Path, noise: NoiseSource, read: SpectrumReader) -> Result<Self> {
        let signal = checked(signal_path, read(signal_path)?)?;
        let noise = match noise {
            NoiseSource::File(p) => NoiseLevel::Spectrum {
                degree_variance: checked(&p, read(&p)?)?,
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

/// `values` when every one is a finite degree variance ≥ 0 (whoever supplied them).
fn checked(path: &Path, values: Vec<f64>) -> Result<Vec<f64>> {
    if let Some((l, v)) = values
        .iter()
        .enumerate()
        .find(|(_, v)| !(v.is_finite() && **v >= 0.0))
    {
        return Err(Error::format(
            path,
            format!("degree {l}: degree_variance {v} is not a finite number ≥ 0"),
        ));
    }
    if values.is_empty() {
        return Err(Error::format(path, "the spectrum has no degrees"));
    }
    Ok(values)
}

/// Where the noise spectrum comes from, before it is read.
#[derive(Debug, Clone, PartialEq)]
pub enum NoiseSource {
    File(PathBuf),
    Constant(f64),
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Spectra held in memory, by file name.
    fn from_memory(path: &Path) -> Result<Vec<f64>> {
        match path.to_str() {
            Some("s") => Ok(vec![0.0, 3.0, 1.0]),
            Some("n") => Ok(vec![0.0, 1.0, 3.0]),
            Some("bad") => Ok(vec![1.0, f64::NAN]),
            _ => Err(Error::invalid(format!("no spectrum {}", path.display()))),
        }
    }

    #[test]
    fn weights_are_signal_over_total() {
        // W_l = S_l/(S_l + N_l) (Wiener 1949), 0 where both vanish
        let s = Path::new("s");
        let f = WienerFilter::load(s, NoiseSource::File("n".into()), &from_memory).unwrap();
        assert_eq!(f.weights(2).unwrap(), vec![0.0, 0.75, 0.25]);
        let c = WienerFilter::load(s, NoiseSource::Constant(1.0), &from_memory).unwrap();
        assert_eq!(c.weights(2).unwrap(), vec![0.0, 0.75, 0.5]);
        let msg = f.weights(3).unwrap_err().to_string();
        assert!(msg.contains('s') && msg.contains("degree 2"), "{msg}");
        assert_eq!(f.spec(), "wiener:s,n");
    }

    #[test]
    fn bad_spectra_and_levels_are_named() {
        let msg = WienerFilter::load(Path::new("bad"), NoiseSource::Constant(1.0), &from_memory)
            .unwrap_err()
            .to_string();
        assert!(msg.contains("bad") && msg.contains("degree 1"), "{msg}");
        let msg = WienerFilter::load(Path::new("s"), NoiseSource::Constant(-1.0), &from_memory)
            .unwrap_err()
            .to_string();
        assert!(msg.contains("≥ 0"), "{msg}");
        let msg = WienerFilter::load(
            Path::new("x.csv"),
            NoiseSource::Constant(1.0),
            &no_spectrum_files,
        )
        .unwrap_err()
        .to_string();
        assert!(
            msg.contains("x.csv") && msg.contains("io::filter_spectra"),
            "{msg}"
        );
    }
}
