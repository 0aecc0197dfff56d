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

/// The reduced demo world: the three campaigns with fewer sites, truths of low degree (the
/// gravity truth band-limited at the fits' degree 12, the magnetic at 8).
pub fn small_world(dir: &Path) {
    let mut scenario = Scenario::oressa();
    scenario.truth_lmax = 24;
    scenario.gravity_lmax = 12;
    scenario.magnetic_lmax = 8;
    let mut early = SurveyDesign::wickline();
    early.sites = 3000;
    let mut late = SurveyDesign::halyard();
    late.sites = 2000;
    let mut mag = SurveyDesign::brindle();
    mag.sites = 400;
    write_demo_with(&dir.join("data"), &scenario, &[early, late, mag], |_| {}).unwrap();
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
    // the joint fit's degree-2 coefficients are close to the truth: the orbiter's 3,000
    // disturbances of σ = 0.4 mGal at ~100 km, where δg ≈ 4e5 mGal·C at degree 2, give
    // errors near 0.4/√3000/4e5 ≈ 2e-8 (common practice: noise/√N scaling); 1e-7 is ~5σ
    let joint = read_model(&out.join("joint_fit_model.nc")).unwrap();
    let truth = read_model(&tmp.path().join("data/truth_gravity.nc")).unwrap();
    for m in 0..=2 {
        assert!(
            (joint.c(2, m) - truth.c(2, m)).abs() < 1e-7,
            "C2{m}: {} vs {}",
            joint.c(2, m),
            truth.c(2, m)
        );
    }
    let magnetic = read_model(&out.join("mag_fit_model.nc")).unwrap();
    assert_eq!(magnetic.units, "nT");
    assert_eq!(magnetic.lmax(), 8);
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
    let residuals = kugel::io::csv_table::read_csv_table(&out.join("residuals.csv")).unwrap();
    assert_eq!(residuals.rows.len(), 2000);
    assert_eq!(
        residuals.headers,
        [
            "lat_deg",
            "lon_deg",
            "altitude_km",
            "quantity",
            "observed",
            "model",
            "residual"
        ]
    );
    // the magnetic residuals are per component, each row at its own altitude, with the
    // declination caution in the sidecar
    let mag = kugel::io::csv_table::read_csv_table(&out.join("mag_residuals.csv")).unwrap();
    assert_eq!(mag.rows.len(), 1200);
    let components: Vec<&str> = mag.rows.iter().take(3).map(|r| r[3].as_str()).collect();
    assert_eq!(components, ["x", "y", "z"]);
    let altitude: f64 = mag.rows[0][2].parse().unwrap();
    assert!((15.0..=75.0).contains(&altitude), "altitude {altitude}");
    let sidecar = std::fs::read_to_string(out.join("mag_residuals.csv.json")).unwrap();
    assert!(sidecar.contains("not for navigation"), "{sidecar}");
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
    // the summary lists every step, and the stations' residual RMS is near their σ = 1.5
    // mGal: the late fit explains the data of its band-limited truth, so the RMS is σ·sqrt(1 −
    // p/n) with p ≤ 165 unknowns and n = 2,000 (≥ 1.43), within a few of its relative
    // standard errors 1/sqrt(2n) = 1.6% (common practice: χ² spread)
    assert_eq!(summary.steps.len(), 13);
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
    assert!(rms > 1.3 && rms < 1.65, "residual RMS {rms} mGal");

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
    assert!(html.contains("not for navigation"), "magnetic caution");
    // the joint fit's table of campaigns, readable: names, counts and χ²/n
    for text in [
        "<th>data set</th>",
        "<th>χ²/n</th>",
        "<td>early</td>",
        "<td>late</td>",
    ] {
        assert!(html.contains(text), "{text} missing from the report");
    }
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
