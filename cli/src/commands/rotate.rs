//! `kugel rotate MODEL -o OUT (--pole LAT,LON [--azimuth DEG] | --euler A,B,G)`: rotates a
//! coefficient model (`kugel::rotate`) and writes it in the input's normalisation and phase.

use std::path::PathBuf;

use super::CommandContext;
use crate::args::parse_numbers;
use crate::progress_bar::TerminalProgress;
use kugel::complex_coeffs::ComplexCoefficients;
use kugel::error::Error;
use kugel::io::atomic::refuse_overwrite_of_input;
use kugel::io::model::{model_form, read_model, write_complex_model, write_model, CoefficientForm};
use kugel::io::provenance::Provenance;
use kugel::rotate::{rotate_with_progress, EulerAngles, ROTATION_ATTRIBUTE};

#[derive(Debug, clap::Args)]
#[command(
    after_help = "Rotation convention (--euler A,B,G): active and right-handed, about axes fixed in \
space, applied right to left: R = Rz(A) Ry(B) Rz(G), i.e. first G degrees about the z axis \
(through the north pole), then B about the y axis (through 0°N 90°E), then A about z again; \
positive angles turn counter-clockwise seen from the tip of the axis. The rotated model g is \
g(p) = f(R⁻¹ p): what the input has at a point p, the output has at R p. The inverse of \
--euler A,B,G is --euler -G,-B,-A.\n\n\
--pole LAT,LON is the rotation Rz(azimuth) Ry(−(90° − LAT)) Rz(−LON): the point LAT,LON moves \
to the north pole, so the output's value at the pole is the input's value at LAT,LON; with \
azimuth 0 the old north pole lands on longitude 180°, a positive azimuth moves it eastwards."
)]
pub struct Args {
    /// Coefficient model to rotate (NetCDF or text table; any normalisation); never modified.
    pub model: PathBuf,
    /// Output model (.nc for NetCDF-4, anything else for a text table).
    #[arg(short = 'o', long = "output", value_name = "OUT")]
    pub output: PathBuf,
    /// Move this point (degrees north, degrees east) to the north pole.
    #[arg(
        long,
        value_name = "LAT,LON",
        allow_hyphen_values = true,
        conflicts_with = "euler",
        required_unless_present = "euler"
    )]
    pub pole: Option<String>,
    /// With --pole: then turn the result eastwards about the new pole by this many degrees.
    #[arg(
        long,
        value_name = "DEG",
        allow_hyphen_values = true,
        requires = "pole",
        default_value_t = 0.0
    )]
    pub azimuth: f64,
    /// Euler angles A,B,G in degrees of the active z-y-z rotation Rz(A) Ry(B) Rz(G) (see below).
    #[arg(long, value_name = "A,B,G", allow_hyphen_values = true)]
    pub euler: Option<String>,
    /// Form of the output: real (C, S) or complex (a_lm, m = −l..l, in the input's
    /// normalisation and phase). Default: the input's form, so a complex set comes out complex.
    #[arg(long, value_name = "real|complex")]
    pub form: Option<String>,
}

/// The rotation the arguments ask for.
pub fn angles_from_args(args: &Args) -> Result<EulerAngles, Error> {
    match (&args.pole, &args.euler) {
        (Some(p), _) => {
            let v = parse_numbers(p, 2, "--pole", "LAT,LON in degrees (e.g. 35,-120)")?;
            EulerAngles::moving_to_north_pole(v[0], v[1], args.azimuth)
        }
        (None, Some(e)) => {
            let v = parse_numbers(e, 3, "--euler", "A,B,G in degrees (e.g. 10,45,-30)")?;
            EulerAngles::from_degrees(v[0], v[1], v[2])
        }
        (None, None) => Err(Error::invalid(
            "say which rotation: --pole LAT,LON or --euler A,B,G",
        )),
    }
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    refuse_overwrite_of_input(&args.output, &[&args.model])?;
    let angles = angles_from_args(args)?;
    let form = match args.form.as_deref().map(|f| f.trim().to_ascii_lowercase()) {
        None => model_form(&args.model)?,
        Some(f) if f == "real" => CoefficientForm::Real,
        Some(f) if f == "complex" => CoefficientForm::Complex,
        Some(other) => {
            return Err(
                Error::invalid(format!("--form '{other}': expected real or complex")).into(),
            )
        }
    };
    let model = read_model(&args.model)?;
    let progress = TerminalProgress::new(ctx.quiet);
    let result = rotate_with_progress(&model, &angles, &progress);
    progress.finish();
    let mut rotated = result?;
    rotated
        .attributes
        .insert(ROTATION_ATTRIBUTE.into(), angles.degrees_text());
    let mut provenance = Provenance::from_command_line(ctx.command_line.clone());
    provenance.add_input(&args.model)?;
    provenance.lmax = Some(rotated.lmax());
    provenance.normalization = Some(rotated.normalization.name().to_string());
    if form == CoefficientForm::Complex {
        let set = ComplexCoefficients::from_real(
            &rotated,
            rotated.normalization,
            rotated.condon_shortley,
        )?;
        write_complex_model(&args.output, &set, &provenance)?;
    } else {
        write_model(&args.output, &rotated, &provenance)?;
    }
    if !ctx.quiet {
        if model.sigmas().is_some() {
            eprintln!("note: standard errors were dropped (rotating them needs their covariances)");
        }
        crate::outputs::wrote(format!(
            "wrote {} ({}degree {}, rotated by Euler z-y-z {:.6}°, {:.6}°, {:.6}°)",
            args.output.display(),
            if form == CoefficientForm::Complex {
                "complex form, "
            } else {
                ""
            },
            rotated.lmax(),
            angles.alpha_rad.to_degrees(),
            angles.beta_rad.to_degrees(),
            angles.gamma_rad.to_degrees()
        ));
    }
    Ok(())
}
