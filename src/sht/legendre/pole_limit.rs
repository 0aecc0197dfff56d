//! The limit of P̄_l1(cos θ)/sin θ at the poles, where (1/sin θ) ∂f/∂λ of a field is taken
//! along each meridian and only order 1 survives.
//!
//! Ferrers' function without phase is P_l^1(x) = sqrt(1 − x²) P_l'(x) and P_l'(1) = l(l+1)/2
//! (any text on Legendre functions; common practice), so P_l^1(cos θ)/sin θ → l(l+1)/2 as
//! θ → 0; with P̄_l1 = sqrt(2(2l+1)/(l(l+1))) P_l^1 (`geodesy`, no phase) the limit is
//! sqrt((2l+1) l(l+1)/2), which is also dP̄_l1/dθ at θ = 0.
//! At θ = π the parity P̄_lm(−x) = (−1)^{l+m} P̄_lm(x) gives the factor (−1)^{l+1}.

use std::f64::consts::PI;

/// Which pole a colatitude lies on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Pole {
    /// θ = 0.
    North,
    /// θ = π (the double nearest π, or beyond).
    South,
}

impl Pole {
    /// The pole at `theta_rad`, if it is one: exactly 0, or at least fl(π). sin θ is zero only
    /// at θ = 0 among doubles in [0, π]; fl(π) has sin = 1.2e-16 but is the south pole of any
    /// grid or point set.
    pub fn at(theta_rad: f64) -> Option<Pole> {
        if theta_rad == 0.0 {
            Some(Pole::North)
        } else if theta_rad >= PI {
            Some(Pole::South)
        } else {
            None
        }
    }
}

/// lim P̄_l1(cos θ)/sin θ at `pole` (`geodesy`, no Condon–Shortley phase); 0 for l = 0.
pub fn order_one_over_sin_at_pole(l: usize, pole: Pole) -> f64 {
    if l == 0 {
        return 0.0;
    }
    let lf = l as f64;
    let north = ((2.0 * lf + 1.0) * lf * (lf + 1.0) / 2.0).sqrt();
    match pole {
        Pole::North => north,
        Pole::South if l % 2 == 1 => north,
        Pole::South => -north,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sht::legendre::geodesy_value;

    #[test]
    fn limit_matches_the_ratio_close_to_each_pole() {
        // P̄_l1(cos θ)/sin θ at θ = 1e-6 from the pole differs from the limit by O(l² θ²)
        // (the next term of the series), far below the 1e-9 tolerance for l ≤ 40.
        for l in [1usize, 2, 3, 10, 27, 40] {
            let h = 1e-6;
            let north = geodesy_value(l, 1, h) / h.sin();
            let south = geodesy_value(l, 1, PI - h) / (PI - h).sin();
            let (ln, ls) = (
                order_one_over_sin_at_pole(l, Pole::North),
                order_one_over_sin_at_pole(l, Pole::South),
            );
            assert!(
                (north - ln).abs() < 1e-9 * ln.abs(),
                "l {l}: {north} vs {ln}"
            );
            assert!(
                (south - ls).abs() < 1e-9 * ls.abs(),
                "l {l}: {south} vs {ls}"
            );
        }
        // closed form P̄_11 = sqrt3 sin θ (any text): the limit is sqrt3 at both poles
        assert!((order_one_over_sin_at_pole(1, Pole::South) - 3f64.sqrt()).abs() < 1e-15);
    }

    #[test]
    fn poles_are_recognised() {
        assert_eq!(Pole::at(0.0), Some(Pole::North));
        assert_eq!(Pole::at(PI), Some(Pole::South));
        assert_eq!(Pole::at(1e-300), None);
        assert_eq!(Pole::at(PI - 1e-15), None);
    }
}
