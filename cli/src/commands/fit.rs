//! `kugel fit`: observations of a field's functionals → a coefficient model by weighted,
//! regularised least squares, with formal σ per coefficient.
//!
//! The observations may be plain values, gravity quantities or magnetic components, each row at
//! its own altitude (or ellipsoidal height) and time, from one or several point files
//! (`--data`, see `args::data_sets`).

use std::path::PathBuf;

use super::CommandContext;
use crate::args::data_sets::DataSetArg;
use crate::args::PointInputArgs;
use crate::progress_bar::TerminalProgress;
use kugel::field::{Ellipsoid, NormalField, Quantity};
use kugel::io::model::write_model;
use kugel::io::provenance::Provenance;
use kugel::observe::fit::functional::ModelSpace;
use kugel::observe::fit::observation::PointConversion;
use kugel::observe::fit::{
    fit_memory_bytes, fit_observations_with_progress, FitResult, FitSetup, ObservationSet,
    Regularization, Robust, SolverKind, SolverRequest,
};

#[derive(Debug, clap::Args)]
pub struct Args {
    /// Observations: CSV with a header (lat, lon, value[, sigma, quantity, altitude_km,
    /// height_m, time]) or a NetCDF point file. More files with --data.
    pub points: Option<PathBuf>,
    /// A further point file with its own options: PATH@quantity=Q;weight=F;name=N;columns=KEY=NAME,…
    /// (repeatable; each key optional).
    #[arg(long = "data", value_name = "PATH[@OPTIONS]")]
    pub data: Vec<String>,
    /// Highest degree of the model.
    #[arg(long)]
    pub lmax: usize,
    /// Output model (NetCDF for .nc, text table otherwise).
    #[arg(short = 'o', long)]
    pub output: PathBuf,
    /// Quantity of rows without a `quantity` column: value, potential (m2 s-2), geoid (m),
    /// gravity-disturbance, gravity-anomaly (mGal), radial-gradient (E), br, btheta, blambda,
    /// x, y, z, f (nT) — the units `kugel evaluate` writes.
    #[arg(long, short = 'q', value_name = "Q", default_value = "value")]
    pub quantity: String,
    /// none, damping:λ, kaula:A,p (prior RMS A·l^-p), kaula:A,p:gcv or gcv. The prior refers to
    /// the model's own coefficients: dimensionless (geodesy-normalised) potential coefficients
    /// for gravity quantities, Schmidt Gauss coefficients in nT for magnetic ones, the data's
    /// units for plain values.
    #[arg(long, default_value = "none")]
    pub regularization: String,
    /// GM of the body, m3 s-2 (needed for gravity quantities).
    #[arg(long, value_name = "GM")]
    pub gm_m3_s2: Option<f64>,
    /// Read lat as geodetic latitude and height_m as the height above this ellipsoid (grs80,
    /// wgs84 or custom:a,f,gm,omega); magnetic x, z then refer to the ellipsoid normal.
    #[arg(long, value_name = "NAME")]
    pub ellipsoid: Option<String>,
    /// Normal field of potential and radial-gradient observations (grs80, wgs84,
    /// custom:…): taken off before the fit and added back to the model. Geoid heights, gravity
    /// disturbances and anomalies already are relative to a normal field and are used as given.
    #[arg(long, value_name = "NAME", default_value = "none")]
    pub normal_field: String,
    /// Internal degrees held at zero, e.g. 0,1 for a disturbing potential centred on the mass.
    #[arg(long, value_name = "L[,L...]")]
    pub fix_degrees: Option<String>,
    /// Magnetic: external-source coefficients to this degree (1 to 3), written to
    /// OUTPUT_external.
    #[arg(long, value_name = "L")]
    pub external_lmax: Option<usize>,
    /// Magnetic: fit a linear rate of change of every internal coefficient (needs --epoch
    /// and a time column); the rates (nT/year, with sigmas) go into the model file (dC_dt,
    /// dS_dt and the epoch), which `evaluate --time` and `synthesize --time` read.
    #[arg(long)]
    pub secular_variation: bool,
    /// Epoch of the secular variation, decimal year.
    #[arg(long, value_name = "YEAR")]
    pub epoch: Option<f64>,
    /// Model the total-intensity (f) rows are first linearised at (Gauss–Newton); without it,
    /// the vector rows of the same fit give the start.
    #[arg(long, value_name = "MODEL")]
    pub start: Option<PathBuf>,
    /// Robust reweighting of the rows: huber:C (C in units of sigma).
    #[arg(long, value_name = "huber:C")]
    pub robust: Option<String>,
    /// direct (normal matrix, Cholesky, exact σ), iterative (conjugate gradients without the
    /// normal matrix, to relative residual 1e-10; approximate σ, no GCV) or auto (chosen from
    /// the memory and time estimates; the choice and its reason are printed).
    #[arg(long, value_name = "KIND", default_value = "auto")]
    pub solver: String,
    #[command(flatten)]
    pub input: PointInputArgs,
}

