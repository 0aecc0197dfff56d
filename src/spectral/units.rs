//! Small helpers shared by spectra and comparisons: units of squared quantities and the
//! half-wavelength belonging to a degree.

/// UDUNITS string for the square of `units`: "1" stays "1", a single symbol gets "^2",
/// anything compound is parenthesised first.
pub fn squared_units(units: &str) -> String {
    let u = units.trim();
    if u.is_empty() || u == "1" {
        "1".to_string()
    } else if u.chars().all(|c| c.is_alphanumeric() || c == '_') {
        format!("{u}^2")
    } else {
        format!("({u})^2")
    }
}

/// Half-wavelength on a sphere of radius R for degree l: πR/l, in km (common practice: a
/// degree-l harmonic has l full waves around a great circle). NaN for l = 0.
pub fn half_wavelength_km(degree: usize, radius_m: f64) -> f64 {
    if degree == 0 {
        f64::NAN
    } else {
        std::f64::consts::PI * radius_m / degree as f64 / 1000.0
    }
}

/// The (generally fractional) degree whose half-wavelength is `km` on a sphere of radius R.
pub fn degree_for_half_wavelength(km: f64, radius_m: f64) -> f64 {
    std::f64::consts::PI * radius_m / (km * 1000.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_square() {
        assert_eq!(squared_units("1"), "1");
        assert_eq!(squared_units("nT"), "nT^2");
        assert_eq!(squared_units("m s-2"), "(m s-2)^2");
    }

    #[test]
    fn half_wavelength_on_earth() {
        // πR/l with R = 6378.137 km: l = 180 gives 111.3 km, about one degree of arc (common practice)
        let km = half_wavelength_km(180, 6_378_137.0);
        assert!((km - 111.319_490_8).abs() < 1e-6, "{km}");
        assert!((degree_for_half_wavelength(km, 6_378_137.0) - 180.0).abs() < 1e-9);
        assert!(half_wavelength_km(0, 1.0).is_nan());
    }
}
