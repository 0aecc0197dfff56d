//! grid and fit steps: scattered observations to a coefficient model (`observe::*`).

use super::{ReportPart, StepEnv, StepOutcome};
use crate::coeffs::Coefficients;
use crate::error::{Error, Result};
use crate::field::{Ellipsoid, NormalField, Quantity};
use crate::io::grid::write::{write_grid, GridFile};
use crate::io::model::write_model;
use crate::observe::fit::functional::ModelSpace;
use crate::observe::fit::observation::PointConversion;
use crate::observe::fit::{
    fit_observations, FitSetup, ObservationSet, Regularization, Robust, SolverRequest,
};
use crate::observe::gaps::GapPolicy;
use crate::observe::gridding::{grid_points, GriddingMethod, GriddingOptions};
use crate::observe::points::PointSet;
use crate::pipeline::file_names::StepFiles;
use crate::pipeline::products::{Points, Product};
use crate::pipeline::step_spec::{FitStep, GridStep};
use crate::report::html::Block;
use crate::report::raster::maps::{render_map_png, MapStyle};
use crate::sht::TransformPlan;

/// Points in the units the model is fitted in: a disturbing potential T (m² s⁻²) becomes the
/// dimensionless T/(GM/R), so the model is a potential model with GM and R; other values are
/// kept. Returns the set and the factor from model units back to the observed units.
pub(super) fn model_units_points(points: &Points, env: &StepEnv) -> Result<(PointSet, f64)> {
    if points.quantity != "potential" {
        return Ok((points.set.clone(), 1.0));
    }
    let body = &env.job.config.body;
    let gm = body.gm_m3_s2.ok_or_else(|| {
        Error::invalid("body.gm_m3_s2: needed to turn observed potentials into coefficients")
    })?;
    let scale = gm / body.radius_m;
    let mut set = points.set.clone();
    set.value.iter_mut().for_each(|v| *v /= scale);
    if let Some(s) = set.sigma.as_mut() {
        s.iter_mut().for_each(|v| *v /= scale);
    }
    Ok((set, scale))
}

/// Stamps the model's metadata: potential models carry GM and units "1".
fn stamp(model: &mut Coefficients, points: &Points, env: &StepEnv, name: &str, how: &str) {
    let body = &env.job.config.body;
    model.reference_radius_m = body.radius_m;
    if points.quantity == "potential" {
        model.gm_m3_s2 = body.gm_m3_s2;
        model.units = "1".into();
    } else {
        model.gm_m3_s2 = None;
        model.units = points.units.clone();
    }
    model
        .attributes
        .insert("title".into(), format!("{name}: {how}"));
}

pub fn grid(name: &str, step: &GridStep, env: &StepEnv) -> Result<StepOutcome> {
    let points = env.points(&step.input)?;
    if !matches!(points.quantity.as_str(), "value" | "potential") || points.set.extras.any() {
        return Err(Error::invalid(format!(
            "steps.{name}: gridding takes values or potentials on the sphere; '{}' holds {}{} — fit it with a fit step instead",
            step.input,
            points.quantity,
            if points.set.extras.any() { " with per-row quantity, altitude, height or time columns" } else { "" }
        )));
    }
    let lmax = step.lmax;
    let (set, scale) = model_units_points(points, env)?;
    let method = match step.method.as_deref() {
        Some("nearest") => GriddingMethod::Nearest {
            k: step.neighbours.unwrap_or(8),
        },
        _ => GriddingMethod::Kernel {
            radius_km: step
                .radius_km
                .unwrap_or_else(|| default_radius_km(env, lmax)),
        },
    };
    let gaps = match &step.gaps {
        Some(g) => GapPolicy::parse(g)?,
        None => GapPolicy::Nearest,
    };
    let options = GriddingOptions {
        method,
        gaps,
        body_radius_m: env.job.config.body.radius_m,
    };
    let gridded = grid_points(&set, lmax, &options)?;
    let plan = TransformPlan::new(lmax, &gridded.grid)?;
    let mut model = plan.analyse(&gridded.value)?;
    stamp(
        &mut model,
        points,
        env,
        name,
        &format!(
            "gridded ({}) and analysed to degree {lmax}",
            method.describe()
        ),
    );

    let mut out = StepOutcome::default();
    let prov = env.provenance_for(Some(lmax), None);
    let model_file = StepFiles(name).model_nc();
    write_model(&env.staging_dir.join(&model_file), &model, &prov)?;
    out.files.push((
        model_file,
        format!("coefficients to degree {lmax} from gridding"),
    ));

    let mut file =
        GridFile::from_engine_grid(&gridded.grid, format!("{name}: gridded observations"));
    file.push(
        "value",
        &format!("gridded {}", points.quantity),
        &points.units,
        None,
        gridded.value.mapv(|v| v * scale),
    );
    file.push(
        "count",
        "observations in each node's mean",
        "1",
        None,
        gridded.count.clone(),
    );
    file.push(
        "nearest_km",
        "distance to the nearest observation",
        "km",
        None,
        gridded.nearest_km.clone(),
    );
    let grid_file = StepFiles(name).gridded_nc();
    write_grid(
        &env.staging_dir.join(&grid_file),
        &file,
        &super::field::write_options(env, &prov),
    )?;
    out.files.push((
        grid_file,
        "gridded values, counts and distance to data".into(),
    ));

    let style = MapStyle {
        title: format!("{name}: distance to nearest observation"),
        units: "km".into(),
        degree_range: gridded.report.summary().chars().take(110).collect(),
        lat_deg: Some(gridded.grid.latitudes_deg()),
        lon0_deg: gridded.grid.lon0_rad.to_degrees(),
    };
    let png = render_map_png(&gridded.nearest_km, &style);
    let png_name = StepFiles(name).coverage_png();
    if env.job.config.output.wants("png") {
        crate::io::atomic::write_bytes_atomic(&env.staging_dir.join(&png_name), &png)?;
        out.files.push((png_name, "coverage map".into()));
    }
    out.report.push((
        ReportPart::Inputs,
        Block::Png {
            bytes: png,
            caption: format!(
                "{name}: distance from each grid node to the nearest observation ({})",
                gridded.report.summary()
            ),
        },
    ));
    out.numbers.push((
        "gap nodes".into(),
        format!("{} of {}", gridded.report.gap_nodes, gridded.report.nodes),
    ));
    out.product = Some(Product::Model(model));
    Ok(out)
}

