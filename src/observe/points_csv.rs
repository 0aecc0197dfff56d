//! CSV point files: a header row naming the columns, one observation per line, `#` comments
//! and blank lines allowed, comma separated (parsed by `io::csv_table`).

use std::path::Path;

use crate::error::{Error, Result};

use super::points::PointReadOptions;
use super::validate::RawRecord;

/// Reads the records of a CSV point file (unvalidated), through `io::csv_table`.
pub fn read_csv_records(path: &Path, options: &PointReadOptions) -> Result<Vec<RawRecord>> {
    let table = crate::io::csv_table::read_csv_table(path)?;
    records_from_table(
        path,
        &table.headers,
        &table.rows,
        &table.line_numbers,
        options,
    )
}

/// Finds a column by case-insensitive name.
fn column_index(headers: &[String], name: &str) -> Option<usize> {
    headers.iter().position(|h| h.eq_ignore_ascii_case(name))
}

/// Turns table rows into records, locating the columns named in `options`.
pub fn records_from_table(
    path: &Path,
    headers: &[String],
    rows: &[Vec<String>],
    line_numbers: &[usize],
    options: &PointReadOptions,
) -> Result<Vec<RawRecord>> {
    let names = &options.columns;
    let required = |key: &str, name: &str| -> Result<usize> {
        column_index(headers, name).ok_or_else(|| {
            Error::format(
                path,
                format!(
                    "no `{name}` column for {key} in the header (columns: {}); name it with --columns {key}=NAME",
                    headers.join(", ")
                ),
            )
        })
    };
    let lat = required("lat", &names.lat)?;
    let lon = required("lon", &names.lon)?;
    let value = if options.require_value {
        Some(required("value", &names.value)?)
    } else {
        column_index(headers, &names.value)
    };
    let sigma = column_index(headers, &names.sigma);
    let field = |row: &Vec<String>, k: usize| -> std::result::Result<f64, String> {
        match row.get(k) {
            None => Err("(missing field)".to_string()),
            Some(text) => text.parse::<f64>().map_err(|_| text.clone()),
        }
    };
    Ok(rows
        .iter()
        .zip(line_numbers)
        .map(|(row, &line)| RawRecord {
            line,
            lat: field(row, lat),
            lon: field(row, lon),
            value: value.map(|k| field(row, k)),
            sigma: sigma.map(|k| field(row, k)),
        })
        .collect())
}
