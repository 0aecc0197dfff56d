//! analyse and filter steps: grids to coefficients (`sht`), degree-domain filters
//! (`spectral::filter`).

use super::{ReportPart, StepEnv, StepOutcome};
use crate::error::{Error, Result};
use crate::io::model::write_model;
use crate::pipeline::config::StepSpec;
use crate::pipeline::products::Product;
use crate::report::html::Block;
use crate::sht::TransformPlan;
use crate::spectral::filter::FilterChain;

pub fn analyse(name: &str, step: &StepSpec, env: &StepEnv) -> Result<StepOutcome> {
    let input = step
        .input
        .as_ref()
        .ok_or_else(|| Error::invalid("analyse needs an input"))?;
    let grid = env
        .product(input)?
        .as_grid()
        .ok_or_else(|| Error::invalid(format!("'{input}' is not a grid")))?;
    let lmax = step.lmax.unwrap_or(0);
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
    let file = format!("{name}_model.nc");
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

pub fn filter(name: &str, step: &StepSpec, env: &StepEnv) -> Result<StepOutcome> {
    let mut model = env.model(step.model.as_ref())?.clone();
    let spec = step.filter.as_deref().unwrap_or_default();
    let chain = FilterChain::parse_relative_to(spec, &env.job.base_dir)?;
    chain.apply(&mut model)?;
    let mut out = StepOutcome::default();
    let file = format!("{name}_model.nc");
    let prov = env.provenance_for(Some(model.lmax()), Some(chain.describe()));
    write_model(&env.staging_dir.join(&file), &model, &prov)?;
    out.files.push((
        file,
        format!("filtered coefficients ({})", chain.describe()),
    ));
    out.product = Some(Product::Model(model));
    Ok(out)
}
