//! analyze and filter steps: grids to coefficients (`sht`), degree-domain filters
//! (`spectral::filter`).

use super::{ReportPart, StepEnv, StepOutcome};
use crate::error::{Error, Result};
use crate::io::filter_spectra::parse_filter_chain;
use crate::io::model::write_model;
use crate::pipeline::file_names::StepFiles;
use crate::pipeline::products::Product;
use crate::pipeline::step_spec::{AnalyzeStep, FilterStep};
use crate::report::html::Block;
use crate::sht::TransformPlan;

pub fn analyze(name: &str, step: &AnalyzeStep, env: &StepEnv) -> Result<StepOutcome> {
    let input = &step.input;
    let grid = env
        .product(input)?
        .as_grid()
        .ok_or_else(|| Error::invalid(format!("'{input}' is not a grid")))?;
    let lmax = step.lmax;
    grid.require_complete()?;
    grid.check_degree(lmax)?;
    let plan = TransformPlan::new(lmax, &grid.grid)?;
    let mut model = plan.analyse(&grid.field)?;
    model.reference_radius_m = env.job.config.body.radius_m;
    model.units = grid.units.clone();
    model.attributes.insert(
        "title".into(),
        format!("{name}: analysis of {input} to degree {lmax}"),
    );
    let mut out = StepOutcome::default();
    let file = StepFiles(name).model_nc();
    write_model(
        &env.staging_dir.join(&file),
        &model,
        &env.provenance_for(Some(lmax), None),
    )?;
    out.files
        .push((file, format!("coefficients of {input} to degree {lmax}")));
    let (nlat, nlon) = grid.grid.shape();
    out.report.push((
        ReportPart::Inputs,
        Block::Paragraph(format!(
            "Grid '{input}' ({}): {nlat} × {nlon} cells, variable '{}' in {}, analysed to degree {lmax}.",
            grid.path.display(),
            grid.variable,
            grid.units
        )),
    ));
    out.product = Some(Product::Model(model));
    Ok(out)
}

pub fn filter(name: &str, step: &FilterStep, env: &StepEnv) -> Result<StepOutcome> {
    let mut model = env.model(&step.model)?.clone();
    let chain = parse_filter_chain(&step.filter, Some(&env.job.base_dir))?;
    chain.apply(&mut model)?;
    let mut out = StepOutcome::default();
    let file = StepFiles(name).model_nc();
    let prov = env.provenance_for(Some(model.lmax()), Some(chain.describe()));
    write_model(&env.staging_dir.join(&file), &model, &prov)?;
    out.files.push((
        file,
        format!("filtered coefficients ({})", chain.describe()),
    ));
    out.product = Some(Product::Model(model));
    Ok(out)
}
