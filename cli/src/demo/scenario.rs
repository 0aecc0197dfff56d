//! The invented world and its synthetic truth.
//!
//! Gravity: dimensionless disturbing-potential coefficients (geodesy normalisation) with a
//! Kaula-type per-coefficient RMS σ_g(l) = A·l^−p (Kaula 1966, *Theory of Satellite Geodesy*;
//! the rule of thumb of CONVENTIONS.md §5, here with a moon's amplitude). Topography h (metres)
//! has RMS σ_h(l) = H·l^−q. The two share a part per degree: with independent standard normal
//! x, y per coefficient, h = σ_h x and g = σ_g (ρ_l x + sqrt(1 − ρ_l²) y), so the expected
//! degree correlation is ρ_l and the expected admittance ρ_l σ_g/σ_h per metre. ρ_l rises from
//! 0 at degree 1 towards ρ_max with degree, as on bodies whose long wavelengths are compensated.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};

use kugel::coeffs::{Coefficients, Normalization};

/// Fixed parameters of the invented scenario.
#[derive(Debug, Clone)]
pub struct Scenario {
    pub body_name: &'static str,
    pub radius_m: f64,
    pub gm_m3_s2: f64,
    /// Band limit of the truth fields.
    pub truth_lmax: usize,
    /// Kaula amplitude A and exponent p of the gravity coefficients.
    pub kaula_amplitude: f64,
    pub kaula_exponent: f64,
    /// Topography amplitude H (m) and exponent q.
    pub topo_amplitude_m: f64,
    pub topo_exponent: f64,
    /// Largest gravity–topography correlation, and the degree scale of its rise.
    pub max_correlation: f64,
    pub correlation_scale: f64,
    pub seed: u64,
}

impl Scenario {
    /// The scenario shipped in `demo-data/`.
    pub fn oressa() -> Scenario {
        Scenario {
            body_name: "Oressa",
            radius_m: 1_950_000.0,
            // a rocky body of mean density ~3,000 kg m⁻³ at this radius
            gm_m3_s2: 6.21e12,
            truth_lmax: 100,
            kaula_amplitude: 1.5e-4,
            kaula_exponent: 2.0,
            topo_amplitude_m: 2_400.0,
            topo_exponent: 1.1,
            max_correlation: 0.85,
            correlation_scale: 8.0,
            seed: 20_261_201,
        }
    }

    /// Expected gravity–topography correlation at degree l.
    pub fn correlation(&self, l: usize) -> f64 {
        if l < 2 {
            return 0.0;
        }
        self.max_correlation * (1.0 - (-((l - 1) as f64) / self.correlation_scale).exp())
    }

    /// GM/R, the factor from dimensionless coefficients to potential in m² s⁻².
    pub fn potential_scale(&self) -> f64 {
        self.gm_m3_s2 / self.radius_m
    }

    /// Draws the truth fields.
    pub fn truth(&self) -> Truth {
        let mut rng = ChaCha8Rng::seed_from_u64(self.seed);
        let lmax = self.truth_lmax;
        let mut gravity = Coefficients::zeros(lmax, Normalization::Geodesy);
        let mut topo = Coefficients::zeros(lmax, Normalization::Geodesy);
        // degrees 0 and 1 of the disturbing potential vanish (mass in the normal field, origin
        // at the centre of mass); topography keeps a zero mean radius anomaly too
        for l in 2..=lmax {
            let lf = l as f64;
            let sg = self.kaula_amplitude * lf.powf(-self.kaula_exponent);
            let sh = self.topo_amplitude_m * lf.powf(-self.topo_exponent);
            let rho = self.correlation(l);
            let spread = (1.0 - rho * rho).sqrt();
            for m in 0..=l {
                let mut draw = || -> (f64, f64) {
                    let x: f64 = StandardNormal.sample(&mut rng);
                    let y: f64 = StandardNormal.sample(&mut rng);
                    (sh * x, sg * (rho * x + spread * y))
                };
                let (hc, gc) = draw();
                let (hs, gs) = if m > 0 { draw() } else { (0.0, 0.0) };
                gravity.set(l, m, gc, gs);
                topo.set(l, m, hc, hs);
            }
        }
        gravity.reference_radius_m = self.radius_m;
        gravity.gm_m3_s2 = Some(self.gm_m3_s2);
        gravity.units = "1".into();
        topo.reference_radius_m = self.radius_m;
        topo.units = "m".into();
        for (c, what) in [
            (&mut gravity, "gravity potential"),
            (&mut topo, "topography"),
        ] {
            c.attributes.insert(
                "title".into(),
                format!(
                    "{} {what}: invented synthetic truth (kugel demo, not a real body)",
                    self.body_name
                ),
            );
        }
        Truth {
            gravity,
            topography: topo,
        }
    }
}

/// The synthetic truth: gravity (dimensionless) and topography (m) coefficients.
#[derive(Debug, Clone)]
pub struct Truth {
    pub gravity: Coefficients,
    pub topography: Coefficients,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn truth_is_reproducible_and_follows_the_power_law() {
        let mut s = Scenario::oressa();
        s.truth_lmax = 40;
        let a = s.truth();
        let b = s.truth();
        assert_eq!(a.gravity, b.gravity, "same seed, same truth");
        // per-coefficient power averaged over degrees 20..40 is A² l^-2p within sampling error:
        // the mean of 861·... χ² draws, so ±15% is generous (common practice: χ² spread)
        let mut ratio = 0.0;
        let mut n = 0.0;
        for l in 20..=40 {
            let expected = (s.kaula_amplitude * (l as f64).powf(-s.kaula_exponent)).powi(2);
            for m in 0..=l {
                ratio += a.gravity.c(l, m).powi(2) / expected;
                n += 1.0;
                if m > 0 {
                    ratio += a.gravity.s(l, m).powi(2) / expected;
                    n += 1.0;
                }
            }
        }
        let mean = ratio / n;
        assert!((mean - 1.0).abs() < 0.15, "mean power ratio {mean}");
        assert_eq!(a.gravity.c(1, 0), 0.0);
        assert!(s.correlation(30) > 0.8 && s.correlation(2) < 0.15);
    }
}
