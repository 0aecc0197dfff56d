//! Level ellipsoids: defining constants, derived geometry, the even zonal harmonics of the
//! normal potential, Somigliana's normal gravity and geodetic ↔ geocentric coordinates.
//!
//! Formulas: Heiskanen & Moritz (1967), *Physical Geodesy*, §2-7 to §2-10 (eqs. 2-58 for q0,
//! 2-67 for q0', 2-73/2-74 for γ_a, γ_b, 2-78 Somigliana, 2-90/2-92 for J_2n); Moritz (2000),
//! "Geodetic Reference System 1980", J. Geodesy 74:128–133 (the same set, and GRS80's
//! constants); NIMA TR8350.2, 3rd ed. (2000), for WGS84's defining constants.

use std::fmt;
use std::str::FromStr;

use crate::error::{Error, Result};

/// A level ellipsoid of revolution: semi-major axis a, flattening f, GM and rotation rate ω.
#[derive(Debug, Clone, PartialEq)]
pub struct Ellipsoid {
    pub name: String,
    pub semi_major_axis_m: f64,
    pub flattening: f64,
    pub gm_m3_s2: f64,
    pub angular_velocity_rad_s: f64,
}

/// Geocentric spherical coordinates of a point: radius, colatitude and longitude.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Geocentric {
    pub radius_m: f64,
    pub colatitude_rad: f64,
    pub longitude_rad: f64,
}

impl Ellipsoid {
    /// GRS80 from its defining constants a, GM, J2, ω (Moritz 2000); f is derived.
    pub fn grs80() -> Ellipsoid {
        Ellipsoid::from_j2(
            "GRS80",
            6_378_137.0,
            1.082_63e-3,
            3.986_005e14,
            7.292_115e-5,
        )
    }

    /// WGS84 from its defining constants a, 1/f, GM, ω (NIMA TR8350.2, 3rd ed., Table 3.1).
    pub fn wgs84() -> Ellipsoid {
        Ellipsoid {
            name: "WGS84".into(),
            semi_major_axis_m: 6_378_137.0,
            flattening: 1.0 / 298.257_223_563,
            gm_m3_s2: 3.986_004_418e14,
            angular_velocity_rad_s: 7.292_115e-5,
        }
    }

    /// A custom level ellipsoid from a, f, GM, ω. Preconditions checked: a > 0, 0 ≤ f < 1,
    /// GM > 0, ω ≥ 0, all finite.
    pub fn custom(a_m: f64, f: f64, gm_m3_s2: f64, omega_rad_s: f64) -> Result<Ellipsoid> {
        let ok = a_m.is_finite()
            && a_m > 0.0
            && f.is_finite()
            && (0.0..1.0).contains(&f)
            && gm_m3_s2.is_finite()
            && gm_m3_s2 > 0.0
            && omega_rad_s.is_finite()
            && omega_rad_s >= 0.0;
        if !ok {
            return Err(Error::invalid(format!(
                "custom ellipsoid: expected a > 0 m, 0 <= f < 1, GM > 0 m3 s-2, omega >= 0 rad/s; \
                 got a = {a_m}, f = {f}, GM = {gm_m3_s2}, omega = {omega_rad_s}"
            )));
        }
        Ok(Ellipsoid {
            name: "custom".into(),
            semi_major_axis_m: a_m,
            flattening: f,
            gm_m3_s2,
            angular_velocity_rad_s: omega_rad_s,
        })
    }

