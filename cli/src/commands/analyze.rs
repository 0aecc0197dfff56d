//! `kugel analyze`: spherical-harmonic analysis of a user's global grid (NetCDF) into a
//! coefficient model, with the exact quadrature of the grid's layout.

use std::path::PathBuf;

use anyhow::Context;

use super::CommandContext;
use crate::args::OnOff;
use kugel::coeffs::Normalization;
use kugel::io::atomic::refuse_overwrite_of_input;
use kugel::io::grid::read::{read_grid, GridReadOptions};
use kugel::io::grid::write::grid_kind_name;
use kugel::io::model::write_model;
use kugel::io::provenance::Provenance;
use kugel::sht::TransformPlan;

/// Mean Earth radius (IUGG R1 = 6 371 008.8 m rounded; common practice).
const EARTH_MEAN_RADIUS_M: f64 = 6_371_000.0;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Global grid (NetCDF-3 or NetCDF-4): Gauss–Legendre, or equiangular node- or
    /// cell-registered.
    pub grid: PathBuf,
    /// Band limit of the model (default: the highest degree the grid's layout analyses exactly).
    #[arg(long, value_name = "L")]
    pub lmax: Option<usize>,
    /// Output model (NetCDF-4 for .nc, text table otherwise).
    #[arg(short = 'o', long, value_name = "MODEL")]
    pub output: PathBuf,
    /// Variable to analyse (default: the only gridded data variable).
    #[arg(long, value_name = "V")]
    pub variable: Option<String>,
    /// Index into each extra dimension longer than 1 (time, level), in file order.
    #[arg(long, value_name = "I", num_args = 1.., value_delimiter = ',')]
    pub index: Option<Vec<usize>>,
    /// Normalisation of the output: geodesy (default), schmidt, orthonormal, unnormalized.
    #[arg(long, value_name = "N", default_value = "geodesy")]
    pub normalization: String,
    /// Condon–Shortley phase of the output (default: customary for the normalisation).
    #[arg(long, value_name = "on|off")]
    pub condon_shortley: Option<OnOff>,
    /// Reference radius recorded in the model, metres (default: the grid's
    /// `kugel_reference_radius_m` attribute when kugel wrote it, else Earth's mean radius
    /// 6 371 000 m).
    #[arg(long, value_name = "R")]
    pub reference_radius_m: Option<f64>,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    refuse_overwrite_of_input(&args.output, &[&args.grid])?;
    let normalization: Normalization = args.normalization.parse().context("--normalization")?;
    if let Some(r) = args.reference_radius_m {
        if !(r.is_finite() && r > 0.0) {
            return Err(kugel::Error::invalid(format!(
                "--reference-radius-m {r} must be a positive radius in metres"
            ))
            .into());
        }
    }
    let opts = GridReadOptions {
        variable: args.variable.clone(),
        index: args.index.clone(),
    };
    let user = read_grid(&args.grid, &opts)?;
    if ctx.verbose {
        for n in &user.notes {
            eprintln!("note: {}: {n}", args.grid.display());
        }
    }
    user.require_complete()?;
    let lmax = args.lmax.unwrap_or(user.grid.max_exact_degree);
    user.check_degree(lmax)?;
    if !ctx.quiet {
        let (nlat, nlon) = user.grid.shape();
        eprintln!(
            "analysing '{}' ({nlat} x {nlon}, {} layout) to degree {lmax}",
            user.variable,
            grid_kind_name(user.grid.kind)
        );
    }
    let plan = TransformPlan::new(lmax, &user.grid)?;
    let mut model = plan.analyse(&user.field)?;
    model.reference_radius_m = args
        .reference_radius_m
        .or(user.reference_radius_m)
        .unwrap_or(EARTH_MEAN_RADIUS_M);
    model.units = user.units.clone();
    model.attributes.insert(
        "title".into(),
        format!(
            "analysis of '{}' from {}",
            user.variable,
            args.grid.display()
        ),
    );
    model
        .attributes
        .insert("kugel_source_variable".into(), user.variable.clone());
    model.attributes.insert(
        "kugel_source_grid".into(),
        grid_kind_name(user.grid.kind).into(),
    );
    let phase = args
        .condon_shortley
        .map(OnOff::is_on)
        .unwrap_or(normalization.default_condon_shortley());
    let model = model.converted(normalization, phase)?;
    let mut prov = Provenance::from_command_line(&ctx.command_line);
    prov.add_input(&args.grid)?;
    prov.lmax = Some(lmax);
    prov.normalization = Some(normalization.name().to_string());
    write_model(&args.output, &model, &prov)?;
    if !ctx.quiet {
        crate::outputs::wrote(format!(
            "wrote {} (degree {lmax}, {normalization})",
            args.output.display()
        ));
    }
    Ok(())
}
