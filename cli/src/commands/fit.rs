//! `kugel fit`: scattered observations → a coefficient model by weighted, regularised least
//! squares, with formal σ per coefficient.

use std::path::PathBuf;

use super::CommandContext;
use crate::args::PointInputArgs;
use crate::progress_bar::TerminalProgress;
use kugel::io::model::write_model;
use kugel::io::provenance::Provenance;
use kugel::observe::fit::{fit_with_progress, FitOptions, Regularization};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Observations: CSV with a header (lat, lon, value[, sigma]) or a NetCDF point file.
    pub points: PathBuf,
    /// Highest degree of the model.
    #[arg(long)]
    pub lmax: usize,
    /// Output model (NetCDF for .nc, text table otherwise).
    #[arg(short = 'o', long)]
    pub output: PathBuf,
    /// none, damping:λ, kaula:A,p (prior RMS A·l^-p), kaula:A,p:gcv or gcv.
    #[arg(long, default_value = "none")]
    pub regularization: String,
    #[command(flatten)]
    pub input: PointInputArgs,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    kugel::io::atomic::refuse_overwrite_of_input(&args.output, &[&args.points])?;
    let regularization = Regularization::parse(&args.regularization)?;
    let body_radius_m = args.input.body_radius_m()?;
    let points = args.input.read(&args.points, ctx)?;
    let options = FitOptions {
        regularization,
        body_radius_m,
    };
    let progress = TerminalProgress::new(ctx.quiet);
    let result = fit_with_progress(&points, args.lmax, &options, &progress);
    progress.finish();
    let mut result = result?;
    result.model.units = args.input.units.clone();
    if !ctx.quiet {
        eprintln!(
            "fit to L = {} from {} observations ({}): residual RMS {:.6e}{}, χ²/dof {:.4}, λ = {:.3e}, \
             effective parameters {:.1}, condition ≈ {:.2e}; σ {}",
            args.lmax,
            points.len(),
            regularization.describe(),
            result.residual_rms,
            if args.input.units == "1" { String::new() } else { format!(" {}", args.input.units) },
            result.chi2_per_dof,
            result.lambda,
            result.effective_parameters,
            result.condition_estimate,
            if result.sigmas_scaled { "scaled by χ²/dof (no input σ)" } else { "formal, from the input σ" }
        );
    }
    for w in &result.warnings {
        eprintln!("warning: {w}");
    }
    let mut provenance = Provenance::from_command_line(&ctx.command_line);
    provenance.add_input(&args.points)?;
    provenance.lmax = Some(args.lmax);
    provenance.normalization = Some(result.model.normalization.name().to_string());
    write_model(&args.output, &result.model, &provenance)?;
    if !ctx.quiet {
        eprintln!("wrote {}", args.output.display());
    }
    Ok(())
}
