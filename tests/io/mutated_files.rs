//! Bounded fuzzing of every file reader: valid files that kugel writes (NetCDF models, classic
//! and NetCDF-4; grids; point CSV and NetCDF; degree tables; text tables), mutated by byte
//! flips, truncation and spliced garbage, must give a result or an error naming the file —
//! never a panic. The case counts keep the whole set within seconds in `cargo test`; set
//! `PROPTEST_CASES` for a longer run (DEVELOPERS.md).

use std::path::{Path, PathBuf};

use kugel::coeffs::{Coefficients, Normalization};
use kugel::io::degree_table::{
    read_degree_table, write_degree_table_netcdf, DegreeColumn, DegreeTable,
};
use kugel::io::grid::read::{read_grid, GridReadOptions};
use kugel::io::grid::write::{write_grid, GridFile, GridWriteOptions, LonConvention};
use kugel::io::model::{read_model, write_model};
use kugel::io::provenance::Provenance;
use kugel::observe::points::{read_points, PointReadOptions};
use kugel::sht::GaussGrid;
use proptest::prelude::*;

/// One mutation of a file's bytes.
#[derive(Debug, Clone)]
enum Mutation {
    Flip { at: usize, xor: u8 },
    Truncate { keep: usize },
    Splice { at: usize, bytes: Vec<u8> },
    SetWord { at: usize, value: u64 },
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (any::<usize>(), 1u8..=255).prop_map(|(at, xor)| Mutation::Flip { at, xor }),
        any::<usize>().prop_map(|keep| Mutation::Truncate { keep }),
        (
            any::<usize>(),
            proptest::collection::vec(any::<u8>(), 1..16)
        )
            .prop_map(|(at, bytes)| Mutation::Splice { at, bytes }),
        // huge sizes and offsets written over length and offset fields
        (
            any::<usize>(),
            prop_oneof![
                Just(u64::MAX),
                Just(1u64 << 40),
                Just(20_001u64),
                any::<u64>()
            ]
        )
            .prop_map(|(at, value)| Mutation::SetWord { at, value }),
    ]
}

fn apply(base: &[u8], mutations: &[Mutation]) -> Vec<u8> {
    let mut b = base.to_vec();
    for m in mutations {
        if b.is_empty() {
            break;
        }
        match m {
            Mutation::Flip { at, xor } => {
                let i = at % b.len();
                b[i] ^= xor;
            }
            Mutation::Truncate { keep } => b.truncate(keep % b.len()),
            Mutation::Splice { at, bytes } => {
                let i = at % b.len();
                b.splice(i..i, bytes.iter().copied());
            }
            Mutation::SetWord { at, value } => {
                let i = at % b.len();
                for (k, byte) in value.to_be_bytes().iter().enumerate() {
                    if let Some(x) = b.get_mut(i + k) {
                        *x = *byte;
                    }
                }
            }
        }
    }
    b
}

struct Bases {
    _dir: tempfile::TempDir,
    model_nc4: Vec<u8>,
    model_classic: Vec<u8>,
    grid_nc: Vec<u8>,
    table_nc: Vec<u8>,
    points_nc: Vec<u8>,
    scratch: PathBuf,
}

