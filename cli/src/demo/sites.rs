//! Where the invented campaigns observe: samples along the ground tracks of an orbit, and
//! stations inside a region.
//!
//! An orbit of inclination i samples, at argument of latitude u, the geocentric latitude
//! φ = asin(sin i · sin u) and the longitude λ = Ω + atan2(cos i · sin u, cos u) east of its
//! ascending node Ω (the spherical triangle of the node, the sub-satellite point and the
//! equator; common practice in orbit geometry). The node moves from one revolution to the
//! next as the body turns under the orbit; here by the golden-ratio fraction of a turn, which
//! fills longitude evenly without repeating tracks. Poleward of |φ| = i (for i ≤ 90°) there is
//! no sample: the orbit's polar gap.

use rand::Rng;
use rand_chacha::ChaCha8Rng;

/// One observation site: geocentric latitude and longitude (degrees) and altitude above the
/// reference sphere (km).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Site {
    pub lat_deg: f64,
    pub lon_deg: f64,
    pub altitude_km: f64,
}

/// An orbit sampled along its ground tracks.
#[derive(Debug, Clone, PartialEq)]
pub struct OrbitDesign {
    /// Inclination to the equator, degrees; sites stay within |latitude| ≤ this.
    pub inclination_deg: f64,
    /// Samples per revolution (evenly spaced in u, with a small jitter).
    pub samples_per_revolution: usize,
    /// Mean altitude and the swing of an eccentric orbit about it, km: h = h̄ + Δh·cos(u − ω),
    /// with the argument of periapsis ω advancing by `apsis_drift_deg` per revolution.
    pub mean_altitude_km: f64,
    pub altitude_swing_km: f64,
    pub apsis_drift_deg: f64,
}

/// A regional network of ground stations: some spread over a spherical cap, the rest
/// gathered around a few base camps inside it, as stations reached on foot from a camp are.
#[derive(Debug, Clone, PartialEq)]
pub struct StationDesign {
    pub centre_lat_deg: f64,
    pub centre_lon_deg: f64,
    pub radius_deg: f64,
    /// Number of base camps and the radius of the area worked from each, degrees.
    pub camps: usize,
    pub camp_radius_deg: f64,
    /// Fraction of the stations spread uniformly over the cap (the rest are at the camps).
    pub spread_fraction: f64,
}

/// `count` sites along the tracks of `orbit`, revolution after revolution.
pub fn orbit_sites(orbit: &OrbitDesign, count: usize, rng: &mut ChaCha8Rng) -> Vec<Site> {
    let golden = (5f64.sqrt() - 1.0) / 2.0;
    let per_rev = orbit.samples_per_revolution.max(1);
    let step_deg = 360.0 / per_rev as f64;
    let (sin_i, cos_i) = orbit.inclination_deg.to_radians().sin_cos();
    let mut out = Vec::with_capacity(count);
    let mut revolution = 0usize;
    while out.len() < count {
        let node_deg = (revolution as f64 * golden * 360.0).rem_euclid(360.0);
        let phase_deg: f64 = rng.gen_range(0.0..step_deg);
        let apsis_deg = revolution as f64 * orbit.apsis_drift_deg;
        for j in 0..per_rev {
            if out.len() == count {
                break;
            }
            let jitter: f64 = rng.gen_range(-0.1..0.1);
            let u_deg = phase_deg + (j as f64 + jitter) * step_deg;
            let (sin_u, cos_u) = u_deg.to_radians().sin_cos();
            let lat = (sin_i * sin_u).asin().to_degrees();
            let lon = (node_deg + (cos_i * sin_u).atan2(cos_u).to_degrees()).rem_euclid(360.0);
            let altitude = orbit.mean_altitude_km
                + orbit.altitude_swing_km * (u_deg - apsis_deg).to_radians().cos();
            out.push(Site {
                lat_deg: round_to(lat, 4),
                lon_deg: round_to(lon, 4) % 360.0,
                altitude_km: round_to(altitude, 3),
            });
        }
        revolution += 1;
    }
    out
}

/// `count` station positions of `network` (altitudes 0; the caller sets them from the
/// topography).
pub fn station_sites(network: &StationDesign, count: usize, rng: &mut ChaCha8Rng) -> Vec<Site> {
    let camps: Vec<(f64, f64)> = (0..network.camps)
        .map(|_| {
            let (lat, lon) = in_cap(
                network.centre_lat_deg,
                network.centre_lon_deg,
                network.radius_deg - network.camp_radius_deg,
                rng,
            );
            (lat, lon)
        })
        .collect();
    (0..count)
        .map(|_| {
            let spread = camps.is_empty() || rng.gen_range(0.0..1.0) < network.spread_fraction;
            let (lat, lon) = if spread {
                in_cap(
                    network.centre_lat_deg,
                    network.centre_lon_deg,
                    network.radius_deg,
                    rng,
                )
            } else {
                let (clat, clon) = camps[rng.gen_range(0..camps.len())];
                in_cap(clat, clon, network.camp_radius_deg, rng)
            };
            Site {
                lat_deg: round_to(lat, 4),
                lon_deg: round_to(lon, 4) % 360.0,
                altitude_km: 0.0,
            }
        })
        .collect()
}

