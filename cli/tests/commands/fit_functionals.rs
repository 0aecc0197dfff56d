//! `kugel fit` of functionals from several files: the mixed fit runs and reports χ² per data
//! set, and bad observations are refused with the file and line named.

use super::run_kugel;

/// Gravity disturbances of a degree-2 disturbing potential C̄20 = 1e-5 at 300 km, written by
/// the formula of docs/conventions.md §6: δg = (GM/R²)(l+1)(R/r)^{l+2} C̄20 P̄20 · 1e5 mGal.
fn orbit_csv() -> String {
    let (r_ref, gm) = (2.1e6f64, 1.1e13f64);
    let r = r_ref + 300e3;
    let mut s = String::from("lat,lon,altitude_km,value,sigma\n");
    for i in 0..200 {
        let lat = -85.0 + 170.0 * ((i * 37) % 200) as f64 / 200.0;
        let lon = -180.0 + 360.0 * ((i * 53) % 200) as f64 / 200.0;
        let t = (90.0f64 - lat).to_radians().cos();
        let p20 = 5f64.sqrt() * (3.0 * t * t - 1.0) / 2.0;
        let dg = gm / (r_ref * r_ref) * 3.0 * (r_ref / r).powi(4) * 1e-5 * p20 * 1e5;
        s.push_str(&format!("{lat},{lon},300,{dg},0.01\n"));
    }
    s
}

#[test]
fn mixed_gravity_fit_recovers_the_model_and_reports_each_set() {
    let dir = tempfile::tempdir().unwrap();
    let orbit = dir.path().join("orbit.csv");
    std::fs::write(&orbit, orbit_csv()).unwrap();
    // a second set of the same functional given by a quantity column, half weight
    let second = dir.path().join("second.csv");
    let text = orbit_csv().replacen(
        "lat,lon,altitude_km,value,sigma",
        "lat,lon,altitude_km,value,sigma,quantity",
        1,
    );
    let text: String = text
        .lines()
        .enumerate()
        .map(|(i, l)| {
            if i == 0 {
                format!("{l}\n")
            } else {
                format!("{l},gravity-disturbance\n")
            }
        })
        .collect();
    std::fs::write(&second, text).unwrap();
    let out = dir.path().join("g.nc");
    let spec = format!("{}@quantity=gravity-disturbance", orbit.display());
    let spec2 = format!("{}@weight=0.5;name=second", second.display());
    let o = run_kugel(&[
        "fit",
        "--data",
        &spec,
        "--data",
        &spec2,
        "--lmax",
        "3",
        "--gm-m3-s2",
        "1.1e13",
        "--body-radius-km",
        "2100",
        "--fix-degrees",
        "0,1",
        "-o",
        out.to_str().unwrap(),
    ]);
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{stderr}");
    assert!(
        stderr.contains("data set second: 200 observations"),
        "{stderr}"
    );
    let model = kugel::io::model::read_model(&out).unwrap();
    assert_eq!(model.gm_m3_s2, Some(1.1e13));
    assert!(
        (model.c(2, 0) - 1e-5).abs() < 1e-10,
        "C20 {}",
        model.c(2, 0)
    );
}

#[test]
fn bad_observations_are_refused_with_file_and_line() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("m.nc");
    let cases: [(&str, &[&str], &str); 4] = [
        (
            "lat,lon,value,quantity\n10,20,1,z\n11,20,1,zz\n",
            &[],
            "line 3: unknown quantity `zz`",
        ),
        (
            "lat,lon,value,quantity,time\n10,20,1,z,2030.5\n",
            &[],
            "line 2: the observation has a time",
        ),
        (
            "lat,lon,value,quantity\n10,20,40000,f\n",
            &[],
            "line 2: total intensity F",
        ),
        (
            "lat,lon,value,altitude_km\n10,20,1,-3000\n",
            &["--quantity", "br"],
            "line 2: altitude_km -3000 is at or below −R",
        ),
    ];
    for (i, (text, extra, expected)) in cases.iter().enumerate() {
        let path = dir.path().join(format!("bad{i}.csv"));
        std::fs::write(&path, text).unwrap();
        let mut args = vec![
            "fit",
            path.to_str().unwrap(),
            "--lmax",
            "1",
            "--body-radius-km",
            "2100",
            "-o",
            out.to_str().unwrap(),
        ];
        args.extend_from_slice(extra);
        let o = run_kugel(&args);
        let stderr = String::from_utf8_lossy(&o.stderr);
        assert!(!o.status.success(), "case {i} ran");
        assert!(
            stderr.contains(&format!("bad{i}.csv")) && stderr.contains(expected),
            "case {i}: {stderr}"
        );
        assert!(!out.exists());
    }
}
