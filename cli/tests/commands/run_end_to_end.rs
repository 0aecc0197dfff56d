//! End to end: a reduced demo (generated here from the invented scenario) runs from a config in
//! a temporary folder, its outputs reopen with kugel's readers, a rerun gives the same data,
//! and a failing run leaves no outputs.

use std::path::Path;

use kugel::io::degree_table::read_degree_table;
use kugel::io::grid::read::{read_grid, GridReadOptions};
use kugel::io::model::read_model;
use kugel::pipeline::run::{run_job, RunOptions};
use kugel::pipeline::Job;
use kugel::progress::Silent;
use kugel_cli::demo::{write_demo_with, Scenario, SurveyDesign};

fn small_world(dir: &Path) {
    let mut scenario = Scenario::oressa();
    scenario.truth_lmax = 24;
    let mut early = SurveyDesign::wickline();
    early.points = 800;
    let mut late = SurveyDesign::halyard();
    late.points = 1500;
    write_demo_with(&dir.join("data"), &scenario, &[early, late], |_| {}).unwrap();
    std::fs::copy(
        concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/../tests/fixtures/pipeline/small.toml"
        ),
        dir.join("job.toml"),
    )
    .unwrap();
}

#[test]
fn reduced_demo_runs_and_outputs_reopen() {
    let tmp = tempfile::tempdir().unwrap();
    small_world(tmp.path());
    let job = Job::load(&tmp.path().join("job.toml")).unwrap();
    let options = RunOptions {
        command_line: "kugel run job.toml".into(),
        quiet: true,
        verbose: false,
    };
    let summary = run_job(&job, &options, &Silent).unwrap();
    let out = tmp.path().join("out");

    // models reopen with the model reader and carry the run's provenance
    let fit = read_model(&out.join("late_fit_model.nc")).unwrap();
    assert_eq!(fit.lmax(), 12);
    assert_eq!(fit.gm_m3_s2, Some(6.21e12));
    assert!(fit.sigmas().is_some(), "fits carry sigmas");
    // the fitted degree-2 coefficients are close to the truth: the data are σ = 8 m² s⁻² on
    // T ≈ 3e6·C, so errors of a few 1e-7 (common practice: noise/√N scaling) are expected
    let truth = read_model(&tmp.path().join("data/truth_gravity.nc")).unwrap();
    for m in 0..=2 {
        assert!(
            (fit.c(2, m) - truth.c(2, m)).abs() < 2e-6,
            "C2{m}: {} vs {}",
            fit.c(2, m),
            truth.c(2, m)
        );
    }
    // maps reopen with the grid reader, with both variables
    let anomaly = read_grid(
        &out.join("maps.nc"),
        &GridReadOptions {
            variable: Some("gravity_anomaly".into()),
            index: None,
        },
    )
    .unwrap();
    assert_eq!(anomaly.units, "mGal");
    assert!(anomaly.field.iter().all(|v| v.is_finite()));
    let geoid = read_grid(
        &out.join("maps.nc"),
        &GridReadOptions {
            variable: Some("geoid".into()),
            index: None,
        },
    )
    .unwrap();
    assert_eq!(geoid.units, "m");
    // spectra and comparisons reopen as degree tables
    let spectrum = read_degree_table(&out.join("late_spectrum.nc")).unwrap();
    assert_eq!(spectrum.columns[0].values.len(), 13);
    read_degree_table(&out.join("surveys.csv")).unwrap();
    // residual table, pictures and the report exist
    let residuals =
        kugel::io::csv_table::read_csv_table(&out.join("residuals_residuals.csv")).unwrap();
    assert_eq!(residuals.rows.len(), 1500);
    for f in [
        "maps_gravity_anomaly.png",
        "maps_geoid.png",
        "surveys.svg",
        "report.html",
    ] {
        assert!(out.join(f).is_file(), "{f} missing");
    }
    let png = std::fs::read(out.join("maps_geoid.png")).unwrap();
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    // the summary lists every step, and the residual RMS is above the noise floor σ = 8
    assert_eq!(summary.steps.len(), 10);
    let res = summary
        .steps
        .iter()
        .find(|s| s.name == "residuals")
        .unwrap();
    let rms: f64 = res.numbers[0]
        .1
        .split_whitespace()
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!(rms > 7.0 && rms < 200.0, "residual RMS {rms}");

    // the report: one self-contained document with every section, embedded pictures and the
    // geoid caution
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    for heading in [
        "Cautions",
        "Summary",
        "Inputs and coverage",
        "Spectra",
        "Comparisons",
        "Maps",
        "Residual statistics",
        "Provenance",
    ] {
        assert!(
            html.contains(&format!("<h2>{heading}</h2>")),
            "section {heading} missing"
        );
    }
    assert!(html.matches("data:image/png;base64,").count() >= 5);
    assert!(html.contains("<svg"));
    assert!(html.contains("legal height"), "geoid caution");
    assert!(!html.contains("src=\"http"), "nothing loaded from outside");
    assert!(html.contains(&job.config_sha256));

    // no staging folder is left behind; a rerun gives identical data
    let leftovers: Vec<_> = std::fs::read_dir(&out)
        .unwrap()
        .flatten()
        .filter(|e| e.file_name().to_string_lossy().starts_with('.'))
        .collect();
    assert!(leftovers.is_empty());
    let first = read_model(&out.join("late_fit_model.nc")).unwrap();
    let first_map = read_grid(
        &out.join("maps.nc"),
        &GridReadOptions {
            variable: Some("geoid".into()),
            index: None,
        },
    )
    .unwrap();
    run_job(&job, &options, &Silent).unwrap();
    let second = read_model(&out.join("late_fit_model.nc")).unwrap();
    assert_eq!(first.c_packed(), second.c_packed());
    assert_eq!(first.s_packed(), second.s_packed());
    let second_map = read_grid(
        &out.join("maps.nc"),
        &GridReadOptions {
            variable: Some("geoid".into()),
            index: None,
        },
    )
    .unwrap();
    assert_eq!(first_map.field, second_map.field);
}

#[test]
fn failed_run_leaves_no_outputs() {
    let tmp = tempfile::tempdir().unwrap();
    small_world(tmp.path());
    // an analysis beyond what the topography grid resolves fails only when the grid is read
    let text = std::fs::read_to_string(tmp.path().join("job.toml")).unwrap();
    let text = text.replace(
        "input = \"topography\"\nlmax = 16",
        "input = \"topography\"\nlmax = 200",
    );
    std::fs::write(tmp.path().join("job.toml"), text).unwrap();
    let job = Job::load(&tmp.path().join("job.toml")).unwrap();
    let err = run_job(
        &job,
        &RunOptions {
            quiet: true,
            ..Default::default()
        },
        &Silent,
    )
    .unwrap_err()
    .to_string();
    assert!(err.contains("topo_model"), "{err}");
    let left: Vec<_> = std::fs::read_dir(tmp.path().join("out"))
        .unwrap()
        .flatten()
        .collect();
    assert!(
        left.is_empty(),
        "left behind: {:?}",
        left.iter().map(|e| e.file_name()).collect::<Vec<_>>()
    );
}