fn bases() -> Bases {
    let dir = tempfile::tempdir().unwrap();
    let mut m = Coefficients::zeros(4, Normalization::Geodesy);
    for l in 0..=4 {
        for k in 0..=l {
            m.set(
                l,
                k,
                0.1 * (l + k) as f64,
                if k > 0 { 0.05 * l as f64 } else { 0.0 },
            );
        }
    }
    m.reference_radius_m = 6.0e6;
    m.gm_m3_s2 = Some(4.0e14);
    let p = dir.path().join("m.nc");
    write_model(&p, &m, &Provenance::default()).unwrap();
    let model_nc4 = std::fs::read(&p).unwrap();
    // a classic-format model: the minimal layout by the writer crate
    let mut b = netcdf_writer::NcFileBuilder::new();
    let dd = b.add_dimension("degree", 3).unwrap();
    let dm = b.add_dimension("order", 3).unwrap();
    for (v, values) in [
        ("C", [1.0, 0.0, 0.0, 0.5, 0.25, 0.0, 0.1, 0.2, 0.3]),
        ("S", [0.0, 0.0, 0.0, 0.0, 0.25, 0.0, 0.0, 0.2, 0.3]),
    ] {
        let id = b.add_variable::<f64>(v, &[dd, dm]).unwrap();
        b.write_variable(id, &values).unwrap();
    }
    b.add_attribute(
        "normalization",
        netcdf_writer::NcAttrValue::Chars("geodesy".into()),
    )
    .unwrap();
    b.add_attribute(
        "condon_shortley_phase",
        netcdf_writer::NcAttrValue::Ints(vec![0]),
    )
    .unwrap();
    b.add_attribute(
        "reference_radius_m",
        netcdf_writer::NcAttrValue::Doubles(vec![6e6]),
    )
    .unwrap();
    let model_classic = b
        .to_vec(netcdf_writer::NcWriteOptions::classic())
        .unwrap()
        .1;
    assert!(read_model_bytes(&dir.path().join("c.nc"), &model_classic).is_ok());

    let grid = GaussGrid::new(6);
    let mut file = GridFile::from_engine_grid(&grid, "g".to_string());
    let (nlat, nlon) = grid.shape();
    file.push(
        "value",
        "v",
        "1",
        None,
        ndarray::Array2::from_elem((nlat, nlon), 1.5),
    );
    let gp = dir.path().join("g.nc");
    write_grid(
        &gp,
        &file,
        &GridWriteOptions {
            float32: false,
            lon_convention: LonConvention::ZeroTo360,
            provenance: &Provenance::default(),
        },
    )
    .unwrap();
    let table = DegreeTable {
        columns: vec![
            DegreeColumn {
                name: "degree".into(),
                units: "1".into(),
                long_name: "degree".into(),
                values: (0..6).map(f64::from).collect(),
            },
            DegreeColumn {
                name: "power".into(),
                units: "1".into(),
                long_name: "power".into(),
                values: vec![1.0, 0.5, 0.25, 0.1, 0.05, 0.01],
            },
        ],
        attributes: Vec::new(),
    };
    let tp = dir.path().join("t.nc");
    write_degree_table_netcdf(&tp, &table, &Provenance::default()).unwrap();
    let fixture = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/observe/points.nc");
    Bases {
        model_nc4,
        model_classic,
        grid_nc: std::fs::read(&gp).unwrap(),
        table_nc: std::fs::read(&tp).unwrap(),
        points_nc: std::fs::read(fixture).unwrap(),
        scratch: dir.path().join("fuzz.nc"),
        _dir: dir,
    }
}

fn read_model_bytes(path: &Path, bytes: &[u8]) -> kugel::Result<Coefficients> {
    std::fs::write(path, bytes).unwrap();
    read_model(path)
}

/// An error must name the file it is about.
fn names_file<T>(r: kugel::Result<T>, path: &Path) -> Result<(), TestCaseError> {
    if let Err(e) = r {
        let text = e.to_string();
        prop_assert!(
            text.contains("fuzz"),
            "error without the file name: {}",
            text
        );
    }
    let _ = path;
    Ok(())
}

/// The bounded default, or `PROPTEST_CASES` for a longer run.
fn cases(default: u32) -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: cases(48), failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn mutated_netcdf_files_never_panic(which in 0usize..5, mutations in proptest::collection::vec(mutation(), 1..6)) {
        let b = bases();
        let (base, kind) = match which {
            0 => (&b.model_nc4, "model"),
            1 => (&b.model_classic, "model"),
            2 => (&b.grid_nc, "grid"),
            3 => (&b.table_nc, "table"),
            _ => (&b.points_nc, "points"),
        };
        let bytes = apply(base, &mutations);
        std::fs::write(&b.scratch, &bytes).unwrap();
        let p = &b.scratch;
        match kind {
            "model" => names_file(read_model(p), p)?,
            "grid" => names_file(read_grid(p, &GridReadOptions::default()), p)?,
            "table" => names_file(read_degree_table(p), p)?,
            _ => names_file(read_points(p, &PointReadOptions { require_value: false, ..Default::default() }), p)?,
        }
    }

    #[test]
    fn mutated_point_csv_never_panics(
        rows in proptest::collection::vec((-100.0f64..100.0, -400.0f64..400.0, any::<f64>()), 0..20),
        header in prop_oneof![Just("lat,lon,value".to_string()), Just("lat,lon,value,value".to_string()), Just("LAT,Lon,value,sigma".to_string()), "[a-z,]{0,20}"],
        mutations in proptest::collection::vec(mutation(), 0..4),
    ) {
        let dir = tempfile::tempdir().unwrap();
        let mut text = format!("{header}\n");
        for (a, b, c) in rows {
            text += &format!("{a},{b},{c}\n");
        }
        let bytes = apply(text.as_bytes(), &mutations);
        let p = dir.path().join("fuzz.csv");
        std::fs::write(&p, bytes).unwrap();
        names_file(read_points(&p, &PointReadOptions::default()), &p)?;
    }
}
