//! tapers, regional_spectrum and regional_compare steps (`regional`: windows of a region,
//! localised multitaper spectra and comparisons; region files read by `io::region`; tables as
//! for the global spectra, SVG plots from `report::plots::regional`).

use super::spectra::{first_lines, write_svg, write_table};
use super::{ReportPart, StepEnv, StepOutcome};
use crate::error::{Error, Result};
use crate::io::tapers::write_tapers_netcdf;
use crate::pipeline::file_names::StepFiles;
use crate::pipeline::products::Product;
use crate::pipeline::step_spec::{RegionalCompareStep, RegionalSpectrumStep, TapersStep};
use crate::progress::Silent;
use crate::regional::{
    expected_localised_spectrum, localised_comparison, localised_spectrum, RegionSpec, TaperChoice,
    TaperSet, DEFAULT_MIN_CONCENTRATION,
};
use crate::report::html::Block;
use crate::report::plots::regional::{localised_comparison_svg, localised_spectrum_svg};

/// The windows of `region` (relative files from the config's folder).
fn windows(region: &str, lw: usize, keep: Option<TaperChoice>, env: &StepEnv) -> Result<TaperSet> {
    let spec: RegionSpec = region.parse()?;
    let mut set = spec
        .resolved_against(&env.job.base_dir)
        .taper_set(lw, keep, &Silent)?;
    // name the region as written in the config, not by the resolved path
    set.region = spec.to_string();
    Ok(set)
}

/// Writes a localised table with its title and the region's Shannon number.
fn write_regional_table(
    name: &str,
    mut table: crate::spectral::SpectralTable,
    (title, set): (&str, &TaperSet),
    env: &StepEnv,
    lmax: usize,
    out: &mut StepOutcome,
    what: &str,
) -> Result<()> {
    table.attribute("title", title);
    table.number_attribute("shannon_number", set.shannon_number);
    write_table(name, &table, env, lmax, out, what)
}

fn choice(tapers: Option<usize>) -> TaperChoice {
    tapers.map_or(
        TaperChoice::MinConcentration(DEFAULT_MIN_CONCENTRATION),
        TaperChoice::Count,
    )
}

fn window_numbers(set: &TaperSet, used: usize, out: &mut StepOutcome) {
    out.numbers.push((
        "windows used".into(),
        format!(
            "{used} of degree {} (Shannon number {:.2})",
            set.lmax_window, set.shannon_number
        ),
    ));
}

pub fn tapers(name: &str, step: &TapersStep, env: &StepEnv) -> Result<StepOutcome> {
    let set = windows(
        &step.region,
        step.window_lmax,
        step.keep.map(TaperChoice::Count),
        env,
    )?;
    let mut out = StepOutcome::default();
    let file = StepFiles(name).main("nc");
    write_tapers_netcdf(
        &env.staging_dir.join(&file),
        &set,
        &env.provenance_for(Some(set.lmax_window), None),
    )?;
    out.files
        .push((file, format!("windows concentrated in {}", set.region)));
    out.numbers.push((
        "Shannon number".into(),
        format!("{:.3}", set.shannon_number),
    ));
    out.numbers.push((
        format!("windows with concentration ≥ {DEFAULT_MIN_CONCENTRATION}"),
        set.count_at_least(DEFAULT_MIN_CONCENTRATION).to_string(),
    ));
    out.product = Some(Product::Windows(Box::new(set)));
    Ok(out)
}

pub fn spectrum(name: &str, step: &RegionalSpectrumStep, env: &StepEnv) -> Result<StepOutcome> {
    let model = env.model(&step.model)?;
    let choice = choice(step.tapers);
    let set = windows(&step.region, step.window_lmax, Some(choice), env)?;
    let local = localised_spectrum(model, &set, choice, &Silent)?;
    let global = crate::spectral::degree_variance(model);
    let expected = expected_localised_spectrum(&global, &local.window_power, local.lmax)?;
    let mut out = StepOutcome::default();
    let title = format!(
        "localised degree variance of {} in {}",
        step.model, set.region
    );
    write_regional_table(
        name,
        local.to_table(Some(&expected)),
        (&title, &set),
        env,
        local.lmax,
        &mut out,
        "localised spectrum",
    )?;
    let svg = localised_spectrum_svg(
        &local,
        Some(&expected),
        &format!("{name}: {} in {}", step.model, set.region),
    );
    write_svg(name, &svg, env, &mut out)?;
    out.report.push((
        ReportPart::Spectra,
        Block::Svg {
            svg,
            caption: format!(
                "localised degree variance of {} in {} ({} windows of degree {}); degrees {}..{} reliable",
                step.model,
                set.region,
                local.taper_count,
                local.lmax_window,
                local.lmax_window,
                local.lmax.saturating_sub(local.lmax_window)
            ),
        },
    ));
    window_numbers(&set, local.taper_count, &mut out);
    out.product = Some(Product::LocalisedSpectrum(Box::new(local)));
    Ok(out)
}

pub fn compare(name: &str, step: &RegionalCompareStep, env: &StepEnv) -> Result<StepOutcome> {
    let [first, second] = step.models.as_slice() else {
        return Err(Error::invalid("models: expected two model names"));
    };
    let (mut a, mut b) = (env.model(first)?.clone(), env.model(second)?.clone());
    if let Some(l0) = step.from_degree {
        for m in [&mut a, &mut b] {
            m.scale_by_degree(|l| if l < l0 { 0.0 } else { 1.0 });
        }
    }
    let choice = choice(step.tapers);
    let set = windows(&step.region, step.window_lmax, Some(choice), env)?;
    let cmp = localised_comparison(&a, &b, &set, choice, &Silent)?;
    let mut out = StepOutcome::default();
    let title = format!(
        "localised comparison of {first} (reference) and {second} in {}",
        set.region
    );
    write_regional_table(
        name,
        cmp.to_table(),
        (&title, &set),
        env,
        cmp.lmax,
        &mut out,
        "localised comparison",
    )?;
    let svg = localised_comparison_svg(
        &cmp,
        &format!("{name}: {first} vs {second} in {}", set.region),
    );
    write_svg(name, &svg, env, &mut out)?;
    let reliable: Vec<usize> = (0..=cmp.lmax).filter(|l| cmp.reliable[*l]).collect();
    let mean = |v: &[f64]| {
        let x: Vec<f64> = reliable
            .iter()
            .map(|l| v[*l])
            .filter(|x| x.is_finite())
            .collect();
        x.iter().sum::<f64>() / x.len().max(1) as f64
    };
    let summary = format!(
        "localised comparison of {first} and {second} in {}: {} windows of degree {}; mean correlation {:.3} and mean admittance {:.4e} over the reliable degrees {}..{}",
        set.region,
        cmp.taper_count,
        cmp.lmax_window,
        mean(&cmp.correlation.value),
        mean(&cmp.admittance.value),
        cmp.lmax_window,
        cmp.lmax.saturating_sub(cmp.lmax_window)
    );
    out.report.push((
        ReportPart::Comparisons,
        Block::Svg {
            svg,
            caption: first_lines(&summary),
        },
    ));
    window_numbers(&set, cmp.taper_count, &mut out);
    out.numbers.push((
        "mean localised correlation".into(),
        format!("{:.3}", mean(&cmp.correlation.value)),
    ));
    out.numbers.push((
        "mean localised admittance".into(),
        format!(
            "{:.4e} ({} per {})",
            mean(&cmp.admittance.value),
            cmp.units_a,
            cmp.units_b
        ),
    ));
    out.product = Some(Product::LocalisedComparison(Box::new(cmp)));
    Ok(out)
}
