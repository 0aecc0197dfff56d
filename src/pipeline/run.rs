//! Runs a checked job: loads inputs, runs the steps level by level (the syntheses of one level
//! in parallel when their memory fits), writes the report, then moves every output into place.

use std::collections::BTreeMap;
use std::time::Instant;

use rayon::prelude::*;

use super::config::{Input, Step};
use super::job::Job;
use super::outputs::{OutputFile, Staging};
use super::products::{Points, Product};
use super::steps::{run_step, ReportPart, StepEnv, StepOutcome};
use crate::error::Result;
use crate::io::grid::read::{read_grid, GridReadOptions};
use crate::io::model::read_model;
use crate::io::provenance::Provenance;
use crate::observe::points::read_points;
use crate::progress::Progress;
use crate::report::html::Block;

/// How to run.
#[derive(Debug, Clone, Default)]
pub struct RunOptions {
    pub command_line: String,
    pub quiet: bool,
    pub verbose: bool,
}

/// One row of the summary table.
#[derive(Debug, Clone)]
pub struct StepRow {
    pub name: String,
    pub kind: String,
    pub seconds: f64,
    pub numbers: Vec<(String, String)>,
}

/// What a run did.
#[derive(Debug, Clone)]
pub struct RunSummary {
    pub steps: Vec<StepRow>,
    pub files: Vec<OutputFile>,
    pub seconds: f64,
    /// What was cleaned up before the run (leftovers of interrupted runs, a stale lock).
    pub notes: Vec<String>,
}

/// Runs `job`, reporting one unit of progress per step. On failure nothing is left in the
/// output folder but what was there before.
pub fn run_job(job: &Job, options: &RunOptions, progress: &dyn Progress) -> Result<RunSummary> {
    crate::memory::check_fits("this job (see the memory estimate)", job.memory.peak_bytes)?;
    let mut staging = Staging::create(&job.output_dir)?;
    let notes = std::mem::take(&mut staging.notes);
    for n in &notes {
        progress.note(n);
    }
    match run_staged(job, options, progress, &mut staging) {
        Ok((steps, seconds)) => {
            let files = staging.commit()?;
            Ok(RunSummary {
                steps,
                files,
                seconds,
                notes,
            })
        }
        Err(e) => {
            staging.discard();
            Err(e)
        }
    }
}

fn run_staged(
    job: &Job,
    options: &RunOptions,
    progress: &dyn Progress,
    staging: &mut Staging,
) -> Result<(Vec<StepRow>, f64)> {
    let start = Instant::now();
    let mut provenance = Provenance::from_command_line(options.command_line.clone());
    provenance.config_digest = Some(job.config_sha256.clone());
    for name in job.config.inputs.keys() {
        if let Some(p) = job.input_path(name) {
            provenance.add_input(&p)?;
        }
    }
    let mut products = BTreeMap::new();
    let mut report: Vec<(ReportPart, Block)> = Vec::new();
    for (name, input) in &job.config.inputs {
        let (product, blocks) = load_input(job, name, input)?;
        report.extend(blocks.into_iter().map(|b| (ReportPart::Inputs, b)));
        products.insert(name.clone(), product);
    }
    let steps_total = job.step_order().len() as u64;
    progress.stage("steps", steps_total);
    let mut rows = Vec::new();
    let mut cautions: Vec<String> = Vec::new();
    for level in &job.levels {
        let names: Vec<&String> = level
            .iter()
            .filter(|n| job.config.steps.contains_key(n.as_str()))
            .collect();
        // the syntheses of a level run in parallel when their maps fit in memory together;
        // the other steps of the level run one after another
        let syntheses: Vec<&String> = names
            .iter()
            .copied()
            .filter(|n| matches!(job.config.steps[n.as_str()], Step::Synthesize(_)))
            .collect();
        let parallel_bytes: u64 = job
            .memory
            .items
            .iter()
            .filter(|item| syntheses.iter().any(|n| **n == item.step))
            .map(|item| item.bytes)
            .sum();
        let parallel = syntheses.len() > 1
            && crate::memory::check_fits("parallel syntheses", parallel_bytes).is_ok();
        let env = StepEnv {
            job,
            staging_dir: &staging.dir,
            provenance: &provenance,
            products: &products,
            quiet: options.quiet,
        };
        let run_one = |name: &String| -> Result<(String, StepOutcome, f64)> {
            let t = Instant::now();
            let step = &job.config.steps[name.as_str()];
            let outcome = run_step(name, step, &env).map_err(|e| {
                crate::Error::invalid(format!("step '{name}' ({}): {e}", step.kind().name()))
            })?;
            Ok((name.clone(), outcome, t.elapsed().as_secs_f64()))
        };
        let mut results: Vec<(String, StepOutcome, f64)> = Vec::new();
        if parallel {
            progress.note(&format!("{} syntheses in parallel", syntheses.len()));
            results = syntheses
                .par_iter()
                .map(|n| run_one(n))
                .collect::<Result<_>>()?;
        }
        for n in &names {
            if parallel && syntheses.contains(n) {
                continue;
            }
            progress.note(&format!(
                "{n} ({})",
                job.config.steps[n.as_str()].kind().name()
            ));
            results.push(run_one(n)?);
        }
        // records, report blocks and the summary follow the level's name order, whatever ran
        // first, so outputs do not depend on scheduling
        results.sort_by(|a, b| a.0.cmp(&b.0));
        progress.advance(results.len() as u64);
        for (name, outcome, seconds) in results {
            if options.verbose && !options.quiet {
                eprintln!(
                    "step {name}: {:.1} s, {} file(s)",
                    seconds,
                    outcome.files.len()
                );
            }
            for (file, what) in &outcome.files {
                staging.record(file, what.clone())?;
            }
            report.extend(outcome.report);
            for c in outcome.cautions {
                if !cautions.contains(&c) {
                    cautions.push(c);
                }
            }
            rows.push(StepRow {
                name: name.clone(),
                kind: job.config.steps[name.as_str()].kind().name().to_string(),
                seconds,
                numbers: outcome.numbers,
            });
            if let Some(p) = outcome.product {
                products.insert(name, p);
            }
        }
    }
    if job.config.output.wants("html") {
        let html =
            super::report::build(job, &provenance, &report, &rows, &staging.files, &cautions);
        staging.write_bytes(
            "report.html",
            html.as_bytes(),
            "the run report (open in a browser)",
        )?;
    }
    Ok((rows, start.elapsed().as_secs_f64()))
}

