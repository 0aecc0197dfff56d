//! Coefficient model files: NetCDF-4 for `.nc` paths, plain-text tables otherwise.
//! Reading recognises NetCDF by its magic bytes, whatever the extension.
//!
//! This folder owns the model formats: [`netcdf`] (CF NetCDF-4 layout) and [`text`] (plain-text
//! tables); this file chooses between them.

use std::io::Read;
use std::path::Path;

pub mod netcdf;
pub mod text;

use self::netcdf::{read_model_netcdf, write_model_netcdf};
use self::text::{read_model_text, write_model_text, TextModelReport};
use crate::coeffs::Coefficients;
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
        Ok((read_model_netcdf(path)?, None))
    } else if is_netcdf_path(path) {
        Err(Error::format(
            path,
            "the name ends in a NetCDF extension but the file has no NetCDF or HDF5 signature (truncated or not NetCDF)",
        ))
    } else {
        let (c, r) = read_model_text(path)?;
        Ok((c, Some(r)))
    }
}

/// Reads a model from NetCDF or a text table.
pub fn read_model(path: &Path) -> Result<Coefficients> {
    read_model_with_report(path).map(|(c, _)| c)
}
