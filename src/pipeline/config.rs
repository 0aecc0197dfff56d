//! The typed config of a `kugel run` job (TOML).
//!
//! ```toml
//! [job]       title, description
//! [body]      name, radius_m, gm_m3_s2
//! [output]    folder, formats, float32, lon_convention
//! [inputs.NAME]  kind = "points" | "grid" | "model", path, ...
//! [steps.NAME]   kind = "grid" | "fit" | "analyse" | "spectrum" | "compare" | "filter"
//!                       | "synthesize" | "evaluate", ...
//! ```
//! Every input and step is a named product; steps name the products they use, and the run
//! order follows from those references (see `dag.rs`). Which keys each table accepts is listed
//! in `schema.rs`, which checks a config before it is read into these types.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Deserialize;

use crate::error::{Error, Result};

/// A whole job, as written in the config file.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Config {
    #[serde(default)]
    pub job: JobSection,
    pub body: BodySection,
    pub output: OutputSection,
    #[serde(default)]
    pub inputs: BTreeMap<String, InputSpec>,
    #[serde(default)]
    pub steps: BTreeMap<String, StepSpec>,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct JobSection {
    pub title: Option<String>,
    pub description: Option<String>,
}

/// The body whose field is modelled: reference radius and GM of the coefficient models.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct BodySection {
    pub name: Option<String>,
    pub radius_m: f64,
    pub gm_m3_s2: Option<f64>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutputSection {
    /// Output folder, relative to the config file's folder unless absolute.
    pub folder: PathBuf,
    /// Which kinds of file to write: "netcdf", "csv", "png", "svg", "html" (default: all).
    pub formats: Option<Vec<String>>,
    /// Write grid variables as 32-bit floats (halves the file size).
    #[serde(default)]
    pub float32: bool,
    /// "0-360" (default) or "-180-180".
    pub lon_convention: Option<String>,
}

/// One kind of file the pipeline can write.
pub const OUTPUT_FORMATS: &[&str] = &["netcdf", "csv", "png", "svg", "html"];

impl OutputSection {
    pub fn wants(&self, format: &str) -> bool {
        self.formats
            .as_ref()
            .map_or(true, |f| f.iter().any(|x| x == format))
    }
}

/// A named input file.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct InputSpec {
    pub kind: String,
    pub path: PathBuf,
    /// Points: which CSV columns hold latitude, longitude, value and (optionally) sigma.
    pub columns: Option<ColumnMap>,
    /// Points: "error" (default) stops at the first bad row; "skip" drops and counts them.
    pub on_bad_row: Option<String>,
    /// Grid: the NetCDF variable to read (default: the only data variable).
    pub variable: Option<String>,
    /// Points and grids: what the values are — "potential" (disturbing potential in
    /// m² s⁻², turned into dimensionless coefficients with GM and R) or "value" (kept as is).
    pub quantity: Option<String>,
    /// Units of the values, for labels (defaults from `quantity`).
    pub units: Option<String>,
}

/// Column names of a point file.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ColumnMap {
    pub lat: Option<String>,
    pub lon: Option<String>,
    pub value: Option<String>,
    pub sigma: Option<String>,
}

/// A named step. Which fields a step kind accepts is listed in `schema.rs`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StepSpec {
    pub kind: String,
    /// grid, fit, analyse: the input product (points or grid).
    pub input: Option<String>,
    /// spectrum, filter, synthesize, evaluate: the model product.
    pub model: Option<String>,
    /// compare: the two model products, first against second.
    pub models: Option<Vec<String>>,
    /// evaluate: the point set at which to evaluate (residuals are observed − model).
    pub points: Option<String>,
    /// Band limit of the product.
    pub lmax: Option<usize>,
    /// grid: "kernel" (default) or "nearest".
    pub method: Option<String>,
    /// grid, kernel method: averaging cap radius in km.
    pub radius_km: Option<f64>,
    /// grid, nearest method: number of neighbours.
    pub neighbours: Option<usize>,
    /// grid: how empty cells are filled — "nearest" (default), "mean" or "iterative".
    pub gaps: Option<String>,
    /// fit: "none", "damping:λ", "kaula:A,p", "kaula:A,p:gcv" or "gcv" (default), as in
    /// `kugel fit --regularization`.
    pub regularization: Option<String>,
    /// filter, synthesize: filter spec such as "gauss:300" (several joined by '+').
    pub filter: Option<String>,
    /// synthesize: quantities to map, e.g. ["gravity-anomaly", "geoid"].
    pub quantities: Option<Vec<String>>,
    /// evaluate: the quantity the points observed (default "value").
    pub quantity: Option<String>,
    /// synthesize, evaluate: height above the reference sphere, metres.
    pub altitude_m: Option<f64>,
    /// synthesize: band limit of the output Gauss grid (default: the model's lmax).
    pub grid_lmax: Option<usize>,
    /// compare: the models are different quantities (e.g. gravity and topography, for
    /// admittance); compared as given instead of refused for differing units.
    pub cross_quantity: Option<bool>,
    /// compare: leave degrees below this out (set to zero in both copies); e.g. 2 for
    /// disturbing potentials, whose degrees 0 and 1 vanish by definition but are estimated
    /// as noise by a fit.
    pub from_degree: Option<usize>,
    /// spectrum, compare: confidence level of the intervals (default 0.95).
    pub confidence: Option<f64>,
    /// spectrum: degree range [lmin, lmax] of the power-law fit.
    pub fit_range: Option<[usize; 2]>,
}

impl Config {
    /// Parses TOML text already checked by `schema::check_keys`.
    pub fn from_toml_value(value: toml::Value, source: &Path) -> Result<Config> {
        value
            .try_into()
            .map_err(|e: toml::de::Error| Error::format(source, format!("config: {}", e.message())))
    }
}
