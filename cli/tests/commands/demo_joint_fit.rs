//! The demo's joint gravity fit explains both campaigns to their noise: per campaign, χ²/n of
//! the orbital disturbances and of the station anomalies is near 1, within a bound derived
//! from the number of rows and of unknowns.

use kugel::pipeline::run::{run_job, RunOptions};
use kugel::pipeline::Job;
use kugel::progress::Silent;

use super::run_end_to_end::small_world;

/// The number after `label` in a step's key numbers.
fn number(numbers: &[(String, String)], label: &str) -> f64 {
    let (_, v) = numbers
        .iter()
        .find(|(k, _)| k == label)
        .unwrap_or_else(|| panic!("no '{label}' in {numbers:?}"));
    v.split_whitespace().next().unwrap().parse().unwrap()
}

#[test]
fn joint_fit_chi2_per_campaign_is_near_one() {
    let tmp = tempfile::tempdir().unwrap();
    small_world(tmp.path());
    let job = Job::load(&tmp.path().join("job.toml")).unwrap();
    let summary = run_job(
        &job,
        &RunOptions {
            quiet: true,
            ..Default::default()
        },
        &Silent,
    )
    .unwrap();
    let joint = summary
        .steps
        .iter()
        .find(|s| s.name == "joint_fit")
        .unwrap();
    // With the right σ and a model that can explain the data (the truth is band-limited at
    // the fit's degree 12, its prior the truth's own rule), E[χ²_d] = n_d − h_d, where h_d ≥ 0
    // is the campaign's share of the trace of the hat matrix, at most the u = 13² − 4 = 165
    // free unknowns; χ²_d spreads by about sqrt(2 n_d) (χ² with n_d degrees of freedom;
    // common practice). So χ²_d/n_d lies in [1 − u/n_d − 4·sqrt(2/n_d), 1 + 4·sqrt(2/n_d)]
    // but for a chance below 1e-4. A σ wrong by 15% moves χ²/n by about 30% and fails it.
    let unknowns = 13.0 * 13.0 - 4.0;
    for (campaign, n) in [("early", 3000.0), ("late", 2000.0)] {
        let chi2_n = number(&joint.numbers, &format!("χ²/n ({campaign})"));
        let spread = 4.0 * (2.0_f64 / n).sqrt();
        let (low, high) = (1.0 - unknowns / n - spread, 1.0 + spread);
        assert!(
            chi2_n > low && chi2_n < high,
            "{campaign}: χ²/n {chi2_n} outside [{low:.3}, {high:.3}]"
        );
    }
    // the magnetic fit explains its campaign alike: 1,200 rows, 80 unknowns
    let magnetic = summary.steps.iter().find(|s| s.name == "mag_fit").unwrap();
    let chi2_n = number(&magnetic.numbers, "χ²/n");
    let (n, u) = (1200.0_f64, 80.0);
    let spread = 4.0 * (2.0 / n).sqrt();
    assert!(
        chi2_n > 1.0 - u / n - spread && chi2_n < 1.0 + spread,
        "magnetic χ²/n {chi2_n}"
    );
}
