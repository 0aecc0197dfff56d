//! The O(n) Gauss–Legendre rule (asymptotic expansion + Newton polish) against 40-digit mpmath
//! values and against the O(n²) Newton reference kept in the library.

use kugel::sht::gauss_legendre::{
    colatitudes_and_weights, nodes_and_weights, reference_colatitudes_and_weights, NEWTON_MAX_N,
};

/// A rule's n, colatitudes, nodes and weights.
type Rule = (usize, Vec<f64>, Vec<f64>, Vec<f64>);

/// Units in the last place of a colatitude: the spacing of doubles at θ.
fn ulp(theta: f64) -> f64 {
    f64::EPSILON * theta.abs().max(f64::MIN_POSITIVE)
}

#[test]
fn spot_nodes_and_weights_against_mpmath() {
    // Fixture from tests/reference/sht_gauss_asymptotic_mpmath.py: Newton's method in 40-digit
    // mpmath arithmetic at n = 10, 1000, 10801, 21600 (first nodes, middle, last, random ones).
    // Tolerances: θ within 4 ulp of itself; x = cos θ within 4 ulp of 1 (rounding θ moves
    // cos θ by up to 1.1e-16 absolutely, which is many ulps of x near the equator); weights
    // 1e-14 relative (the goal).
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/sht/gauss_asymptotic_mpmath.txt"
    ))
    .unwrap();
    let mut rule: Option<Rule> = None;
    let (mut checked, mut worst_theta_ulp, mut worst_w) = (0, 0.0f64, 0.0f64);
    for line in text.lines().filter(|l| !l.starts_with('#')) {
        let f: Vec<&str> = line.split_whitespace().collect();
        let (n, j): (usize, usize) = (f[0].parse().unwrap(), f[1].parse().unwrap());
        let [theta_ref, x_ref, w_ref]: [f64; 3] =
            [f[2], f[3], f[4]].map(|s| s.parse::<f64>().unwrap());
        if rule.as_ref().map(|r| r.0) != Some(n) {
            let (theta, w) = colatitudes_and_weights(n);
            let (x, w_again) = nodes_and_weights(n);
            assert_eq!(w, w_again);
            rule = Some((n, theta, x, w));
        }
        let (_, theta, x, w) = rule.as_ref().unwrap();
        let theta_err = (theta[j] - theta_ref).abs() / ulp(theta_ref);
        assert!(
            theta_err <= 4.0,
            "n={n} j={j}: θ {} vs {theta_ref} ({theta_err:.1} ulp)",
            theta[j]
        );
        assert!(
            (x[j] - x_ref).abs() <= 4.0 * f64::EPSILON,
            "n={n} j={j}: x {} vs {x_ref}",
            x[j]
        );
        let w_err = (w[j] - w_ref).abs() / w_ref;
        assert!(
            w_err <= 1e-14,
            "n={n} j={j}: w {} vs {w_ref} ({w_err:.1e})",
            w[j]
        );
        worst_theta_ulp = worst_theta_ulp.max(theta_err);
        worst_w = worst_w.max(w_err);
        checked += 1;
    }
    assert!(checked >= 60, "only {checked} fixture rows");
    eprintln!("worst θ error {worst_theta_ulp:.1} ulp, worst weight error {worst_w:.1e}");
}

#[test]
fn every_node_agrees_with_the_newton_reference() {
    // The reference (Newton on Bonnet's recursion, double-double weights) is itself checked
    // against mpmath in quadrature.rs. Every node of rules just above the switch-over, odd and
    // even, and of a larger one: θ within 4 ulp, weights 2e-14 relative (each rule is within
    // 1e-14 of the truth).
    for n in [NEWTON_MAX_N + 1, NEWTON_MAX_N + 2, 257, 1000, 3001] {
        let (theta, w) = colatitudes_and_weights(n);
        let (theta_ref, w_ref) = reference_colatitudes_and_weights(n);
        for j in 0..n {
            let dt = (theta[j] - theta_ref[j]).abs() / ulp(theta_ref[j]);
            assert!(
                dt <= 4.0,
                "n={n} j={j}: θ {} vs {} ({dt:.1} ulp)",
                theta[j],
                theta_ref[j]
            );
            let dw = (w[j] - w_ref[j]).abs() / w_ref[j];
            assert!(
                dw <= 2e-14,
                "n={n} j={j}: w {} vs {} ({dw:.1e})",
                w[j],
                w_ref[j]
            );
        }
        // common practice: Σ w = 2, nodes strictly increasing in θ
        let sum: f64 = w.iter().sum();
        assert!((sum - 2.0).abs() < 1e-13, "n={n}: Σw = {sum}");
        assert!(theta.windows(2).all(|p| p[0] < p[1]), "n={n}");
    }
}
