//! The I/O commands end to end: `kugel convert`, `kugel analyze`, `kugel synthesize`.

use std::path::Path;

use kugel::coeffs::Normalization;
use kugel::io::model::read_model;
use netcdf_reader::NcFile;

/// The binary with `--quiet`, so that only results and errors are printed.
fn run_kugel(args: &[&str]) -> std::process::Output {
    crate::run_kugel(&[&["--quiet"], args].concat())
}

fn p(path: &Path) -> &str {
    path.to_str().unwrap()
}

const TABLE: &str =
    "# test model\nnormalization = geodesy\nreference_radius_m = 6378137\nunits = m\n\
                     0 0 2.0 0\n1 1 0.5 -0.25\n3 2 0.125 0.0625\n4 4 -0.01 0.02\n";

#[test]
fn convert_round_trip_through_normalisations() {
    let dir = tempfile::tempdir().unwrap();
    let t = dir.path().join("m.txt");
    std::fs::write(&t, TABLE).unwrap();
    let nc = dir.path().join("m_schmidt.nc");
    let back = dir.path().join("back.txt");
    let out = run_kugel(&["convert", p(&t), p(&nc), "--normalization", "schmidt"]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let s = read_model(&nc).unwrap();
    assert_eq!(s.normalization, Normalization::Schmidt);
    // geodesy → Schmidt multiplies by sqrt(2l+1) (docs/conventions.md §2)
    assert!((s.c(3, 2) - 0.125 * 7f64.sqrt()).abs() < 1e-15);
    let out = run_kugel(&["convert", p(&nc), p(&back), "--normalization", "geodesy"]);
    assert!(out.status.success());
    let g = read_model(&back).unwrap();
    let orig = read_model(&t).unwrap();
    for (a, b) in g.c_packed().iter().zip(orig.c_packed()) {
        assert!((a - b).abs() <= 2.0 * f64::EPSILON * b.abs(), "{a} vs {b}");
    }
    assert_eq!(g.reference_radius_m, 6378137.0);
    assert_eq!(g.units, "m");
    // the history keeps both steps, newest first (common practice of NetCDF tools)
    let h = &g.attributes["history"];
    assert_eq!(h.matches("convert").count(), 2, "{h}");
    assert!(
        h.find("back.txt").unwrap()
            < h.find("m_schmidt.nc --normalization schmidt")
                .unwrap_or(usize::MAX),
        "{h}"
    );
    // orthonormal with the phase on flips odd orders
    let o = dir.path().join("o.txt");
    assert!(
        run_kugel(&["convert", p(&t), p(&o), "--normalization", "orthonormal"])
            .status
            .success()
    );
    let om = read_model(&o).unwrap();
    assert!(om.condon_shortley);
    assert!(om.c(1, 1) < 0.0);
}

#[test]
fn convert_bad_input_and_same_path() {
    let dir = tempfile::tempdir().unwrap();
    let t = dir.path().join("m.txt");
    std::fs::write(&t, TABLE).unwrap();
    let out = run_kugel(&["convert", p(&t), p(&t)]);
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains("same file"));
    assert_eq!(
        std::fs::read_to_string(&t).unwrap(),
        TABLE,
        "input untouched"
    );
    let out = run_kugel(&[
        "convert",
        p(&t),
        p(&dir.path().join("x.nc")),
        "--normalization",
        "full",
    ]);
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains("unknown normalization 'full'"));
    let bad = dir.path().join("bad.txt");
    std::fs::write(&bad, "0 0 1 0\n1 0 one 0\n").unwrap();
    let out = run_kugel(&["convert", p(&bad), p(&dir.path().join("y.nc"))]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(3));
    assert!(err.contains("bad.txt, line 2"), "{err}");
    assert!(!dir.path().join("y.nc").exists());
}

#[test]
fn synthesize_then_analyze_recovers_the_model() {
    let dir = tempfile::tempdir().unwrap();
    let t = dir.path().join("m.txt");
    std::fs::write(&t, TABLE).unwrap();
    let orig = read_model(&t).unwrap();
    for (grid, lmax) in [("gauss", "4"), ("regular:5", "10")] {
        let map = dir.path().join(format!("map_{lmax}.nc"));
        let back = dir.path().join(format!("back_{lmax}.nc"));
        let out = run_kugel(&[
            "synthesize",
            p(&t),
            "-o",
            p(&map),
            "--grid",
            grid,
            "--lon-range",
            "-180-180",
        ]);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let out = run_kugel(&["analyze", p(&map), "--lmax", lmax, "-o", p(&back)]);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let m = read_model(&back).unwrap();
        assert_eq!(m.reference_radius_m, 6378137.0, "carried through the grid");
        assert_eq!(m.units, "m");
        for l in 0..=m.lmax() {
            for k in 0..=l {
                let (c, s) = if l <= 4 {
                    (orig.c(l, k), orig.s(l, k))
                } else {
                    (0.0, 0.0)
                };
                // tolerance 1e-13: double round trip through file and reference transform
                assert!(
                    (m.c(l, k) - c).abs() < 1e-13 && (m.s(l, k) - s).abs() < 1e-13,
                    "{grid} ({l},{k})"
                );
            }
        }
    }
}

#[test]
fn synthesize_regular_one_degree_shape_and_refusals() {
    let dir = tempfile::tempdir().unwrap();
    let t = dir.path().join("m.txt");
    std::fs::write(&t, TABLE).unwrap();
    let map = dir.path().join("one.nc");
    assert!(run_kugel(&[
        "synthesize",
        p(&t),
        "-o",
        p(&map),
        "--grid",
        "regular:1",
        "--float32"
    ])
    .status
    .success());
    let f = NcFile::open(&map).unwrap();
    assert_eq!(f.variable("value").unwrap().shape(), vec![181, 360]);
    // asking the 1° grid for more than it can analyse states the limit
    let out = run_kugel(&[
        "analyze",
        p(&map),
        "--lmax",
        "91",
        "-o",
        p(&dir.path().join("x.nc")),
    ]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(3));
    assert!(err.contains("up to degree 90"), "{err}");
    assert!(!dir.path().join("x.nc").exists());
    // synthesis on a grid coarser than the band limit is exact at the nodes (the values are
    // computed on a denser longitude circle and sub-sampled), so it succeeds
    let coarse = dir.path().join("coarse.nc");
    let out = run_kugel(&[
        "synthesize",
        p(&t),
        "-o",
        p(&coarse),
        "--grid",
        "regular:60",
        "--lmax",
        "4",
    ]);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(coarse.exists());
    let leftovers: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .filter_map(|e| e.ok())
        .filter(|e| e.file_name().to_string_lossy().contains("kugel-tmp"))
        .collect();
    assert!(leftovers.is_empty());
    let out = run_kugel(&["synthesize", p(&t), "-o", p(&coarse), "--grid", "hexagons"]);
    assert_eq!(out.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&out.stderr).contains("regular:STEP_DEG"));
}
