//! Checks of names whose vocabulary belongs to other modules: quantities and filter specs.
//! Kept in one place so that the config check and the run agree.

/// Quantities a synthesis or evaluation may ask for.
pub const QUANTITIES: &[&str] = &[
    "value", "potential", "geoid", "gravity-disturbance", "gravity-anomaly", "radial-gradient",
    "br", "btheta", "blambda", "x", "y", "z", "h", "f", "declination", "inclination",
];

pub fn check_quantity(q: &str) -> Result<(), String> {
    if QUANTITIES.contains(&q) {
        Ok(())
    } else {
        Err(format!("unknown quantity '{q}'{}", super::suggest::hint(q, QUANTITIES)))
    }
}

pub fn check_filter(spec: &str) -> Result<(), String> {
    if spec.trim().is_empty() {
        return Err("empty filter spec".into());
    }
    Ok(())
}
