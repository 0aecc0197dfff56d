//! The invented campaigns: what each observes, where, and how noisy.
//!
//! - *Wickline*, an orbiter: gravity disturbances δg (mGal) along the tracks of an 80°-inclined
//!   orbit at 100 ± 10 km altitude (nothing poleward of ±80°);
//! - *Halyard*, a ground traverse: gravity anomalies Δg (mGal) at stations inside a cap, each
//!   at its height on the truth topography;
//! - *Brindle*, a low magnetic orbiter: the crustal field's north, east and down components
//!   X, Y, Z (nT) along the tracks of an 87°-inclined orbit at 45 ± 15 km.
//!
//! Values are the truth evaluated at each site's own radius by `kugel::field::
//! evaluate_at_points` (the definition `kugel evaluate` and the fit share), plus Gaussian
//! noise of the campaign's σ.

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use rayon::prelude::*;

use super::scenario::{Scenario, Truth};
use super::sites::{orbit_sites, round_to, station_sites, OrbitDesign, Site, StationDesign};
use kugel::coeffs::Coefficients;
use kugel::error::{Error, Result};
use kugel::field::{evaluate_at_points, GeocentricPoint, Quantity, SynthesisRequest};

/// Where a campaign's sites are.
#[derive(Debug, Clone, PartialEq)]
pub enum Coverage {
    Orbit(OrbitDesign),
    /// Ground stations at their height on the truth topography.
    Stations(StationDesign),
}

/// Which truth field a campaign sees.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Sensed {
    Gravity,
    Magnetic,
}

/// One campaign's design.
#[derive(Debug, Clone, PartialEq)]
pub struct SurveyDesign {
    pub name: &'static str,
    pub file_stem: &'static str,
    /// What it observes at each site: one row per quantity and site.
    pub quantities: Vec<Quantity>,
    pub sensed: Sensed,
    /// Number of sites (rows = sites × quantities).
    pub sites: usize,
    pub coverage: Coverage,
    /// Standard deviation of the measurement noise, in the quantities' units (mGal, nT).
    pub noise: f64,
    pub seed: u64,
}

impl SurveyDesign {
    /// Wickline: an orbiter's gravity disturbances, 10,000 sites at 100 ± 10 km, σ = 0.4 mGal.
    pub fn wickline() -> SurveyDesign {
        SurveyDesign {
            name: "Wickline",
            file_stem: "wickline_orbital",
            quantities: vec![Quantity::GravityDisturbance],
            sensed: Sensed::Gravity,
            sites: 10_000,
            coverage: Coverage::Orbit(OrbitDesign {
                inclination_deg: 80.0,
                samples_per_revolution: 125,
                mean_altitude_km: 100.0,
                altitude_swing_km: 10.0,
                apsis_drift_deg: 7.0,
            }),
            noise: 0.4,
            seed: 1,
        }
    }

    /// Halyard: ground gravity anomalies, 6,000 stations inside a 50° cap about 10° N, 120° E,
    /// σ = 1.5 mGal.
    pub fn halyard() -> SurveyDesign {
        SurveyDesign {
            name: "Halyard",
            file_stem: "halyard_stations",
            quantities: vec![Quantity::GravityAnomaly],
            sensed: Sensed::Gravity,
            sites: 6_000,
            coverage: Coverage::Stations(StationDesign {
                centre_lat_deg: 10.0,
                centre_lon_deg: 120.0,
                radius_deg: 50.0,
                camps: 12,
                camp_radius_deg: 4.0,
                spread_fraction: 0.6,
            }),
            noise: 1.5,
            seed: 2,
        }
    }

