//! The invented world and its synthetic truth.
//!
//! Gravity: dimensionless disturbing-potential coefficients (geodesy normalisation) with a
//! Kaula-type per-coefficient RMS σ_g(l) = A·l^−p (Kaula 1966, *Theory of Satellite Geodesy*;
//! the rule of thumb of docs/conventions.md §5, here with a moon's amplitude). Topography h (metres)
//! has RMS σ_h(l) = H·l^−q. The two share a part per degree: with independent standard normal
//! x, y per coefficient, h = σ_h x and g = σ_g (ρ_l x + sqrt(1 − ρ_l²) y), so the expected
//! degree correlation is ρ_l and the expected admittance ρ_l σ_g/σ_h per metre. ρ_l rises from
//! 0 at degree 1 towards ρ_max with degree, as on bodies whose long wavelengths are compensated.
//! The gravity truth stops at `gravity_lmax`, below the topography's band limit, so that the
//! demo's fits to that degree can explain their data (real data carry every degree; an
//! omission error would only blur the per-campaign χ² the demo shows).
//!
//! Magnetism: Oressa has no dynamo, only a magnetised crust. Its internal Schmidt
//! semi-normalised Gauss coefficients g_lm, h_lm (nT at the reference radius a) are drawn with
//! a Lowes–Mauersberger spectrum (Lowes 1966, J. Geophys. Res. 71:2179; R_l = (l + 1)
//! Σ_m (g_lm² + h_lm²)) of the shape crustal spectra have, R_l = K·l·(1 − d/a)^{2l+4}: rising
//! with degree for uncorrelated crustal sources and damped by their mean depth d (from
//! memory; K and d are invented). Each of the 2l + 1 coefficients of degree l then has the
//! RMS sqrt(R_l / ((l + 1)(2l + 1))).

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
    /// Band limit of the truth topography (and of the topography grid).
    pub truth_lmax: usize,
    /// Band limit of the truth gravity field (at most `truth_lmax`).
    pub gravity_lmax: usize,
    /// Band limit of the truth crustal magnetic field.
    pub magnetic_lmax: usize,
    /// Lowes–Mauersberger scale K (nT²) and mean source depth d (m) of the crustal field.
    pub magnetic_scale_nt2: f64,
    pub magnetic_depth_m: f64,
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
            gravity_lmax: 50,
            magnetic_lmax: 40,
            magnetic_scale_nt2: 3.0,
            magnetic_depth_m: 25_000.0,
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

    /// Expected Lowes–Mauersberger spectrum R_l (nT²) of the crustal field at the reference
    /// radius, K·l·(1 − d/a)^{2l+4}.
    pub fn magnetic_lowes_nt2(&self, l: usize) -> f64 {
        let q = 1.0 - self.magnetic_depth_m / self.radius_m;
        self.magnetic_scale_nt2 * l as f64 * q.powi(2 * l as i32 + 4)
    }

    /// Draws the truth fields.
    pub fn truth(&self) -> Truth {
        let mut rng = ChaCha8Rng::seed_from_u64(self.seed);
        let lmax = self.truth_lmax;
        let gravity_lmax = self.gravity_lmax.min(lmax);
        let mut gravity = Coefficients::zeros(gravity_lmax, Normalization::Geodesy);
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
                if l <= gravity_lmax {
                    gravity.set(l, m, gc, gs);
                }
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
            magnetic: self.magnetic_truth(),
        }
    }

    /// Draws the crustal magnetic field from its own stream (the gravity and topography draws
    /// stay as they are when the magnetic design changes).
    fn magnetic_truth(&self) -> Coefficients {
        let mut rng = ChaCha8Rng::seed_from_u64(self.seed ^ MAGNETIC_STREAM);
        let lmax = self.magnetic_lmax;
        let mut magnetic = Coefficients::zeros(lmax, Normalization::Schmidt);
        for l in 1..=lmax {
            let rms = (self.magnetic_lowes_nt2(l) / ((l + 1) * (2 * l + 1)) as f64).sqrt();
            for m in 0..=l {
                let g: f64 = StandardNormal.sample(&mut rng);
                let h: f64 = if m > 0 {
                    StandardNormal.sample(&mut rng)
                } else {
                    0.0
                };
                magnetic.set(l, m, rms * g, rms * h);
            }
        }
        magnetic.reference_radius_m = self.radius_m;
        magnetic.units = "nT".into();
        magnetic
            .attributes
            .insert("field_kind".into(), "magnetic".into());
        magnetic.attributes.insert(
            "title".into(),
            format!(
                "{} crustal magnetic field: invented synthetic truth, internal Schmidt \
                 semi-normalised Gauss coefficients in nT (kugel demo, not a real body)",
                self.body_name
            ),
        );
        magnetic
    }
}

/// Mixed into the seed for the magnetic draws.
const MAGNETIC_STREAM: u64 = 0x6d61_676e_6574;

/// The synthetic truth: gravity (dimensionless), topography (m) and crustal magnetic (Schmidt
/// Gauss coefficients, nT) coefficients.
#[derive(Debug, Clone)]
pub struct Truth {
    pub gravity: Coefficients,
    pub topography: Coefficients,
    pub magnetic: Coefficients,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn truth_is_reproducible_and_follows_the_power_law() {
        let mut s = Scenario::oressa();
        s.truth_lmax = 40;
        s.gravity_lmax = 40;
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

    #[test]
    fn magnetic_truth_follows_its_lowes_spectrum() {
        let s = Scenario::oressa();
        let m = s.truth().magnetic;
        assert_eq!(m.normalization, Normalization::Schmidt);
        assert_eq!(m.units, "nT");
        assert_eq!(m.c(0, 0), 0.0, "no monopole");
        // R_l = (l+1) Σ_m (g² + h²) (Lowes 1966) summed over degrees 10..40 against the
        // expected sum: each R_l is a scaled χ² with 2l + 1 degrees of freedom, so the sum of
        // about 1,600 squares lies within ±10% of its mean (about 4 standard errors; common
        // practice: χ² spread)
        let (mut drawn, mut expected) = (0.0, 0.0);
        for l in 10..=s.magnetic_lmax {
            let mut r = 0.0;
            for k in 0..=l {
                r += m.c(l, k).powi(2) + m.s(l, k).powi(2);
            }
            drawn += (l + 1) as f64 * r;
            expected += s.magnetic_lowes_nt2(l);
        }
        assert!(
            (drawn / expected - 1.0).abs() < 0.1,
            "Lowes sum {drawn} vs {expected}"
        );
    }
}
