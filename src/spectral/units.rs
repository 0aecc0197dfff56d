//! Small helpers shared by spectra and comparisons: units of squares, products and quotients
//! of quantities (CF units strings) and the half-wavelength belonging to a degree.
//!
//! Units strings follow the grammar of CF units strings (common practice):
//! a product is symbols separated by spaces, a power is a symbol followed by an integer
//! (`s-2`), `1` is dimensionless.

/// CF units string for the square of `units`: "1" stays "1", a single symbol gets "^2",
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

/// A units string as symbols with integer powers (`mGal m-1` -> [(mGal, 1), (m, -1)]); `None`
/// when it uses anything else (parentheses, `/`, scale factors), which is then kept as written.
fn symbol_powers(units: &str) -> Option<Vec<(String, i32)>> {
    let u = units.trim();
    if u.is_empty() || u == "1" {
        return Some(Vec::new());
    }
    u.split_whitespace()
        .map(|word| {
            let word = word.replace("**", "").replace('^', "");
            let split = word
                .find(|c: char| c == '-' || c.is_ascii_digit())
                .unwrap_or(word.len());
            let (symbol, power) = word.split_at(split);
            let symbol_ok =
                !symbol.is_empty() && symbol.chars().all(|c| c.is_alphabetic() || c == '_');
            let power = if power.is_empty() {
                Some(1)
            } else {
                power.parse::<i32>().ok()
            };
            match (symbol_ok, power) {
                (true, Some(p)) => Some((symbol.to_string(), p)),
                _ => None,
            }
        })
        .collect()
}

/// Symbols with powers back to a units string, equal symbols combined, zero powers dropped,
/// in order of first appearance; "1" when nothing is left.
fn powers_to_units(powers: &[(String, i32)]) -> String {
    let mut combined: Vec<(String, i32)> = Vec::new();
    for (symbol, power) in powers {
        match combined.iter_mut().find(|(s, _)| s == symbol) {
            Some((_, p)) => *p += power,
            None => combined.push((symbol.clone(), *power)),
        }
    }
    let words: Vec<String> = combined
        .into_iter()
        .filter(|(_, p)| *p != 0)
        .map(|(s, p)| if p == 1 { s } else { format!("{s}{p}") })
        .collect();
    if words.is_empty() {
        "1".to_string()
    } else {
        words.join(" ")
    }
}

/// CF units string of a / b, e.g. `mGal` / `m` = `mGal m-1` (gravity per metre of
/// topography); `1` when the units are equal. Units outside the simple symbol-power form are
/// written as the quotient `a/(b)`.
pub fn quotient_units(a: &str, b: &str) -> String {
    let (a, b) = (a.trim(), b.trim());
    if a == b {
        return "1".to_string();
    }
    match (symbol_powers(a), symbol_powers(b)) {
        (Some(pa), Some(pb)) => {
            let mut all = pa;
            all.extend(pb.into_iter().map(|(s, p)| (s, -p)));
            powers_to_units(&all)
        }
        _ => format!("{}/({})", if a.is_empty() { "1" } else { a }, b),
    }
}

/// CF units string of a × b (`m` × `mGal` = `m mGal`; equal units give their square).
pub fn product_units(a: &str, b: &str) -> String {
    let (a, b) = (a.trim(), b.trim());
    if a == b {
        return squared_units(a);
    }
    match (symbol_powers(a), symbol_powers(b)) {
        (Some(mut pa), Some(pb)) => {
            pa.extend(pb);
            powers_to_units(&pa)
        }
        _ => format!("({a}) ({b})"),
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
    fn units_of_quotients_and_products() {
        // CF units-string grammar (common practice): powers as trailing integers
        assert_eq!(quotient_units("mGal", "m"), "mGal m-1");
        assert_eq!(quotient_units("mGal", "mGal"), "1");
        assert_eq!(quotient_units("m2 s-2", "m"), "m s-2");
        assert_eq!(quotient_units("m", "m s-2"), "s2");
        assert_eq!(quotient_units("1", "m"), "m-1");
        assert_eq!(quotient_units("nT", "1"), "nT");
        assert_eq!(quotient_units("m^2", "m"), "m");
        assert_eq!(quotient_units("1e-5 m s-2", "m"), "1e-5 m s-2/(m)");
        assert_eq!(product_units("mGal", "m"), "mGal m");
        assert_eq!(product_units("m", "m"), "m^2");
        assert_eq!(product_units("m s-1", "s"), "m");
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
