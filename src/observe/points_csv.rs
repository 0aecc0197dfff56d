//! CSV point files: a header row naming the columns, one observation per line, `#` comments
//! and blank lines allowed, comma separated.

use std::path::Path;

use crate::error::{Error, Result};

use super::points::PointReadOptions;
use super::validate::RawRecord;

/// Reads the records of a CSV point file (unvalidated).
pub fn read_csv_records(path: &Path, options: &PointReadOptions) -> Result<Vec<RawRecord>> {
    let (headers, rows, lines) = read_table(path)?;
    records_from_table(path, &headers, &rows, &lines, options)
}

/// Splits the file into a header and data rows with their 1-based line numbers.
fn read_table(path: &Path) -> Result<(Vec<String>, Vec<Vec<String>>, Vec<usize>)> {
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
    let mut headers: Option<Vec<String>> = None;
    let mut rows = Vec::new();
    let mut lines = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let trimmed = line.trim();
        if trimmed.is_empty() || trimmed.starts_with('#') {
            continue;
        }
        let fields: Vec<String> = trimmed
            .split(',')
            .map(|f| f.trim().trim_matches('"').trim().to_string())
            .collect();
        if headers.is_none() {
            headers = Some(fields);
        } else {
            rows.push(fields);
            lines.push(i + 1);
        }
    }
    let headers = headers
        .ok_or_else(|| Error::format(path, "the file is empty: expected a header row such as `lat,lon,value`"))?;
    Ok((headers, rows, lines))
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
