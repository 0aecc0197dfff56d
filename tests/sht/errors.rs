//! Bad input to the transforms: clear errors that name what is wrong, never panics.

use kugel::coeffs::{Coefficients, Normalization};
use kugel::sht::grid::{Grid, GridKind};
use kugel::sht::{evaluate_points, GaussGrid, TransformPlan};
use kugel::Error;

#[test]
fn degree_beyond_memory_is_refused_with_the_estimate() {
    // L = 2·10⁹ on a 2-row grid: one coefficient set alone would need ~3e19 bytes.
    let lmax = 2_000_000_000;
    let grid = Grid {
        kind: GridKind::Custom,
        colatitude_rad: vec![1.0, 2.0],
        weights: vec![1.0, 1.0],
        nlon: 2 * lmax + 1,
        lon0_rad: 0.0,
        max_exact_degree: 1,
    };
    let err = TransformPlan::new(lmax, &grid).err().expect("must refuse");
    assert!(matches!(err, Error::InsufficientMemory { .. }), "{err}");
    let msg = err.to_string();
    assert!(
        msg.contains("degree 2000000000") && msg.contains("MiB"),
        "{msg}"
    );
}

#[test]
fn non_finite_coefficient_names_degree_and_order() {
    let grid = GaussGrid::new(8);
    let plan = TransformPlan::new(8, &grid).unwrap();
    let mut c = Coefficients::zeros(8, Normalization::Geodesy);
    c.set(5, 3, 1.0, f64::INFINITY);
    for msg in [
        plan.synthesise(&c).unwrap_err().to_string(),
        plan.synthesise_gradient(&c).unwrap_err().to_string(),
        evaluate_points(&c, &[(1.0, 1.0)]).unwrap_err().to_string(),
    ] {
        assert!(msg.contains("S_{5,3}"), "{msg}");
    }
}

#[test]
fn field_of_another_shape_is_refused() {
    let plan = TransformPlan::new(8, &GaussGrid::new(8)).unwrap();
    let err = plan.analyse(&ndarray::Array2::zeros((10, 17))).unwrap_err();
    assert!(matches!(err, Error::ShapeMismatch(_)), "{err}");
    assert!(err.to_string().contains("10 x 17"), "{err}");
}

#[test]
fn non_finite_field_value_names_row_and_column() {
    let grid = GaussGrid::new(4);
    let plan = TransformPlan::new(4, &grid).unwrap();
    let mut f = ndarray::Array2::zeros(grid.shape());
    f[[2, 3]] = f64::NAN;
    let msg = plan.analyse(&f).unwrap_err().to_string();
    assert!(msg.contains("row 2, column 3"), "{msg}");
}

#[test]
fn analysis_beyond_the_grids_exact_degree_is_refused() {
    let mut grid = GaussGrid::new(10);
    grid.nlon = 64;
    let plan = TransformPlan::new(20, &grid).unwrap(); // synthesis to 20 is fine
    let f = ndarray::Array2::zeros(grid.shape());
    let msg = plan.analyse(&f).unwrap_err().to_string();
    assert!(msg.contains("exact to degree 10"), "{msg}");
}

#[test]
fn too_few_longitudes_and_bad_colatitudes_are_refused() {
    let grid = GaussGrid::new(10);
    let msg = TransformPlan::new(30, &grid).err().unwrap().to_string();
    assert!(msg.contains("longitudes"), "{msg}");
    let mut bad = GaussGrid::new(4);
    bad.colatitude_rad[1] = 4.0;
    let msg = TransformPlan::new(4, &bad).err().unwrap().to_string();
    assert!(msg.contains("row 1"), "{msg}");
    let msg = evaluate_points(
        &Coefficients::zeros(2, Normalization::Geodesy),
        &[(0.5, 0.0), (-0.1, 0.0)],
    )
    .unwrap_err()
    .to_string();
    assert!(msg.contains("point 1"), "{msg}");
}
