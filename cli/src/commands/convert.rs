//! `kugel convert`: coefficient models between text tables and NetCDF, and between
//! normalisations and phase conventions (`Coefficients::converted`).

use std::path::PathBuf;

use anyhow::Context;

use super::CommandContext;
use crate::args::OnOff;
use kugel::coeffs::Normalization;
use kugel::complex_coeffs::ComplexCoefficients;
use kugel::error::Error;
use kugel::io::atomic::refuse_overwrite_of_input;
use kugel::io::model::{read_model_with_report, write_complex_model, write_model};
use kugel::io::provenance::Provenance;

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Input model: NetCDF (any extension, recognised by content) or a text table.
    pub input: PathBuf,
    /// Output model: NetCDF-4 for .nc, a text table otherwise (columns l m C S, then the sigmas when known).
    pub output: PathBuf,
    /// Normalisation of the output: geodesy, schmidt, orthonormal or unnormalized
    /// (default: that of the input).
    #[arg(long, value_name = "N")]
    pub normalization: Option<String>,
    /// Condon–Shortley phase of the output (default: the customary one of the output
    /// normalisation when it changes, else that of the input).
    #[arg(long, value_name = "on|off")]
    pub condon_shortley: Option<OnOff>,
    /// Normalisation of a text table that has no `normalization =` header line.
    #[arg(long, value_name = "N")]
    pub assume_normalization: Option<String>,
    /// Form of the output: real (C, S for m ≥ 0) or complex (a_lm for m = −l..l, with
    /// `coefficient_form = complex`, its normalisation and phase recorded: a NetCDF-4 file for a
    /// .nc name, else a text table; see docs/conventions.md). Complex sets are read back by
    /// every command as the real set of the same field.
    #[arg(long, value_name = "real|complex", default_value = "real")]
    pub form: String,
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    refuse_overwrite_of_input(&args.output, &[&args.input])?;
    let (mut model, report) = read_model_with_report(&args.input)?;
    if let Some(r) = &report {
        if !r.normalization_given {
            match &args.assume_normalization {
                Some(n) => {
                    let n: Normalization = n.parse().context("--assume-normalization")?;
                    model.normalization = n;
                    model.condon_shortley = n.default_condon_shortley();
                }
                None => {
                    if !ctx.quiet {
                        eprintln!(
                            "note: {} has no 'normalization =' header; assuming geodesy (say otherwise with --assume-normalization)",
                            args.input.display()
                        );
                    }
                }
            }
        } else if let Some(n) = &args.assume_normalization {
            let n: Normalization = n.parse().context("--assume-normalization")?;
            if n != model.normalization {
                return Err(kugel::Error::invalid(format!(
                    "{} states normalization {} but --assume-normalization says {n}",
                    args.input.display(),
                    model.normalization
                ))
                .into());
            }
        }
        if r.missing_pairs > 0 && !ctx.quiet {
            eprintln!(
                "note: {}: {} (l, m) pair(s) up to degree {} are absent and were read as 0",
                args.input.display(),
                r.missing_pairs,
                model.lmax()
            );
        }
    }
    let target = match &args.normalization {
        Some(n) => n.parse::<Normalization>().context("--normalization")?,
        None => model.normalization,
    };
    let phase = match args.condon_shortley {
        Some(s) => s.is_on(),
        None if target != model.normalization => target.default_condon_shortley(),
        None => model.condon_shortley,
    };
    let complex = match args.form.trim().to_ascii_lowercase().as_str() {
        "real" => false,
        "complex" => true,
        other => {
            return Err(
                Error::invalid(format!("--form '{other}': expected real or complex")).into(),
            )
        }
    };
    let out = model.converted(target, phase)?;
    let mut prov = Provenance::from_command_line(&ctx.command_line);
    prov.add_input(&args.input)?;
    prov.lmax = Some(out.lmax());
    prov.normalization = Some(out.normalization.name().to_string());
    if complex {
        let set = ComplexCoefficients::from_real(&model, target, phase)?;
        write_complex_model(&args.output, &set, &prov)?;
    } else {
        write_model(&args.output, &out, &prov)?;
    }
    if !ctx.quiet {
        crate::outputs::wrote(format!(
            "wrote {} ({}degree {}, {}, Condon–Shortley phase {})",
            args.output.display(),
            if complex { "complex form, " } else { "" },
            out.lmax(),
            out.normalization,
            if out.condon_shortley { "on" } else { "off" }
        ));
    }
    Ok(())
}
