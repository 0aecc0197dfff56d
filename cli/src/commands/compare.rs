//! `kugel compare`: two models degree by degree — cross power, degree correlation with its
//! significance threshold, admittance, power ratio with its interval, difference degree
//! variance and the degree up to which they agree.

use std::path::PathBuf;

use super::CommandContext;
use crate::tables::{display_name, TableOutputs};
use kugel::io::model::read_model;
use kugel::io::provenance::Provenance;
use kugel::report::plots::comparison_svg;
use kugel::spectral::{CompareOptions, Comparison};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Reference model A (NetCDF or text table).
    pub reference: PathBuf,
    /// Model B compared with the reference.
    pub other: PathBuf,
    /// Write the comparison as NetCDF (dimension `degree`).
    #[arg(short = 'o', long = "output", value_name = "CMP.nc")]
    pub output: Option<PathBuf>,
    /// Write the comparison as CSV (first column `degree`). Without -o, --csv or --plot the CSV
    /// goes to standard output.
    #[arg(long, value_name = "CMP.csv")]
    pub csv: Option<PathBuf>,
    /// Draw the comparison as an SVG plot.
    #[arg(long, value_name = "CMP.svg")]
    pub plot: Option<PathBuf>,
    /// Confidence level for the correlation threshold and the power-ratio interval.
    #[arg(long, default_value_t = 0.95, value_name = "LEVEL")]
    pub confidence: f64,
    /// Compare even when the units differ or the radii cannot be reconciled.
    #[arg(long)]
    pub force: bool,
    /// Plot title.
    #[arg(long)]
    pub title: Option<String>,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    let outputs = TableOutputs {
        netcdf: args.output.as_deref(),
        csv: args.csv.as_deref(),
        plot: args.plot.as_deref(),
    };
    outputs.check(&[&args.reference, &args.other])?;
    let a = read_model(&args.reference)?;
    let b = read_model(&args.other)?;
    let options = CompareOptions {
        confidence: args.confidence,
        force: args.force,
    };
    let mut cmp = Comparison::compute(&a, &b, &options)?;
    cmp.reference_label = display_name(&args.reference);
    cmp.other_label = display_name(&args.other);
    let mut table = cmp.to_table();
    table.attribute(
        "title",
        format!(
            "comparison of {} (reference) and {}",
            cmp.reference_label, cmp.other_label
        ),
    );
    let mut provenance = Provenance::from_command_line(ctx.command_line.clone());
    provenance.add_input(&args.reference)?;
    provenance.add_input(&args.other)?;
    provenance.lmax = Some(cmp.lmax);
    provenance.normalization = Some("geodesy".into());
    let title = args
        .title
        .clone()
        .unwrap_or_else(|| format!("{} vs {}", cmp.reference_label, cmp.other_label));
    outputs.write(&table, &provenance, || comparison_svg(&cmp, &title))?;
    if !ctx.quiet {
        outputs.report(&cmp.summary());
    }
    Ok(())
}
