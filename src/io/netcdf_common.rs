//! Small shared pieces for NetCDF reading and writing: opening with file-naming errors,
//! attribute access, NetCDF-4 output through an atomic write, and the CF globals every kugel
//! file carries.

use std::path::Path;

use netcdf_reader::{NcAttrValue, NcAttribute, NcFile};
use netcdf_writer::{NcFileBuilder, NcWriteFormat, NcWriteOptions, VariableId};

use super::provenance::{source_attribute, Provenance};
use crate::error::{Error, Result};

/// Opens a NetCDF file (classic or NetCDF-4); a missing file is an I/O error, anything
/// unreadable a format error naming the file.
pub fn open(path: &Path) -> Result<NcFile> {
    std::fs::metadata(path).map_err(|e| Error::io(path, e))?;
    NcFile::open(path).map_err(|e| {
        Error::format(
            path,
            format!("not a readable NetCDF file (truncated or corrupt?): {e}"),
        )
    })
}

/// Maps a reader error for variable `name` to a format error naming file and variable.
pub fn read_error(path: &Path, name: &str, e: impl std::fmt::Display) -> Error {
    Error::format(
        path,
        format!("variable '{name}': cannot read its data: {e}"),
    )
}

/// Finds an attribute by name in a list.
pub fn find<'a>(attrs: &'a [NcAttribute], name: &str) -> Option<&'a NcAttrValue> {
    attrs.iter().find(|a| a.name == name).map(|a| &a.value)
}

/// A text attribute, if present and textual.
pub fn text(attrs: &[NcAttribute], name: &str) -> Option<String> {
    find(attrs, name)
        .and_then(|v| v.as_string())
        .map(|s| s.trim().to_string())
}

/// A numeric attribute (first value); numbers stored as text are accepted too.
pub fn number(attrs: &[NcAttribute], name: &str) -> Option<f64> {
    let v = find(attrs, name)?;
    v.as_f64()
        .or_else(|| v.as_string().and_then(|s| s.trim().parse().ok()))
}

/// Any attribute rendered as text (for carrying metadata through).
pub fn as_text(v: &NcAttrValue) -> String {
    if let Some(s) = v.as_string() {
        return s;
    }
    match v.as_f64_vec() {
        Some(xs) => xs
            .iter()
            .map(|x| x.to_string())
            .collect::<Vec<_>>()
            .join(" "),
        None => format!("{v:?}"),
    }
}

/// Maps a writer error to a kugel error naming the output file.
pub fn write_error(path: &Path, e: netcdf_writer::Error) -> Error {
    Error::format(path, format!("cannot encode NetCDF: {e}"))
}

/// A text attribute value.
pub fn chars(s: &str) -> NcAttrValue {
    NcAttrValue::Chars(s.to_string())
}

/// Adds a text attribute to a variable.
pub fn var_text(
    b: &mut NcFileBuilder,
    path: &Path,
    var: VariableId,
    name: &str,
    value: &str,
) -> Result<()> {
    b.add_variable_attribute(var, name, chars(value))
        .map_err(|e| write_error(path, e))
}

/// Adds `Conventions`, `title`, `source` and the provenance attributes, then `extra` (skipping
/// names already set, so callers cannot produce duplicates). A `history` in `extra` is the
/// input's history: the new line is put in front of it (newest first, as NetCDF tools do).
pub fn add_globals(
    b: &mut NcFileBuilder,
    path: &Path,
    title: &str,
    provenance: &Provenance,
    extra: &[(String, String)],
) -> Result<()> {
    let mut seen: Vec<String> = Vec::new();
    let mut put = |b: &mut NcFileBuilder, name: &str, value: &str| -> Result<()> {
        if seen.iter().any(|s| s == name) {
            return Ok(());
        }
        seen.push(name.to_string());
        b.add_attribute(name, chars(value))
            .map_err(|e| write_error(path, e))
    };
    put(b, "Conventions", "CF-1.8")?;
    put(b, "title", title)?;
    put(b, "source", &source_attribute())?;
    let previous_history = extra
        .iter()
        .find(|(k, _)| k == "history")
        .map(|(_, v)| v.as_str());
    for (k, v) in provenance.to_attributes() {
        if k == "history" {
            put(
                b,
                &k,
                &super::provenance::chain_history(&v, previous_history, "\n"),
            )?;
        } else {
            put(b, &k, &v)?;
        }
    }
    for (k, v) in extra {
        put(b, k, v)?;
    }
    Ok(())
}

/// Chunk rows for a 2-D variable so that one chunk holds about 1 MiB.
pub fn chunk_rows(ncols: usize, bytes_per_value: usize) -> u64 {
    ((1usize << 20) / (ncols.max(1) * bytes_per_value)).max(1) as u64
}

/// Encodes the file as NetCDF-4 (HDF5) and writes it atomically.
pub fn write_netcdf4(path: &Path, b: &NcFileBuilder) -> Result<()> {
    let (_, bytes) = b
        .to_vec(NcWriteOptions {
            format: NcWriteFormat::Nc4,
        })
        .map_err(|e| write_error(path, e))?;
    super::atomic::write_bytes_atomic(path, &bytes)
}
