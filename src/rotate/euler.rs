//! Rotations of the sphere in Euler angles, and the rotation that brings a chosen point to the
//! north pole.
//!
//! Convention (active, z-y-z, right-handed): R(α, β, γ) = R_z(α) R_y(β) R_z(γ), i.e. first a
//! turn by γ about the z axis, then by β about the y axis, then by α about the z axis, all
//! axes fixed in space, positive angles counter-clockwise when looking from the positive axis
//! towards the origin. z points to the north pole, x to (0°N, 0°E), y to (0°N, 90°E). The
//! rotated field is g(r) = f(R⁻¹ r): whatever f has at the point p, g has at R p (Edmonds
//! 1957, *Angular Momentum in Quantum Mechanics*, §4.1; common practice in geodesy and physics).
//! The inverse rotation is R(−γ, −β, −α).

use crate::error::{Error, Result};

/// The attribute of a rotated model that records its rotation ([`EulerAngles::degrees_text`]).
pub const ROTATION_ATTRIBUTE: &str = "rotation_euler_zyz_deg";

/// Euler angles (radians) of an active z-y-z rotation (module notes).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EulerAngles {
    pub alpha_rad: f64,
    pub beta_rad: f64,
    pub gamma_rad: f64,
}

impl EulerAngles {
    /// Angles in degrees; all must be finite.
    pub fn from_degrees(alpha_deg: f64, beta_deg: f64, gamma_deg: f64) -> Result<Self> {
        for (name, v) in [("α", alpha_deg), ("β", beta_deg), ("γ", gamma_deg)] {
            if !v.is_finite() {
                return Err(Error::invalid(format!(
                    "Euler angle {name} must be a finite number of degrees, got {v}"
                )));
            }
        }
        Ok(EulerAngles {
            alpha_rad: alpha_deg.to_radians(),
            beta_rad: beta_deg.to_radians(),
            gamma_rad: gamma_deg.to_radians(),
        })
    }

    /// The rotation that moves the point (lat, lon) to the north pole and then turns the
    /// result by `azimuth_deg` eastwards about the new pole: R = R_z(azimuth) R_y(−θ) R_z(−λ),
    /// θ the colatitude of the point. With azimuth 0 the old north pole lands on the
    /// meridian 180°E of the rotated frame (at colatitude θ); a positive azimuth moves it
    /// eastwards to 180° + azimuth.
    pub fn moving_to_north_pole(lat_deg: f64, lon_deg: f64, azimuth_deg: f64) -> Result<Self> {
        if !(lat_deg.is_finite() && (-90.0..=90.0).contains(&lat_deg)) {
            return Err(Error::invalid(format!(
                "pole latitude must lie in [-90, 90] degrees, got {lat_deg}"
            )));
        }
        if !lon_deg.is_finite() || !azimuth_deg.is_finite() {
            return Err(Error::invalid(format!(
                "pole longitude and azimuth must be finite degrees, got {lon_deg} and {azimuth_deg}"
            )));
        }
        Ok(EulerAngles {
            alpha_rad: azimuth_deg.to_radians(),
            beta_rad: -(90.0 - lat_deg).to_radians(),
            gamma_rad: -lon_deg.to_radians(),
        })
    }

    /// The angles in degrees as "α,β,γ", as a rotated model records them in its
    /// [`ROTATION_ATTRIBUTE`].
    pub fn degrees_text(&self) -> String {
        format!(
            "{},{},{}",
            self.alpha_rad.to_degrees(),
            self.beta_rad.to_degrees(),
            self.gamma_rad.to_degrees()
        )
    }

    /// The inverse rotation R(−γ, −β, −α).
    pub fn inverse(&self) -> Self {
        EulerAngles {
            alpha_rad: -self.gamma_rad,
            beta_rad: -self.beta_rad,
            gamma_rad: -self.alpha_rad,
        }
    }

    /// The 3 × 3 matrix R_z(α) R_y(β) R_z(γ) acting on Cartesian column vectors.
    pub fn matrix(&self) -> [[f64; 3]; 3] {
        let rz = |t: f64| {
            let (s, c) = t.sin_cos();
            [[c, -s, 0.0], [s, c, 0.0], [0.0, 0.0, 1.0]]
        };
        let (s, c) = self.beta_rad.sin_cos();
        let ry = [[c, 0.0, s], [0.0, 1.0, 0.0], [-s, 0.0, c]];
        mat_mul(&rz(self.alpha_rad), &mat_mul(&ry, &rz(self.gamma_rad)))
    }

    /// Where the rotation takes the point (colatitude, longitude) in radians.
    pub fn rotate_point(&self, colatitude_rad: f64, longitude_rad: f64) -> (f64, f64) {
        let (st, ct) = colatitude_rad.sin_cos();
        let (sl, cl) = longitude_rad.sin_cos();
        let v = [st * cl, st * sl, ct];
        let r = self.matrix();
        let w: Vec<f64> = (0..3)
            .map(|i| r[i][0] * v[0] + r[i][1] * v[1] + r[i][2] * v[2])
            .collect();
        let horizontal = w[0].hypot(w[1]);
        (horizontal.atan2(w[2]), w[1].atan2(w[0]))
    }
}

fn mat_mul(a: &[[f64; 3]; 3], b: &[[f64; 3]; 3]) -> [[f64; 3]; 3] {
    let mut out = [[0.0; 3]; 3];
    for i in 0..3 {
        for j in 0..3 {
            out[i][j] = (0..3).map(|k| a[i][k] * b[k][j]).sum();
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_chosen_point_goes_to_the_north_pole() {
        // common practice: R p = ẑ by construction
        let r = EulerAngles::moving_to_north_pole(35.0, -120.0, 17.0).unwrap();
        let (t, _) = r.rotate_point(55f64.to_radians(), (-120f64).to_radians());
        assert!(t.abs() < 1e-12, "colatitude after rotation {t}");
        let back = r.inverse();
        let (t2, l2) = back.rotate_point(0.0, 0.0);
        assert!((t2 - 55f64.to_radians()).abs() < 1e-12);
        assert!((l2 - (-120f64).to_radians()).abs() < 1e-12);
        // the old north pole lands on meridian 180° + azimuth
        let (_, lon_old_pole) = r.rotate_point(0.0, 0.0);
        let want = (197f64 - 360.0).to_radians();
        assert!((lon_old_pole - want).abs() < 1e-12, "{lon_old_pole}");
    }

    #[test]
    fn bad_poles_are_refused_with_the_value() {
        let e = EulerAngles::moving_to_north_pole(91.0, 0.0, 0.0).unwrap_err();
        assert!(e.to_string().contains("91"), "{e}");
    }
}
