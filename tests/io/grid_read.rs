//! Reading users' grids (io::grid::read): awkward layouts written with the NetCDF writer crate,
//! a closed-form degree-2 field (closed forms of the fully normalised P̄_lm for l ≤ 2, any
//! geodesy text — common practice) analysed back to its coefficients.

use std::path::Path;

use kugel::io::grid::read::{read_grid, GridReadOptions};
use kugel::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use kugel::io::provenance::Provenance;
use kugel::sht::{GaussGrid, GridKind, TransformPlan};
use netcdf_writer::{NcAttrValue, NcFileBuilder, NcWriteFormat, NcWriteOptions};

/// (l, m, C, S) of the test field, geodesy normalisation.
const TERMS: [(usize, usize, f64, f64); 6] = [
    (0, 0, 1.5, 0.0),
    (1, 0, 0.4, 0.0),
    (1, 1, -0.3, 0.25),
    (2, 0, 0.2, 0.0),
    (2, 1, 0.1, -0.15),
    (2, 2, 0.05, 0.3),
];

/// f(lat, lon) from the closed forms P̄_10 = √3 t, P̄_11 = √3 u, P̄_20 = √5 (3t² − 1)/2,
/// P̄_21 = √15 t u, P̄_22 = (√15/2) u² (t = sin φ, u = cos φ).
fn field(lat_deg: f64, lon_deg: f64) -> f64 {
    let (t, u) = (lat_deg.to_radians().sin(), lat_deg.to_radians().cos());
    let lam = lon_deg.to_radians();
    let p = |l: usize, m: usize| match (l, m) {
        (0, 0) => 1.0,
        (1, 0) => 3f64.sqrt() * t,
        (1, 1) => 3f64.sqrt() * u,
        (2, 0) => 5f64.sqrt() * (3.0 * t * t - 1.0) / 2.0,
        (2, 1) => 15f64.sqrt() * t * u,
        (2, 2) => 15f64.sqrt() / 2.0 * u * u,
        _ => unreachable!(),
    };
    TERMS
        .iter()
        .map(|&(l, m, c, s)| p(l, m) * (c * (m as f64 * lam).cos() + s * (m as f64 * lam).sin()))
        .sum()
}

fn check_coefficients(path: &Path, opts: &GridReadOptions, lmax: usize, tol: f64) {
    let g = read_grid(path, opts).unwrap();
    g.require_complete().unwrap();
    g.check_degree(lmax).unwrap();
    let plan = TransformPlan::new(lmax, &g.grid).unwrap();
    let c = plan.analyse(&g.field).unwrap();
    for l in 0..=lmax {
        for m in 0..=l {
            let (ce, se) = TERMS
                .iter()
                .find(|t| t.0 == l && t.1 == m)
                .map(|t| (t.2, t.3))
                .unwrap_or((0.0, 0.0));
            assert!(
                (c.c(l, m) - ce).abs() < tol && (c.s(l, m) - se).abs() < tol,
                "{}: ({l},{m}) C {} vs {ce}, S {} vs {se}",
                path.display(),
                c.c(l, m),
                c.s(l, m)
            );
        }
    }
}

fn text(s: &str) -> NcAttrValue {
    NcAttrValue::Chars(s.into())
}

/// 5° node grid, latitude descending, longitudes −180..180 with the wrap column, int16 packed,
/// a leading time dimension of length 1, classic format, names that are not lat/lon.
fn write_awkward(path: &Path, format: NcWriteFormat) {
    let lat: Vec<f64> = (0..37).map(|i| 90.0 - 5.0 * i as f64).collect();
    let lon: Vec<f64> = (0..73).map(|k| -180.0 + 5.0 * k as f64).collect();
    let (scale, offset) = (1e-4, 1.0);
    let mut b = NcFileBuilder::new();
    let dt = b.add_dimension("time", 1).unwrap();
    let dy = b.add_dimension("rows", 37).unwrap();
    let dx = b.add_dimension("cols", 73).unwrap();
    let vt = b.add_variable::<f64>("time", &[dt]).unwrap();
    b.write_variable(vt, &[0.0]).unwrap();
    let vy = b.add_variable::<f64>("phi", &[dy]).unwrap();
    b.add_variable_attribute(vy, "standard_name", text("latitude"))
        .unwrap();
    b.write_variable(vy, &lat).unwrap();
    let vx = b.add_variable::<f64>("lambda", &[dx]).unwrap();
    b.add_variable_attribute(vx, "units", text("degrees_east"))
        .unwrap();
    b.write_variable(vx, &lon).unwrap();
    let v = b.add_variable::<i16>("height", &[dt, dy, dx]).unwrap();
    b.add_variable_attribute(v, "scale_factor", NcAttrValue::Doubles(vec![scale]))
        .unwrap();
    b.add_variable_attribute(v, "add_offset", NcAttrValue::Doubles(vec![offset]))
        .unwrap();
    b.add_variable_attribute(v, "units", text("m")).unwrap();
    let mut data = Vec::new();
    for &la in &lat {
        for &lo in &lon {
            data.push(((field(la, lo) - offset) / scale).round() as i16);
        }
    }
    b.write_variable(v, &data).unwrap();
    std::fs::write(path, b.to_vec(NcWriteOptions { format }).unwrap().1).unwrap();
}

