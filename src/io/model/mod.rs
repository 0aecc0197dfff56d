//! Coefficient model files: NetCDF-4 for `.nc` paths, plain-text tables otherwise.
//! Reading recognises NetCDF by its magic bytes, whatever the extension.
//!
//! This folder owns the model formats: [`netcdf`] (CF NetCDF-4 layout) and [`text`] (plain-text
//! tables); this file chooses between them.

use std::io::Read;
use std::path::Path;

pub mod complex_netcdf;
pub mod complex_text;
pub mod netcdf;
pub mod text;

use self::netcdf::{read_model_netcdf, write_model_netcdf};
use self::text::{read_model_text, write_model_text, TextModelReport};
use crate::coeffs::Coefficients;
use crate::complex_coeffs::ComplexCoefficients;
use crate::error::{Error, Result};
use crate::io::provenance::Provenance;

/// True when `path` names a NetCDF file by its extension (`.nc`, `.nc4`, `.cdf`, `.netcdf`).
pub fn is_netcdf_path(path: &Path) -> bool {
    matches!(
        path.extension()
            .and_then(|e| e.to_str())
            .map(|e| e.to_ascii_lowercase())
            .as_deref(),
        Some("nc" | "nc4" | "cdf" | "netcdf")
    )
}

/// True when the file starts with a NetCDF classic (`CDF`) or HDF5 signature.
pub fn has_netcdf_magic(path: &Path) -> Result<bool> {
    let mut f = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut head = [0u8; 8];
    let n = f.read(&mut head).map_err(|e| Error::io(path, e))?;
    Ok((n >= 3 && &head[..3] == b"CDF") || (n >= 8 && head == *b"\x89HDF\r\n\x1a\n"))
}

/// The checks every model passes whatever its format, with messages naming the file and the
/// attribute: every C and S finite, S_l0 = 0, sigmas (when present) finite and non-negative,
/// reference radius finite and positive, GM (when present) finite and positive. A model that
/// fails them would give silently wrong or sign-flipped quantities.
pub fn validate_model(coeffs: &Coefficients, path: &Path) -> Result<()> {
    let fmt = |m: String| Error::format(path, m);
    let r = coeffs.reference_radius_m;
    if !(r.is_finite() && r > 0.0) {
        return Err(fmt(format!(
            "reference radius (attribute reference_radius_m) is {r}; expected a positive radius in metres"
        )));
    }
    if let Some(gm) = coeffs.gm_m3_s2 {
        if !(gm.is_finite() && gm > 0.0) {
            return Err(fmt(format!(
                "GM (attribute gm_m3_s2) is {gm}; expected a positive number of m3 s-2, or leave it out"
            )));
        }
    }
    check_values(
        coeffs,
        ["C", "S", "C_sigma", "S_sigma"],
        "coefficient ",
        path,
    )?;
    if let Some(sv) = coeffs.secular() {
        if !sv.epoch_year.is_finite() {
            return Err(fmt(format!(
                "epoch of the secular variation (attribute epoch_year) is {}; expected a decimal year",
                sv.epoch_year
            )));
        }
        check_values(
            &sv.rates,
            ["dC_dt", "dS_dt", "dC_dt_sigma", "dS_dt_sigma"],
            "rate ",
            path,
        )?;
    }
    Ok(())
}

/// Every value finite, the sine terms of order 0 zero, sigmas finite and ≥ 0; `names` are the
/// file's names of the four arrays.
fn check_values(coeffs: &Coefficients, names: [&str; 4], kind: &str, path: &Path) -> Result<()> {
    let fmt = |m: String| Error::format(path, m);
    let [c_name, s_name, cs_name, ss_name] = names;
    for (l, m, c, s) in coeffs.iter() {
        if !c.is_finite() {
            return Err(fmt(format!(
                "{kind}{c_name} at degree {l}, order {m} is not finite ({c})"
            )));
        }
        if !s.is_finite() {
            return Err(fmt(format!(
                "{kind}{s_name} at degree {l}, order {m} is not finite ({s})"
            )));
        }
        if m == 0 && s != 0.0 {
            return Err(fmt(format!(
                "{kind}{s_name} at degree {l}, order 0 is {s}; {s_name}_l0 must be 0"
            )));
        }
    }
    if let Some((cs, ss)) = coeffs.sigmas() {
        for (which, sig) in [(cs_name, cs), (ss_name, ss)] {
            for l in 0..=coeffs.lmax() {
                for m in 0..=l {
                    let v = sig[crate::coeffs::packed_index(l, m)];
                    if !(v.is_finite() && v >= 0.0) {
                        return Err(fmt(format!(
                            "{which} at degree {l}, order {m} is {v}; a standard error must be finite and not negative"
                        )));
                    }
                }
            }
        }
    }
    Ok(())
}

