//! `kugel synthesize`: a coefficient model's values on a Gauss or regular grid, written as
//! CF-1.8 NetCDF-4.

use std::path::PathBuf;

use anyhow::Context;

use super::CommandContext;
use crate::io::atomic::refuse_overwrite_of_input;
use crate::io::grid_file::{write_grid, GridFile, GridWriteOptions, LonConvention};
use crate::io::model_file::read_model;
use crate::io::provenance::Provenance;
use crate::sht::equiangular::regular_grid_by_step;
use crate::sht::{GaussGrid, Grid, TransformPlan};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Coefficient model (NetCDF or text table).
    pub model: PathBuf,
    /// Output grid (NetCDF-4).
    #[arg(short = 'o', long, value_name = "MAP")]
    pub output: PathBuf,
    /// Truncate (or zero-pad) the model to this degree (default: the model's).
    #[arg(long, value_name = "L")]
    pub lmax: Option<usize>,
    /// Grid: `gauss` (Gauss–Legendre for the band limit) or `regular:STEP_DEG`
    /// (node-registered, both poles included; `regular:1` is 181 x 360).
    #[arg(long, value_name = "gauss|regular:STEP", default_value = "gauss")]
    pub grid: String,
    /// Store values as float32 instead of float64.
    #[arg(long)]
    pub float32: bool,
    /// Longitude range of the file: 0-360 or -180-180.
    #[arg(
        long,
        value_name = "0-360|-180-180",
        default_value = "0-360",
        allow_hyphen_values = true
    )]
    pub lon_range: String,
}

/// Parses `gauss` or `regular:STEP_DEG` into an engine grid for band limit `lmax`.
pub fn parse_grid_spec(spec: &str, lmax: usize) -> crate::Result<Grid> {
    let spec = spec.trim();
    if spec.eq_ignore_ascii_case("gauss") {
        return Ok(GaussGrid::new(lmax));
    }
    if let Some(step) = spec.strip_prefix("regular:") {
        let step: f64 = step.trim().parse().map_err(|_| {
            crate::Error::invalid(format!("--grid {spec}: '{step}' is not a step in degrees"))
        })?;
        return regular_grid_by_step(step);
    }
    Err(crate::Error::invalid(format!(
        "--grid '{spec}': expected gauss or regular:STEP_DEG (e.g. regular:1)"
    )))
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    refuse_overwrite_of_input(&args.output, &[&args.model])?;
    let lon_convention: LonConvention = args.lon_range.parse().context("--lon-range")?;
    let model = read_model(&args.model)?;
    let lmax = args.lmax.unwrap_or(model.lmax());
    let grid = parse_grid_spec(&args.grid, lmax)?;
    let (nlat, nlon) = grid.shape();
    crate::memory::check_fits("the synthesised grid", (nlat * nlon * 8 * 4) as u64)?;
    if !ctx.quiet {
        eprintln!("synthesising degree {lmax} on a {nlat} x {nlon} grid");
    }
    let plan = TransformPlan::new(lmax, &grid)?;
    let values = plan.synthesise(&model)?;
    let mut file = GridFile::from_engine_grid(&grid, format!("field of {}", args.model.display()));
    file.push(
        "value",
        "value of the spherical-harmonic expansion",
        &model.units,
        None,
        values,
    );
    file.attributes.push((
        "kugel_reference_radius_m".into(),
        format!("{:e}", model.reference_radius_m),
    ));
    let mut prov = Provenance::from_command_line(&ctx.command_line);
    prov.add_input(&args.model)?;
    prov.lmax = Some(lmax);
    prov.normalization = Some(model.normalization.name().to_string());
    let opts = GridWriteOptions {
        float32: args.float32,
        lon_convention,
        provenance: &prov,
    };
    write_grid(&args.output, &file, &opts)?;
    if !ctx.quiet {
        eprintln!("wrote {}", args.output.display());
    }
    Ok(())
}