#[test]
fn awkward_packed_classic_and_netcdf4_grids() {
    let dir = tempfile::tempdir().unwrap();
    for (name, fmt) in [
        ("a3.nc", NcWriteFormat::Classic),
        ("a4.nc", NcWriteFormat::Nc4),
    ] {
        let p = dir.path().join(name);
        write_awkward(&p, fmt);
        let g = read_grid(&p, &GridReadOptions::default()).unwrap();
        assert_eq!(g.variable, "height");
        assert_eq!(g.units, "m");
        assert_eq!(g.grid.kind, GridKind::EquiangularNodes);
        assert_eq!(g.grid.shape(), (37, 72));
        assert_eq!(g.grid.max_exact_degree, 18);
        assert!(
            g.notes.iter().any(|n| n.contains("wrap-around")),
            "{:?}",
            g.notes
        );
        assert!(
            g.notes.iter().any(|n| n.contains("'time'")),
            "{:?}",
            g.notes
        );
        assert!(
            !g.notes.iter().any(|n| n.contains("differs")),
            "{:?}",
            g.notes
        );
        // tolerance 1e-4: int16 packing with scale 1e-4 (rounding error ≤ 5e-5 per cell)
        check_coefficients(&p, &GridReadOptions::default(), 6, 1e-4);
        let err = g.check_degree(19).unwrap_err().to_string();
        assert!(
            err.contains("degree 18") && err.contains("Clenshaw"),
            "{err}"
        );
    }
}

#[test]
fn cell_centred_transposed_grid_with_axis_attributes() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("cells.nc");
    let lat: Vec<f64> = (0..30).map(|i| -87.0 + 6.0 * i as f64).collect();
    let lon: Vec<f64> = (0..60).map(|k| 3.0 + 6.0 * k as f64).collect();
    let mut b = NcFileBuilder::new();
    let dx = b.add_dimension("x", 60).unwrap();
    let dy = b.add_dimension("y", 30).unwrap();
    let vx = b.add_variable::<f64>("x", &[dx]).unwrap();
    b.add_variable_attribute(vx, "axis", text("X")).unwrap();
    b.write_variable(vx, &lon).unwrap();
    let vy = b.add_variable::<f64>("y", &[dy]).unwrap();
    b.add_variable_attribute(vy, "axis", text("Y")).unwrap();
    b.write_variable(vy, &lat).unwrap();
    let v = b.add_variable::<f32>("t", &[dx, dy]).unwrap();
    let data: Vec<f32> = lon
        .iter()
        .flat_map(|&lo| lat.iter().map(move |&la| field(la, lo) as f32))
        .collect();
    b.write_variable(v, &data).unwrap();
    std::fs::write(&p, b.to_vec(NcWriteOptions::classic()).unwrap().1).unwrap();
    let g = read_grid(&p, &GridReadOptions::default()).unwrap();
    assert_eq!(g.grid.kind, GridKind::EquiangularCells);
    assert_eq!(g.grid.shape(), (30, 60));
    // tolerance 1e-6: float32 storage of values ~2
    check_coefficients(&p, &GridReadOptions::default(), 14, 1e-6);
}

