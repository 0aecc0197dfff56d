//! Gauss–Legendre nodes and weights.
//!
//! Nodes x_j = cos θ_j are the roots of P_n; weights w_j = 2 / ((1 − x_j²) P_n'(x_j)²), Σ w_j = 2
//! (Abramowitz & Stegun 1964, 25.4.29; check values in their Table 25.4).
//!
//! Two ways, one answer:
//! - `asymptotic`: O(1) per node — Bogaert's expansion (SIAM J. Sci. Comput. 36:A1008, 2014)
//!   polished by one Newton step on the Stieltjes series, which also gives the weight. Used for
//!   n > [`NEWTON_MAX_N`], except for the few nodes next to each pole where the series does
//!   not settle.
//! - `newton`: Newton's iteration on Bonnet's recursion, O(n) per node, the final step in
//!   double-double. Used for small rules and the nodes next to the poles, and kept as the
//!   reference the fast rule is tested against ([`reference_colatitudes_and_weights`]).
//!
//! Only the northern half is computed; the southern half is its mirror image (θ → π − θ,
//! same weight), so the rule is exactly symmetric.

mod asymptotic;
mod double_double;
mod newton;

use rayon::prelude::*;
use std::f64::consts::PI;

/// Rules up to this many points use the Newton path for every node.
pub const NEWTON_MAX_N: usize = 100;

/// Colatitudes θ_j (ascending, north to south) and weights of the n-point rule, in O(n).
pub fn colatitudes_and_weights(n: usize) -> (Vec<f64>, Vec<f64>) {
    if n <= NEWTON_MAX_N {
        return reference_colatitudes_and_weights(n);
    }
    let series = asymptotic::StieltjesSeries::new(n);
    // The Bonnet table (O(n)) serves the few nodes next to the pole.
    let table = std::sync::OnceLock::new();
    let north: Vec<(f64, f64)> = (0..n.div_ceil(2))
        .into_par_iter()
        .with_min_len(256)
        .map(|i| {
            series.root(i).unwrap_or_else(|| {
                newton::root(n, i, table.get_or_init(|| newton::BonnetTable::new(n)))
            })
        })
        .collect();
    mirrored(n, &north)
}

/// The same rule by Newton's iteration on Bonnet's recursion for every node, O(n²): the
/// reference for [`colatitudes_and_weights`].
pub fn reference_colatitudes_and_weights(n: usize) -> (Vec<f64>, Vec<f64>) {
    if n == 0 {
        return (Vec::new(), Vec::new());
    }
    let table = newton::BonnetTable::new(n);
    let north: Vec<(f64, f64)> = (0..n.div_ceil(2))
        .into_par_iter()
        .with_min_len(16)
        .map(|i| newton::root(n, i, &table))
        .collect();
    mirrored(n, &north)
}

/// Nodes x_j = cos θ_j (descending, x_0 nearest the north pole) and weights of the n-point rule.
pub fn nodes_and_weights(n: usize) -> (Vec<f64>, Vec<f64>) {
    let (theta, w) = colatitudes_and_weights(n);
    let half = n / 2;
    let mut x: Vec<f64> = theta.iter().map(|t| t.cos()).collect();
    // exact antisymmetry, exact zero in the middle
    for i in 0..half {
        x[n - 1 - i] = -x[i];
    }
    if n % 2 == 1 {
        x[n / 2] = 0.0;
    }
    (x, w)
}

/// The full rule from its northern half (θ_i, w_i), i < ⌈n/2⌉.
fn mirrored(n: usize, north: &[(f64, f64)]) -> (Vec<f64>, Vec<f64>) {
    let mut theta = vec![0.0; n];
    let mut w = vec![0.0; n];
    for (i, &(t, wi)) in north.iter().enumerate() {
        theta[i] = t;
        w[i] = wi;
        theta[n - 1 - i] = PI - t;
        w[n - 1 - i] = wi;
    }
    if n % 2 == 1 {
        theta[n / 2] = PI / 2.0;
    }
    (theta, w)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn two_point_rule() {
        // A&S Table 25.4: n = 2, x = ±0.577350269189626 (= 1/√3), w = 1
        let (x, w) = nodes_and_weights(2);
        assert!(
            (x[0] - 3f64.sqrt().recip()).abs() <= 2.0 * f64::EPSILON,
            "{}",
            x[0] - 3f64.sqrt().recip()
        );
        assert!((w[0] - 1.0).abs() < 1e-15 && (w[1] - 1.0).abs() < 1e-15);
    }

    #[test]
    fn only_the_nodes_next_to_the_poles_need_the_recursion() {
        // common practice (the series' terms shrink like m!/(2n sin θ)^m): the recursion is
        // needed for a bounded number of nodes off each pole, whatever n
        for n in [101usize, 1000, 20_000] {
            let series = asymptotic::StieltjesSeries::new(n);
            let fallbacks = (0..n.div_ceil(2))
                .filter(|&i| series.root(i).is_none())
                .count();
            assert!((1..=16).contains(&fallbacks), "n = {n}: {fallbacks}");
        }
    }
}
