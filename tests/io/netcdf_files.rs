//! NetCDF files written by kugel: models, grids and degree tables read back (by kugel and by
//! the independent `netcdf-reader` decoder); the reference C library checks the same files in
//! tests/interop/check_netcdf.py.

use std::path::Path;

use kugel::coeffs::{Coefficients, Normalization};
use kugel::io::degree_table::{
    read_degree_table, write_degree_table_csv, write_degree_table_netcdf, DegreeColumn, DegreeTable,
};
use kugel::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use kugel::io::model::{read_model, read_model_with_report, write_model};
use kugel::io::provenance::Provenance;
use ndarray::Array2;
use netcdf_reader::{NcAttrValue, NcFile};
use netcdf_writer::{NcFileBuilder, NcWriteFormat, NcWriteOptions};

fn sample_model(lmax: usize) -> Coefficients {
    let mut c = Coefficients::zeros(lmax, Normalization::Schmidt);
    for l in 0..=lmax {
        for m in 0..=l {
            let x = ((l * 31 + m * 7) as f64).sin() * 1e-3 / (l as f64 + 1.0).powi(2);
            c.set(l, m, x, if m > 0 { -x / 3.0 } else { 0.0 });
        }
    }
    c.reference_radius_m = 6_371_200.0;
    c.units = "nT".into();
    c.attributes
        .insert("title".into(), "synthetic field".into());
    c
}

fn attr_text(attrs: &[netcdf_reader::NcAttribute], name: &str) -> String {
    attrs
        .iter()
        .find(|a| a.name == name)
        .and_then(|a| a.value.as_string())
        .unwrap_or_else(|| panic!("attribute {name} missing"))
}

#[test]
fn model_netcdf_round_trip_is_exact() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("m.nc");
    let mut c = sample_model(12);
    let n = c.len();
    c.set_sigmas(vec![1e-9; n], vec![2e-9; n]).unwrap();
    c.gm_m3_s2 = Some(3.986004418e14);
    let mut prov = Provenance::from_command_line("kugel convert a.txt m.nc");
    prov.lmax = Some(12);
    write_model(&p, &c, &prov).unwrap();
    let back = read_model(&p).unwrap();
    assert_eq!(back.c_packed(), c.c_packed());
    assert_eq!(back.s_packed(), c.s_packed());
    assert_eq!(back.sigmas(), c.sigmas());
    assert_eq!(back.normalization, Normalization::Schmidt);
    assert!(!back.condon_shortley);
    assert_eq!(back.reference_radius_m, 6_371_200.0);
    assert_eq!(back.gm_m3_s2, Some(3.986004418e14));
    assert_eq!(back.units, "nT");
    assert_eq!(back.attributes["title"], "synthetic field");
    // the file is NetCDF-4 with the attributes of docs/conventions.md §8
    let f = NcFile::open(&p).unwrap();
    assert!(matches!(f.format(), netcdf_reader::NcFormat::Nc4));
    let g = f.global_attributes().unwrap();
    assert_eq!(attr_text(g, "Conventions"), "CF-1.8");
    assert_eq!(attr_text(g, "normalization"), "schmidt");
    assert!(attr_text(g, "history").ends_with("kugel convert a.txt m.nc"));
    assert!(attr_text(g, "source").starts_with("kugel "));
    let cvar = f.variable("C").unwrap();
    assert_eq!(cvar.shape(), vec![13, 13]);
    let square = f.read_variable_as_f64("C").unwrap();
    assert_eq!(square[[5, 3]], c.c(5, 3));
    assert_eq!(square[[3, 5]], 0.0, "m > l entries are zero");
}

