//! Per-degree tables (spectra, comparisons, filter weights): NetCDF-4 with dimension
//! `degree`, plus a CSV twin for spreadsheets whose first column is `degree`.
//!
//! The CSV carries the units in a leading comment line `# units: name=units; ...`, so reading it
//! back restores them; empty cells are missing values (NaN in memory).

use std::path::Path;

use netcdf_writer::{NcFileBuilder, NC_FILL_DOUBLE};

use super::netcdf_common as nc;
use super::provenance::Provenance;
use crate::error::{Error, Result};

/// One per-degree quantity.
#[derive(Debug, Clone, PartialEq)]
pub struct DegreeColumn {
    pub name: String,
    pub units: String,
    pub long_name: String,
    pub values: Vec<f64>,
}

/// A per-degree table; the first column is `degree` (integral values).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct DegreeTable {
    pub columns: Vec<DegreeColumn>,
    /// Global attributes (NetCDF) / ignored in CSV.
    pub attributes: Vec<(String, String)>,
}

impl DegreeTable {
    /// A column by name.
    pub fn column(&self, name: &str) -> Option<&DegreeColumn> {
        self.columns.iter().find(|c| c.name == name)
    }

    /// Checks the table's shape: a first column `degree` of non-negative integers and every
    /// column of the same length.
    pub fn validate(&self) -> Result<()> {
        let first = self
            .columns
            .first()
            .filter(|c| c.name == "degree")
            .ok_or_else(|| Error::invalid("a degree table's first column must be 'degree'"))?;
        if let Some(d) = first
            .values
            .iter()
            .find(|d| !(d.is_finite() && **d >= 0.0 && d.fract() == 0.0))
        {
            return Err(Error::invalid(format!(
                "degree value {d} is not a non-negative integer"
            )));
        }
        let n = first.values.len();
        if let Some(c) = self.columns.iter().find(|c| c.values.len() != n) {
            return Err(Error::ShapeMismatch(format!(
                "column '{}' has {} values but 'degree' has {n}",
                c.name,
                c.values.len()
            )));
        }
        Ok(())
    }
}

/// Writes the table as NetCDF-4 with dimension and coordinate variable `degree`, atomically.
pub fn write_degree_table_netcdf(
    path: &Path,
    table: &DegreeTable,
    provenance: &Provenance,
) -> Result<()> {
    table.validate()?;
    let n = table.columns[0].values.len();
    let we = |e| nc::write_error(path, e);
    let mut b = NcFileBuilder::new();
    let d = b.add_dimension("degree", n as u64).map_err(we)?;
    let v = b.add_variable::<i32>("degree", &[d]).map_err(we)?;
    nc::var_text(&mut b, path, v, "long_name", &table.columns[0].long_name)?;
    nc::var_text(&mut b, path, v, "units", "1")?;
    let degrees: Vec<i32> = table.columns[0].values.iter().map(|&x| x as i32).collect();
    b.write_variable(v, &degrees).map_err(we)?;
    for col in &table.columns[1..] {
        let v = b.add_variable::<f64>(&col.name, &[d]).map_err(we)?;
        nc::var_text(&mut b, path, v, "long_name", &col.long_name)?;
        nc::var_text(&mut b, path, v, "units", &col.units)?;
        if col.values.iter().any(|x| x.is_nan()) {
            b.set_variable_fill_value(v, NC_FILL_DOUBLE).map_err(we)?;
        }
        let data: Vec<f64> = col
            .values
            .iter()
            .map(|&x| if x.is_nan() { NC_FILL_DOUBLE } else { x })
            .collect();
        b.write_variable(v, &data).map_err(we)?;
    }
    let title = table
        .attributes
        .iter()
        .find(|(k, _)| k == "title")
        .map(|(_, v)| v.clone())
        .unwrap_or_else(|| "per-degree table".to_string());
    nc::add_globals(&mut b, path, &title, provenance, &table.attributes)?;
    nc::write_netcdf4(path, &b)
}

/// Formats a number for CSV: integers plainly, others in shortest round-trip exponent form,
/// NaN as an empty cell.
pub fn csv_number(x: f64) -> String {
    if x.is_nan() {
        String::new()
    } else if x.fract() == 0.0 && x.abs() < 1e15 {
        format!("{}", x as i64)
    } else {
        format!("{x:e}")
    }
}