fn load_input(job: &Job, name: &str, input: &Input) -> Result<(Product, Vec<Block>)> {
    let path = job.input_path(name).unwrap_or_default();
    match input {
        Input::Points(input) => {
            let options = super::job::point_read_options(name, input);
            let (set, read) = read_points(&path, &options)?;
            let quantity = input.quantity.clone().unwrap_or_else(|| "value".into());
            let units = input.units.clone().unwrap_or_else(|| {
                quantity
                    .parse::<crate::field::Quantity>()
                    .ok()
                    .and_then(|q| q.units())
                    .unwrap_or("1")
                    .into()
            });
            let style = crate::report::raster::maps::MapStyle {
                title: format!("{name}: observations"),
                units: units.clone(),
                degree_range: format!(
                    "{} points from {}",
                    set.len(),
                    path.file_name()
                        .map(|f| f.to_string_lossy().to_string())
                        .unwrap_or_default()
                ),
                ..Default::default()
            };
            let png = crate::report::raster::maps::render_points_png(
                &set.lat_deg,
                &set.lon_deg,
                &set.value,
                &style,
            );
            let blocks = vec![
                Block::Paragraph(format!("Point set '{name}': {}", read.summary())),
                Block::Png {
                    bytes: png,
                    caption: format!("{name}: observation sites coloured by value ({units})"),
                },
            ];
            Ok((
                Product::Points(Points {
                    set,
                    quantity,
                    units,
                }),
                blocks,
            ))
        }
        Input::Grid(input) => {
            let g = read_grid(
                &path,
                &GridReadOptions {
                    variable: input.variable.clone(),
                    index: None,
                },
            )?;
            let (nlat, nlon) = g.grid.shape();
            let style = crate::report::raster::maps::MapStyle {
                title: format!("{name}: {}", g.variable),
                units: g.units.clone(),
                degree_range: format!("input grid {nlat} x {nlon}"),
                lat_deg: Some(g.grid.latitudes_deg()),
                lon0_deg: g.grid.lon0_rad.to_degrees(),
            };
            let png = crate::report::raster::maps::render_map_png(&g.field, &style);
            let blocks = vec![Block::Png {
                bytes: png,
                caption: format!("{name}: input grid {} ({})", path.display(), g.units),
            }];
            Ok((Product::Grid(Box::new(g)), blocks))
        }
        Input::Model(_) => {
            let m = read_model(&path)?;
            let blocks = vec![Block::Paragraph(format!(
                "Model '{name}' ({}): degree {}, {} normalisation, units {}",
                path.display(),
                m.lmax(),
                m.normalization,
                m.units
            ))];
            Ok((Product::Model(m), blocks))
        }
    }
}
