//! Small shared pieces for NetCDF reading and writing: opening with file-naming errors,
//! attribute access, NetCDF-4 output through an atomic write, and the CF globals every kugel
//! file carries.

use std::path::Path;

use netcdf_reader::{NcAttrValue, NcAttribute, NcFile};
use netcdf_writer::{DimensionId, NcFileBuilder, NcWriteFormat, NcWriteOptions, VariableId};

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

/// The `degree` and `order` coordinate axes of a coefficient file: dimensions and integer
/// coordinate variables with the values given (0..=L; orders 0..=L for real sets, −L..=L for
/// complex ones), `order_long_name` saying which. Returns the two dimensions.
pub fn degree_order_axes(
    b: &mut NcFileBuilder,
    path: &Path,
    degrees: &[i32],
    orders: &[i32],
    order_long_name: &str,
) -> Result<(DimensionId, DimensionId)> {
    let we = |e| write_error(path, e);
    let d_deg = b
        .add_dimension("degree", degrees.len() as u64)
        .map_err(we)?;
    let d_ord = b.add_dimension("order", orders.len() as u64).map_err(we)?;
    let v_deg = b.add_variable::<i32>("degree", &[d_deg]).map_err(we)?;
    var_text(b, path, v_deg, "long_name", "spherical-harmonic degree l")?;
    var_text(b, path, v_deg, "units", "1")?;
    let v_ord = b.add_variable::<i32>("order", &[d_ord]).map_err(we)?;
    var_text(b, path, v_ord, "long_name", order_long_name)?;
    var_text(b, path, v_ord, "units", "1")?;
    b.write_variable(v_deg, degrees).map_err(we)?;
    b.write_variable(v_ord, orders).map_err(we)?;
    Ok((d_deg, d_ord))
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

/// What a present attribute holds, for "wrong type" messages.
fn attribute_kind(v: &NcAttrValue) -> String {
    match v.as_string() {
        Some(s) => format!("text '{}'", s.trim()),
        None => "a non-text value".to_string(),
    }
}

/// A numeric global or variable attribute: `Ok(None)` when absent, an error naming the file,
/// the attribute and what it holds when present but not a number ("wrong type", not
/// "missing"). Numbers stored as text are accepted.
pub fn number_checked(
    path: &Path,
    attrs: &[NcAttribute],
    owner: &str,
    name: &str,
) -> Result<Option<f64>> {
    let Some(v) = find(attrs, name) else {
        return Ok(None);
    };
    if let Some(x) = v.as_f64() {
        return Ok(Some(x));
    }
    match v.as_string().and_then(|s| s.trim().parse().ok()) {
        Some(x) => Ok(Some(x)),
        None => Err(Error::format(
            path,
            format!(
                "{owner} attribute '{name}' has the wrong type: it holds {}, expected a number",
                attribute_kind(v)
            ),
        )),
    }
}

/// A text global or variable attribute: `Ok(None)` when absent, an error naming the file and
/// the attribute when present but not text.
pub fn text_checked(
    path: &Path,
    attrs: &[NcAttribute],
    owner: &str,
    name: &str,
) -> Result<Option<String>> {
    let Some(v) = find(attrs, name) else {
        return Ok(None);
    };
    match v.as_string() {
        Some(s) => Ok(Some(s.trim().to_string())),
        None => Err(Error::format(
            path,
            format!(
                "{owner} attribute '{name}' has the wrong type: it holds numbers ({}), expected text",
                as_text(v)
            ),
        )),
    }
}

/// The value the NetCDF library stores in cells nobody wrote, when a variable has no
/// `_FillValue` attribute (`NC_FILL_*` of netcdf.h; common practice). Reading such a value
/// means the cell was never written.
pub fn default_fill(dtype: &netcdf_reader::NcType) -> Option<f64> {
    use netcdf_reader::NcType as T;
    Some(match dtype {
        T::Byte => -127.0,
        T::UByte => 255.0,
        T::Short => -32767.0,
        T::UShort => 65535.0,
        T::Int => -2_147_483_647.0,
        T::UInt => 4_294_967_295.0,
        T::Int64 => -9_223_372_036_854_775_806.0,
        T::UInt64 => 18_446_744_073_709_551_614.0,
        T::Float => f64::from(9.969_21e36_f32),
        T::Double => 9.969_209_968_386_869e36,
        _ => return None,
    })
}

/// Values of a variable as the file means them (CF conventions §2.5, §8.1): `_Unsigned`
/// reinterpretation, then `_FillValue` / `missing_value` / `valid_*` masking, then
/// `scale_factor` and `add_offset` unpacking. Masked cells are NaN; cells holding the
/// library's default fill while the variable declares no `_FillValue` were never written and
/// are counted in `unwritten` (and NaN too), so that no caller takes 9.97e36 for data.
#[derive(Debug, Clone)]
pub struct CfValues {
    pub values: Vec<f64>,
    /// Number of cells never written (default fill, no `_FillValue` attribute).
    pub unwritten: usize,
    /// Flat index of the first such cell.
    pub first_unwritten: Option<usize>,
}

/// Reads variable `name` (or a slice of it) with [`CfValues`] semantics; the one decoder of
/// the grid, model and point readers.
pub fn read_cf_values(
    file: &NcFile,
    path: &Path,
    name: &str,
    selection: Option<&netcdf_reader::NcSliceInfo>,
) -> Result<CfValues> {
    let var = file.variable(name).map_err(|e| read_error(path, name, e))?;
    let mut raw = match selection {
        Some(sel) => file.read_variable_slice_as_f64(name, sel),
        None => file.read_variable_as_f64(name),
    }
    .map_err(|e| read_error(path, name, e))?;
    let unwritten_value = if var.attribute("_FillValue").is_none() {
        default_fill(var.dtype())
    } else {
        None
    };
    let mut unwritten_at: Vec<usize> = Vec::new();
    if let Some(fill) = unwritten_value {
        for (i, v) in raw.iter().enumerate() {
            if *v == fill {
                unwritten_at.push(i);
            }
        }
    }
    if let Some(sign) = netcdf_reader::unpack::SignParams::from_variable(var) {
        sign.apply(&mut raw);
    }
    if let Some(mask) = netcdf_reader::masked::MaskParams::from_variable(var) {
        mask.apply(&mut raw);
    }
    if let Some(unpack) = netcdf_reader::unpack::UnpackParams::from_variable(var) {
        unpack.apply(&mut raw);
    }
    let mut values: Vec<f64> = raw.iter().copied().collect();
    for &i in &unwritten_at {
        values[i] = f64::NAN;
    }
    Ok(CfValues {
        values,
        unwritten: unwritten_at.len(),
        first_unwritten: unwritten_at.first().copied(),
    })
}

/// The largest ratio of data to stored bytes a variable can have: deflate, the strongest
/// filter NetCDF-4 files use, compresses at most about 1032:1 (zlib technical details; common
/// practice). Kept generous with a fixed allowance for small variables.
pub const MAX_STORAGE_RATIO: u64 = 1100;

/// Checks the size a variable declares before anything is read: against memory (exit 5 with
/// the estimate; `copies` is how many f64 copies of it the reader holds at once) and against
/// the size of the file, which must be able to hold it ([`MAX_STORAGE_RATIO`]). A small file
/// declaring a huge variable it never wrote is refused at once instead of after minutes of
/// reading fill values. `selected_values` is the number of values actually read (a slice may
/// read less than the variable).
pub fn check_declared_size(
    path: &Path,
    name: &str,
    shape: &[u64],
    selected_values: u64,
    copies: u64,
) -> Result<()> {
    let declared = shape
        .iter()
        .try_fold(1u64, |acc, &d| acc.checked_mul(d))
        .unwrap_or(u64::MAX);
    let dims = shape
        .iter()
        .map(|d| d.to_string())
        .collect::<Vec<_>>()
        .join(" x ");
    crate::memory::check_fits(
        &format!("reading variable '{name}' ({dims}) of {}", path.display()),
        selected_values
            .saturating_mul(8)
            .saturating_mul(copies.max(1)),
    )?;
    let file_bytes = std::fs::metadata(path).map(|m| m.len()).unwrap_or(u64::MAX);
    let limit = file_bytes
        .saturating_mul(MAX_STORAGE_RATIO)
        .saturating_add(1 << 20);
    if declared > limit {
        return Err(Error::format(
            path,
            format!(
                "variable '{name}' declares {dims} = {declared} values, but the whole file is {file_bytes} bytes \
                 and cannot hold them (never written, or the file is truncated)"
            ),
        ));
    }
    Ok(())
}