/// Writes the table as CSV (units in a leading comment line), atomically.
pub fn write_degree_table_csv(path: &Path, table: &DegreeTable) -> Result<()> {
    table.validate()?;
    let units: Vec<String> = table
        .columns
        .iter()
        .map(|c| format!("{}={}", c.name, c.units.replace(';', ",")))
        .collect();
    let mut text = format!("# units: {}\n", units.join("; "));
    let headers: Vec<&str> = table.columns.iter().map(|c| c.name.as_str()).collect();
    let rows: Vec<Vec<String>> = (0..table.columns[0].values.len())
        .map(|i| {
            table
                .columns
                .iter()
                .map(|c| csv_number(c.values[i]))
                .collect()
        })
        .collect();
    text.push_str(&super::csv_table::csv_text(&headers, &rows));
    super::atomic::write_bytes_atomic(path, text.as_bytes())
}

/// Reads a degree table from NetCDF (recognised by signature) or CSV.
pub fn read_degree_table(path: &Path) -> Result<DegreeTable> {
    if super::model::has_netcdf_magic(path)? {
        read_netcdf(path)
    } else {
        read_csv(path)
    }
}

fn read_netcdf(path: &Path) -> Result<DegreeTable> {
    let file = nc::open(path)?;
    let vars = file
        .variables()
        .map_err(|e| Error::format(path, e.to_string()))?;
    let mut columns = Vec::new();
    let degree = vars
        .iter()
        .find(|v| v.name() == "degree")
        .ok_or_else(|| Error::format(path, "variable 'degree' is missing"))?;
    for v in std::iter::once(degree).chain(vars.iter().filter(|v| v.name() != "degree")) {
        let dims: Vec<&str> = v.dimensions().iter().map(|d| d.name.as_str()).collect();
        if dims != ["degree"] {
            continue;
        }
        let values = file
            .read_variable_unpacked_masked(v.name())
            .map_err(|e| nc::read_error(path, v.name(), e))?;
        columns.push(DegreeColumn {
            name: v.name().to_string(),
            units: nc::text(v.attributes(), "units").unwrap_or_default(),
            long_name: nc::text(v.attributes(), "long_name").unwrap_or_default(),
            values: values.iter().copied().collect(),
        });
    }
    let attributes = file
        .global_attributes()
        .map_err(|e| Error::format(path, e.to_string()))?
        .iter()
        .map(|a| (a.name.clone(), nc::as_text(&a.value)))
        .collect();
    let t = DegreeTable {
        columns,
        attributes,
    };
    t.validate()
        .map_err(|e| Error::format(path, e.to_string()))?;
    Ok(t)
}

fn read_csv(path: &Path) -> Result<DegreeTable> {
    let table = super::csv_table::read_csv_table(path)?;
    let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
    let units_line = text
        .lines()
        .find_map(|l| l.trim().strip_prefix("# units:"))
        .unwrap_or("");
    let unit_of = |name: &str| {
        units_line
            .split(';')
            .filter_map(|p| p.split_once('='))
            .find(|(n, _)| n.trim() == name)
            .map(|(_, u)| u.trim().to_string())
            .unwrap_or_default()
    };
    if table.headers.first().map(|h| h.as_str()) != Some("degree") {
        return Err(Error::format(path, "the first column must be 'degree'"));
    }
    let mut columns = Vec::new();
    for (k, name) in table.headers.iter().enumerate() {
        let mut values = Vec::with_capacity(table.rows.len());
        for (row, &line) in table.rows.iter().zip(&table.line_numbers) {
            let cell = row[k].trim();
            let v = if cell.is_empty() {
                f64::NAN
            } else {
                cell.parse::<f64>().map_err(|_| Error::Line {
                    path: path.to_path_buf(),
                    line,
                    message: format!("column '{name}': '{cell}' is not a number"),
                })?
            };
            values.push(v);
        }
        columns.push(DegreeColumn {
            name: name.clone(),
            units: unit_of(name),
            long_name: String::new(),
            values,
        });
    }
    let t = DegreeTable {
        columns,
        attributes: Vec::new(),
    };
    t.validate()
        .map_err(|e| Error::format(path, e.to_string()))?;
    Ok(t)
}