    /// Brindle: a low magnetic orbiter's X, Y, Z, 4,000 sites at 45 ± 15 km, σ = 1 nT.
    pub fn brindle() -> SurveyDesign {
        SurveyDesign {
            name: "Brindle",
            file_stem: "brindle_magnetic",
            quantities: vec![Quantity::X, Quantity::Y, Quantity::Z],
            sensed: Sensed::Magnetic,
            sites: 4_000,
            coverage: Coverage::Orbit(OrbitDesign {
                inclination_deg: 87.0,
                samples_per_revolution: 100,
                mean_altitude_km: 45.0,
                altitude_swing_km: 15.0,
                apsis_drift_deg: 11.0,
            }),
            noise: 1.0,
            seed: 3,
        }
    }

    /// The three campaigns of the shipped demo.
    pub fn all() -> Vec<SurveyDesign> {
        vec![
            SurveyDesign::wickline(),
            SurveyDesign::halyard(),
            SurveyDesign::brindle(),
        ]
    }

    /// Name of the value column, with its units.
    pub fn value_column(&self) -> &'static str {
        match (self.sensed, self.quantities.as_slice()) {
            (Sensed::Magnetic, _) => "b_nt",
            (Sensed::Gravity, [Quantity::GravityAnomaly]) => "gravity_anomaly_mgal",
            (Sensed::Gravity, _) => "gravity_disturbance_mgal",
        }
    }

    /// Name of the σ column, with its units.
    pub fn sigma_column(&self) -> &'static str {
        match self.sensed {
            Sensed::Magnetic => "sigma_nt",
            Sensed::Gravity => "sigma_mgal",
        }
    }

    /// Whether the file has a per-row component column (several quantities per site).
    pub fn has_component_column(&self) -> bool {
        self.quantities.len() > 1
    }
}

/// One observed value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SurveyRow {
    pub site: Site,
    pub quantity: Quantity,
    pub value: f64,
}

/// Sampled observations of one campaign.
#[derive(Debug, Clone)]
pub struct Survey {
    pub rows: Vec<SurveyRow>,
    pub sigma: f64,
}

/// Sites per parallel evaluation; chunks are concatenated in order, so the values do not
/// depend on the number of threads.
const CHUNK: usize = 256;

/// Draws the sites and values of `design` from the truth.
pub fn sample(design: &SurveyDesign, scenario: &Scenario, truth: &Truth) -> Result<Survey> {
    let mut rng = ChaCha8Rng::seed_from_u64(scenario.seed ^ (design.seed << 32));
    let mut sites = match &design.coverage {
        Coverage::Orbit(orbit) => orbit_sites(orbit, design.sites, &mut rng),
        Coverage::Stations(network) => station_sites(network, design.sites, &mut rng),
    };
    if let Coverage::Stations(_) = design.coverage {
        // stations stand on the ground: their altitude above the reference sphere is the
        // truth topography there, rounded to the metre as written
        let heights_m = evaluate(
            &truth.topography,
            &sites,
            scenario.radius_m,
            &[Quantity::Value],
        )?
        .remove(0);
        for (s, h) in sites.iter_mut().zip(heights_m) {
            s.altitude_km = round_to(h / 1e3, 3);
        }
    }
    let model = match design.sensed {
        Sensed::Gravity => &truth.gravity,
        Sensed::Magnetic => &truth.magnetic,
    };
    let values = evaluate(model, &sites, scenario.radius_m, &design.quantities)?;
    let noise =
        Normal::new(0.0, design.noise).map_err(|e| Error::invalid(format!("survey noise: {e}")))?;
    let mut rows = Vec::with_capacity(sites.len() * design.quantities.len());
    for (i, site) in sites.iter().enumerate() {
        for (k, &quantity) in design.quantities.iter().enumerate() {
            let value = values[k][i] + noise.sample(&mut rng);
            rows.push(SurveyRow {
                site: *site,
                quantity,
                value: round_to(value, 4),
            });
        }
    }
    Ok(Survey {
        rows,
        sigma: design.noise,
    })
}