/// Kernel radius when none is given: the half-wavelength πR/L of the band limit.
fn default_radius_km(env: &StepEnv, lmax: usize) -> f64 {
    std::f64::consts::PI * env.job.config.body.radius_m / 1000.0 / lmax.max(1) as f64
}

/// The observations of a fit step: every input's points as observations of its quantity (a
/// `quantity` column overrides it row by row), at their altitude or ellipsoidal height.
fn fit_observations_of(step: &FitStep, env: &StepEnv) -> Result<ObservationSet> {
    let mut set = ObservationSet::default();
    let names = step.input_names();
    for (k, input) in names.iter().enumerate() {
        let points = env.points(input)?;
        let quantity: Quantity = points.quantity.parse()?;
        let ellipsoid = match env.job.config.inputs.get(*input) {
            Some(crate::pipeline::input_spec::Input::Points(p)) => {
                p.ellipsoid.as_deref().map(Ellipsoid::parse).transpose()?
            }
            _ => None,
        };
        let weight = step.weights.as_ref().map_or(1.0, |w| w[k]);
        let d = set.add_dataset(input, weight, points.set.sigma.is_some())?;
        let path = env.job.input_path(input).unwrap_or_else(|| (*input).into());
        set.push_point_file(
            &path,
            &points.set,
            &PointConversion {
                default_quantity: quantity,
                reference_radius_m: env.job.config.body.radius_m,
                ellipsoid,
            },
            d,
        )?;
    }
    Ok(set)
}