#[test]
fn kugel_gauss_grid_is_recognised_and_exact() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("gauss.nc");
    let grid = GaussGrid::new(20);
    let mut f = GridFile::from_engine_grid(&grid, "gauss test");
    let lats = grid.latitudes_deg();
    let lons = grid.longitudes_deg();
    let data = ndarray::Array2::from_shape_fn(grid.shape(), |(i, k)| field(lats[i], lons[k]));
    f.push("value", "test field", "1", None, data);
    let prov = Provenance::default();
    write_grid(
        &p,
        &f,
        &GridWriteOptions {
            float32: false,
            lon_convention: LonConvention::MinusPlus180,
            provenance: &prov,
        },
    )
    .unwrap();
    let g = read_grid(&p, &GridReadOptions::default()).unwrap();
    assert_eq!(g.grid.kind, GridKind::Gauss);
    assert_eq!(g.grid.max_exact_degree, 20);
    for (a, b) in g.grid.colatitude_rad.iter().zip(&grid.colatitude_rad) {
        assert_eq!(a, b, "colatitudes are recomputed, not taken from the file");
    }
    // tolerance 1e-13: double precision through file and transform
    check_coefficients(&p, &GridReadOptions::default(), 20, 1e-13);
}

fn simple_file(
    path: &Path,
    lat: &[f64],
    lon: &[f64],
    vars: &[(&str, Option<&str>)],
    extra_dim: Option<u64>,
) {
    let mut b = NcFileBuilder::new();
    let de = extra_dim.map(|n| b.add_dimension("level", n).unwrap());
    let dy = b.add_dimension("lat", lat.len() as u64).unwrap();
    let dx = b.add_dimension("lon", lon.len() as u64).unwrap();
    let vy = b.add_variable::<f64>("lat", &[dy]).unwrap();
    b.write_variable(vy, lat).unwrap();
    let vx = b.add_variable::<f64>("lon", &[dx]).unwrap();
    b.write_variable(vx, lon).unwrap();
    for &(name, anc) in vars {
        let dims: Vec<_> = de.iter().copied().chain([dy, dx]).collect();
        let v = b.add_variable::<f64>(name, &dims).unwrap();
        if let Some(a) = anc {
            b.add_variable_attribute(v, "ancillary_variables", text(a))
                .unwrap();
        }
        let n = extra_dim.unwrap_or(1) as usize;
        let mut data = Vec::new();
        for e in 0..n {
            for &la in lat {
                for &lo in lon {
                    data.push(field(la, lo) + e as f64);
                }
            }
        }
        b.write_variable(v, &data).unwrap();
    }
    std::fs::write(path, b.to_vec(NcWriteOptions::classic()).unwrap().1).unwrap();
}

fn deg_range(start: f64, step: f64, n: usize) -> Vec<f64> {
    (0..n).map(|i| start + step * i as f64).collect()
}

#[test]
fn variable_selection_rules() {
    let dir = tempfile::tempdir().unwrap();
    let (lat, lon) = (deg_range(-90.0, 10.0, 19), deg_range(0.0, 10.0, 36));
    let p = dir.path().join("anc.nc");
    simple_file(
        &p,
        &lat,
        &lon,
        &[("value", Some("count")), ("count", None)],
        None,
    );
    assert_eq!(
        read_grid(&p, &GridReadOptions::default()).unwrap().variable,
        "value"
    );
    let p = dir.path().join("two.nc");
    simple_file(&p, &lat, &lon, &[("a", None), ("b", None)], None);
    let err = read_grid(&p, &GridReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("two.nc") && err.contains("a, b") && err.contains("--variable"),
        "{err}"
    );
    let opts = GridReadOptions {
        variable: Some("b".into()),
        index: None,
    };
    assert_eq!(read_grid(&p, &opts).unwrap().variable, "b");
    let opts = GridReadOptions {
        variable: Some("c".into()),
        index: None,
    };
    let err = read_grid(&p, &opts).unwrap_err().to_string();
    assert!(err.contains("no variable 'c'"), "{err}");
}

#[test]
fn extra_dimension_needs_index() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("levels.nc");
    simple_file(
        &p,
        &deg_range(-90.0, 10.0, 19),
        &deg_range(0.0, 10.0, 36),
        &[("v", None)],
        Some(3),
    );
    let err = read_grid(&p, &GridReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("level (3)") && err.contains("--index"),
        "{err}"
    );
    let g = read_grid(
        &p,
        &GridReadOptions {
            variable: None,
            index: Some(vec![2]),
        },
    )
    .unwrap();
    // index 2 adds 2 to the field everywhere
    assert!((g.field[[0, 0]] - field(90.0, 0.0) - 2.0).abs() < 1e-12);
    let err = read_grid(
        &p,
        &GridReadOptions {
            variable: None,
            index: Some(vec![3]),
        },
    )
    .unwrap_err()
    .to_string();
    assert!(err.contains("out of range"), "{err}");
}