impl Args {
    /// A fit of one point file with every other option at its default.
    pub fn for_points(
        points: PathBuf,
        lmax: usize,
        output: PathBuf,
        input: PointInputArgs,
    ) -> Args {
        Args {
            points: Some(points),
            data: Vec::new(),
            lmax,
            output,
            quantity: "value".into(),
            regularization: "none".into(),
            gm_m3_s2: None,
            ellipsoid: None,
            normal_field: "none".into(),
            fix_degrees: None,
            external_lmax: None,
            secular_variation: false,
            epoch: None,
            start: None,
            robust: None,
            solver: "auto".into(),
            input,
        }
    }
}

/// The data sets named on the command line, in order.
fn data_sets(args: &Args, default_quantity: Quantity) -> anyhow::Result<Vec<DataSetArg>> {
    let mut sets = Vec::new();
    if let Some(p) = &args.points {
        sets.push(DataSetArg {
            path: p.clone(),
            quantity: Some(default_quantity),
            weight: 1.0,
            name: None,
            columns: None,
        });
    }
    for spec in &args.data {
        let mut d = DataSetArg::parse(spec)?;
        d.quantity.get_or_insert(default_quantity);
        sets.push(d);
    }
    if sets.is_empty() {
        anyhow::bail!(kugel::Error::invalid(
            "no observations: give a point file, or one or more --data PATH[@OPTIONS]"
        ));
    }
    Ok(sets)
}

fn parse_degrees(spec: &str) -> kugel::Result<Vec<usize>> {
    spec.split(',')
        .map(str::trim)
        .filter(|p| !p.is_empty())
        .map(|p| {
            p.parse::<usize>().map_err(|_| {
                kugel::Error::invalid(format!("--fix-degrees: `{p}` is not a degree (0, 1, …)"))
            })
        })
        .collect()
}

pub fn run(args: &Args, ctx: &CommandContext) -> anyhow::Result<()> {
    let default_quantity: Quantity = args.quantity.parse()?;
    let sets = data_sets(args, default_quantity)?;
    let inputs: Vec<&std::path::Path> = sets.iter().map(|d| d.path.as_path()).collect();
    kugel::io::atomic::refuse_overwrite_of_input(&args.output, &inputs)?;
    let regularization = Regularization::parse(&args.regularization)?;
    let solver = SolverRequest::parse(&args.solver)?;
    // the size first: a degree that cannot fit is refused before the points are read (the
    // direct solver's normal matrix when it is asked for; the library checks the solver it
    // picks once it knows the number of observations)
    if solver == SolverRequest::Direct {
        kugel::memory::check_fits(
            &format!("the normal matrix of a degree-{} fit", args.lmax),
            fit_memory_bytes(args.lmax, &regularization),
        )?;
    }
    let body_radius_m = args.input.body_radius_m()?;
    let ellipsoid = args
        .ellipsoid
        .as_deref()
        .map(Ellipsoid::parse)
        .transpose()?;
    let conversion = |q: Quantity| PointConversion {
        default_quantity: q,
        reference_radius_m: body_radius_m,
        ellipsoid: ellipsoid.clone(),
    };
    let mut observations = ObservationSet::default();
    for d in &sets {
        let points = args
            .input
            .read_with_columns(&d.path, d.columns.as_ref(), ctx)?;
        let name = d
            .name
            .clone()
            .unwrap_or_else(|| d.path.display().to_string());
        let index = observations.add_dataset(&name, d.weight, points.sigma.is_some())?;
        observations.push_point_file(
            &d.path,
            &points,
            &conversion(d.quantity.unwrap_or(default_quantity)),
            index,
        )?;
    }
    let space = ModelSpace::for_observations(
        &observations.observations,
        body_radius_m,
        args.gm_m3_s2,
        "--gm-m3-s2",
    )?;
    if args.secular_variation != args.epoch.is_some() {
        anyhow::bail!(kugel::Error::invalid(
            "--secular-variation and --epoch YEAR go together"
        ));
    }
    let start = args
        .start
        .as_deref()
        .map(kugel::io::model::read_model)
        .transpose()?;
    let setup = FitSetup {
        lmax: args.lmax,
        regularization,
        space,
        fixed_degrees: args
            .fix_degrees
            .as_deref()
            .map(parse_degrees)
            .transpose()?
            .unwrap_or_default(),
        normal_field: NormalField::parse(&args.normal_field)?,
        external_lmax: args.external_lmax,
        secular_epoch_year: args.epoch.filter(|_| args.secular_variation),
        start,
        robust: args.robust.as_deref().map(Robust::parse).transpose()?,
        solver,
    };
    let progress = TerminalProgress::new(ctx.quiet);
    let result = fit_observations_with_progress(&observations, &setup, &progress);
    progress.finish();
    let mut result = result?;
    if let ModelSpace::Generic { .. } = space {
        result.model.units = args.input.units.clone();
    }
    if !ctx.quiet {
        print_summary(args, &observations, &setup, &result);
    }
    for w in &result.warnings {
        eprintln!("warning: {w}");
    }
    let mut provenance = Provenance::from_command_line(&ctx.command_line);
    for d in &sets {
        provenance.add_input(&d.path)?;
    }
    provenance.lmax = Some(args.lmax);
    provenance.normalization = Some(result.model.normalization.name().to_string());
    // The rates are in the model file itself; external terms go to a file of their own
    // beside it (a different expansion, in (r/a)^l), written in the same output group.
    if let Some(block) = &result.external {
        let path = companion_path(&args.output, "external");
        write_model(&path, block, &provenance)?;
        if !ctx.quiet {
            crate::outputs::wrote(format!("wrote {} (external terms)", path.display()));
        }
    }
    write_model(&args.output, &result.model, &provenance)?;
    if !ctx.quiet {
        crate::outputs::wrote(format!("wrote {}", args.output.display()));
    }
    Ok(())
}

