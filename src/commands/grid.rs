//! `kugel grid`: scattered observations → a gridded field on the Gauss grid of degree L,
//! with `count` and `nearest_km` coverage layers, written as CF NetCDF.

use std::path::{Path, PathBuf};

use super::CommandContext;
use crate::io::grid_file::{write_grid, GridFile, GridWriteOptions, LonConvention};
use crate::io::provenance::Provenance;
use crate::observe::degree_choice::default_lmax_with_index;
use crate::observe::gaps::{GapPolicy, DEFAULT_GAP_ITERATIONS, DEFAULT_GAP_TOLERANCE};
use crate::observe::gridding::{
    default_radius_km, grid_points_with_progress, GriddingMethod, GriddingOptions,
};
use crate::observe::points::{read_points, BadRowPolicy, ColumnNames, PointReadOptions, PointSet};
use crate::observe::progress::Progress;
use crate::observe::spatial::SphereIndex;

/// How point files are read; shared by `kugel grid` and `kugel fit`.
#[derive(Debug, Clone, clap::Args)]
pub struct PointInputArgs {
    /// Column (CSV) or variable (NetCDF) names, e.g. `lat=LAT,lon=LON,value=G,sigma=ERR`.
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
        let options = PointReadOptions {
            columns: match &self.columns {
                Some(spec) => ColumnNames::parse(spec)?,
                None => ColumnNames::default(),
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
            anyhow::bail!(crate::Error::invalid(format!(
                "--body-radius-km {} must be a positive number",
                self.body_radius_km
            )));
        }
        Ok(self.body_radius_km * 1000.0)
    }
}

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Observations: CSV with a header (lat, lon, value[, sigma]) or a NetCDF point file.
    pub points: PathBuf,
    /// Band limit of the Gauss grid; by default chosen from the data spacing.
    #[arg(long)]
    pub lmax: Option<usize>,
    /// Output grid (NetCDF).
    #[arg(short = 'o', long)]
    pub output: PathBuf,
    /// Gaussian-kernel mean within this search radius, km (half-width radius/2).
    #[arg(long, value_name = "KM", conflicts_with = "neighbours")]
    pub radius_km: Option<f64>,
    /// Inverse-distance mean of the K nearest observations instead of the kernel.
    #[arg(long, value_name = "K")]
    pub neighbours: Option<usize>,
    /// How to fill nodes without data: nearest, mean or iterative.
    #[arg(long, value_name = "POLICY", default_value = "nearest")]
    pub gaps: String,
    /// Relative tolerance of iterative gap filling.
    #[arg(long, default_value_t = DEFAULT_GAP_TOLERANCE)]
    pub gap_tolerance: f64,
    /// Iteration cap of iterative gap filling.
    #[arg(long, default_value_t = DEFAULT_GAP_ITERATIONS)]
    pub gap_iterations: usize,
    /// Name of the gridded variable.
    #[arg(long, default_value = "value")]
    pub variable: String,
    /// Longitude range of the file: 0-360 or -180-180.
    #[arg(long, default_value = "0-360")]
    pub lon_range: String,
    #[command(flatten)]
    pub input: PointInputArgs,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    crate::io::atomic::refuse_overwrite_of_input(&args.output, &[&args.points])?;
    let lon_convention: LonConvention = args.lon_range.parse()?;
    let body_radius_m = args.input.body_radius_m()?;
    let points = args.input.read(&args.points, ctx)?;
    let lmax = match args.lmax {
        Some(l) => l,
        None => {
            let index = SphereIndex::new(&points.lat_deg, &points.lon_deg);
            let (l, reason) = default_lmax_with_index(&points, &index, body_radius_m);
            if !ctx.quiet {
                eprintln!("degree L = {l} chosen from the data spacing: {reason}");
            }
            l
        }
    };
    let method = match (args.radius_km, args.neighbours) {
        (_, Some(k)) => GriddingMethod::Nearest { k },
        (Some(r), None) => GriddingMethod::Kernel { radius_km: r },
        (None, None) => {
            let r = default_radius_km(lmax, body_radius_m);
            if !ctx.quiet {
                eprintln!("search radius {r:.1} km (twice the node spacing at L = {lmax}); set --radius-km or --neighbours to change");
            }
            GriddingMethod::Kernel { radius_km: r }
        }
    };
    let gaps = match GapPolicy::parse(&args.gaps)? {
        GapPolicy::Iterative { .. } => GapPolicy::Iterative {
            tol: args.gap_tolerance,
            max_iter: args.gap_iterations,
        },
        other => other,
    };
    let options = GriddingOptions {
        method,
        gaps,
        body_radius_m,
    };
    let progress = Progress::new(0, "gridding", ctx.quiet);
    let field = grid_points_with_progress(&points, lmax, &options, &progress)?;
    if !ctx.quiet {
        eprintln!("{}", field.report.summary());
        if field.report.gap_fill.final_change.is_some() && !field.report.gap_fill.converged {
            eprintln!("warning: iterative gap filling stopped at the iteration cap before reaching the tolerance");
        }
    }

    let mut file = GridFile::from_engine_grid(
        &field.grid,
        format!("{} gridded by kugel", args.points.display()),
    );
    let value = file.push(
        &args.variable,
        "gridded observations",
        &args.input.units,
        None,
        field.value,
    );
    value.ancillary = vec!["count".into(), "nearest_km".into()];
    file.push(
        "count",
        "number of observations in the node's mean",
        "1",
        None,
        field.count,
    );
    file.push(
        "nearest_km",
        "distance from the node to the nearest observation",
        "km",
        None,
        field.nearest_km,
    );
    let r = &field.report;
    file.attributes
        .push(("gridding_method".into(), r.method.clone()));
    file.attributes
        .push(("gridding_gap_nodes".into(), r.gap_nodes.to_string()));
    file.attributes
        .push(("gridding_gap_fill".into(), r.gap_fill.describe()));
    file.attributes
        .push(("gridding_points".into(), r.points.to_string()));
    let mut provenance = Provenance::from_command_line(&ctx.command_line);
    provenance.add_input(&args.points)?;
    provenance.lmax = Some(lmax);
    write_grid(
        &args.output,
        &file,
        &GridWriteOptions {
            float32: false,
            lon_convention,
            provenance: &provenance,
        },
    )?;
    if !ctx.quiet {
        eprintln!("wrote {}", args.output.display());
    }
    Ok(())
}
