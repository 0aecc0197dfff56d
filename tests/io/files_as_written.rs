//! Files are read as written: CF packing and fill values in coefficient models (CF
//! conventions §8.1 `scale_factor`/`add_offset`, §2.5.1 `_FillValue`; common practice), values
//! never written (the NetCDF library's default fill, netcdf.h NC_FILL_DOUBLE = 9.9692099683868690e+36;
//! common practice), one model validation whatever the format, and sizes a file declares but
//! cannot hold.

use std::path::Path;

use kugel::io::grid::read::{read_grid, GridReadOptions};
use kugel::io::model::read_model;
use netcdf_writer::{NcAttrValue, NcFileBuilder, NcWriteFormat, NcWriteOptions};

fn chars(s: &str) -> NcAttrValue {
    NcAttrValue::Chars(s.into())
}

/// A degree-2 model file with the given C and S (row-major 3 × 3) and global attributes.
fn model_file(
    path: &Path,
    format: NcWriteFormat,
    write_c: impl FnOnce(&mut NcFileBuilder, netcdf_writer::DimensionId, netcdf_writer::DimensionId),
    s: &[f64; 9],
    globals: &[(&str, NcAttrValue)],
) {
    let mut b = NcFileBuilder::new();
    let dd = b.add_dimension("degree", 3).unwrap();
    let dm = b.add_dimension("order", 3).unwrap();
    write_c(&mut b, dd, dm);
    let vs = b.add_variable::<f64>("S", &[dd, dm]).unwrap();
    b.write_variable(vs, s).unwrap();
    let mut given = vec![
        ("normalization", chars("geodesy")),
        ("condon_shortley_phase", NcAttrValue::Ints(vec![0])),
        ("reference_radius_m", NcAttrValue::Doubles(vec![6.0e6])),
    ];
    for (k, v) in globals {
        given.retain(|(g, _)| g != k);
        given.push((k, v.clone()));
    }
    for (k, v) in given {
        b.add_attribute(k, v).unwrap();
    }
    std::fs::write(path, b.to_vec(NcWriteOptions { format }).unwrap().1).unwrap();
}

fn plain_c(
    values: [f64; 9],
) -> impl FnOnce(&mut NcFileBuilder, netcdf_writer::DimensionId, netcdf_writer::DimensionId) {
    move |b, dd, dm| {
        let v = b.add_variable::<f64>("C", &[dd, dm]).unwrap();
        b.write_variable(v, &values).unwrap();
    }
}

const S_OK: [f64; 9] = [0.0, 0.0, 0.0, 0.0, 0.5, 0.0, 0.0, -0.25, 0.125];

#[test]
fn packed_model_is_unpacked_and_fill_above_the_diagonal_is_fine() {
    let dir = tempfile::tempdir().unwrap();
    for (name, format) in [
        ("p3.nc", NcWriteFormat::Classic),
        ("p4.nc", NcWriteFormat::Nc4),
    ] {
        let p = dir.path().join(name);
        // C stored as int16: value = stored · 0.001 + 2; -32768 marks the unused m > l cells
        let stored: [i16; 9] = [-1000, -32768, -32768, 500, 250, -32768, -2000, 0, 1000];
        model_file(
            &p,
            format,
            move |b, dd, dm| {
                let v = b.add_variable::<i16>("C", &[dd, dm]).unwrap();
                b.add_variable_attribute(v, "scale_factor", NcAttrValue::Doubles(vec![0.001]))
                    .unwrap();
                b.add_variable_attribute(v, "add_offset", NcAttrValue::Doubles(vec![2.0]))
                    .unwrap();
                b.add_variable_attribute(v, "_FillValue", NcAttrValue::Shorts(vec![-32768]))
                    .unwrap();
                b.write_variable(v, &stored).unwrap();
            },
            &S_OK,
            &[],
        );
        let m = read_model(&p).unwrap();
        // expected values by hand from the packing rule
        for (l, mm, want) in [
            (0, 0, 1.0),
            (1, 0, 2.5),
            (1, 1, 2.25),
            (2, 0, 0.0),
            (2, 1, 2.0),
            (2, 2, 3.0),
        ] {
            assert!(
                (m.c(l, mm) - want).abs() < 1e-12,
                "{name}: C({l},{mm}) = {}",
                m.c(l, mm)
            );
        }
        assert_eq!(m.s(2, 2), 0.125);
    }
}

#[test]
fn fill_value_inside_the_triangle_is_refused_naming_degree_and_order() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("gap.nc");
    model_file(
        &p,
        NcWriteFormat::Classic,
        |b, dd, dm| {
            let v = b.add_variable::<f64>("C", &[dd, dm]).unwrap();
            b.add_variable_attribute(v, "_FillValue", NcAttrValue::Doubles(vec![-9999.0]))
                .unwrap();
            b.write_variable(v, &[1.0, 0.0, 0.0, 0.5, -9999.0, 0.0, 0.1, 0.2, 0.3])
                .unwrap();
        },
        &S_OK,
        &[],
    );
    let err = read_model(&p).unwrap_err().to_string();
    assert!(
        err.contains("gap.nc") && err.contains("'C'") && err.contains("degree 1, order 1"),
        "{err}"
    );
}

