//! `kugel compare`: two models degree by degree — cross power, degree correlation with its
//! significance threshold, admittance, power ratio with its interval, difference degree
//! variance and the degree up to which they agree.

use std::path::PathBuf;

use super::CommandContext;
use crate::args::RegionArgs;
use crate::progress_bar::TerminalProgress;
use crate::tables::{display_name, TableOutputs};
use kugel::io::model::read_model;
use kugel::io::provenance::Provenance;
use kugel::regional::localised_comparison;
use kugel::report::plots::comparison_svg;
use kugel::report::plots::regional::localised_comparison_svg;
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
    #[command(flatten)]
    pub region: RegionArgs,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    let outputs = TableOutputs {
        netcdf: args.output.as_deref(),
        csv: args.csv.as_deref(),
        plot: args.plot.as_deref(),
    };
    let region_file = args.region.region_file();
    let mut inputs = vec![args.reference.as_path(), args.other.as_path()];
    inputs.extend(region_file.as_deref());
    outputs.check(&inputs)?;
    let a = read_model(&args.reference)?;
    let b = read_model(&args.other)?;
    if args.region.region.is_some() {
        return run_localised(args, ctx, &outputs, &a, &b);
    }
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

/// `--region`: localised cross-power, correlation and admittance inside the region.
fn run_localised(
    args: &Args,
    ctx: &CommandContext,
    outputs: &TableOutputs,
    a: &kugel::Coefficients,
    b: &kugel::Coefficients,
) -> anyhow::Result<()> {
    let progress = TerminalProgress::new(ctx.quiet);
    let result = (|| -> anyhow::Result<_> {
        let (set, choice) = args
            .region
            .taper_set(a.lmax().min(b.lmax()), &progress)?
            .expect("region given");
        let cmp = localised_comparison(a, b, &set, choice, &progress)?;
        Ok((set, cmp))
    })();
    progress.finish();
    let (set, cmp) = result?;
    let (na, nb) = (display_name(&args.reference), display_name(&args.other));
    let mut table = cmp.to_table();
    table.attribute(
        "title",
        format!(
            "localised comparison of {na} (reference) and {nb} in {}",
            set.region
        ),
    );
    table.number_attribute("shannon_number", set.shannon_number);
    let mut provenance = Provenance::from_command_line(ctx.command_line.clone());
    provenance.add_input(&args.reference)?;
    provenance.add_input(&args.other)?;
    provenance.lmax = Some(cmp.lmax);
    provenance.normalization = Some("geodesy".into());
    let title = args
        .title
        .clone()
        .unwrap_or_else(|| format!("{na} vs {nb} in {}", set.region));
    outputs.write(&table, &provenance, || {
        localised_comparison_svg(&cmp, &title)
    })?;
    if !ctx.quiet {
        let reliable: Vec<usize> = (0..=cmp.lmax).filter(|l| cmp.reliable[*l]).collect();
        let mean_r = if reliable.is_empty() {
            f64::NAN
        } else {
            reliable
                .iter()
                .map(|l| cmp.correlation.value[*l])
                .sum::<f64>()
                / reliable.len() as f64
        };
        outputs.report(&format!(
            "localised comparison in {}: {} windows of degree {}, Shannon number {:.2}; mean correlation over the reliable degrees {}..{}: {:.3}\n",
            set.region,
            cmp.taper_count,
            cmp.lmax_window,
            set.shannon_number,
            cmp.lmax_window,
            cmp.lmax.saturating_sub(cmp.lmax_window),
            mean_r
        ));
    }
    Ok(())
}
