//! Scattered observations: the point set, how to read it (CSV or NetCDF) and the report of
//! what was read, skipped and merged.
//!
//! Positions are geocentric latitude and longitude in degrees; longitudes may be given in
//! either convention (−180..180 or 0..360). A file may also carry, per row, the observed
//! `quantity` (a name as `kugel evaluate --quantity` takes it), `altitude_km` above the
//! reference sphere or `height_m` above an ellipsoid (then `lat` is geodetic; the fit converts
//! it), and `time` (decimal year); these are kept in [`PointExtras`]. Rows with any of them are
//! never merged as duplicates: two components, heights or epochs at one position are distinct
//! observations.
//!
//! This folder owns point input: [`csv`] (streaming CSV reader), [`netcdf`] (NetCDF point
//! files) and [`validate`] (the rules every record passes and the merging of duplicates).

pub mod csv;
pub mod netcdf;
mod recent_bytes;
pub mod validate;

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

use self::validate::{validate_records, RawRecord, RecordColumns};

/// A validated set of observations. All vectors have the same length.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PointSet {
    /// Geocentric latitude, degrees, in [−90, 90].
    pub lat_deg: Vec<f64>,
    /// Longitude, degrees, as given (either convention).
    pub lon_deg: Vec<f64>,
    /// Observed values; empty when the file carried no value column and none was required.
    pub value: Vec<f64>,
    /// One-sigma uncertainties (> 0) when the file carried them.
    pub sigma: Option<Vec<f64>>,
    /// Line number (CSV, 1-based) or record index (NetCDF, 0-based) of each point in its
    /// source; for merged duplicates, the first occurrence.
    pub source_lines: Vec<usize>,
    /// The optional per-row columns (each `None` when the file has no such column).
    pub extras: PointExtras,
}

/// Optional per-row columns of a point file, each as long as the set when present.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PointExtras {
    /// Observed quantity per row.
    pub quantity: Option<Vec<crate::field::Quantity>>,
    /// Altitude above the reference sphere, km.
    pub altitude_km: Option<Vec<f64>>,
    /// Height above an ellipsoid, m (latitude is then geodetic).
    pub height_m: Option<Vec<f64>>,
    /// Time, decimal year.
    pub time_year: Option<Vec<f64>>,
}

impl PointExtras {
    /// Whether any optional column is present.
    pub fn any(&self) -> bool {
        self.quantity.is_some()
            || self.altitude_km.is_some()
            || self.height_m.is_some()
            || self.time_year.is_some()
    }
}

impl PointSet {
    pub fn len(&self) -> usize {
        self.lat_deg.len()
    }

    pub fn is_empty(&self) -> bool {
        self.lat_deg.is_empty()
    }

    /// Whether the points carry observed values.
    pub fn has_values(&self) -> bool {
        !self.value.is_empty() || self.lat_deg.is_empty()
    }

    /// Least-squares weight 1/σ² of point i (1 when no σ is known).
    pub fn weight(&self, i: usize) -> f64 {
        match &self.sigma {
            Some(s) => 1.0 / (s[i] * s[i]),
            None => 1.0,
        }
    }

    /// Builds a point set from in-memory vectors (values required) and validates it with the
    /// same rules as a file; positions are reported by index.
    pub fn from_vectors(
        lat_deg: Vec<f64>,
        lon_deg: Vec<f64>,
        value: Vec<f64>,
        sigma: Option<Vec<f64>>,
    ) -> Result<(PointSet, PointReadReport)> {
        let n = lat_deg.len();
        if lon_deg.len() != n || value.len() != n || sigma.as_ref().is_some_and(|s| s.len() != n) {
            return Err(Error::ShapeMismatch(format!(
                "point vectors differ in length: lat {n}, lon {}, value {}, sigma {:?}",
                lon_deg.len(),
                value.len(),
                sigma.as_ref().map(|s| s.len())
            )));
        }
        let columns = RecordColumns {
            value: true,
            sigma: sigma.is_some(),
            ..Default::default()
        };
        let records = (0..n).map(|i| {
            Ok(RawRecord {
                line: i,
                lat: Ok(lat_deg[i]),
                lon: Ok(lon_deg[i]),
                value: Some(Ok(value[i])),
                sigma: sigma.as_ref().map(|s| Ok(s[i])),
                extras: Default::default(),
            })
        });
        let options = PointReadOptions::default();
        validate_records(Path::new("<memory>"), "index", columns, records, &options)
    }
}

/// What to do with a row that breaks a validation rule.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum BadRowPolicy {
    /// Refuse the whole file, quoting the first bad rows with their line numbers.
    #[default]
    Error,
    /// Skip bad rows and count them in the report.
    Skip,
}

impl std::str::FromStr for BadRowPolicy {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        match s.to_ascii_lowercase().as_str() {
            "error" => Ok(BadRowPolicy::Error),
            "skip" => Ok(BadRowPolicy::Skip),
            other => Err(Error::invalid(format!(
                "bad-row policy `{other}` is not known; expected `error` or `skip`"
            ))),
        }
    }
}

/// Names of the columns (CSV) or variables (NetCDF) holding each quantity. Matching is
/// case-insensitive.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ColumnNames {
    pub lat: String,
    pub lon: String,
    pub value: String,
    /// Name of the σ column; when absent from the file, points carry no σ.
    pub sigma: String,
    /// Optional columns: observed quantity, altitude above the sphere (km), height above the
    /// ellipsoid (m), time (decimal year).
    pub quantity: String,
    pub altitude_km: String,
    pub height_m: String,
    pub time: String,
}

