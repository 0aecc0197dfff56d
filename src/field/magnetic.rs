//! Magnetic field components from the internal-source potential
//! V = a Σ (a/r)^{l+1} Σ (g_lm cos mλ + h_lm sin mλ) P_l^m(cos θ), B = −∇V (Schmidt Gauss
//! coefficients in nT; Merrill, McElhinny & McFadden 1996, *The Magnetic Field of the Earth*,
//! ch. 2, or any geomagnetism text):
//!
//! B_r = Σ (l+1) (a/r)^{l+2} Σ (…) P_l^m,  B_θ = −Σ (a/r)^{l+2} Σ (…) dP_l^m/dθ,
//! B_λ = −(1/sin θ) Σ (a/r)^{l+2} Σ ∂(…)/∂λ P_l^m;
//! X = −B_θ (north), Y = B_λ (east), Z = −B_r (down), H = sqrt(X² + Y²), F = sqrt(H² + Z²),
//! D = atan2(Y, X), I = atan2(Z, H).

use super::quantity::Quantity;

/// The field vector at a point in geocentric spherical components, nT.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct FieldVector {
    pub br: f64,
    pub btheta: f64,
    pub blambda: f64,
}

impl FieldVector {
    /// North, east, down components in the geocentric frame.
    pub fn xyz(&self) -> (f64, f64, f64) {
        (-self.btheta, self.blambda, -self.br)
    }

    /// North, east, down components in a local frame tilted northward by `tilt_rad` about
    /// the east axis (geodetic minus geocentric latitude, for points given on an ellipsoid):
    /// X' = X cos δ + Z sin δ, Z' = Z cos δ − X sin δ.
    pub fn xyz_tilted(&self, tilt_rad: f64) -> (f64, f64, f64) {
        let (x, y, z) = self.xyz();
        if tilt_rad == 0.0 {
            return (x, y, z);
        }
        let (s, c) = tilt_rad.sin_cos();
        (x * c + z * s, y, z * c - x * s)
    }

    /// The weights (w_r, w_θ, w_λ) with which a component that is linear in the vector is
    /// formed, q = w_r B_r + w_θ B_θ + w_λ B_λ, in the frame tilted by `tilt_rad` (see
    /// [`FieldVector::xyz_tilted`]); `None` for the nonlinear ones (H, F, D, I) and
    /// non-magnetic quantities. The fit's observation rows are combined with these weights.
    pub fn linear_weights(quantity: Quantity, tilt_rad: f64) -> Option<[f64; 3]> {
        let (s, c) = tilt_rad.sin_cos();
        // X = −B_θ, Z = −B_r in the geocentric frame, then tilted.
        Some(match quantity {
            Quantity::Br => [1.0, 0.0, 0.0],
            Quantity::Btheta => [0.0, 1.0, 0.0],
            Quantity::Blambda => [0.0, 0.0, 1.0],
            Quantity::X => [-s, -c, 0.0],
            Quantity::Y => [0.0, 0.0, 1.0],
            Quantity::Z => [-c, s, 0.0],
            _ => return None,
        })
    }

    /// One magnetic quantity of this vector (`None` for non-magnetic quantities). X, Z, I
    /// (and H, D through X) are given in the frame tilted by `tilt_rad`.
    pub fn component(&self, quantity: Quantity, tilt_rad: f64) -> Option<f64> {
        let (x, y, z) = self.xyz_tilted(tilt_rad);
        let h = x.hypot(y);
        Some(match quantity {
            Quantity::Br => self.br,
            Quantity::Btheta => self.btheta,
            Quantity::Blambda => self.blambda,
            Quantity::X => x,
            Quantity::Y => y,
            Quantity::Z => z,
            Quantity::H => h,
            Quantity::F => h.hypot(z),
            Quantity::Declination => y.atan2(x).to_degrees(),
            Quantity::Inclination => z.atan2(h).to_degrees(),
            _ => return None,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn declination_and_inclination_of_simple_vectors() {
        // common practice: D is measured east of north, I positive downward.
        let v = FieldVector {
            br: -10.0,
            btheta: -10.0,
            blambda: 10.0,
        };
        assert!((v.component(Quantity::Declination, 0.0).unwrap() - 45.0).abs() < 1e-12);
        let incl = v.component(Quantity::Inclination, 0.0).unwrap();
        assert!((incl - (10.0f64).atan2(200f64.sqrt()).to_degrees()).abs() < 1e-12);
        // A tilt of the frame keeps F.
        let f0 = v.component(Quantity::F, 0.0).unwrap();
        let f1 = v.component(Quantity::F, 0.003).unwrap();
        assert!((f0 - f1).abs() < 1e-12);
    }

    #[test]
    fn linear_weights_reproduce_the_components() {
        let v = FieldVector {
            br: -31.0,
            btheta: 12.5,
            blambda: 4.0,
        };
        for tilt in [0.0, 0.0031, -0.2] {
            for q in [
                Quantity::Br,
                Quantity::Btheta,
                Quantity::Blambda,
                Quantity::X,
                Quantity::Y,
                Quantity::Z,
            ] {
                let w = FieldVector::linear_weights(q, tilt).unwrap();
                let linear = w[0] * v.br + w[1] * v.btheta + w[2] * v.blambda;
                assert!(
                    (linear - v.component(q, tilt).unwrap()).abs() < 1e-12,
                    "{q} {tilt}"
                );
            }
        }
        assert!(FieldVector::linear_weights(Quantity::F, 0.0).is_none());
    }
}