pub fn fit(name: &str, step: &FitStep, env: &StepEnv) -> Result<StepOutcome> {
    let lmax = step.lmax;
    let set = fit_observations_of(step, env)?;
    let body = &env.job.config.body;
    let space = ModelSpace::for_observations(
        &set.observations,
        body.radius_m,
        body.gm_m3_s2,
        "body.gm_m3_s2",
    )?;
    let regularization = Regularization::parse(step.regularization_spec())?;
    let setup = FitSetup {
        lmax,
        regularization,
        space,
        fixed_degrees: step.fix_degrees.clone().unwrap_or_default(),
        normal_field: match &step.normal_field {
            Some(n) => NormalField::parse(n)?,
            None => NormalField::None,
        },
        external_lmax: step.external_lmax,
        secular_epoch_year: step.epoch,
        start: None,
        robust: step.robust.as_deref().map(Robust::parse).transpose()?,
        solver: SolverRequest::parse(step.solver_spec())?,
    };
    let result = fit_observations(&set, &setup)?;
    let mut model = result.model.clone();
    let first = env.points(step.input_names()[0])?;
    if let ModelSpace::Generic { .. } = space {
        model.units = first.units.clone();
    }
    model.attributes.insert(
        "title".into(),
        format!(
            "{name}: least-squares fit to degree {lmax}, {}",
            regularization.describe()
        ),
    );
    let units_of = |d: usize| -> String {
        set.observations
            .iter()
            .find(|o| o.dataset == d)
            .and_then(|o| o.quantity.units())
            .map(str::to_string)
            .unwrap_or_else(|| first.units.clone())
    };

    let mut out = StepOutcome::default();
    let mut prov = env.provenance_for(Some(lmax), None);
    prov.normalization = Some(model.normalization.name().to_string());
    prov.extra
        .push(("kugel_fit_regularization".into(), regularization.describe()));
    prov.extra.push((
        "kugel_fit_chi2_per_dof".into(),
        format!("{}", result.chi2_per_dof),
    ));
    for (d, summary) in result.datasets.iter().enumerate() {
        prov.extra.push((
            format!("kugel_fit_residual_rms_{}", summary.name),
            format!("{:e} {}", summary.residual_rms, units_of(d)),
        ));
    }
    let model_file = StepFiles(name).model_nc();
    write_model(&env.staging_dir.join(&model_file), &model, &prov)?;
    out.files.push((
        model_file,
        format!("fitted coefficients with sigmas to degree {lmax}"),
    ));
    for (d, summary) in result.datasets.iter().enumerate() {
        let of = if result.datasets.len() > 1 {
            format!(" ({})", summary.name)
        } else {
            String::new()
        };
        out.numbers.push((
            format!("residual RMS{of}"),
            format!("{:.4} {}", summary.residual_rms, units_of(d)),
        ));
        out.numbers.push((
            format!("χ²/n{of}"),
            format!("{:.3}", summary.chi2_per_observation),
        ));
    }
    if let ModelSpace::Magnetic { .. } = space {
        // a magnetic model's maps and values are one step from a declination
        out.cautions
            .push(crate::field::cautions::DECLINATION_CAUTION.to_string());
    }
    out.numbers
        .push(("χ²/dof".into(), format!("{:.3}", result.chi2_per_dof)));
    out.numbers
        .push(("λ".into(), format!("{:.3e}", result.lambda)));
    let rows = vec![
        vec!["observations".into(), set.len().to_string()],
        vec![
            "unknowns".into(),
            format!("{:.0}", result_unknowns(&result)),
        ],
        vec!["regularization".into(), regularization.describe()],
        vec!["λ".into(), format!("{:.3e}", result.lambda)],
        vec![
            "effective parameters".into(),
            format!("{:.1}", result.effective_parameters),
        ],
        vec!["χ²/dof".into(), format!("{:.3}", result.chi2_per_dof)],
        vec![
            "condition estimate".into(),
            if result.condition_estimate.is_finite() {
                format!("{:.3e}", result.condition_estimate)
            } else {
                "not estimated (iterative solver)".into()
            },
        ],
        vec![
            "solver".into(),
            match (result.solver.iterations, result.solver.relative_residual) {
                (Some(steps), Some(r)) => format!(
                    "{}: {steps} steps, relative residual {r:.1e}; σ approximate",
                    result.solver.plan.kind
                ),
                _ => result.solver.plan.kind.to_string(),
            },
        ],
        vec!["solver choice".into(), result.solver.plan.reason.clone()],
    ];
    out.report.push((
        ReportPart::Models,
        Block::Paragraph(format!(
            "Fit '{name}' of {}:",
            step.input_names()
                .iter()
                .map(|n| format!("'{n}'"))
                .collect::<Vec<_>>()
                .join(", ")
        )),
    ));
    out.report.push((
        ReportPart::Models,
        Block::Table {
            headers: vec!["quantity".into(), "value".into()],
            rows,
        },
    ));
    let dataset_rows = result
        .datasets
        .iter()
        .enumerate()
        .map(|(d, s)| {
            vec![
                s.name.clone(),
                s.observations.to_string(),
                format!("{}", set.datasets[d].weight_factor),
                format!("{:.1}", s.chi2),
                format!("{:.3}", s.chi2_per_observation),
                format!("{:.4} {}", s.residual_rms, units_of(d)),
            ]
        })
        .collect();
    out.report.push((
        ReportPart::Models,
        Block::Table {
            headers: vec![
                "data set".into(),
                "observations".into(),
                "weight factor".into(),
                "χ²".into(),
                "χ²/n".into(),
                "residual RMS".into(),
            ],
            rows: dataset_rows,
        },
    ));
    out.report.push((
        ReportPart::Models,
        Block::Paragraph(format!(
            "χ² of a data set is Σ w·r² over its n rows (w = weight factor/σ², r = observed − \
             model). When the stated σ are right and the model can explain the data, χ²/n is \
             near 1 − p/n, where p ≥ 0 is the set's share of the fit's {:.1} effective \
             parameters (the shares add up to it).",
            result.effective_parameters
        )),
    ));
    if result.iterations.len() > 1 {
        out.report.push((
            ReportPart::Models,
            Block::Paragraph(format!(
                "{name}: {} passes (Gauss–Newton / reweighting); last relative change {:.2e}; {} rows down-weighted",
                result.iterations.len(),
                result.iterations.last().map_or(f64::NAN, |i| i.relative_change),
                result.downweighted_rows
            )),
        ));
    }
    for w in &result.warnings {
        out.report.push((
            ReportPart::Models,
            Block::Paragraph(format!("Warning ({name}): {w}")),
        ));
    }
    out.product = Some(Product::Model(model));
    Ok(out)
}

/// Number of free unknowns of a fit, from its effective-parameter bookkeeping.
fn result_unknowns(result: &crate::observe::fit::FitResult) -> f64 {
    result.unknowns as f64
}