fn print_summary(args: &Args, set: &ObservationSet, setup: &FitSetup, result: &FitResult) {
    for it in &result.iterations {
        if result.iterations.len() > 1 {
            eprintln!(
                "pass {}: relative change {:.3e}, χ²/dof {:.4}{}",
                it.iteration,
                it.relative_change,
                it.chi2_per_dof,
                if setup.robust.is_some() {
                    format!(", {} rows down-weighted", it.downweighted_rows)
                } else {
                    String::new()
                }
            );
        }
    }
    let solver = &result.solver;
    eprintln!("solver: {}: {}", solver.plan.kind, solver.plan.reason);
    let condition = match solver.plan.kind {
        SolverKind::Direct => format!("condition ≈ {:.2e}", result.condition_estimate),
        SolverKind::Iterative => format!(
            "{} conjugate-gradient steps to relative residual {:.1e} (tolerance {:e}), condition not estimated",
            solver.iterations.unwrap_or(0),
            solver.relative_residual.unwrap_or(f64::NAN),
            kugel::observe::fit::iterative::CG_TOLERANCE
        ),
    };
    eprintln!(
        "fit to L = {} from {} observations ({}): residual RMS {:.6e}, χ²/dof {:.4}, λ = {:.3e}, \
         effective parameters {:.1}, {condition}; σ {}{}",
        args.lmax,
        set.len(),
        setup.regularization.describe(),
        result.residual_rms,
        result.chi2_per_dof,
        result.lambda,
        result.effective_parameters,
        if result.sigmas_scaled {
            "scaled by χ²/dof (not every observation has σ)"
        } else {
            "formal, from the input σ"
        },
        if solver.plan.kind == SolverKind::Iterative {
            " (approximate: block-diagonal-by-order inverse)"
        } else {
            ""
        }
    );
    if let Some(r) = &setup.robust {
        eprintln!(
            "robust ({}): {} of {} rows down-weighted",
            r.describe(),
            result.downweighted_rows,
            set.len()
        );
    }
    if result.datasets.len() > 1 || set.datasets.iter().any(|d| d.weight_factor != 1.0) {
        for d in &result.datasets {
            eprintln!(
                "  data set {}: {} observations, χ² {:.4e}, χ²/n {:.4}, residual RMS {:.4e}",
                d.name, d.observations, d.chi2, d.chi2_per_observation, d.residual_rms
            );
        }
    }
}

/// `field.nc` → `field_external.nc` (same folder and extension).
fn companion_path(output: &std::path::Path, suffix: &str) -> PathBuf {
    let stem = output
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let name = match output.extension() {
        Some(ext) => format!("{stem}_{suffix}.{}", ext.to_string_lossy()),
        None => format!("{stem}_{suffix}"),
    };
    output.with_file_name(name)
}