#[test]
fn model_attributes_are_validated_whatever_the_format() {
    let dir = tempfile::tempdir().unwrap();
    let c = [1.0, 0.0, 0.0, 0.5, 0.25, 0.0, 0.1, 0.2, 0.3];
    /// (file, global attributes, S, words the message must hold)
    type Case<'a> = (
        &'a str,
        Vec<(&'a str, NcAttrValue)>,
        [f64; 9],
        &'a [&'a str],
    );
    let cases: Vec<Case> = vec![
        (
            "nan_gm.nc",
            vec![("gm_m3_s2", NcAttrValue::Doubles(vec![f64::NAN]))],
            S_OK,
            &["nan_gm.nc", "gm_m3_s2", "NaN"],
        ),
        (
            "neg_gm.nc",
            vec![("gm_m3_s2", NcAttrValue::Doubles(vec![-3.9e14]))],
            S_OK,
            &["gm_m3_s2", "positive"],
        ),
        (
            "zero_r.nc",
            vec![("reference_radius_m", NcAttrValue::Doubles(vec![0.0]))],
            S_OK,
            &["reference_radius_m"],
        ),
        (
            "text_r.nc",
            vec![("reference_radius_m", chars("six thousand km"))],
            S_OK,
            &["reference_radius_m", "wrong type", "six thousand"],
        ),
        (
            "int_norm.nc",
            vec![("normalization", NcAttrValue::Ints(vec![4]))],
            S_OK,
            &["normalization", "wrong type"],
        ),
        (
            "s_l0.nc",
            vec![],
            [0.0, 0.0, 0.0, 0.7, 0.5, 0.0, 0.0, -0.25, 0.125],
            &["S_l0", "degree 1, order 0"],
        ),
    ];
    for (name, globals, s, words) in cases {
        let p = dir.path().join(name);
        model_file(&p, NcWriteFormat::Classic, plain_c(c), &s, &globals);
        let err = read_model(&p).unwrap_err().to_string();
        for w in words {
            assert!(err.contains(w), "{name}: '{w}' not in: {err}");
        }
        assert!(
            !err.contains("missing"),
            "{name}: a present attribute is not 'missing': {err}"
        );
    }
    // missing stays "missing"
    let p = dir.path().join("no_r.nc");
    let mut b = NcFileBuilder::new();
    let dd = b.add_dimension("degree", 1).unwrap();
    let dm = b.add_dimension("order", 1).unwrap();
    for v in ["C", "S"] {
        let id = b.add_variable::<f64>(v, &[dd, dm]).unwrap();
        b.write_variable(id, &[1.0]).unwrap();
    }
    b.add_attribute("normalization", chars("geodesy")).unwrap();
    b.add_attribute("condon_shortley_phase", NcAttrValue::Ints(vec![0]))
        .unwrap();
    std::fs::write(&p, b.to_vec(NcWriteOptions::classic()).unwrap().1).unwrap();
    let err = read_model(&p).unwrap_err().to_string();
    assert!(
        err.contains("reference_radius_m") && err.contains("missing"),
        "{err}"
    );
}

#[test]
fn negative_or_nan_sigmas_are_refused_in_netcdf_and_text() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("sig.nc");
    let mut b = NcFileBuilder::new();
    let dd = b.add_dimension("degree", 2).unwrap();
    let dm = b.add_dimension("order", 2).unwrap();
    for (v, data) in [
        ("C", [1.0, 0.0, 0.5, 0.25]),
        ("S", [0.0, 0.0, 0.0, 0.5]),
        ("C_sigma", [0.0, 0.0, 0.1, -0.1]),
        ("S_sigma", [0.0, 0.0, 0.0, 0.1]),
    ] {
        let id = b.add_variable::<f64>(v, &[dd, dm]).unwrap();
        b.write_variable(id, &data).unwrap();
    }
    b.add_attribute("normalization", chars("geodesy")).unwrap();
    b.add_attribute("condon_shortley_phase", NcAttrValue::Ints(vec![0]))
        .unwrap();
    b.add_attribute("reference_radius_m", NcAttrValue::Doubles(vec![6e6]))
        .unwrap();
    std::fs::write(&p, b.to_vec(NcWriteOptions::classic()).unwrap().1).unwrap();
    let err = read_model(&p).unwrap_err().to_string();
    assert!(
        err.contains("C_sigma") && err.contains("degree 1, order 1"),
        "{err}"
    );

    let t = dir.path().join("sig.txt");
    std::fs::write(
        &t,
        "reference_radius_m = 6e6\n0 0 1 0 0 0\n1 0 0.5 0 -0.1 0\n",
    )
    .unwrap();
    let err = read_model(&t).unwrap_err().to_string();
    assert!(
        err.contains("sig.txt, line 3") && err.contains("negative"),
        "{err}"
    );
}

