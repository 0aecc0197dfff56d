//! How point files are read: the options shared by `kugel grid` and `kugel fit`.

use std::path::Path;

use kugel::observe::points::{read_points, BadRowPolicy, ColumnNames, PointReadOptions, PointSet};

use crate::commands::CommandContext;

/// How point files are read; shared by `kugel grid` and `kugel fit`.
#[derive(Debug, Clone, clap::Args)]
pub struct PointInputArgs {
    /// Column (CSV) or variable (NetCDF) names, e.g. `lat=LAT,lon=LON,value=G,sigma=ERR`
    /// (also quantity, altitude_km, height_m, time for `kugel fit`).
    #[arg(long, value_name = "KEY=NAME,...")]
    pub columns: Option<String>,
    /// What to do with rows that fail validation: `error` (default) or `skip` (skip and count).
    #[arg(long, value_name = "POLICY", default_value = "error")]
    pub on_bad_row: String,
    /// Radius of the body the points lie on, km (mean Earth radius by default).
    #[arg(long, value_name = "KM", default_value_t = 6371.0)]
    pub body_radius_km: f64,
    /// Units of the observed values (CF units string written to the output).
    #[arg(long, default_value = "1")]
    pub units: String,
}

impl PointInputArgs {
    /// Reads and validates the points, printing the read report unless quiet.
    pub fn read(&self, path: &Path, ctx: &CommandContext) -> anyhow::Result<PointSet> {
        self.read_with_columns(path, None, ctx)
    }

    /// As [`PointInputArgs::read`] with a column map that replaces `--columns`.
    pub fn read_with_columns(
        &self,
        path: &Path,
        columns: Option<&ColumnNames>,
        ctx: &CommandContext,
    ) -> anyhow::Result<PointSet> {
        let options = PointReadOptions {
            columns: match (columns, &self.columns) {
                (Some(c), _) => c.clone(),
                (None, Some(spec)) => ColumnNames::parse(spec)?,
                (None, None) => ColumnNames::default(),
            },
            on_bad_row: self.on_bad_row.parse::<BadRowPolicy>()?,
            ..Default::default()
        };
        let (points, report) = read_points(path, &options)?;
        if !ctx.quiet {
            eprintln!("{}", report.summary());
        }
        Ok(points)
    }

    pub fn body_radius_m(&self) -> anyhow::Result<f64> {
        if !(self.body_radius_km.is_finite() && self.body_radius_km > 0.0) {
            anyhow::bail!(kugel::Error::invalid(format!(
                "--body-radius-km {} must be a positive number",
                self.body_radius_km
            )));
        }
        Ok(self.body_radius_km * 1000.0)
    }
}
