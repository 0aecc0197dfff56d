//! `kugel grid` and `kugel fit` end to end: outputs written with their CF layers, bad input
//! refused with the file named and no partial output left behind.

use std::path::{Path, PathBuf};

use kugel_cli::args::PointInputArgs;
use kugel_cli::commands::{fit, grid, CommandContext};

fn write_points(dir: &Path, bad_row: bool) -> PathBuf {
    let mut text = String::from("lat,lon,value,sigma\n");
    for i in 0..400 {
        let z = -1.0 + 2.0 * (i as f64 + 0.5) / 400.0;
        let lat = z.asin().to_degrees();
        let lon = (i as f64 * 137.508) % 360.0 - 180.0;
        text.push_str(&format!("{lat},{lon},{},0.1\n", 3.0 * z * z - 1.0));
    }
    if bad_row {
        text.push_str("12,400,1,0.1\n");
    }
    let path = dir.join("obs.csv");
    std::fs::write(&path, text).unwrap();
    path
}

fn input_args() -> PointInputArgs {
    PointInputArgs {
        columns: None,
        on_bad_row: "error".into(),
        body_radius_km: 6371.0,
        units: "mGal".into(),
    }
}

fn ctx() -> CommandContext {
    CommandContext {
        command_line: "kugel test".into(),
        quiet: true,
        verbose: false,
    }
}

fn grid_args(points: PathBuf, output: PathBuf) -> grid::Args {
    grid::Args {
        points,
        lmax: Some(8),
        output,
        radius_km: Some(1500.0),
        neighbours: None,
        gaps: "iterative".into(),
        gap_tolerance: 1e-6,
        gap_iterations: 200,
        variable: "value".into(),
        lon_range: "0-360".into(),
        input: input_args(),
    }
}

#[test]
fn grid_writes_field_with_ancillary_coverage_layers() {
    let dir = tempfile::tempdir().unwrap();
    let points = write_points(dir.path(), false);
    let out = dir.path().join("g.nc");
    grid::run(&grid_args(points, out.clone()), &ctx()).unwrap();
    let file = netcdf_reader::NcFile::open(&out).unwrap();
    let value = file.variable("value").unwrap();
    let anc = value
        .attribute("ancillary_variables")
        .expect("ancillary_variables");
    assert!(
        format!("{:?}", anc.value).contains("count nearest_km"),
        "{:?}",
        anc.value
    );
    let count = file.read_variable_as_f64("count").unwrap();
    let (nlat, nlon) = kugel::sht::GaussGrid::new(8).shape();
    assert_eq!(count.shape(), &[nlat, nlon]);
    assert!(count.iter().any(|&c| c > 0.0));
    let nearest = file.read_variable_as_f64("nearest_km").unwrap();
    assert!(nearest.iter().all(|d| (0.0..2000.0).contains(d)));
}

#[test]
fn bad_rows_leave_no_output_and_name_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let points = write_points(dir.path(), true);
    let out = dir.path().join("g.nc");
    let err = grid::run(&grid_args(points.clone(), out.clone()), &ctx()).unwrap_err();
    let msg = format!("{err:#}");
    assert!(
        msg.contains("obs.csv") && msg.contains("line 402: longitude 400"),
        "{msg}"
    );
    assert_eq!(kugel_cli::exit_code::exit_code_for(&err), 3);
    assert!(!out.exists());
    let leftovers: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(leftovers.len(), 1, "{leftovers:?}");
    // the output may never be the input
    let err = grid::run(&grid_args(points.clone(), points.clone()), &ctx()).unwrap_err();
    assert!(format!("{err:#}").contains("same file as input"));
}

#[test]
fn fit_writes_model_with_sigmas() {
    let dir = tempfile::tempdir().unwrap();
    let points = write_points(dir.path(), false);
    let out = dir.path().join("m.nc");
    let args = fit::Args {
        regularization: "damping:1e-6".into(),
        ..fit::Args::for_points(points, 4, out.clone(), input_args())
    };
    fit::run(&args, &ctx()).unwrap();
    let model = kugel::io::model::read_model(&out).unwrap();
    assert_eq!(model.lmax(), 4);
    assert_eq!(model.reference_radius_m, 6_371_000.0);
    // value = 3z² − 1 = (2/√5) P̄_20: C_20 = 2/√5 (closed form of P̄_20, any geodesy text)
    assert!(
        (model.c(2, 0) - 2.0 / 5f64.sqrt()).abs() < 1e-6,
        "{}",
        model.c(2, 0)
    );
    assert!(model.sigma(2, 0).unwrap().0 > 0.0);
    let bad = fit::Args {
        regularization: "ridge:1".into(),
        output: dir.path().join("x.nc"),
        ..args
    };
    assert!(format!("{:#}", fit::run(&bad, &ctx()).unwrap_err()).contains("expected none, damping"));
    assert!(!dir.path().join("x.nc").exists());
}
