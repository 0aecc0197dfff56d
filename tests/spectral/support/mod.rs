//! Seeded synthetic models shared by the spectral integration tests.
#![allow(dead_code)]

pub mod xml;

use kugel::{Coefficients, Normalization};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};

/// Random `geodesy` coefficients with variance `variance(l)` per coefficient (C_lm and S_lm,
/// m > 0), zero-mean Gaussian: an isotropic Gaussian field with per-coefficient power variance(l).
pub fn random_model(lmax: usize, seed: u64, variance: impl Fn(usize) -> f64) -> Coefficients {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut c = Coefficients::zeros(lmax, Normalization::Geodesy);
    for l in 0..=lmax {
        let sd = variance(l).sqrt();
        for m in 0..=l {
            let a: f64 = StandardNormal.sample(&mut rng);
            let b: f64 = StandardNormal.sample(&mut rng);
            c.set(l, m, sd * a, if m == 0 { 0.0 } else { sd * b });
        }
    }
    c
}

/// B = ρ_l A + √(1 − ρ_l²) N with N independent of A and of the same per-coefficient variance,
/// so that the true degree correlation of A and B is ρ_l.
pub fn correlated_partner(
    a: &Coefficients,
    seed: u64,
    variance: impl Fn(usize) -> f64,
    rho: impl Fn(usize) -> f64,
) -> Coefficients {
    let noise = random_model(a.lmax(), seed, &variance);
    let mut b = a.clone();
    for l in 0..=a.lmax() {
        let r = rho(l);
        let k = (1.0 - r * r).sqrt();
        for m in 0..=l {
            b.set(
                l,
                m,
                r * a.c(l, m) + k * noise.c(l, m),
                r * a.s(l, m) + k * noise.s(l, m),
            );
        }
    }
    b
}
