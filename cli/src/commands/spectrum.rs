//! `kugel spectrum`: the degree-variance spectrum of one model, with χ² confidence band, optional
//! power-law fit and Lowes–Mauersberger spectrum, written as NetCDF, CSV and an SVG plot.

use std::path::PathBuf;

use anyhow::Context;

use super::CommandContext;
use crate::args::RegionArgs;
use crate::progress_bar::TerminalProgress;
use crate::tables::{display_name, TableOutputs};
use kugel::error::Error;
use kugel::io::model::read_model;
use kugel::io::provenance::Provenance;
use kugel::regional::{degree_average, localised_spectrum_with_expected};
use kugel::report::plots::regional::localised_spectrum_svg;
use kugel::report::plots::spectrum_svg;
use kugel::spectral::{Spectrum, SpectrumOptions};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Coefficient model (NetCDF or text table).
    pub model: PathBuf,
    /// Write the spectrum as NetCDF (dimension `degree`).
    #[arg(short = 'o', long = "output", value_name = "SPEC.nc")]
    pub output: Option<PathBuf>,
    /// Write the spectrum as CSV (first column `degree`). Without -o, --csv or --plot the CSV
    /// goes to standard output.
    #[arg(long, value_name = "SPEC.csv")]
    pub csv: Option<PathBuf>,
    /// Draw the spectrum as an SVG plot.
    #[arg(long, value_name = "SPEC.svg")]
    pub plot: Option<PathBuf>,
    /// Fit a power law A·l^-p to the per-coefficient power over this degree range.
    #[arg(long, value_name = "LMIN-LMAX")]
    pub fit: Option<String>,
    /// Confidence level of the χ² band (strictly between 0 and 1).
    #[arg(long, default_value_t = 0.95, value_name = "LEVEL")]
    pub confidence: f64,
    /// Also compute the Lowes–Mauersberger spectrum at this radius (km), for magnetic models.
    #[arg(long = "radius-km", value_name = "R")]
    pub radius_km: Option<f64>,
    /// Plot title (default: the model's file name).
    #[arg(long)]
    pub title: Option<String>,
    #[command(flatten)]
    pub region: RegionArgs,
}

/// Parses "LMIN-LMAX" (e.g. "10-200") for the option named `option`.
pub fn parse_degree_range(text: &str, option: &str) -> Result<(usize, usize), Error> {
    let bad = || {
        Error::invalid(format!(
            "{option} '{text}': expected a degree range LMIN-LMAX such as 10-200"
        ))
    };
    let (a, b) = text.split_once('-').ok_or_else(bad)?;
    let lo = a.trim().parse::<usize>().map_err(|_| bad())?;
    let hi = b.trim().parse::<usize>().map_err(|_| bad())?;
    Ok((lo, hi))
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    let outputs = TableOutputs {
        netcdf: args.output.as_deref(),
        csv: args.csv.as_deref(),
        plot: args.plot.as_deref(),
    };
    let region_file = args.region.region_file();
    let mut inputs = vec![args.model.as_path()];
    inputs.extend(region_file.as_deref());
    outputs.check(&inputs)?;
    let fit_range = args
        .fit
        .as_deref()
        .map(|t| parse_degree_range(t, "--fit"))
        .transpose()?;
    let lowes_radius_m = match args.radius_km {
        Some(r) if !(r > 0.0 && r.is_finite()) => {
            return Err(Error::invalid(format!(
                "--radius-km must be a positive radius in km, got {r}"
            ))
            .into())
        }
        r => r.map(|km| km * 1000.0),
    };
    let model = read_model(&args.model)?;
    if args.region.region.is_some() {
        return run_localised(args, ctx, &outputs, &model);
    }
    let options = SpectrumOptions {
        confidence: args.confidence,
        fit_range,
        lowes_radius_m,
    };
    let spectrum = Spectrum::compute(&model, &options)
        .with_context(|| format!("spectrum of {}", args.model.display()))?;
    let mut table = spectrum.to_table();
    let name = display_name(&args.model);
    table.attribute("title", format!("degree-variance spectrum of {name}"));
    let mut provenance = Provenance::from_command_line(ctx.command_line.clone());
    provenance.add_input(&args.model)?;
    provenance.lmax = Some(spectrum.lmax);
    provenance.normalization = Some("geodesy".into());
    let title = args
        .title
        .clone()
        .unwrap_or_else(|| format!("Spectrum of {name}"));
    outputs.write(&table, &provenance, || spectrum_svg(&spectrum, &title))?;
    if !ctx.quiet {
        outputs.report(&spectrum.summary());
    }
    Ok(())
}

/// `--region`: the multitaper estimate inside the region, with the expected localised
/// spectrum of the model's own global spectrum for comparison.
fn run_localised(
    args: &Args,
    ctx: &CommandContext,
    outputs: &TableOutputs,
    model: &kugel::Coefficients,
) -> anyhow::Result<()> {
    let progress = TerminalProgress::new(ctx.quiet);
    let result = (|| -> anyhow::Result<_> {
        let (set, choice) = args
            .region
            .taper_set(model.lmax(), &progress)?
            .expect("region given");
        let (local, expected) = localised_spectrum_with_expected(model, &set, choice, &progress)?;
        Ok((set, local, expected))
    })();
    progress.finish();
    let (set, local, expected) = result?;
    let name = display_name(&args.model);
    let mut table = local.to_table(Some(&expected));
    table.attribute(
        "title",
        format!(
            "localised degree-variance spectrum of {name} in {}",
            set.region
        ),
    );
    table.number_attribute("shannon_number", set.shannon_number);
    let mut provenance = Provenance::from_command_line(ctx.command_line.clone());
    provenance.add_input(&args.model)?;
    provenance.lmax = Some(local.lmax);
    provenance.normalization = Some("geodesy".into());
    let title = args
        .title
        .clone()
        .unwrap_or_else(|| format!("Localised spectrum of {name}"));
    outputs.write(&table, &provenance, || {
        localised_spectrum_svg(&local, Some(&expected), &title)
    })?;
    if !ctx.quiet {
        let mut summary = format!(
            "localised spectrum of {name} in {}: {} windows of degree {} (concentration ≥ {:.4}), Shannon number {:.2}; degrees {}..{} reliable\n",
            set.region,
            local.taper_count,
            local.lmax_window,
            local.concentrations.iter().cloned().fold(1.0, f64::min),
            set.shannon_number,
            local.lmax_window,
            local.lmax - local.lmax_window
        );
        let (first, last) = (local.lmax_window, local.lmax - local.lmax_window);
        if let Ok(avg) = degree_average(&local, &set, &expected, first, last) {
            summary.push_str(&format!(
                "over degrees {first}..{last} the localised power is {:.4} ± {:.4} times the expectation from the model's own global spectrum (standard error from the estimate's covariance, about {:.1} independent degrees)\n",
                avg.mean_ratio, avg.standard_error, avg.effective_degrees
            ));
        }
        outputs.report(&summary);
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn degree_ranges_parse_or_say_what_is_expected() {
        assert_eq!(parse_degree_range("10-200", "--fit").unwrap(), (10, 200));
        let msg = parse_degree_range("10..200", "--fit")
            .unwrap_err()
            .to_string();
        assert!(msg.contains("--fit") && msg.contains("LMIN-LMAX"), "{msg}");
    }
}