#[test]
fn text_table_without_reference_radius_is_refused_not_taken_as_one_metre() {
    let dir = tempfile::tempdir().unwrap();
    let t = dir.path().join("bare.txt");
    std::fs::write(&t, "0 0 1 0\n1 0 0.5 0\n1 1 0.1 0.2\n").unwrap();
    let err = read_model(&t).unwrap_err().to_string();
    assert!(
        err.contains("bare.txt") && err.contains("reference_radius_m"),
        "{err}"
    );
    let g = dir.path().join("gm.txt");
    std::fs::write(&g, "reference_radius_m = 6e6\ngm_m3_s2 = -1\n0 0 1 0\n").unwrap();
    let err = read_model(&g).unwrap_err().to_string();
    assert!(
        err.contains("gm.txt, line 2") && err.contains("gm_m3_s2"),
        "{err}"
    );
}

/// A 4° global cell grid of a constant, with some cells never written.
fn grid_file(path: &Path, nlon: usize, write_all: bool) {
    let nlat = 45;
    let lat: Vec<f64> = (0..nlat).map(|i| -88.0 + 4.0 * i as f64).collect();
    let lon: Vec<f64> = (0..nlon)
        .map(|k| 2.0 + 360.0 / nlon as f64 * k as f64)
        .collect();
    let mut b = NcFileBuilder::new();
    let dy = b.add_dimension("lat", nlat as u64).unwrap();
    let dx = b.add_dimension("lon", nlon as u64).unwrap();
    let vy = b.add_variable::<f64>("lat", &[dy]).unwrap();
    b.add_variable_attribute(vy, "units", chars("degrees_north"))
        .unwrap();
    b.write_variable(vy, &lat).unwrap();
    let vx = b.add_variable::<f64>("lon", &[dx]).unwrap();
    b.add_variable_attribute(vx, "units", chars("degrees_east"))
        .unwrap();
    b.write_variable(vx, &lon).unwrap();
    let v = b.add_variable::<f64>("h", &[dy, dx]).unwrap();
    let rows = if write_all { nlat } else { nlat - 3 };
    let selection = netcdf_writer::NcSliceInfo {
        selections: vec![
            netcdf_writer::NcSliceInfoElem::Slice {
                start: 0,
                end: rows as u64,
                step: 1,
            },
            netcdf_writer::NcSliceInfoElem::Slice {
                start: 0,
                end: nlon as u64,
                step: 1,
            },
        ],
    };
    b.write_variable_slice(v, &selection, &vec![1.0; rows * nlon])
        .unwrap();
    std::fs::write(path, b.to_vec(NcWriteOptions::classic()).unwrap().1).unwrap();
}

#[test]
fn unwritten_grid_cells_are_refused_not_analysed_as_1e37() {
    let dir = tempfile::tempdir().unwrap();
    let ok = dir.path().join("full.nc");
    grid_file(&ok, 90, true);
    let g = read_grid(&ok, &GridReadOptions::default()).unwrap();
    assert_eq!(g.masked_count(), 0);
    let p = dir.path().join("holes.nc");
    grid_file(&p, 90, false);
    let err = read_grid(&p, &GridReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("holes.nc") && err.contains("never written") && err.contains("270"),
        "{err}"
    );
}

#[test]
fn a_single_meridian_is_not_a_global_grid() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("meridian.nc");
    grid_file(&p, 1, true);
    let err = read_grid(&p, &GridReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("meridian.nc") && err.contains("single longitude"),
        "{err}"
    );
}

#[test]
fn a_small_file_declaring_a_huge_variable_is_refused_before_reading() {
    // a valid 3 × 3 classic model whose header is then made to declare 20 001 × 20 001: the
    // dimension lengths follow the padded names in the header (NetCDF classic format spec)
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("claims.nc");
    model_file(
        &p,
        NcWriteFormat::Classic,
        plain_c([1.0, 0.0, 0.0, 0.5, 0.25, 0.0, 0.1, 0.2, 0.3]),
        &S_OK,
        &[],
    );
    let mut bytes = std::fs::read(&p).unwrap();
    for name in [&b"degree\0\0"[..], &b"order\0\0\0"[..]] {
        let at = bytes
            .windows(name.len() + 4)
            .position(|w| w.starts_with(name) && w[name.len()..] == [0, 0, 0, 3])
            .expect("dimension in the header");
        bytes[at + name.len()..at + name.len() + 4].copy_from_slice(&20_001u32.to_be_bytes());
    }
    std::fs::write(&p, &bytes).unwrap();
    assert!(bytes.len() < 4096);
    let text = read_model(&p).unwrap_err().to_string();
    assert!(
        text.contains("claims.nc") && text.contains("'C'") && text.contains("cannot hold"),
        "{text}"
    );
}
