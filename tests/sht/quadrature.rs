//! Gauss–Legendre nodes and weights against Abramowitz & Stegun (1964) Table 25.4, exactness,
//! and scipy for a large n.

use kugel::sht::gauss_legendre::nodes_and_weights;
use kugel::sht::legendre::legendre_polynomial;

#[test]
fn abramowitz_stegun_table_25_4() {
    // A&S Table 25.4 (positive nodes and weights, 15 digits as printed); tolerance 1e-15
    let table: &[(usize, &[(f64, f64)])] = &[
        (2, &[(0.577350269189626, 1.0)]),
        (
            3,
            &[
                (0.0, 0.888888888888889),
                (0.774596669241483, 0.555555555555556),
            ],
        ),
        (
            4,
            &[
                (0.339981043584856, 0.652145154862546),
                (0.861136311594053, 0.347854845137454),
            ],
        ),
        (
            5,
            &[
                (0.0, 0.568888888888889),
                (0.538469310105683, 0.478628670499366),
                (0.906179845938664, 0.236926885056189),
            ],
        ),
        (
            6,
            &[
                (0.238619186083197, 0.467913934572691),
                (0.661209386466265, 0.360761573048139),
                (0.932469514203152, 0.171324492379170),
            ],
        ),
        (
            7,
            &[
                (0.0, 0.417959183673469),
                (0.405845151377397, 0.381830050505119),
                (0.741531185599394, 0.279705391489277),
                (0.949107912342759, 0.129484966168870),
            ],
        ),
        (
            8,
            &[
                (0.183434642495650, 0.362683783378362),
                (0.525532409916329, 0.313706645877887),
                (0.796666477413627, 0.222381034453374),
                (0.960289856497536, 0.101228536290376),
            ],
        ),
    ];
    for &(n, rows) in table {
        let (x, w) = nodes_and_weights(n);
        for &(xt, wt) in rows {
            let j = (0..n)
                .min_by(|&a, &b| (x[a] - xt).abs().total_cmp(&(x[b] - xt).abs()))
                .unwrap();
            assert!((x[j] - xt).abs() < 1e-15, "n={n} x={}", x[j]);
            assert!((w[j] - wt).abs() < 1e-15, "n={n} w={} vs {wt}", w[j]);
        }
    }
}

#[test]
fn weights_sum_to_two_and_rule_is_exact_to_degree_2n_minus_1() {
    // common practice: Σw = 2; ∫ P_k = 0 for k ≥ 1 and the rule is exact for degree ≤ 2n − 1,
    // so it integrates P_k to rounding for k ≤ 2n − 1 and not for k = 2n.
    for n in [1usize, 2, 5, 17, 64, 301, 2000] {
        let (x, w) = nodes_and_weights(n);
        let sum: f64 = w.iter().sum();
        assert!((sum - 2.0).abs() < 1e-13, "n={n}: {sum}");
        for k in [1, n, 2 * n - 1] {
            let q: f64 = x
                .iter()
                .zip(&w)
                .map(|(xi, wi)| wi * legendre_polynomial(k, *xi))
                .sum();
            assert!(q.abs() < 1e-13, "n={n} k={k}: {q}");
        }
        if (2..=8).contains(&n) {
            // x^{2n} is not integrated exactly (exact value 2/(2n+1)); the rule's error for it
            // is large enough to see only for small n
            let q: f64 = x
                .iter()
                .zip(&w)
                .map(|(xi, wi)| wi * xi.powi(2 * n as i32))
                .sum();
            assert!((q - 2.0 / (2 * n + 1) as f64).abs() > 1e-10, "n={n}");
        }
    }
}

#[test]
fn large_rule_against_mpmath() {
    // Fixture from tests/reference/sht_gauss_mpmath.py: Newton's method in 30-digit mpmath
    // arithmetic (n = 10801 and 21600, selected indices). Nodes within 4 ulp of 1, weights
    // 1e-13 relative. (scipy.special.roots_legendre was tried first: its weights near the
    // ends are off by 2e-5 relative at n = 10801, so it is not used as the reference.)
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/fixtures/sht/gauss_mpmath.txt"
    ))
    .unwrap();
    let mut cache: Option<(usize, Vec<f64>, Vec<f64>)> = None;
    let mut checked = 0;
    for line in text.lines().filter(|l| !l.starts_with('#')) {
        let f: Vec<&str> = line.split_whitespace().collect();
        let (n, i): (usize, usize) = (f[0].parse().unwrap(), f[1].parse().unwrap());
        let (xr, wr): (f64, f64) = (f[2].parse().unwrap(), f[3].parse().unwrap());
        if cache.as_ref().map(|c| c.0) != Some(n) {
            let (x, w) = nodes_and_weights(n);
            cache = Some((n, x, w));
        }
        let (_, x, w) = cache.as_ref().unwrap();
        // the fixture orders ascending; ours descend from the north pole
        let j = n - 1 - i;
        assert!(
            (x[j] - xr).abs() <= 4.0 * f64::EPSILON,
            "n={n} i={i}: {} vs {xr}",
            x[j]
        );
        assert!(
            (w[j] - wr).abs() <= 1e-13 * wr,
            "n={n} i={i}: {} vs {wr}",
            w[j]
        );
        checked += 1;
    }
    assert!(checked >= 12);
}