impl Default for ColumnNames {
    fn default() -> Self {
        ColumnNames {
            lat: "lat".into(),
            lon: "lon".into(),
            value: "value".into(),
            sigma: "sigma".into(),
            quantity: "quantity".into(),
            altitude_km: "altitude_km".into(),
            height_m: "height_m".into(),
            time: "time".into(),
        }
    }
}

impl ColumnNames {
    /// Parses `lat=LAT,lon=LON,value=G,sigma=ERR,quantity=Q,altitude_km=ALT,height_m=H,time=T`
    /// (any subset; the rest keep their defaults).
    pub fn parse(spec: &str) -> Result<ColumnNames> {
        let mut names = ColumnNames::default();
        for part in spec.split(',').map(str::trim).filter(|p| !p.is_empty()) {
            let (key, name) = part.split_once('=').ok_or_else(|| {
                Error::invalid(format!(
                    "--columns: `{part}` is not KEY=NAME (keys: lat, lon, value, sigma, quantity, altitude_km, height_m, time)"
                ))
            })?;
            let name = name.trim().to_string();
            if name.is_empty() {
                return Err(Error::invalid(format!(
                    "--columns: `{part}` has an empty name"
                )));
            }
            match key.trim().to_ascii_lowercase().as_str() {
                "lat" => names.lat = name,
                "lon" => names.lon = name,
                "value" => names.value = name,
                "sigma" => names.sigma = name,
                "quantity" => names.quantity = name,
                "altitude_km" => names.altitude_km = name,
                "height_m" => names.height_m = name,
                "time" => names.time = name,
                other => {
                    return Err(Error::invalid(format!(
                        "--columns: key `{other}` is not known; expected lat, lon, value, sigma, \
                         quantity, altitude_km, height_m or time"
                    )))
                }
            }
        }
        Ok(names)
    }
}

/// How to read a point file.
#[derive(Debug, Clone, PartialEq)]
pub struct PointReadOptions {
    pub columns: ColumnNames,
    pub on_bad_row: BadRowPolicy,
    /// Whether a value column must be present (true for gridding and fitting; `evaluate`
    /// accepts bare positions).
    pub require_value: bool,
    /// Whether observations at the same position are merged (σ-weighted mean). Turn off to
    /// keep one output row per input row.
    pub merge_duplicates: bool,
    /// Where a user names the columns, for the hint of a missing-column message (e.g. the
    /// config key `inputs.NAME.columns`); the command line's `--columns` when `None`.
    pub column_hint: Option<String>,
}

impl Default for PointReadOptions {
    fn default() -> Self {
        PointReadOptions {
            columns: ColumnNames::default(),
            on_bad_row: BadRowPolicy::Error,
            require_value: true,
            merge_duplicates: true,
            column_hint: None,
        }
    }
}

/// What happened while reading: nothing is dropped without being counted here.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PointReadReport {
    pub path: PathBuf,
    /// Data rows (or records) found in the file.
    pub rows_read: usize,
    /// Rows skipped under `BadRowPolicy::Skip`.
    pub bad_rows_skipped: usize,
    /// The first few bad rows, quoted (`line 12: latitude 95 is outside [-90, 90]`).
    pub bad_row_examples: Vec<String>,
    /// Observations removed by merging duplicates into their first occurrence.
    pub duplicates_merged: usize,
    /// Distinct positions that had more than one observation.
    pub duplicate_positions: usize,
    /// Points in the final set.
    pub points: usize,
}

impl PointReadReport {
    /// One human-readable summary line.
    pub fn summary(&self) -> String {
        let mut s = format!(
            "{}: {} rows read, {} points",
            self.path.display(),
            self.rows_read,
            self.points
        );
        if self.bad_rows_skipped > 0 {
            s.push_str(&format!(
                "; {} bad rows skipped (first: {})",
                self.bad_rows_skipped,
                self.bad_row_examples.join("; ")
            ));
        }
        if self.duplicates_merged > 0 {
            s.push_str(&format!(
                "; {} duplicate observations merged into {} positions (σ-weighted mean)",
                self.duplicates_merged, self.duplicate_positions
            ));
        }
        s
    }
}

/// Reads a point file: NetCDF when the file starts with a NetCDF or HDF5 signature, CSV
/// otherwise.
pub fn read_points(path: &Path, options: &PointReadOptions) -> Result<(PointSet, PointReadReport)> {
    if has_netcdf_signature(path)? {
        let (columns, records) = netcdf::read_netcdf_records(path, options)?;
        validate_records(
            path,
            "record",
            columns,
            records.into_iter().map(Ok),
            options,
        )
    } else {
        let records = csv::read_csv_records(path, options)?;
        let columns = records.record_columns();
        validate_records(path, "line", columns, records, options)
    }
}

/// True when the file starts with a NetCDF classic (`CDF`) or HDF5 signature.
pub fn has_netcdf_signature(path: &Path) -> Result<bool> {
    let head = read_head(path)?;
    Ok(head.starts_with(b"CDF") || head.starts_with(b"\x89HDF"))
}

fn read_head(path: &Path) -> Result<Vec<u8>> {
    use std::io::Read;
    let mut file = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut head = vec![0u8; 8];
    let n = file.read(&mut head).map_err(|e| Error::io(path, e))?;
    head.truncate(n);
    Ok(head)
}
