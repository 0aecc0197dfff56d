//! The inputs of a job, one settings struct per kind with exactly the keys that kind accepts
//! (the key check reads them from here, see `schema.rs`).

use std::path::{Path, PathBuf};

use serde::Deserialize;

use super::kinds::config_kinds;

config_kinds! {
    /// A named input file, `[inputs.NAME]` with `kind = "…"`.
    pub enum Input / InputKind {
        /// Scattered observations (CSV or NetCDF points).
        Points = "points" => PointsInput,
        /// A CF NetCDF grid of any regular layout.
        Grid = "grid" => GridInput,
        /// A coefficient model (NetCDF or text table).
        Model = "model" => ModelInput,
    }
}

#[derive(Debug, Clone, Deserialize)]
pub struct PointsInput {
    pub path: PathBuf,
    /// Which columns hold latitude, longitude, value and (optionally) sigma.
    pub columns: Option<ColumnMap>,
    /// "error" (default) stops at the first bad row; "skip" drops and counts them.
    pub on_bad_row: Option<String>,
    /// What the values are: "value" (kept as is, the default), "potential" (disturbing
    /// potential in m² s⁻², turned into dimensionless coefficients with GM and R), or for fit
    /// steps any quantity `kugel fit --quantity` takes (geoid, gravity-disturbance,
    /// gravity-anomaly, radial-gradient, br, btheta, blambda, x, y, z, f), in the units
    /// `kugel evaluate` writes. A `quantity` column overrides it row by row.
    pub quantity: Option<String>,
    /// Geodetic latitudes and `height_m` above this ellipsoid (grs80, wgs84, custom:…) instead
    /// of geocentric latitudes and `altitude_km` above the body's sphere (fit steps).
    pub ellipsoid: Option<String>,
    /// Units of the values, for labels (defaults from `quantity`).
    pub units: Option<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct GridInput {
    pub path: PathBuf,
    /// The NetCDF variable to read (default: the only data variable).
    pub variable: Option<String>,
    /// As for points: "potential" or "value".
    pub quantity: Option<String>,
    /// Units of the values, for labels.
    pub units: Option<String>,
}

#[derive(Debug, Clone, Deserialize)]
pub struct ModelInput {
    pub path: PathBuf,
}

/// Column names of a point file.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ColumnMap {
    pub lat: Option<String>,
    pub lon: Option<String>,
    pub value: Option<String>,
    pub sigma: Option<String>,
    /// Per-row quantity, altitude above the sphere (km), height above the ellipsoid (m) and
    /// time (decimal year) columns; each optional.
    pub quantity: Option<String>,
    pub altitude_km: Option<String>,
    pub height_m: Option<String>,
    pub time: Option<String>,
}

impl Input {
    /// The file, as written (relative to the config's folder unless absolute).
    pub fn path(&self) -> &Path {
        match self {
            Input::Points(i) => &i.path,
            Input::Grid(i) => &i.path,
            Input::Model(i) => &i.path,
        }
    }

    /// The `quantity` key, for the kinds that have one.
    pub fn quantity(&self) -> Option<&str> {
        match self {
            Input::Points(i) => i.quantity.as_deref(),
            Input::Grid(i) => i.quantity.as_deref(),
            Input::Model(_) => None,
        }
    }
}