/// Writes a model: NetCDF-4 when the extension says so, else a text table.
pub fn write_model(path: &Path, coeffs: &Coefficients, provenance: &Provenance) -> Result<()> {
    if is_netcdf_path(path) {
        write_model_netcdf(path, coeffs, provenance)
    } else {
        write_model_text(path, coeffs, provenance)
    }
}

/// Reads a model from NetCDF or a text table; for tables also returns what the reader found
/// (missing pairs, assumed normalisation).
pub fn read_model_with_report(path: &Path) -> Result<(Coefficients, Option<TextModelReport>)> {
    if has_netcdf_magic(path)? {
        if complex_netcdf::declares_complex_form(path)? {
            let set = complex_netcdf::read_complex_netcdf(path)?;
            return Ok((real_of_complex(&set, path)?, None));
        }
        Ok((read_model_netcdf(path)?, None))
    } else if is_netcdf_path(path) {
        Err(Error::format(
            path,
            "the name ends in a NetCDF extension but the file has no NetCDF or HDF5 signature (truncated or not NetCDF)",
        ))
    } else {
        let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
        let text = String::from_utf8_lossy(&bytes);
        if complex_text::is_complex_table(&text) {
            // a complex set (m = −l..l) is read as the real set of the same field
            let set = complex_text::parse_complex_text(&text, path)?;
            return Ok((real_of_complex(&set, path)?, None));
        }
        let (c, r) = read_model_text(path)?;
        validate_model(&c, path)?;
        Ok((c, Some(r)))
    }
}

/// The real set of the same field as a complex one, in the complex set's normalisation and
/// phase; errors name the file and the (l, m) that is not the partner a real field needs.
fn real_of_complex(set: &ComplexCoefficients, path: &Path) -> Result<Coefficients> {
    let real = set
        .to_real()
        .and_then(|r| r.converted(set.normalization, set.condon_shortley))
        .map_err(|e| Error::format(path, e.to_string()))?;
    validate_model(&real, path)?;
    Ok(real)
}

/// Whether a model file holds a real set (C, S; m ≥ 0) or a complex one (a_lm, m = −l..l).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CoefficientForm {
    Real,
    Complex,
}

/// The form of the model in `path` (NetCDF by its `coefficient_form` attribute, text tables
/// by their header), without reading the coefficients of a NetCDF file.
pub fn model_form(path: &Path) -> Result<CoefficientForm> {
    let complex = if has_netcdf_magic(path)? {
        complex_netcdf::declares_complex_form(path)?
    } else {
        let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
        complex_text::is_complex_table(&String::from_utf8_lossy(&bytes))
    };
    Ok(if complex {
        CoefficientForm::Complex
    } else {
        CoefficientForm::Real
    })
}

/// Writes a complex set: NetCDF-4 when the extension says so, else a text table.
pub fn write_complex_model(
    path: &Path,
    set: &ComplexCoefficients,
    provenance: &Provenance,
) -> Result<()> {
    if is_netcdf_path(path) {
        complex_netcdf::write_complex_netcdf(path, set, provenance)
    } else {
        complex_text::write_complex_text(path, set, provenance)
    }
}

/// Reads a model from NetCDF or a text table.
pub fn read_model(path: &Path) -> Result<Coefficients> {
    read_model_with_report(path).map(|(c, _)| c)
}
