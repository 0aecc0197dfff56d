//! spectrum and compare steps (`spectral::spectrum`, `spectral::compare`, SVG plots from
//! `report::plots`).

use super::{ReportPart, StepEnv, StepOutcome};
use crate::error::Result;
use crate::io::degree_table::{write_degree_table_csv, write_degree_table_netcdf};
use crate::pipeline::file_names::StepFiles;
use crate::pipeline::products::Product;
use crate::pipeline::step_spec::{CompareStep, SpectrumStep};
use crate::report::html::Block;
use crate::report::plots::{comparison_svg, spectrum_svg};
use crate::spectral::{CompareOptions, Comparison, SpectralTable, Spectrum, SpectrumOptions};

pub(super) fn write_table(
    name: &str,
    table: &SpectralTable,
    env: &StepEnv,
    lmax: usize,
    out: &mut StepOutcome,
    what: &str,
) -> Result<()> {
    let degree_table = table.to_degree_table();
    let cfg = &env.job.config.output;
    if cfg.wants("netcdf") {
        let file = StepFiles(name).main("nc");
        write_degree_table_netcdf(
            &env.staging_dir.join(&file),
            &degree_table,
            &env.provenance_for(Some(lmax), None),
        )?;
        out.files.push((file, what.to_string()));
    }
    if cfg.wants("csv") {
        let file = StepFiles(name).main("csv");
        write_degree_table_csv(
            &env.staging_dir.join(&file),
            &degree_table,
            &env.provenance_for(Some(lmax), None),
        )?;
        out.files.push((
            format!("{file}.json"),
            "units and provenance of the CSV".into(),
        ));
        out.files.push((file, format!("{what} (CSV)")));
    }
    Ok(())
}

pub(super) fn write_svg(name: &str, svg: &str, env: &StepEnv, out: &mut StepOutcome) -> Result<()> {
    if env.job.config.output.wants("svg") {
        let file = StepFiles(name).main("svg");
        crate::io::atomic::write_bytes_atomic(&env.staging_dir.join(&file), svg.as_bytes())?;
        out.files.push((file, "plot".into()));
    }
    Ok(())
}

pub fn spectrum(name: &str, step: &SpectrumStep, env: &StepEnv) -> Result<StepOutcome> {
    let model = env.model(&step.model)?;
    let options = SpectrumOptions {
        confidence: step.confidence.unwrap_or(0.95),
        fit_range: step.fit_range.map(|[a, b]| (a, b)),
        lowes_radius_m: None,
    };
    let spectrum = Spectrum::compute(model, &options)?;
    let mut out = StepOutcome::default();
    write_table(
        name,
        &spectrum.to_table(),
        env,
        model.lmax(),
        &mut out,
        "degree-variance spectrum",
    )?;
    let svg = spectrum_svg(&spectrum, &format!("{name}: spectrum of {}", step.model));
    write_svg(name, &svg, env, &mut out)?;
    out.report.push((
        ReportPart::Spectra,
        Block::Svg {
            svg,
            caption: first_lines(&spectrum.summary()),
        },
    ));
    if let Some(p) = &spectrum.power_law {
        out.numbers.push((
            "power-law exponent".into(),
            format!("{:.2} ± {:.2}", p.exponent, p.exponent_sigma),
        ));
    }
    out.product = Some(Product::Spectrum(Box::new(spectrum)));
    Ok(out)
}

pub fn compare(name: &str, step: &CompareStep, env: &StepEnv) -> Result<StepOutcome> {
    let names = &step.models;
    let [first, second] = names.as_slice() else {
        return Err(crate::error::Error::invalid(
            "models: expected two model names",
        ));
    };
    let (mut a, mut b) = (env.model(first)?.clone(), env.model(second)?.clone());
    if let Some(l0) = step.from_degree {
        for m in [&mut a, &mut b] {
            m.scale_by_degree(|l| if l < l0 { 0.0 } else { 1.0 });
        }
    }
    let (a, b) = (&a, &b);
    let options = CompareOptions {
        confidence: step.confidence.unwrap_or(0.95),
        force: step.cross_quantity.unwrap_or(false),
    };
    let mut cmp = Comparison::compute(a, b, &options)?;
    cmp.reference_label = names[0].clone();
    cmp.other_label = names[1].clone();
    let mut out = StepOutcome::default();
    write_table(
        name,
        &cmp.to_table(),
        env,
        cmp.lmax,
        &mut out,
        "degree-by-degree comparison",
    )?;
    let svg = comparison_svg(&cmp, &format!("{name}: {} vs {}", names[0], names[1]));
    write_svg(name, &svg, env, &mut out)?;
    out.report.push((
        ReportPart::Comparisons,
        Block::Svg {
            svg,
            caption: first_lines(&cmp.summary()),
        },
    ));
    let agreement = match (cmp.agreement_degree, cmp.agreement_half_wavelength_km) {
        (Some(l), Some(km)) => format!("degree {l} ({km:.0} km)"),
        (Some(l), None) => format!("degree {l}"),
        _ => "none".into(),
    };
    if step.cross_quantity == Some(true) {
        // different quantities never "agree"; their relation is the correlation and admittance
        let l = cmp.lmax.min(20);
        out.numbers.push((
            format!("admittance at degree {l}"),
            format!("{:.4e} {}", cmp.admittance[l], "(table column admittance)"),
        ));
    } else {
        out.numbers.push(("agree up to".into(), agreement));
    }
    let mean_r = mean_correlation(&cmp);
    out.numbers
        .push(("mean correlation (l ≥ 2)".into(), format!("{mean_r:.3}")));
    out.product = Some(Product::Comparison(Box::new(cmp)));
    Ok(out)
}

fn mean_correlation(c: &Comparison) -> f64 {
    let v: Vec<f64> = c
        .correlation
        .iter()
        .skip(2)
        .copied()
        .filter(|x| x.is_finite())
        .collect();
    v.iter().sum::<f64>() / v.len().max(1) as f64
}

pub(super) fn first_lines(text: &str) -> String {
    text.lines().take(4).collect::<Vec<_>>().join(" ")
}
