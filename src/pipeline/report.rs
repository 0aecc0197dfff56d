//! Assembles the run's HTML report from what the steps produced (`report::html` draws it).

use super::estimate::human_bytes;
use super::job::Job;
use super::outputs::OutputFile;
use super::run::StepRow;
use super::steps::ReportPart;
use crate::io::provenance::Provenance;
use crate::report::html::{Block, Report};

/// The caution printed in every report whose body is a gravity model: always applies to
/// geoid-type heights and is harmless otherwise.
const GENERAL_CAUTION: &str = "kugel's results are model computations. Official models, local codes \
and licensed professional practice govern any decision about navigation, engineering or legal heights.";

pub fn build(
    job: &Job,
    provenance: &Provenance,
    blocks: &[(ReportPart, Block)],
    rows: &[StepRow],
    files: &[OutputFile],
    cautions: &[String],
) -> String {
    let title = job
        .config
        .job
        .title
        .clone()
        .unwrap_or_else(|| "kugel run".into());
    let body = job
        .config
        .body
        .name
        .clone()
        .unwrap_or_else(|| "the body".into());
    let mut report = Report::new(
        title,
        format!(
            "{body}, reference radius {:.1} km — kugel {}",
            job.config.body.radius_m / 1e3,
            env!("CARGO_PKG_VERSION")
        ),
    );
    let s = report.section("Cautions");
    for c in cautions {
        s.caution(c.clone());
    }
    s.caution(GENERAL_CAUTION);
    if let Some(d) = &job.config.job.description {
        report.section("About this job").paragraph(d.clone());
    }
    let summary = report.section("Summary");
    let table: Vec<Vec<String>> = rows
        .iter()
        .map(|r| {
            let nums = r
                .numbers
                .iter()
                .map(|(k, v)| format!("{k}: {v}"))
                .collect::<Vec<_>>()
                .join("; ");
            vec![
                r.name.clone(),
                r.kind.clone(),
                format!("{:.1}", r.seconds),
                nums,
            ]
        })
        .collect();
    summary.table(&["step", "kind", "seconds", "key numbers"], table);
    for (part, heading) in [
        (ReportPart::Inputs, "Inputs and coverage"),
        (ReportPart::Models, "Models"),
        (ReportPart::Spectra, "Spectra"),
        (ReportPart::Comparisons, "Comparisons"),
        (ReportPart::Maps, "Maps"),
        (ReportPart::Residuals, "Residual statistics"),
    ] {
        let mine: Vec<&Block> = blocks
            .iter()
            .filter(|(p, _)| *p == part)
            .map(|(_, b)| b)
            .collect();
        if mine.is_empty() {
            continue;
        }
        let s = report.section(heading);
        s.blocks.extend(mine.into_iter().cloned());
    }
    let files_rows = files
        .iter()
        .map(|f| vec![f.name.clone(), human_bytes(f.bytes), f.what.clone()])
        .collect();
    report
        .section("Files written")
        .table(&["file", "size", "content"], files_rows);
    let mut prov = String::new();
    for (k, v) in provenance.to_attributes() {
        prov.push_str(&format!("{k}: {v}\n"));
    }
    prov.push_str(&format!("source: kugel {}\n", env!("CARGO_PKG_VERSION")));
    let p = report.section("Provenance");
    p.preformatted(prov);
    p.preformatted(job.describe());
    report.to_html()
}
