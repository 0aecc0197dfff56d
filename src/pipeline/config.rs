//! The typed config of a `kugel run` job (TOML).
//!
//! ```toml
//! [job]       title, description
//! [body]      name, radius_m, gm_m3_s2
//! [output]    folder, formats, float32, lon_convention
//! [inputs.NAME]  kind = "points" | "grid" | "model", path, ...      (input_spec.rs)
//! [steps.NAME]   kind = "grid" | "fit" | "analyze" | "spectrum" | "compare" | "filter"
//!                       | "synthesize" | "evaluate", ...                 (step_spec.rs)
//! ```
//! Every input and step is a named product; steps name the products they use, and the run
//! order follows from those references (see `dag.rs`). The keys each table accepts are the
//! fields of these structs; `schema.rs` checks a config against them before it is read.

use std::collections::BTreeMap;
use std::path::PathBuf;

use serde::Deserialize;

pub use super::input_spec::{ColumnMap, Input, InputKind};
pub use super::step_spec::{Step, StepKind};

/// A whole job, as written in the config file.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Config {
    #[serde(default)]
    pub job: JobSection,
    pub body: BodySection,
    pub output: OutputSection,
    #[serde(default)]
    pub inputs: BTreeMap<String, Input>,
    #[serde(default)]
    pub steps: BTreeMap<String, Step>,
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
            .is_none_or(|f| f.iter().any(|x| x == format))
    }
}