/// A point uniform in area inside the cap of angular radius `radius_deg` about a centre:
/// cos of the distance uniform in [cos r, 1], azimuth uniform, then the destination point on
/// the sphere (the direct problem of spherical trigonometry; common practice).
fn in_cap(lat0_deg: f64, lon0_deg: f64, radius_deg: f64, rng: &mut ChaCha8Rng) -> (f64, f64) {
    let cos_r = radius_deg.to_radians().cos();
    let cos_d: f64 = rng.gen_range(cos_r..=1.0);
    let d = cos_d.clamp(-1.0, 1.0).acos();
    let azimuth: f64 = rng.gen_range(0.0..std::f64::consts::TAU);
    let (lat0, lon0) = (lat0_deg.to_radians(), lon0_deg.to_radians());
    let sin_lat = lat0.sin() * d.cos() + lat0.cos() * d.sin() * azimuth.cos();
    let lat = sin_lat.clamp(-1.0, 1.0).asin();
    let lon = lon0 + (azimuth.sin() * d.sin() * lat0.cos()).atan2(d.cos() - lat0.sin() * sin_lat);
    (lat.to_degrees(), lon.to_degrees().rem_euclid(360.0))
}

/// Rounded as written to the files, so values belong to the stored coordinates.
pub fn round_to(x: f64, decimals: i32) -> f64 {
    let f = 10f64.powi(decimals);
    (x * f).round() / f
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;

    /// Great-circle distance in degrees (spherical law of cosines; common practice).
    fn distance_deg(a: (f64, f64), b: (f64, f64)) -> f64 {
        let (la, lb) = (a.0.to_radians(), b.0.to_radians());
        let c = la.sin() * lb.sin() + la.cos() * lb.cos() * (a.1 - b.1).to_radians().cos();
        c.clamp(-1.0, 1.0).acos().to_degrees()
    }

    #[test]
    fn orbit_sites_keep_the_polar_gap_and_the_altitude_band() {
        let orbit = OrbitDesign {
            inclination_deg: 80.0,
            samples_per_revolution: 90,
            mean_altitude_km: 100.0,
            altitude_swing_km: 10.0,
            apsis_drift_deg: 7.0,
        };
        let mut rng = ChaCha8Rng::seed_from_u64(5);
        let sites = orbit_sites(&orbit, 3000, &mut rng);
        assert_eq!(sites.len(), 3000);
        // |φ| ≤ i (with the 4-decimal rounding) and the orbit reaches near it
        let top = sites.iter().map(|s| s.lat_deg.abs()).fold(0.0, f64::max);
        assert!(top <= 80.0001 && top > 79.0, "highest latitude {top}");
        let (lo, hi) = sites.iter().fold((f64::MAX, f64::MIN), |(a, b), s| {
            (a.min(s.altitude_km), b.max(s.altitude_km))
        });
        assert!(lo >= 90.0 - 1e-9 && hi <= 110.0 + 1e-9 && hi - lo > 15.0);
        // an inclined orbit dwells near its turning latitude: more sites within 10° of ±i
        // than in the equatorial band of the same width (dφ/du → 0 at the turn; common
        // practice)
        let near_turn = sites.iter().filter(|s| s.lat_deg.abs() > 70.0).count();
        let equatorial = sites.iter().filter(|s| s.lat_deg.abs() < 10.0).count();
        assert!(near_turn > equatorial, "{near_turn} vs {equatorial}");
    }

    #[test]
    fn stations_stay_inside_their_cap() {
        let network = StationDesign {
            centre_lat_deg: 10.0,
            centre_lon_deg: 120.0,
            radius_deg: 40.0,
            camps: 5,
            camp_radius_deg: 3.0,
            spread_fraction: 0.5,
        };
        let mut rng = ChaCha8Rng::seed_from_u64(9);
        let sites = station_sites(&network, 2000, &mut rng);
        let far = sites
            .iter()
            .map(|s| distance_deg((s.lat_deg, s.lon_deg), (10.0, 120.0)))
            .fold(0.0, f64::max);
        assert!(far <= 40.001 && far > 35.0, "farthest station {far}°");
    }
}
