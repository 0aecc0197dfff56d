//! A degree-indexed table of named columns, independent of any file format; `io::degree_table`
//! writes it as NetCDF (dimension `degree`) or CSV. The first column is always `degree`.

/// One per-degree quantity with its units (CF units string) and a human description.
#[derive(Debug, Clone, PartialEq)]
pub struct SpectralColumn {
    pub name: String,
    pub units: String,
    pub long_name: String,
    pub values: Vec<f64>,
}

impl SpectralColumn {
    pub fn new(name: &str, units: &str, long_name: &str, values: Vec<f64>) -> Self {
        SpectralColumn {
            name: name.to_string(),
            units: units.to_string(),
            long_name: long_name.to_string(),
            values,
        }
    }
}

/// Columns (first `degree`) plus global attributes describing how they were computed.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct SpectralTable {
    pub columns: Vec<SpectralColumn>,
    pub attributes: Vec<(String, String)>,
}

impl SpectralTable {
    /// A table whose first column is `degree` = 0..=lmax.
    pub fn with_degrees(lmax: usize) -> Self {
        SpectralTable {
            columns: vec![SpectralColumn::new(
                "degree",
                "1",
                "spherical-harmonic degree",
                (0..=lmax).map(|l| l as f64).collect(),
            )],
            attributes: Vec::new(),
        }
    }

    pub fn push(&mut self, name: &str, units: &str, long_name: &str, values: Vec<f64>) {
        debug_assert_eq!(values.len(), self.columns[0].values.len(), "column {name}");
        self.columns
            .push(SpectralColumn::new(name, units, long_name, values));
    }

    pub fn attribute(&mut self, key: &str, value: impl ToString) {
        self.attributes.push((key.to_string(), value.to_string()));
    }

    /// A numeric attribute, written plainly when moderate (0.95, 3.98) and in exponent form
    /// otherwise (9.13e-11), always with full round-trip precision.
    pub fn number_attribute(&mut self, key: &str, value: f64) {
        self.attribute(key, number_text(value));
    }

    pub fn column(&self, name: &str) -> Option<&SpectralColumn> {
        self.columns.iter().find(|c| c.name == name)
    }
}

/// Shortest round-trip text of a number, in exponent form outside [1e-3, 1e6).
pub fn number_text(v: f64) -> String {
    if v == 0.0 || !v.is_finite() || (1e-3..1e6).contains(&v.abs()) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

impl SpectralTable {
    /// The same columns and attributes as an `io::degree_table::DegreeTable` for writing.
    pub fn to_degree_table(&self) -> crate::io::degree_table::DegreeTable {
        use crate::io::degree_table::{DegreeColumn, DegreeTable};
        DegreeTable {
            columns: self
                .columns
                .iter()
                .map(|c| DegreeColumn {
                    name: c.name.clone(),
                    units: c.units.clone(),
                    long_name: c.long_name.clone(),
                    values: c.values.clone(),
                })
                .collect(),
            attributes: self.attributes.clone(),
        }
    }
}
