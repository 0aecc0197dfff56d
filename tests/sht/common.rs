//! Deterministic sample coefficients shared by the transform tests of this binary.

use kugel::coeffs::{Coefficients, Normalization};

/// Deterministic pseudo-random coefficients in [−1, 1) (a small LCG; no test depends on the
/// particular values).
#[allow(dead_code)]
pub fn sample(lmax: usize, seed: u64) -> Coefficients {
    let mut state = seed
        .wrapping_mul(6364136223846793005)
        .wrapping_add(1442695040888963407);
    let mut next = move || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((state >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
    };
    let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
    for l in 0..=lmax {
        for m in 0..=l {
            let (a, b) = (next(), next());
            c.set(l, m, a, b);
        }
    }
    c
}