    /// An ellipsoid defined by a, J2, GM and ω (as GRS80 is): the first eccentricity follows
    /// from e² = 3 J2 + (4/15)(ω² a³/GM)(e³/(2 q0)) (Moritz 2000), solved by fixed-point
    /// iteration from e² = 3 J2 (a contraction: the correction term is ~1e-3 of e²).
    pub fn from_j2(name: &str, a_m: f64, j2: f64, gm_m3_s2: f64, omega_rad_s: f64) -> Ellipsoid {
        let k = omega_rad_s * omega_rad_s * a_m.powi(3) / gm_m3_s2;
        let mut e2 = 3.0 * j2;
        for _ in 0..100 {
            let e = e2.sqrt();
            let ep = e / (1.0 - e2).sqrt();
            let next = 3.0 * j2 + (4.0 / 15.0) * k * e.powi(3) / (2.0 * q0(ep));
            let done = (next - e2).abs() <= 1e-17 * e2;
            e2 = next;
            if done {
                break;
            }
        }
        Ellipsoid {
            name: name.into(),
            semi_major_axis_m: a_m,
            flattening: 1.0 - (1.0 - e2).sqrt(),
            gm_m3_s2,
            angular_velocity_rad_s: omega_rad_s,
        }
    }

    /// Parses `grs80`, `wgs84` or `custom:a,f,gm,omega` (a in m, GM in m³ s⁻², ω in rad/s; a
    /// flattening value above 1 is read as 1/f, e.g. `custom:6378137,298.257,3.986e14,7.29e-5`).
    pub fn parse(spec: &str) -> Result<Ellipsoid> {
        let s = spec.trim();
        match s.to_ascii_lowercase().as_str() {
            "grs80" => return Ok(Ellipsoid::grs80()),
            "wgs84" => return Ok(Ellipsoid::wgs84()),
            _ => {}
        }
        let Some(rest) = s.strip_prefix("custom:") else {
            return Err(Error::invalid(format!(
                "unknown ellipsoid `{s}`; expected grs80, wgs84 or custom:a,f,gm,omega"
            )));
        };
        let values: Vec<&str> = rest.split(',').map(str::trim).collect();
        if values.len() != 4 {
            return Err(Error::invalid(format!(
                "custom ellipsoid `{s}`: expected four comma-separated numbers a,f,gm,omega, got {}",
                values.len()
            )));
        }
        let mut nums = [0.0; 4];
        for (i, (v, what)) in values.iter().zip(["a", "f", "gm", "omega"]).enumerate() {
            nums[i] = v.parse::<f64>().map_err(|_| {
                Error::invalid(format!(
                    "custom ellipsoid `{s}`: {what} = `{v}` is not a number"
                ))
            })?;
        }
        let f = if nums[1] > 1.0 {
            1.0 / nums[1]
        } else {
            nums[1]
        };
        Ellipsoid::custom(nums[0], f, nums[2], nums[3])
    }

    pub fn semi_minor_axis_m(&self) -> f64 {
        self.semi_major_axis_m * (1.0 - self.flattening)
    }

    /// First eccentricity squared e² = f(2 − f).
    pub fn e2(&self) -> f64 {
        self.flattening * (2.0 - self.flattening)
    }

    /// Second eccentricity e' = E/b.
    pub fn second_eccentricity(&self) -> f64 {
        (self.e2() / (1.0 - self.e2())).sqrt()
    }

    /// Linear eccentricity E = sqrt(a² − b²), m.
    pub fn linear_eccentricity_m(&self) -> f64 {
        self.semi_major_axis_m * self.e2().sqrt()
    }

    /// m = ω² a² b / GM.
    pub fn m(&self) -> f64 {
        let w = self.angular_velocity_rad_s;
        w * w * self.semi_major_axis_m.powi(2) * self.semi_minor_axis_m() / self.gm_m3_s2
    }

    /// Dynamic form factor J2 = (e²/3)(1 − (2/15) m e'/q0) (Heiskanen & Moritz eq. 2-90).
    pub fn j2(&self) -> f64 {
        let ep = self.second_eccentricity();
        self.e2() / 3.0 * (1.0 - 2.0 / 15.0 * self.m() * ep / q0(ep))
    }

