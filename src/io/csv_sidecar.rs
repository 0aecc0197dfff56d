//! The description that travels with every CSV kugel writes: `NAME.csv.json` beside `NAME.csv`.
//!
//! A CSV file itself holds only its header row and data rows, so that any CSV reader takes the
//! first line as the column names. What a spreadsheet cannot hold goes into the sidecar, a
//! small JSON object:
//!
//! ```json
//! {
//!   "csv": "wickline_spectrum.csv",
//!   "columns": [ { "name": "degree", "units": "1", "long_name": "spherical-harmonic degree" } ],
//!   "attributes": { "history": "2025-01-01T00:00:00Z: kugel spectrum ...", "source": "kugel 0.1.0" },
//!   "cautions": [ "..." ]
//! }
//! ```
//!
//! `columns` lists the units (CF units strings) and descriptions of the columns it knows;
//! `attributes` holds the provenance (the same names as the NetCDF global attributes);
//! `cautions` the warnings that belong to the values (e.g. for geoid heights). Readers of
//! kugel's own CSV take the units from the sidecar when it is there and do without it when it
//! is not.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::provenance::{source_attribute, Provenance};
use crate::error::{Error, Result};

/// Units and description of one CSV column.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SidecarColumn {
    pub name: String,
    #[serde(default)]
    pub units: String,
    #[serde(default)]
    pub long_name: String,
}

/// The contents of a `NAME.csv.json` sidecar.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct CsvSidecar {
    /// File name of the CSV it describes (no folder).
    #[serde(default)]
    pub csv: String,
    #[serde(default)]
    pub columns: Vec<SidecarColumn>,
    #[serde(default)]
    pub attributes: BTreeMap<String, String>,
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub cautions: Vec<String>,
}

impl CsvSidecar {
    /// A sidecar with `source` and the provenance attributes of `provenance`.
    pub fn with_provenance(provenance: &Provenance) -> Self {
        let mut attributes: BTreeMap<String, String> =
            provenance.to_attributes().into_iter().collect();
        attributes.insert("source".to_string(), source_attribute());
        CsvSidecar {
            attributes,
            ..Default::default()
        }
    }

    /// Adds the units and description of a column.
    pub fn column(&mut self, name: &str, units: &str, long_name: &str) -> &mut Self {
        self.columns.push(SidecarColumn {
            name: name.to_string(),
            units: units.to_string(),
            long_name: long_name.to_string(),
        });
        self
    }

    /// The described column of that name, if any.
    pub fn find(&self, name: &str) -> Option<&SidecarColumn> {
        self.columns.iter().find(|c| c.name == name)
    }
}

/// `NAME.csv` -> `NAME.csv.json`.
pub fn sidecar_path(csv_path: &Path) -> PathBuf {
    let mut name = csv_path.as_os_str().to_os_string();
    name.push(".json");
    PathBuf::from(name)
}

/// Writes the sidecar of `csv_path` atomically (the `csv` field is set to the CSV's file name).
pub fn write_sidecar(csv_path: &Path, sidecar: &CsvSidecar) -> Result<()> {
    let mut sidecar = sidecar.clone();
    sidecar.csv = csv_path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let path = sidecar_path(csv_path);
    let mut text = serde_json::to_string_pretty(&sidecar)
        .map_err(|e| Error::format(&path, format!("cannot encode sidecar: {e}")))?;
    text.push('\n');
    super::atomic::write_bytes_atomic(&path, text.as_bytes())
}

/// Reads the sidecar of `csv_path`; `None` when there is none. A sidecar that exists but is
/// not valid is an error naming it.
pub fn read_sidecar(csv_path: &Path) -> Result<Option<CsvSidecar>> {
    let path = sidecar_path(csv_path);
    let text = match std::fs::read_to_string(&path) {
        Ok(t) => t,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(None),
        Err(e) => return Err(Error::io(&path, e)),
    };
    serde_json::from_str(&text).map(Some).map_err(|e| {
        Error::format(
            &path,
            format!("not a CSV sidecar (expected a JSON object with `columns`, `attributes`): {e}"),
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sidecar_round_trip_and_path() {
        let dir = tempfile::tempdir().unwrap();
        let csv = dir.path().join("t.csv");
        assert_eq!(sidecar_path(&csv), dir.path().join("t.csv.json"));
        assert_eq!(read_sidecar(&csv).unwrap(), None);
        let mut s = CsvSidecar::with_provenance(&Provenance::from_command_line("kugel x"));
        s.column("geoid", "m", "geoid height");
        s.cautions.push("not for engineering".into());
        write_sidecar(&csv, &s).unwrap();
        let back = read_sidecar(&csv).unwrap().unwrap();
        assert_eq!(back.csv, "t.csv");
        assert_eq!(back.find("geoid").unwrap().units, "m");
        assert!(back.attributes["history"].ends_with(": kugel x"));
        assert!(back.attributes["source"].starts_with("kugel "));
        assert_eq!(back.cautions, ["not for engineering"]);
    }

    #[test]
    fn broken_sidecar_names_its_file() {
        let dir = tempfile::tempdir().unwrap();
        let csv = dir.path().join("t.csv");
        std::fs::write(sidecar_path(&csv), "{ not json").unwrap();
        let err = read_sidecar(&csv).unwrap_err().to_string();
        assert!(
            err.contains("t.csv.json") && err.contains("sidecar"),
            "{err}"
        );
    }
}
