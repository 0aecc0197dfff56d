//! `kugel rotate`, `kugel tapers`, `kugel convert --form complex` and the `--region` options of
//! `spectrum` and `compare`, end to end, including their refusals of bad input.

use std::path::Path;

use kugel::io::model::{model_form, read_model, write_model, CoefficientForm};
use kugel::io::provenance::Provenance;
use kugel::sht::evaluate_points;
use netcdf_reader::NcFile;

fn run_kugel(args: &[&str]) -> std::process::Output {
    crate::run_kugel(&[&["--quiet"], args].concat())
}

fn p(path: &Path) -> &str {
    path.to_str().unwrap()
}

/// Runs `kugel tapers ARGS -o OUT`, which must succeed, and returns the file with its
/// concentration factors.
fn tapers_file(args: &[&str], out: &Path) -> (NcFile, Vec<f64>) {
    let mut all = vec!["tapers"];
    all.extend_from_slice(args);
    all.extend_from_slice(&["-o", p(out)]);
    let o = run_kugel(&all);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let f = NcFile::open(out).unwrap();
    let conc = f
        .read_variable_as_f64("concentration")
        .unwrap()
        .iter()
        .copied()
        .collect();
    (f, conc)
}

fn model_file(dir: &Path, lmax: usize) -> std::path::PathBuf {
    let m = crate::support::random_model(lmax, 17, |l| 1.0 / (1.0 + l as f64).powi(2));
    let path = dir.join("m.nc");
    write_model(&path, &m, &Provenance::from_command_line("test")).unwrap();
    path
}