/// The quantities of `model` at the sites, one vector per quantity.
fn evaluate(
    model: &Coefficients,
    sites: &[Site],
    reference_radius_m: f64,
    quantities: &[Quantity],
) -> Result<Vec<Vec<f64>>> {
    let points: Vec<GeocentricPoint> = sites
        .iter()
        .map(|s| {
            GeocentricPoint::from_degrees(
                s.lat_deg,
                s.lon_deg,
                reference_radius_m + s.altitude_km * 1e3,
            )
        })
        .collect();
    let request = SynthesisRequest::new(quantities.to_vec());
    let chunks: Vec<Vec<Vec<f64>>> = points
        .par_chunks(CHUNK)
        .map(|chunk| evaluate_at_points(model, chunk, &request))
        .collect::<Result<_>>()?;
    let mut out = vec![Vec::with_capacity(points.len()); quantities.len()];
    for chunk in chunks {
        for (col, part) in out.iter_mut().zip(chunk) {
            col.extend(part);
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn small_scenario() -> Scenario {
        let mut s = Scenario::oressa();
        s.truth_lmax = 12;
        s.gravity_lmax = 12;
        s.magnetic_lmax = 12;
        s
    }

    #[test]
    fn orbital_gravity_has_the_design_noise_and_is_reproducible() {
        let s = small_scenario();
        let truth = s.truth();
        let mut d = SurveyDesign::wickline();
        d.sites = 2000;
        let a = sample(&d, &s, &truth).unwrap();
        assert_eq!(a.rows, sample(&d, &s, &truth).unwrap().rows);
        assert!(a.rows.iter().all(|r| r.site.lat_deg.abs() <= 80.0001));
        // residuals about the noiseless truth have the design σ (2000 draws: the sample σ has
        // a relative standard error of 1/sqrt(2·2000) = 1.6%, so ±5% is ~3 SE; common practice)
        let sites: Vec<Site> = a.rows.iter().map(|r| r.site).collect();
        let clean = evaluate(
            &truth.gravity,
            &sites,
            s.radius_m,
            &[Quantity::GravityDisturbance],
        )
        .unwrap()
        .remove(0);
        let var: f64 = clean
            .iter()
            .zip(&a.rows)
            .map(|(c, r)| (r.value - c).powi(2))
            .sum::<f64>()
            / 2000.0;
        assert!(
            (var.sqrt() / d.noise - 1.0).abs() < 0.05,
            "σ {}",
            var.sqrt()
        );
    }

    #[test]
    fn stations_stand_on_the_topography_and_magnetic_rows_come_in_threes() {
        let s = small_scenario();
        let truth = s.truth();
        let mut h = SurveyDesign::halyard();
        h.sites = 300;
        let stations = sample(&h, &s, &truth).unwrap();
        let sites: Vec<Site> = stations.rows.iter().map(|r| r.site).collect();
        // the topography on the reference sphere (a value at altitude would be continued)
        let ground: Vec<Site> = sites
            .iter()
            .map(|s| Site {
                altitude_km: 0.0,
                ..*s
            })
            .collect();
        let topo = evaluate(&truth.topography, &ground, s.radius_m, &[Quantity::Value])
            .unwrap()
            .remove(0);
        for (site, t) in sites.iter().zip(topo) {
            // rounded to the metre as written
            assert!((site.altitude_km * 1e3 - t).abs() <= 0.5 + 1e-6);
        }
        let mut b = SurveyDesign::brindle();
        b.sites = 50;
        let m = sample(&b, &s, &truth).unwrap();
        assert_eq!(m.rows.len(), 150);
        for triple in m.rows.chunks(3) {
            assert_eq!(
                triple.iter().map(|r| r.quantity).collect::<Vec<_>>(),
                [Quantity::X, Quantity::Y, Quantity::Z]
            );
            assert!(triple.iter().all(|r| r.site == triple[0].site));
            assert!((15.0..=75.0).contains(&triple[0].site.altitude_km));
        }
    }
}