/// A model file holding exactly the required items and nothing else, written by the
/// NetCDF writer directly (classic format), must be accepted.
#[test]
fn minimal_model_file_is_accepted() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("minimal.nc");
    let mut b = NcFileBuilder::new();
    let dd = b.add_dimension("degree", 3).unwrap();
    let dm = b.add_dimension("order", 3).unwrap();
    let vd = b.add_variable::<i32>("degree", &[dd]).unwrap();
    let vm = b.add_variable::<i32>("order", &[dm]).unwrap();
    b.write_variable(vd, &[0, 1, 2]).unwrap();
    b.write_variable(vm, &[0, 1, 2]).unwrap();
    let vc = b.add_variable::<f64>("C", &[dd, dm]).unwrap();
    let vs = b.add_variable::<f64>("S", &[dd, dm]).unwrap();
    b.write_variable(vc, &[1.0, 0.0, 0.0, 0.5, 0.25, 0.0, -1.0, 2.0, 3.0])
        .unwrap();
    b.write_variable(vs, &[0.0, 0.0, 0.0, 0.0, 0.75, 0.0, 0.0, -2.0, -3.0])
        .unwrap();
    b.add_attribute("normalization", NcAttrValue::Chars("orthonormal".into()))
        .unwrap();
    b.add_attribute("condon_shortley_phase", NcAttrValue::Ints(vec![1]))
        .unwrap();
    b.add_attribute("reference_radius_m", NcAttrValue::Doubles(vec![1737.4e3]))
        .unwrap();
    let (_, bytes) = b
        .to_vec(NcWriteOptions {
            format: NcWriteFormat::Classic,
        })
        .unwrap();
    std::fs::write(&p, bytes).unwrap();
    let c = read_model(&p).unwrap();
    assert_eq!(c.lmax(), 2);
    assert_eq!(c.normalization, Normalization::Orthonormal);
    assert!(c.condon_shortley);
    assert_eq!(c.c(2, 1), 2.0);
    assert_eq!(c.s(2, 2), -3.0);
    assert_eq!(c.s(1, 1), 0.75);
    assert_eq!(c.reference_radius_m, 1737.4e3);
    assert_eq!(c.gm_m3_s2, None);
}

#[test]
fn text_and_netcdf_models_agree() {
    let dir = tempfile::tempdir().unwrap();
    let c = sample_model(7);
    let t = dir.path().join("m.txt");
    let n = dir.path().join("m.nc");
    write_model(&t, &c, &Provenance::default()).unwrap();
    write_model(&n, &c, &Provenance::default()).unwrap();
    let (a, ra) = read_model_with_report(&t).unwrap();
    let (b, rb) = read_model_with_report(&n).unwrap();
    assert_eq!(ra.unwrap().missing_pairs, 0);
    assert!(rb.is_none());
    assert_eq!(a.c_packed(), b.c_packed());
    assert_eq!(a.s_packed(), b.s_packed());
}

fn write_sample_grid(
    path: &Path,
    conv: LonConvention,
    float32: bool,
) -> (Vec<f64>, Vec<f64>, Array2<f64>) {
    // rows north to south, longitudes 0..360 step 30 — the writer must reorder both
    let lat: Vec<f64> = vec![60.0, 20.0, -20.0, -60.0];
    let lon: Vec<f64> = (0..12).map(|k| 30.0 * k as f64).collect();
    let data = Array2::from_shape_fn((4, 12), |(i, k)| lat[i] * 1000.0 + lon[k]);
    let mut data_masked = data.clone();
    data_masked[[1, 2]] = f64::NAN;
    let mut g = GridFile {
        title: "test grid".into(),
        lat_deg: lat.clone(),
        lon_deg: lon.clone(),
        variables: vec![],
        attributes: vec![("kugel_grid".into(), "custom".into())],
    };
    g.push("value", "test value", "m", Some("height"), data_masked)
        .ancillary
        .push("count".into());
    g.push(
        "count",
        "number of points",
        "1",
        None,
        Array2::from_elem((4, 12), 3.0),
    );
    let prov = Provenance::from_command_line("kugel synthesize x.nc -o g.nc");
    write_grid(
        path,
        &g,
        &GridWriteOptions {
            float32,
            lon_convention: conv,
            provenance: &prov,
        },
    )
    .unwrap();
    (lat, lon, data)
}

#[test]
fn grid_file_is_cf_and_sorted() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("g.nc");
    let (_, _, data) = write_sample_grid(&p, LonConvention::MinusPlus180, false);
    let f = NcFile::open(&p).unwrap();
    let lat = f.read_variable_as_f64("lat").unwrap();
    let lon = f.read_variable_as_f64("lon").unwrap();
    assert_eq!(
        lat.iter().copied().collect::<Vec<_>>(),
        vec![-60.0, -20.0, 20.0, 60.0]
    );
    assert_eq!(lon[[0]], -180.0);
    assert_eq!(lon[[11]], 150.0);
    let latv = f.variable("lat").unwrap();
    assert_eq!(attr_text(latv.attributes(), "units"), "degrees_north");
    assert_eq!(attr_text(latv.attributes(), "standard_name"), "latitude");
    assert_eq!(attr_text(latv.attributes(), "axis"), "Y");
    let v = f.variable("value").unwrap();
    assert_eq!(attr_text(v.attributes(), "ancillary_variables"), "count");
    assert_eq!(attr_text(v.attributes(), "units"), "m");
    assert!(v.attribute("_FillValue").is_some());
    assert!(
        f.variable("count")
            .unwrap()
            .attribute("_FillValue")
            .is_none(),
        "no fill value where nothing is masked"
    );
    let values = f.read_variable_unpacked_masked("value").unwrap();
    // file row 0 is lat -60 (engine row 3); file column 0 is lon -180 = 180 (engine column 6)
    assert_eq!(values[[0, 0]], data[[3, 6]]);
    assert_eq!(values[[3, 7]], data[[0, 7 + 6 - 12]]);
    // masked engine cell (row 1 = lat 20, column 2 = lon 60) -> file row 2, column 8
    assert!(values[[2, 8]].is_nan());
    let g = f.global_attributes().unwrap();
    assert_eq!(attr_text(g, "Conventions"), "CF-1.8");
    assert_eq!(attr_text(g, "title"), "test grid");
    assert_eq!(attr_text(g, "kugel_grid"), "custom");
}

