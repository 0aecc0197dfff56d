//! Two-model comparisons: known degree correlations, significance threshold calibration,
//! radius and normalisation changes that must leave the comparison unchanged, refusals.

use crate::support::{correlated_partner, random_model};
use kugel::spectral::{CompareOptions, Comparison};
use kugel::Normalization;

fn variance(l: usize) -> f64 {
    1e-9 / (1.0 + l as f64).powi(3)
}

#[test]
fn known_correlation_per_degree_is_recovered_within_sampling_error() {
    // Fisher's z = atanh r is close to normal with sd 1/√(n−3) for n pairs (Fisher 1915; any
    // statistics text). About 95% of degrees must fall within 1.96 sd of atanh ρ_l.
    let lmax = 300;
    let rho = |l: usize| 0.95 - 0.85 * l as f64 / lmax as f64;
    let a = random_model(lmax, 1, variance);
    let b = correlated_partner(&a, 2, variance, rho);
    let cmp = Comparison::compute(&a, &b, &CompareOptions::default()).unwrap();
    let (mut inside, mut count, mut z_sum) = (0, 0, 0.0);
    for l in 5..=lmax {
        let n = (2 * l + 1) as f64;
        let z = (cmp.correlation[l].atanh() - rho(l).atanh()) * (n - 3.0).sqrt();
        z_sum += z;
        inside += (z.abs() < 1.96) as usize;
        count += 1;
    }
    let frac = inside as f64 / count as f64;
    eprintln!(
        "fraction of degrees within 1.96 sd: {frac}, mean z {}",
        z_sum / count as f64
    );
    assert!(
        (0.91..=0.99).contains(&frac),
        "fraction within 1.96 sd: {frac}"
    );
    assert!(
        (z_sum / count as f64).abs() < 0.25,
        "mean z {}",
        z_sum / count as f64
    );
}

#[test]
fn correlation_threshold_has_its_false_alarm_rate() {
    // Independent fields: |r_l| exceeds the two-sided 95% threshold in about 5% of degrees.
    let lmax = 400;
    let (mut exceed, mut count) = (0, 0);
    for seed in 0..5 {
        let a = random_model(lmax, 10 + seed, variance);
        let b = random_model(lmax, 100 + seed, variance);
        let cmp = Comparison::compute(&a, &b, &CompareOptions::default()).unwrap();
        for l in 1..=lmax {
            exceed += (cmp.correlation[l].abs() > cmp.correlation_threshold[l]) as usize;
            count += 1;
        }
    }
    let rate = exceed as f64 / count as f64;
    eprintln!("false-alarm rate of the 95% correlation threshold: {rate}");
    // binomial sd at n = 2000: 0.005
    assert!((0.035..=0.065).contains(&rate), "false-alarm rate {rate}");
}

#[test]
fn rescaled_gravity_model_compares_as_identical() {
    // The same potential expressed at another radius and GM: C' = C (GM/GM')(R/R')^l.
    let mut a = random_model(120, 3, variance);
    a.reference_radius_m = 6_378_137.0;
    a.gm_m3_s2 = Some(3.986_004_418e14);
    let (r2, gm2) = (6_371_000.0, 3.986_004_415e14);
    let mut b = a.clone();
    let ratio = a.reference_radius_m / r2;
    let gm = a.gm_m3_s2.unwrap() / gm2;
    b.scale_by_degree(|l| gm * ratio.powi(l as i32));
    b.reference_radius_m = r2;
    b.gm_m3_s2 = Some(gm2);
    let b = b.converted(Normalization::Orthonormal, true).unwrap();
    let cmp = Comparison::compute(&a, &b, &CompareOptions::default()).unwrap();
    for l in 1..=120 {
        assert!((cmp.correlation[l] - 1.0).abs() < 1e-12, "l = {l}");
        assert!(
            (cmp.power_ratio[l] - 1.0).abs() < 1e-10,
            "l = {l}: {}",
            cmp.power_ratio[l]
        );
        assert!(cmp.difference_degree_variance[l] < 1e-20 * cmp.reference_power[l]);
    }
    assert_eq!(cmp.agreement_degree, Some(120));
    assert!(cmp.notes.iter().any(|n| n.contains("rescaled")));
}

#[test]
fn rescaled_magnetic_model_compares_as_identical() {
    // V = a Σ (a/r)^{l+1} g Y is unchanged when a₁ → a₂ and g₂ = g₁ (a₁/a₂)^{l+2}.
    let mut a = random_model(13, 4, |_| 1e6)
        .converted(Normalization::Schmidt, false)
        .unwrap();
    a.units = "nT".into();
    a.reference_radius_m = 6_371_200.0;
    let mut b = a.clone();
    let ratio = a.reference_radius_m / 6_378_137.0;
    b.scale_by_degree(|l| ratio.powi(l as i32 + 2));
    b.reference_radius_m = 6_378_137.0;
    let cmp = Comparison::compute(&a, &b, &CompareOptions::default()).unwrap();
    for l in 1..=13 {
        assert!(
            cmp.difference_degree_variance[l] < 1e-24 * cmp.reference_power[l],
            "l = {l}"
        );
    }
}