    /// J_2n = (−1)^{n+1} 3 e^{2n}/((2n+1)(2n+3)) (1 − n + 5n J2/e²) (Heiskanen & Moritz
    /// eq. 2-92). `n = 0` gives −1 by the same formula's convention (U = GM/r for degree 0).
    pub fn j2n(&self, n: usize) -> f64 {
        if n == 0 {
            return -1.0;
        }
        let e2 = self.e2();
        let nf = n as f64;
        let sign = if n % 2 == 1 { 1.0 } else { -1.0 };
        sign * 3.0 * e2.powi(n as i32) / ((2.0 * nf + 1.0) * (2.0 * nf + 3.0))
            * (1.0 - nf + 5.0 * nf * self.j2() / e2)
    }

    /// Fully normalised (`geodesy`) even zonal coefficients C̄_2n,0 = −J_2n/sqrt(4n+1) for
    /// 2n ≤ lmax, as (degree, value) pairs, referred to this ellipsoid's a and GM.
    /// Degree 0 is included with C̄_00 = 1.
    pub fn even_zonals(&self, lmax: usize) -> Vec<(usize, f64)> {
        (0..=lmax / 2)
            .map(|n| (2 * n, -self.j2n(n) / ((4 * n + 1) as f64).sqrt()))
            .collect()
    }

    /// Normal gravity at the equator, γ_a = GM/(ab) (1 − m − (m/6) e' q0'/q0) (H&M eq. 2-73).
    pub fn equatorial_gravity_m_s2(&self) -> f64 {
        let (a, b) = (self.semi_major_axis_m, self.semi_minor_axis_m());
        let ep = self.second_eccentricity();
        let m = self.m();
        self.gm_m3_s2 / (a * b) * (1.0 - m - m / 6.0 * ep * q0_prime(ep) / q0(ep))
    }

    /// Normal gravity at the poles, γ_b = GM/a² (1 + (m/3) e' q0'/q0) (H&M eq. 2-74).
    pub fn polar_gravity_m_s2(&self) -> f64 {
        let a = self.semi_major_axis_m;
        let ep = self.second_eccentricity();
        self.gm_m3_s2 / (a * a) * (1.0 + self.m() / 3.0 * ep * q0_prime(ep) / q0(ep))
    }

    /// Somigliana's closed formula for normal gravity on the ellipsoid at geodetic latitude φ:
    /// γ = (a γ_a cos²φ + b γ_b sin²φ) / sqrt(a² cos²φ + b² sin²φ) (H&M eq. 2-78), m s⁻².
    pub fn normal_gravity_somigliana(&self, geodetic_lat_rad: f64) -> f64 {
        let (a, b) = (self.semi_major_axis_m, self.semi_minor_axis_m());
        let (s, c) = geodetic_lat_rad.sin_cos();
        (a * self.equatorial_gravity_m_s2() * c * c + b * self.polar_gravity_m_s2() * s * s)
            / (a * a * c * c + b * b * s * s).sqrt()
    }

    /// Prime-vertical radius of curvature N = a / sqrt(1 − e² sin²φ), m.
    pub fn prime_vertical_radius_m(&self, geodetic_lat_rad: f64) -> f64 {
        let s = geodetic_lat_rad.sin();
        self.semi_major_axis_m / (1.0 - self.e2() * s * s).sqrt()
    }

    /// Geodetic (φ, λ, h) to geocentric spherical (r, θ, λ): p = (N + h) cos φ,
    /// z = (N(1 − e²) + h) sin φ (any geodesy text, e.g. Heiskanen & Moritz ch. 5).
    pub fn geodetic_to_geocentric(&self, lat_rad: f64, lon_rad: f64, height_m: f64) -> Geocentric {
        let n = self.prime_vertical_radius_m(lat_rad);
        let (s, c) = lat_rad.sin_cos();
        let p = (n + height_m) * c;
        let z = (n * (1.0 - self.e2()) + height_m) * s;
        Geocentric {
            radius_m: p.hypot(z),
            colatitude_rad: std::f64::consts::FRAC_PI_2 - z.atan2(p),
            longitude_rad: lon_rad,
        }
    }