#[test]
fn grid_float32_option() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("g32.nc");
    let (_, _, data) = write_sample_grid(&p, LonConvention::ZeroTo360, true);
    let f = NcFile::open(&p).unwrap();
    assert_eq!(
        *f.variable("value").unwrap().dtype(),
        netcdf_reader::NcType::Float
    );
    let values = f.read_variable_unpacked_masked("value").unwrap();
    assert_eq!(values[[3, 1]], data[[0, 1]] as f32 as f64);
}

#[test]
fn degree_tables_round_trip() {
    let dir = tempfile::tempdir().unwrap();
    let t = DegreeTable {
        columns: vec![
            DegreeColumn {
                name: "degree".into(),
                units: "1".into(),
                long_name: "degree".into(),
                values: vec![0.0, 1.0, 2.0],
            },
            DegreeColumn {
                name: "degree_variance".into(),
                units: "m2".into(),
                long_name: "power per degree".into(),
                values: vec![1.0 / 3.0, f64::NAN, 2.5e-300],
            },
        ],
        attributes: vec![("title".into(), "spectrum".into())],
    };
    let nc = dir.path().join("s.nc");
    let csv = dir.path().join("s.csv");
    write_degree_table_netcdf(&nc, &t, &Provenance::default()).unwrap();
    write_degree_table_csv(&csv, &t, &Provenance::default()).unwrap();
    for p in [&nc, &csv] {
        let back = read_degree_table(p).unwrap();
        assert_eq!(back.columns.len(), 2);
        assert_eq!(back.columns[0].values, vec![0.0, 1.0, 2.0]);
        let v = &back.column("degree_variance").unwrap();
        assert_eq!(v.units, "m2");
        assert_eq!(v.values[0], 1.0 / 3.0);
        assert!(v.values[1].is_nan());
        assert_eq!(v.values[2], 2.5e-300);
    }
    let text = std::fs::read_to_string(&csv).unwrap();
    assert!(text
        .lines()
        .next()
        .unwrap()
        .starts_with("degree,degree_variance"));
}

#[test]
fn truncated_and_corrupt_model_files_are_named() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("m.nc");
    write_model(&p, &sample_model(5), &Provenance::default()).unwrap();
    let bytes = std::fs::read(&p).unwrap();
    let cut = dir.path().join("cut.nc");
    std::fs::write(&cut, &bytes[..bytes.len() / 2]).unwrap();
    let err = read_model(&cut).unwrap_err().to_string();
    assert!(err.contains("cut.nc"), "{err}");
    let junk = dir.path().join("junk.nc");
    std::fs::write(&junk, b"this is not netcdf").unwrap();
    let err = read_model(&junk).unwrap_err().to_string();
    assert!(
        err.contains("junk.nc") && err.contains("signature"),
        "{err}"
    );
    let missing = dir.path().join("absent.nc");
    let err = read_model(&missing).unwrap_err().to_string();
    assert!(err.contains("absent.nc"), "{err}");
}

#[test]
fn model_missing_attribute_or_variable_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("bad.nc");
    let mut b = NcFileBuilder::new();
    let dd = b.add_dimension("degree", 2).unwrap();
    let dm = b.add_dimension("order", 2).unwrap();
    let vc = b.add_variable::<f64>("C", &[dd, dm]).unwrap();
    b.write_variable(vc, &[1.0, 0.0, 0.0, 0.0]).unwrap();
    b.add_attribute("normalization", NcAttrValue::Chars("geodesy".into()))
        .unwrap();
    b.add_attribute("condon_shortley_phase", NcAttrValue::Ints(vec![0]))
        .unwrap();
    b.add_attribute("reference_radius_m", NcAttrValue::Doubles(vec![1.0]))
        .unwrap();
    std::fs::write(&p, b.to_vec(NcWriteOptions::classic()).unwrap().1).unwrap();
    let err = read_model(&p).unwrap_err().to_string();
    assert!(err.contains("bad.nc") && err.contains("'S'"), "{err}");

    let mut b = NcFileBuilder::new();
    let dd = b.add_dimension("degree", 2).unwrap();
    let dm = b.add_dimension("order", 2).unwrap();
    for name in ["C", "S"] {
        let v = b.add_variable::<f64>(name, &[dd, dm]).unwrap();
        b.write_variable(v, &[1.0, 0.0, 0.0, 0.0]).unwrap();
    }
    b.add_attribute("normalization", NcAttrValue::Chars("fully".into()))
        .unwrap();
    std::fs::write(&p, b.to_vec(NcWriteOptions::classic()).unwrap().1).unwrap();
    let err = read_model(&p).unwrap_err().to_string();
    assert!(
        err.contains("'normalization'") && err.contains("fully"),
        "{err}"
    );
}

