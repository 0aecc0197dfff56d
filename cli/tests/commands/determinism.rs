//! Same inputs, same data, whatever the thread count: the fit, the gridding, the analysis and
//! the spectrum run with 1 and with 2 threads (RAYON_NUM_THREADS) and their data compare bit
//! for bit (provenance attributes, which carry the time, are left out).

use std::path::Path;
use std::process::Command;

use kugel::io::degree_table::read_degree_table;
use kugel::io::grid::read::{read_grid, GridReadOptions};
use kugel::io::model::read_model;

fn run(dir: &Path, threads: &str, args: &[&str]) {
    let out = Command::new(env!("CARGO_BIN_EXE_kugel"))
        .args(args)
        .env("RAYON_NUM_THREADS", threads)
        .current_dir(dir)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

fn model_bits(path: &Path) -> Vec<u64> {
    let m = read_model(path).unwrap();
    let mut bits: Vec<u64> = m
        .c_packed()
        .iter()
        .chain(m.s_packed())
        .map(|v| v.to_bits())
        .collect();
    if let Some((cs, ss)) = m.sigmas() {
        bits.extend(cs.iter().chain(ss).map(|v| v.to_bits()));
    }
    bits
}

#[test]
fn one_and_two_threads_give_identical_data() {
    let dir = tempfile::tempdir().unwrap();
    let mut csv = String::from("lat,lon,value,sigma\n");
    for i in 0..3000 {
        let lat = -89.0 + (i as f64 * 0.618_034 * 178.0) % 178.0;
        let lon = (i as f64 * 137.508) % 360.0;
        let v = (2.0 * lat.to_radians()).sin() * (3.0 * lon.to_radians()).cos()
            + 0.01 * (i % 13) as f64;
        csv += &format!("{lat:.5},{lon:.5},{v:.6},0.1\n");
    }
    std::fs::write(dir.path().join("pts.csv"), csv).unwrap();
    for t in ["1", "2"] {
        run(
            dir.path(),
            t,
            &[
                "fit",
                "pts.csv",
                "--lmax",
                "16",
                "--regularization",
                "kaula:1,2",
                "-o",
                &format!("fit{t}.nc"),
            ],
        );
        run(
            dir.path(),
            t,
            &[
                "grid",
                "pts.csv",
                "--lmax",
                "32",
                "-o",
                &format!("grid{t}.nc"),
            ],
        );
        run(
            dir.path(),
            t,
            &[
                "analyze",
                &format!("grid{t}.nc"),
                "-o",
                &format!("an{t}.nc"),
            ],
        );
        run(
            dir.path(),
            t,
            &[
                "spectrum",
                &format!("an{t}.nc"),
                "-o",
                &format!("sp{t}.nc"),
                "--fit",
                "2-30",
            ],
        );
    }
    let p = |name: &str| dir.path().join(name);
    assert_eq!(model_bits(&p("fit1.nc")), model_bits(&p("fit2.nc")), "fit");
    assert_eq!(
        model_bits(&p("an1.nc")),
        model_bits(&p("an2.nc")),
        "analysis"
    );
    let g = |name: &str| {
        read_grid(&p(name), &GridReadOptions::default())
            .unwrap()
            .field
            .iter()
            .map(|v| v.to_bits())
            .collect::<Vec<u64>>()
    };
    assert_eq!(g("grid1.nc"), g("grid2.nc"), "gridding");
    let s = |name: &str| {
        let t = read_degree_table(&p(name)).unwrap();
        t.columns
            .iter()
            .map(|c| {
                (
                    c.name.clone(),
                    c.values.iter().map(|v| v.to_bits()).collect::<Vec<u64>>(),
                )
            })
            .collect::<Vec<_>>()
    };
    assert_eq!(s("sp1.nc"), s("sp2.nc"), "spectrum");
}
