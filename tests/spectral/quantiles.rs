//! χ², Student-t and F quantiles against scipy.stats (fixture from
//! `tests/reference/spectral_quantiles_scipy.py`; scipy version in the fixture header), over
//! degrees of freedom 1..20001 and levels 1e-6..1−1e-6. Required accuracy: 1e-10 relative.

use kugel::spectral::stats::{chi2_quantile, f_quantile, student_t_quantile};

const FIXTURE: &str = include_str!("../fixtures/spectral/quantiles_scipy.csv");
const TOLERANCE: f64 = 1e-10;

#[test]
fn quantiles_match_scipy() {
    let mut checked = [0usize; 3];
    let mut worst = 0.0f64;
    for line in FIXTURE.lines().filter(|l| !l.starts_with('#')).skip(1) {
        let f: Vec<&str> = line.split(',').collect();
        let d1: f64 = f[1].parse().unwrap();
        let d2: f64 = f[2].parse().unwrap();
        let p: f64 = f[3].parse().unwrap();
        let expect: f64 = f[4].parse().unwrap();
        let (got, slot) = match f[0] {
            "chi2" => (chi2_quantile(p, d1).unwrap(), 0),
            "t" => (student_t_quantile(p, d1).unwrap(), 1),
            "f" => (f_quantile(p, d1, d2).unwrap(), 2),
            other => panic!("unknown distribution {other}"),
        };
        let err = if expect == 0.0 {
            got.abs()
        } else {
            ((got - expect) / expect).abs()
        };
        worst = worst.max(err);
        assert!(
            err <= TOLERANCE,
            "{} dof ({d1}, {d2}) p = {p}: kugel {got:e}, scipy {expect:e}, rel err {err:e}",
            f[0]
        );
        checked[slot] += 1;
    }
    assert!(
        checked.iter().all(|&n| n > 400),
        "fixture too small: {checked:?}"
    );
    eprintln!("worst relative error vs scipy: {worst:e} over {checked:?} quantiles");
}