/// `sample_model` with linear secular variation about 2031.25 and σ on both parts.
fn secular_model(lmax: usize) -> Coefficients {
    let mut c = sample_model(lmax);
    let n = c.len();
    let sig = |k: f64| {
        (0..n)
            .map(|i| k * (1.0 + i as f64).sqrt())
            .collect::<Vec<f64>>()
    };
    c.set_sigmas(sig(1e-6), sig(2e-6)).unwrap();
    let mut rates = Coefficients::zeros(lmax, Normalization::Schmidt);
    for l in 1..=lmax {
        for m in 0..=l {
            let r = ((l * 13 + m * 5) as f64).cos() * 20.0 / (l * l) as f64;
            rates.set(l, m, r, if m > 0 { r / 7.0 } else { 0.0 });
        }
    }
    rates.set_sigmas(sig(1e-2), sig(3e-2)).unwrap();
    c.set_secular(2031.25, rates).unwrap();
    c
}

#[test]
fn secular_variation_round_trips_through_netcdf_and_text_bit_for_bit() {
    let dir = tempfile::tempdir().unwrap();
    let model = secular_model(6);
    for name in ["sv.nc", "sv.txt"] {
        let path = dir.path().join(name);
        write_model(&path, &model, &Provenance::default()).unwrap();
        let back = read_model(&path).unwrap();
        let (sv, original) = (
            back.secular().expect("rates read"),
            model.secular().unwrap(),
        );
        assert_eq!(sv.epoch_year, 2031.25, "{name}");
        assert_eq!(back.c_packed(), model.c_packed(), "{name}");
        assert_eq!(back.sigmas(), model.sigmas(), "{name}");
        assert_eq!(sv.rates.c_packed(), original.rates.c_packed(), "{name}");
        assert_eq!(sv.rates.s_packed(), original.rates.s_packed(), "{name}");
        assert_eq!(sv.rates.sigmas(), original.rates.sigmas(), "{name}");
        assert_eq!(sv.rates.units, "nT/year", "{name}");
        assert!(!back.attributes.contains_key("epoch_year"), "{name}");
    }
    // the NetCDF layout: dC_dt, dS_dt and their σ over (degree, order), epoch_year a double
    let nc = NcFile::open(dir.path().join("sv.nc")).unwrap();
    for v in ["dC_dt", "dS_dt", "dC_dt_sigma", "dS_dt_sigma"] {
        let var = nc.variable(v).unwrap();
        let dims: Vec<&str> = var.dimensions().iter().map(|d| d.name.as_str()).collect();
        assert_eq!(dims, ["degree", "order"], "{v}");
        assert_eq!(attr_text(var.attributes(), "units"), "nT/year", "{v}");
    }
    let globals = nc.global_attributes().unwrap();
    let epoch = globals.iter().find(|a| a.name == "epoch_year").unwrap();
    assert_eq!(epoch.value, NcAttrValue::Doubles(vec![2031.25]));
}

#[test]
fn a_model_at_a_time_follows_the_linear_rates() {
    // closed form of the linear model: C(t) = C + (t − t₀)·dC/dt, σ(t)² = σ² + (t − t₀)² σ_rate²
    let model = secular_model(4);
    let at = model.at_time(2036.25).unwrap();
    let sv = model.secular().unwrap();
    for l in 0..=4 {
        for m in 0..=l {
            let expected = model.c(l, m) + 5.0 * sv.rates.c(l, m);
            assert!((at.c(l, m) - expected).abs() <= 1e-15 * expected.abs().max(1.0));
            let (s0, _) = model.sigma(l, m).unwrap();
            let (sr, _) = sv.rates.sigma(l, m).unwrap();
            let (st, _) = at.sigma(l, m).unwrap();
            assert!((st - (s0 * s0 + 25.0 * sr * sr).sqrt()).abs() <= 1e-15 * st);
        }
    }
    assert!(at.secular().is_none());
    let err = sample_model(2).at_time(2030.0).unwrap_err().to_string();
    assert!(err.contains("no secular variation"), "{err}");
}