#[test]
fn incompatible_models_are_refused_unless_forced() {
    let mut a = random_model(10, 5, variance);
    a.units = "m".into();
    let mut b = a.clone();
    b.units = "mGal".into();
    let err = Comparison::compute(&a, &b, &CompareOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("'m'") && err.contains("'mGal'") && err.contains("--force"),
        "{err}"
    );
    let forced = CompareOptions {
        force: true,
        ..Default::default()
    };
    let cmp = Comparison::compute(&a, &b, &forced).unwrap();
    assert!(cmp.notes.iter().any(|n| n.contains("units differ")));
    // surface function (topography in m) at two radii: no rescaling law
    let mut c = a.clone();
    c.reference_radius_m = 2.0;
    let err = Comparison::compute(&a, &c, &CompareOptions::default())
        .unwrap_err()
        .to_string();
    assert!(err.contains("radii differ"), "{err}");
}

#[test]
fn comparison_table_has_the_documented_columns() {
    let a = random_model(30, 8, variance);
    let b = correlated_partner(&a, 9, variance, |_| 0.5);
    let table = Comparison::compute(&a, &b, &CompareOptions::default())
        .unwrap()
        .to_table();
    assert_eq!(table.columns[0].name, "degree");
    for name in [
        "correlation",
        "correlation_threshold",
        "cross_power",
        "admittance",
        "power_ratio",
        "power_ratio_lower",
        "power_ratio_upper",
        "difference_degree_variance",
        "half_wavelength_km",
    ] {
        let col = table
            .column(name)
            .unwrap_or_else(|| panic!("missing {name}"));
        assert_eq!(col.values.len(), 31);
    }
}

#[test]
fn difference_power_of_two_noisy_surveys_matches_their_error_degree_variance() {
    // Two surveys of one truth with independent noise of known sigma: D_l/(E^A_l + E^B_l) is
    // χ²(2l+1)/(2l+1) distributed (common practice), so its mean over many degrees is 1.
    let lmax = 200;
    let truth = random_model(lmax, 21, variance);
    let (sa, sb) = (2e-8, 3e-8);
    let mut a = truth.clone();
    a.add_scaled(&random_model(lmax, 22, |_| 1.0), sa).unwrap();
    let mut b = truth.clone();
    b.add_scaled(&random_model(lmax, 23, |_| 1.0), sb).unwrap();
    let n = kugel::coeffs::packed_len(lmax);
    a.set_sigmas(vec![sa; n], vec![sa; n]).unwrap();
    b.set_sigmas(vec![sb; n], vec![sb; n]).unwrap();
    let cmp = Comparison::compute(&a, &b, &CompareOptions::default()).unwrap();
    let e = cmp.difference_error_degree_variance.as_ref().unwrap();
    let ratios: Vec<f64> = (1..=lmax)
        .map(|l| cmp.difference_degree_variance[l] / e[l])
        .collect();
    let mean = ratios.iter().sum::<f64>() / ratios.len() as f64;
    eprintln!("mean D_l / E_l over degrees 1-{lmax}: {mean}");
    // sd of the mean ≈ sqrt(mean of 2/(2l+1)) / sqrt(200) ≈ 0.009
    assert!((mean - 1.0).abs() < 0.04, "mean ratio {mean}");
    assert!((e[10] - 21.0 * (sa * sa + sb * sb)).abs() < 1e-12 * e[10]);
    let table = cmp.to_table();
    assert!(table.column("difference_error_degree_variance").is_some());
}

#[test]
fn admittance_is_the_reference_per_unit_of_the_compared_model() {
    // CONVENTIONS.md §5: Z_l = S^{fg}/S^g. If A = k·B + C with C independent of B, then
    // S^{AB} = k S^B + S^{CB} and Z_l → k (regression of A on B; common practice in
    // gravity/topography admittance; from memory: Wieczorek 2015, Treatise on Geophysics 10.05).
    let lmax = 120;
    let k = 0.125;
    let b = random_model(lmax, 7, variance);
    let c = random_model(lmax, 8, |l| 0.01 * variance(l));
    let mut a = c.clone();
    a.add_scaled(&b, k).unwrap();
    let cmp = Comparison::compute(&a, &b, &CompareOptions::default()).unwrap();
    for l in 10..=lmax {
        // sampling error of the independent part: |S^{CB}/S^B| ≲ 4·sqrt(0.01/(2l+1)) at 4 sd
        let tol = 4.0 * (0.01 / (2 * l + 1) as f64).sqrt();
        assert!(
            (cmp.admittance[l] - k).abs() < tol,
            "degree {l}: admittance {} vs {k}",
            cmp.admittance[l]
        );
    }
}