#[test]
fn bad_grids_are_named() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("band.nc");
    simple_file(
        &p,
        &deg_range(-60.0, 10.0, 13),
        &deg_range(0.0, 10.0, 36),
        &[("v", None)],
        None,
    );
    let err = read_grid(&p, &GridReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("band.nc") && err.contains("'v'") && err.contains("not global"),
        "{err}"
    );
    let p = dir.path().join("lonband.nc");
    simple_file(
        &p,
        &deg_range(-90.0, 10.0, 19),
        &deg_range(0.0, 10.0, 18),
        &[("v", None)],
        None,
    );
    let err = read_grid(&p, &GridReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(err.contains("not global"), "{err}");
    let p = dir.path().join("zigzag.nc");
    let mut lat = deg_range(-90.0, 10.0, 19);
    lat.swap(3, 4);
    simple_file(&p, &lat, &deg_range(0.0, 10.0, 36), &[("v", None)], None);
    let err = read_grid(&p, &GridReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("not monotonic") && err.contains("latitude variable 'lat'"),
        "{err}"
    );
    // truncated file
    let good = dir.path().join("good.nc");
    simple_file(
        &good,
        &deg_range(-90.0, 10.0, 19),
        &deg_range(0.0, 10.0, 36),
        &[("v", None)],
        None,
    );
    let bytes = std::fs::read(&good).unwrap();
    let cut = dir.path().join("cut.nc");
    std::fs::write(&cut, &bytes[..bytes.len() - 100]).unwrap();
    let err = read_grid(&cut, &GridReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(err.contains("cut.nc"), "{err}");
    let junk = dir.path().join("junk.nc");
    std::fs::write(&junk, b"CDF\x01garbage").unwrap();
    let err = read_grid(&junk, &GridReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(err.contains("junk.nc"), "{err}");
}

#[test]
fn masked_cells_point_to_gap_policies() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("holes.nc");
    let grid = kugel::sht::equiangular::regular_grid_by_step(10.0).unwrap();
    let mut f = GridFile::from_engine_grid(&grid, "holes");
    let mut data = ndarray::Array2::from_elem(grid.shape(), 1.0);
    data[[5, 7]] = f64::NAN;
    f.push("v", "v", "1", None, data);
    let prov = Provenance::default();
    write_grid(
        &p,
        &f,
        &GridWriteOptions {
            float32: true,
            lon_convention: LonConvention::ZeroTo360,
            provenance: &prov,
        },
    )
    .unwrap();
    let g = read_grid(&p, &GridReadOptions::default()).unwrap();
    assert_eq!(g.masked_count(), 1);
    assert!(g.mask[[5, 7]]);
    let err = g.require_complete().unwrap_err().to_string();
    assert!(
        err.contains("1 masked")
            && err.contains("--gaps")
            && err.contains("latitude 40.0000, longitude 70.0000"),
        "{err}"
    );
}

#[test]
fn inconsistent_wrap_column_is_noted() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("wrap.nc");
    let (lat, lon) = (deg_range(-90.0, 10.0, 19), deg_range(0.0, 10.0, 37));
    let mut b = NcFileBuilder::new();
    let dy = b.add_dimension("lat", 19).unwrap();
    let dx = b.add_dimension("lon", 37).unwrap();
    let vy = b.add_variable::<f64>("lat", &[dy]).unwrap();
    b.write_variable(vy, &lat).unwrap();
    let vx = b.add_variable::<f64>("lon", &[dx]).unwrap();
    b.write_variable(vx, &lon).unwrap();
    let v = b.add_variable::<f64>("ramp", &[dy, dx]).unwrap();
    let data: Vec<f64> = lat.iter().flat_map(|_| lon.iter().copied()).collect();
    b.write_variable(v, &data).unwrap();
    std::fs::write(&p, b.to_vec(NcWriteOptions::classic()).unwrap().1).unwrap();
    let g = read_grid(&p, &GridReadOptions::default()).unwrap();
    assert_eq!(g.grid.nlon, 36);
    assert!(
        g.notes
            .iter()
            .any(|n| n.contains("differs") && n.contains("3.6e2")),
        "{:?}",
        g.notes
    );
}