    /// Geocentric spherical to geodetic (φ, λ, h) by fixed-point iteration on
    /// φ = atan2(z + e² N sin φ, p), with h = p cos φ + z sin φ − a sqrt(1 − e² sin² φ), which
    /// stays well conditioned at the poles. Converges to 1e-15 rad in a few steps for heights
    /// from the Earth's centre region out to far above the surface.
    pub fn geocentric_to_geodetic(&self, point: &Geocentric) -> (f64, f64, f64) {
        let (st, ct) = point.colatitude_rad.sin_cos();
        let p = point.radius_m * st;
        let z = point.radius_m * ct;
        let e2 = self.e2();
        let mut lat = z.atan2(p * (1.0 - e2));
        for _ in 0..50 {
            let next = (z + e2 * self.prime_vertical_radius_m(lat) * lat.sin()).atan2(p);
            let done = (next - lat).abs() < 1e-16;
            lat = next;
            if done {
                break;
            }
        }
        let (s, c) = lat.sin_cos();
        let h = p * c + z * s - self.semi_major_axis_m * (1.0 - e2 * s * s).sqrt();
        (lat, point.longitude_rad, h)
    }
}

impl fmt::Display for Ellipsoid {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "{} (a = {} m, 1/f = {:.9}, GM = {:e} m3 s-2, omega = {:e} rad/s)",
            self.name,
            self.semi_major_axis_m,
            1.0 / self.flattening,
            self.gm_m3_s2,
            self.angular_velocity_rad_s
        )
    }
}

impl FromStr for Ellipsoid {
    type Err = Error;
    fn from_str(s: &str) -> Result<Self> {
        Ellipsoid::parse(s)
    }
}

/// q0 = ½[(1 + 3/e'²) arctan e' − 3/e'] (H&M eq. 2-58), summed as its series
/// Σ_{n≥1} (−1)^{n+1} 2n/((2n+1)(2n+3)) e'^{2n+1}: the closed form loses ~6 digits to
/// cancellation at the Earth's eccentricity.
fn q0(ep: f64) -> f64 {
    let x2 = ep * ep;
    let mut term = ep;
    let mut sum = 0.0;
    for n in 1..200 {
        term *= x2;
        let nf = n as f64;
        let sign = if n % 2 == 1 { 1.0 } else { -1.0 };
        let add = sign * 2.0 * nf / ((2.0 * nf + 1.0) * (2.0 * nf + 3.0)) * term;
        sum += add;
        if add.abs() < 1e-18 * sum.abs() {
            break;
        }
    }
    sum
}

/// q0' = 3(1 + 1/e'²)(1 − arctan(e')/e') − 1 (H&M eq. 2-67), summed as its series
/// Σ_{k≥1} (−1)^{k+1} 6/((2k+1)(2k+3)) e'^{2k}, for the same reason as [`q0`].
fn q0_prime(ep: f64) -> f64 {
    let x2 = ep * ep;
    let mut term = 1.0;
    let mut sum = 0.0;
    for k in 1..200 {
        term *= x2;
        let kf = k as f64;
        let sign = if k % 2 == 1 { 1.0 } else { -1.0 };
        let add = sign * 6.0 / ((2.0 * kf + 1.0) * (2.0 * kf + 3.0)) * term;
        sum += add;
        if add.abs() < 1e-18 * sum.abs() {
            break;
        }
    }
    sum
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn series_forms_match_closed_forms() {
        // common practice: the closed forms of q0 and q0' (H&M 2-58, 2-67) agree with their
        // series to the precision the cancellation leaves (~1e-9 relative at e' = 0.3).
        let ep: f64 = 0.3;
        let q0_closed = 0.5 * ((1.0 + 3.0 / (ep * ep)) * ep.atan() - 3.0 / ep);
        let q0p_closed = 3.0 * (1.0 + 1.0 / (ep * ep)) * (1.0 - ep.atan() / ep) - 1.0;
        assert!((q0(ep) / q0_closed - 1.0).abs() < 1e-9);
        assert!((q0_prime(ep) / q0p_closed - 1.0).abs() < 1e-9);
    }
}
