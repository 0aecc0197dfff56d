//! The two invented gravity campaigns: observation sites and noisy values of the disturbing
//! potential on the reference sphere (m² s⁻²).
//!
//! Sites are uniform on the sphere (cos θ uniform, λ uniform), optionally inside a latitude
//! band (the early survey's orbit left the poles unobserved). Values are the truth synthesised
//! at the sites with `sht::evaluate_points`, times GM/R, plus Gaussian noise of the survey's σ.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use rayon::prelude::*;

use super::scenario::Scenario;
use kugel::coeffs::Coefficients;
use kugel::error::{Error, Result};

/// One campaign's design.
#[derive(Debug, Clone)]
pub struct SurveyDesign {
    pub name: &'static str,
    pub file_stem: &'static str,
    pub points: usize,
    /// Sites lie within |latitude| ≤ this, degrees (90 = global).
    pub max_abs_lat_deg: f64,
    /// Standard deviation of the measurement noise, m² s⁻².
    pub noise_m2_s2: f64,
    pub seed: u64,
}

impl SurveyDesign {
    /// Wickline: the early campaign — 12,000 sites, nothing poleward of ±72°, σ = 40 m² s⁻².
    pub fn wickline() -> SurveyDesign {
        SurveyDesign {
            name: "Wickline",
            file_stem: "wickline_survey",
            points: 12_000,
            max_abs_lat_deg: 72.0,
            noise_m2_s2: 40.0,
            seed: 1,
        }
    }

    /// Halyard: the later campaign — 30,000 sites, global, σ = 8 m² s⁻².
    pub fn halyard() -> SurveyDesign {
        SurveyDesign {
            name: "Halyard",
            file_stem: "halyard_survey",
            points: 30_000,
            max_abs_lat_deg: 90.0,
            noise_m2_s2: 8.0,
            seed: 2,
        }
    }
}

/// Sampled observations of one campaign.
#[derive(Debug, Clone)]
pub struct Survey {
    pub lat_deg: Vec<f64>,
    pub lon_deg: Vec<f64>,
    pub potential_m2_s2: Vec<f64>,
    pub sigma_m2_s2: f64,
}

/// Draws the sites and values of `design` from the truth gravity field.
pub fn sample(
    design: &SurveyDesign,
    scenario: &Scenario,
    gravity: &Coefficients,
) -> Result<Survey> {
    let mut rng = ChaCha8Rng::seed_from_u64(scenario.seed ^ (design.seed << 32));
    let zmax = design.max_abs_lat_deg.to_radians().sin();
    let mut sites = Vec::with_capacity(design.points);
    for _ in 0..design.points {
        let z: f64 = rng.gen_range(-zmax..=zmax);
        let lon: f64 = rng.gen_range(0.0..360.0);
        // rounded as written to the file, so the values belong to the stored coordinates
        let lat = round_to(z.asin().to_degrees(), 4);
        sites.push((lat, round_to(lon, 4)));
    }
    let noise = Normal::new(0.0, design.noise_m2_s2)
        .map_err(|e| Error::invalid(format!("survey noise: {e}")))?;
    let noise: Vec<f64> = (0..design.points).map(|_| noise.sample(&mut rng)).collect();
    let thetas: Vec<(f64, f64)> = sites
        .iter()
        .map(|&(lat, lon)| ((90.0 - lat).to_radians(), lon.to_radians()))
        .collect();
    // chunks evaluated in parallel and concatenated in order: the result is independent of
    // the number of threads
    let values: Vec<f64> = thetas
        .par_chunks(512)
        .map(|chunk| {
            kugel::sht::evaluate_points(gravity, chunk)
                .map(|v| v.into_iter().map(|p| p.value).collect::<Vec<_>>())
        })
        .collect::<Result<Vec<_>>>()?
        .into_iter()
        .flatten()
        .collect();
    let scale = scenario.potential_scale();
    Ok(Survey {
        lat_deg: sites.iter().map(|s| s.0).collect(),
        lon_deg: sites.iter().map(|s| s.1).collect(),
        potential_m2_s2: values
            .iter()
            .zip(&noise)
            .map(|(v, n)| round_to(v * scale + n, 3))
            .collect(),
        sigma_m2_s2: design.noise_m2_s2,
    })
}

fn round_to(x: f64, decimals: i32) -> f64 {
    let f = 10f64.powi(decimals);
    (x * f).round() / f
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sites_respect_the_polar_gap_and_noise_level() {
        let mut s = Scenario::oressa();
        s.truth_lmax = 8;
        let truth = s.truth();
        let mut d = SurveyDesign::wickline();
        d.points = 2000;
        let a = sample(&d, &s, &truth.gravity).unwrap();
        assert!(a.lat_deg.iter().all(|l| l.abs() <= 72.0));
        assert_eq!(
            a.potential_m2_s2,
            sample(&d, &s, &truth.gravity).unwrap().potential_m2_s2
        );
        // residuals about the noiseless truth have the design σ (2000 draws: ±5% is ~3 SE)
        let pts: Vec<(f64, f64)> = a
            .lat_deg
            .iter()
            .zip(&a.lon_deg)
            .map(|(la, lo)| ((90.0 - la).to_radians(), lo.to_radians()))
            .collect();
        let clean = kugel::sht::evaluate_points(&truth.gravity, &pts).unwrap();
        let var: f64 = clean
            .iter()
            .zip(&a.potential_m2_s2)
            .map(|(c, v)| (v - c.value * s.potential_scale()).powi(2))
            .sum::<f64>()
            / 2000.0;
        assert!(
            (var.sqrt() / 40.0 - 1.0).abs() < 0.05,
            "noise σ {}",
            var.sqrt()
        );
    }
}