#[test]
fn rotate_pole_moves_the_point_to_the_north_pole() {
    // the definition of --pole (docs/conventions.md §9; common practice)
    let dir = tempfile::tempdir().unwrap();
    let input = model_file(dir.path(), 30);
    let out = dir.path().join("r.nc");
    let o = run_kugel(&[
        "rotate",
        p(&input),
        "-o",
        p(&out),
        "--pole",
        "-35,120",
        "--azimuth",
        "15",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let (f, g) = (read_model(&input).unwrap(), read_model(&out).unwrap());
    let a = evaluate_points(&f, &[(125f64.to_radians(), 120f64.to_radians())]).unwrap()[0].value;
    let b = evaluate_points(&g, &[(0.0, 0.0)]).unwrap()[0].value;
    assert!((a - b).abs() < 1e-12 * a.abs().max(1.0), "{a} vs {b}");
    // --euler and its inverse give the input back
    let back = dir.path().join("back.nc");
    let once = dir.path().join("once.nc");
    assert!(
        run_kugel(&["rotate", p(&input), "-o", p(&once), "--euler", "10,45,-30"])
            .status
            .success()
    );
    assert!(
        run_kugel(&["rotate", p(&once), "-o", p(&back), "--euler", "30,-45,-10"])
            .status
            .success()
    );
    let h = read_model(&back).unwrap();
    for (l, m, c, s) in f.iter() {
        assert!((h.c(l, m) - c).abs() < 1e-13 && (h.s(l, m) - s).abs() < 1e-13);
    }
    let bad = run_kugel(&["rotate", p(&input), "-o", p(&back), "--pole", "95,0"]);
    assert_eq!(bad.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("95"));
}

#[test]
fn tapers_file_holds_sorted_windows_and_the_shannon_number() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("t.nc");
    let (f, conc) = tapers_file(
        &[
            "--cap-radius-deg",
            "20",
            "--lmax",
            "10",
            "--centre",
            "40,-100",
        ],
        &out,
    );
    assert_eq!(conc.len(), 121);
    assert!(conc.windows(2).all(|w| w[0] >= w[1]));
    let n: f64 = conc.iter().sum();
    // SDW 2006: Σλ = (L+1)²(1 − cos θ₀)/2
    let want = 121.0 * (1.0 - 20f64.to_radians().cos()) / 2.0;
    assert!((n - want).abs() < 1e-9 * want, "{n} vs {want}");
    let c = f.read_variable_as_f64("C").unwrap();
    assert_eq!(c.shape(), &[121, 11, 11]);
    let globals = f.global_attributes().unwrap();
    assert!(globals.iter().any(|a| a.name == "shannon_number"));
    assert!(globals.iter().any(|a| a.name == "centre_lat_deg"));
    for (radius, what) in [("0", "more than 0"), ("181", "at most 180")] {
        let bad = run_kugel(&[
            "tapers",
            "--cap-radius-deg",
            radius,
            "--lmax",
            "10",
            "-o",
            p(&out),
        ]);
        assert_eq!(bad.status.code(), Some(3), "{radius}");
        let msg = String::from_utf8_lossy(&bad.stderr);
        assert!(msg.contains(what) && msg.contains(radius), "{msg}");
    }
}

#[test]
fn localised_spectrum_and_comparison_run_and_refuse_a_window_at_the_model_degree() {
    let dir = tempfile::tempdir().unwrap();
    let input = model_file(dir.path(), 40);
    let csv = dir.path().join("s.csv");
    let o = run_kugel(&[
        "spectrum",
        p(&input),
        "--region",
        "cap:30,-60,50",
        "--window-lmax",
        "6",
        "--csv",
        p(&csv),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    // without --quiet the report gives the average over the reliable degrees
    let loud = crate::run_kugel(&[
        "spectrum",
        p(&input),
        "--region",
        "cap:30,-60,50",
        "--window-lmax",
        "6",
    ]);
    assert!(loud.status.success());
    let said = format!(
        "{}{}",
        String::from_utf8_lossy(&loud.stdout),
        String::from_utf8_lossy(&loud.stderr)
    );
    assert!(
        said.contains("times the expectation") && said.contains("independent degrees"),
        "{said}"
    );
    let text = std::fs::read_to_string(&csv).unwrap();
    let header = text.lines().next().unwrap();
    for col in [
        "degree",
        "localised_degree_variance",
        "localised_degree_variance_sigma",
        "expected_localised_degree_variance",
        "reliable",
    ] {
        assert!(header.split(',').any(|c| c == col), "{header}");
    }
    let cmp = dir.path().join("c.csv");
    let o = run_kugel(&[
        "compare",
        p(&input),
        p(&input),
        "--region",
        "cap:30,-60,50",
        "--window-lmax",
        "6",
        "--csv",
        p(&cmp),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let bad = run_kugel(&[
        "spectrum",
        p(&input),
        "--region",
        "cap:30,-60,30",
        "--window-lmax",
        "40",
    ]);
    assert_eq!(bad.status.code(), Some(3));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("LW < L"));
    let bad = run_kugel(&[
        "spectrum",
        p(&input),
        "--region",
        "cap:30,-60,0",
        "--window-lmax",
        "6",
    ]);
    assert_eq!(bad.status.code(), Some(3));
    let bad = run_kugel(&[
        "spectrum",
        p(&input),
        "--region",
        "polygon:x.csv",
        "--window-lmax",
        "6",
    ]);
    assert_eq!(bad.status.code(), Some(4));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("x.csv"));
}

#[test]
fn polygon_and_mask_regions_give_windows_and_localised_spectra() {
    let dir = tempfile::tempdir().unwrap();
    let ring = dir.path().join("ring.csv");
    // a quadrilateral of 40° by 40° about (10°N, 20°E); the file lists it clockwise
    std::fs::write(
        &ring,
        "# Halyard block\nlon,lat\n0,-10\n0,30\n40,30\n40,-10\n",
    )
    .unwrap();
    let out = dir.path().join("t.nc");
    let region = format!("polygon:{}", p(&ring));
    let (f, conc) = tapers_file(&["--region", &region, "--lmax", "8", "--keep", "20"], &out);
    assert_eq!(conc.len(), 20);
    assert!(
        conc.windows(2).all(|w| w[0] >= w[1]) && conc[0] > 0.9,
        "{conc:?}"
    );
    let globals = f.global_attributes().unwrap();
    let region = globals
        .iter()
        .find(|a| a.name == "region")
        .expect("region attribute");
    assert!(
        format!("{:?}", region.value).contains("polygon:"),
        "{:?}",
        region.value
    );
    let input = model_file(dir.path(), 30);
    let csv = dir.path().join("s.csv");
    let o = run_kugel(&[
        "spectrum",
        p(&input),
        "--region",
        &format!("polygon:{}", p(&ring)),
        "--window-lmax",
        "5",
        "--tapers",
        "3",
        "--csv",
        p(&csv),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(std::fs::read_to_string(&csv)
        .unwrap()
        .starts_with("degree,localised_degree_variance"));
    // a self-crossing ring is refused with the file and the lines of its edges
    std::fs::write(&ring, "lat,lon\n0,0\n10,10\n10,0\n0,10\n").unwrap();
    let bad = run_kugel(&[
        "tapers",
        "--region",
        &format!("polygon:{}", p(&ring)),
        "--lmax",
        "8",
        "-o",
        p(&out),
    ]);
    assert_eq!(bad.status.code(), Some(3));
    let msg = String::from_utf8_lossy(&bad.stderr);
    assert!(
        msg.contains("ring.csv") && msg.contains("crosses itself") && msg.contains("line 2"),
        "{msg}"
    );
}

#[test]
fn complex_tables_convert_back_and_rotate() {
    let dir = tempfile::tempdir().unwrap();
    let input = model_file(dir.path(), 12);
    let cx = dir.path().join("c.txt");
    let o = run_kugel(&[
        "convert",
        p(&input),
        p(&cx),
        "--form",
        "complex",
        "--normalization",
        "orthonormal",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(&cx).unwrap();
    assert!(text.contains("coefficient_form = complex") && text.contains("\n3 -2 "));
    let back = read_model(&cx).unwrap().to_geodesy().unwrap();
    let orig = read_model(&input).unwrap();
    for (l, m, c, s) in orig.iter() {
        assert!(
            (back.c(l, m) - c).abs() < 1e-14 && (back.s(l, m) - s).abs() < 1e-14,
            "({l},{m})"
        );
    }
    let r = dir.path().join("r.nc");
    assert!(
        run_kugel(&["rotate", p(&cx), "-o", p(&r), "--pole", "10,20"])
            .status
            .success()
    );
    // a complex input comes out complex unless told otherwise
    assert_eq!(model_form(&r).unwrap(), CoefficientForm::Complex);
    let r_real = dir.path().join("r_real.nc");
    let o = run_kugel(&[
        "rotate",
        p(&cx),
        "-o",
        p(&r_real),
        "--pole",
        "10,20",
        "--form",
        "real",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert_eq!(model_form(&r_real).unwrap(), CoefficientForm::Real);
    let (a, b) = (read_model(&r).unwrap(), read_model(&r_real).unwrap());
    for (l, m, c, s) in b.iter() {
        assert!((a.c(l, m) - c).abs() < 1e-14 && (a.s(l, m) - s).abs() < 1e-14);
    }
}

#[test]
fn complex_sets_convert_to_netcdf_and_back() {
    let dir = tempfile::tempdir().unwrap();
    let input = model_file(dir.path(), 12);
    let cx = dir.path().join("c.nc");
    let o = run_kugel(&[
        "convert",
        p(&input),
        p(&cx),
        "--form",
        "complex",
        "--normalization",
        "orthonormal",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert_eq!(model_form(&cx).unwrap(), CoefficientForm::Complex);
    // any command reads it: back to a real geodesy table
    let back_path = dir.path().join("back.txt");
    let o = run_kugel(&[
        "convert",
        p(&cx),
        p(&back_path),
        "--normalization",
        "geodesy",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let back = read_model(&back_path).unwrap();
    let orig = read_model(&input).unwrap().to_geodesy().unwrap();
    for (l, m, c, s) in orig.iter() {
        assert!(
            (back.c(l, m) - c).abs() < 1e-14 && (back.s(l, m) - s).abs() < 1e-14,
            "({l},{m})"
        );
    }
}
