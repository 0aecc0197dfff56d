//! The quantities `kugel synthesize` and `kugel evaluate` derive from a coefficient model.

use std::fmt;
use std::str::FromStr;

use crate::error::{Error, Result};

/// A derived quantity. Gravity quantities need a disturbing-potential model with GM and R;
/// magnetic ones need Schmidt Gauss coefficients in nT; `value` works on any model.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Quantity {
    /// The plain synthesis Σ C_lm Y_lm (continued to the target surface as s^{l+1}).
    Value,
    /// Disturbing potential T, m² s⁻².
    Potential,
    /// Geoid height N = T/γ (Bruns), m.
    Geoid,
    /// Gravity disturbance δg = −∂T/∂r, mGal.
    GravityDisturbance,
    /// Gravity anomaly Δg = −∂T/∂r − 2T/r (spherical approximation), mGal.
    GravityAnomaly,
    /// Second radial derivative T_rr, eötvös.
    RadialGradient,
    /// Radial magnetic component B_r (up), nT.
    Br,
    /// Colatitudinal component B_θ (south), nT.
    Btheta,
    /// Longitudinal component B_λ (east), nT.
    Blambda,
    /// North component X = −B_θ, nT.
    X,
    /// East component Y = B_λ, nT.
    Y,
    /// Down component Z = −B_r, nT.
    Z,
    /// Horizontal intensity H = sqrt(X² + Y²), nT.
    H,
    /// Total intensity F = sqrt(X² + Y² + Z²), nT.
    F,
    /// Declination D = atan2(Y, X), degrees east of north.
    Declination,
    /// Inclination I = atan2(Z, H), degrees, positive down.
    Inclination,
}

/// What kind of model a quantity needs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum QuantityFamily {
    Generic,
    Gravity,
    Magnetic,
}

impl Quantity {
    /// Every quantity, in the order the help text lists them.
    pub const ALL: [Quantity; 16] = [
        Quantity::Value,
        Quantity::Potential,
        Quantity::Geoid,
        Quantity::GravityDisturbance,
        Quantity::GravityAnomaly,
        Quantity::RadialGradient,
        Quantity::Br,
        Quantity::Btheta,
        Quantity::Blambda,
        Quantity::X,
        Quantity::Y,
        Quantity::Z,
        Quantity::H,
        Quantity::F,
        Quantity::Declination,
        Quantity::Inclination,
    ];

    /// The name used on the command line, as a NetCDF variable and as a CSV column.
    pub fn name(self) -> &'static str {
        match self {
            Quantity::Value => "value",
            Quantity::Potential => "potential",
            Quantity::Geoid => "geoid",
            Quantity::GravityDisturbance => "gravity-disturbance",
            Quantity::GravityAnomaly => "gravity-anomaly",
            Quantity::RadialGradient => "radial-gradient",
            Quantity::Br => "br",
            Quantity::Btheta => "btheta",
            Quantity::Blambda => "blambda",
            Quantity::X => "x",
            Quantity::Y => "y",
            Quantity::Z => "z",
            Quantity::H => "h",
            Quantity::F => "f",
            Quantity::Declination => "declination",
            Quantity::Inclination => "inclination",
        }
    }

    /// A NetCDF-safe variable name (hyphens become underscores).
    pub fn variable_name(self) -> String {
        self.name().replace('-', "_")
    }

    pub fn family(self) -> QuantityFamily {
        use Quantity::*;
        match self {
            Value => QuantityFamily::Generic,
            Potential | Geoid | GravityDisturbance | GravityAnomaly | RadialGradient => {
                QuantityFamily::Gravity
            }
            _ => QuantityFamily::Magnetic,
        }
    }

    /// CF units string for files (docs/conventions.md §6). `value` takes the model's own units, so
    /// this returns `None` for it.
    pub fn units(self) -> Option<&'static str> {
        use Quantity::*;
        Some(match self {
            Value => return None,
            Potential => "m2 s-2",
            Geoid => "m",
            GravityDisturbance | GravityAnomaly => "mGal",
            RadialGradient => "E",
            Br | Btheta | Blambda | X | Y | Z | H | F => "nT",
            Declination | Inclination => "degree",
        })
    }

    pub fn long_name(self) -> &'static str {
        use Quantity::*;
        match self {
            Value => "synthesised field value",
            Potential => "disturbing gravity potential",
            Geoid => "geoid height (Bruns, spherical approximation)",
            GravityDisturbance => "gravity disturbance",
            GravityAnomaly => "gravity anomaly (spherical approximation)",
            RadialGradient => "second radial derivative of the disturbing potential",
            Br => "radial magnetic field component (positive up)",
            Btheta => "colatitudinal magnetic field component (positive south)",
            Blambda => "longitudinal magnetic field component (positive east)",
            X => "northward magnetic field component",
            Y => "eastward magnetic field component",
            Z => "downward magnetic field component",
            H => "horizontal magnetic field intensity",
            F => "total magnetic field intensity",
            Declination => "magnetic declination (east of north)",
            Inclination => "magnetic inclination (positive down)",
        }
    }

    /// The CF standard name where one fits exactly.
    ///
    /// Only the geoid has one here, and only when the normal field of an ellipsoid was
    /// removed (the height is then above that reference ellipsoid); see
    /// [`Quantity::standard_name_given`].
    pub fn standard_name(self) -> Option<&'static str> {
        match self {
            Quantity::Geoid => Some("geoid_height_above_reference_ellipsoid"),
            _ => None,
        }
    }

    /// The CF standard name, given whether an ellipsoid's normal field was removed.
    pub fn standard_name_given(self, normal_field_removed: bool) -> Option<&'static str> {
        match self {
            Quantity::Geoid if !normal_field_removed => None,
            q => q.standard_name(),
        }
    }

    /// Parses a comma-separated list such as `geoid,gravity-anomaly`; duplicates are refused.
    pub fn parse_list(text: &str) -> Result<Vec<Quantity>> {
        let mut out = Vec::new();
        for part in text.split(',').map(str::trim).filter(|p| !p.is_empty()) {
            let q: Quantity = part.parse()?;
            if out.contains(&q) {
                return Err(Error::invalid(format!(
                    "--quantity: `{part}` is listed twice"
                )));
            }
            out.push(q);
        }
        if out.is_empty() {
            return Err(Error::invalid("--quantity: no quantity given"));
        }
        Ok(out)
    }
}

impl fmt::Display for Quantity {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Quantity {
    type Err = Error;

    fn from_str(s: &str) -> Result<Self> {
        let key = s.trim().to_ascii_lowercase().replace('_', "-");
        Quantity::ALL
            .iter()
            .copied()
            .find(|q| q.name() == key)
            .ok_or_else(|| {
                let names: Vec<&str> = Quantity::ALL.iter().map(|q| q.name()).collect();
                Error::invalid(format!(
                    "unknown quantity `{s}`; expected one of: {}",
                    names.join(", ")
                ))
            })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_unknown_is_refused() {
        for q in Quantity::ALL {
            assert_eq!(q.name().parse::<Quantity>().unwrap(), q);
            assert_eq!(q.variable_name().parse::<Quantity>().unwrap(), q);
        }
        let err = "geoidd".parse::<Quantity>().unwrap_err().to_string();
        assert!(
            err.contains("geoidd") && err.contains("gravity-anomaly"),
            "{err}"
        );
        assert!(Quantity::parse_list("geoid,geoid").is_err());
        assert_eq!(
            Quantity::parse_list("x, z").unwrap(),
            vec![Quantity::X, Quantity::Z]
        );
    }
}
