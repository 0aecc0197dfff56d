//! Cautions printed by the commands and stored as a `caution` attribute in files wherever a
//! result could be mistaken for an authoritative one.

/// Printed with, and attached to, every magnetic declination result.
pub const DECLINATION_CAUTION: &str = "Magnetic declination computed by kugel from the given \
coefficient model is for scientific analysis only. It is not for navigation or any safety \
decision: use the official national or international geomagnetic model for the date and place, \
and follow local practice and regulations.";

/// Printed with, and attached to, every geoid height result.
pub const GEOID_CAUTION: &str = "Geoid heights computed by kugel are a spherical approximation \
from the given coefficient model, for scientific analysis only. Do not use them for engineering, \
surveying or legal height decisions: the official geoid model and height datum of the \
jurisdiction, local codes and licensed surveying practice govern.";

/// The caution that belongs with a quantity's output, if any.
pub fn caution_for(quantity: super::Quantity) -> Option<&'static str> {
    use super::Quantity;
    match quantity {
        Quantity::Declination => Some(DECLINATION_CAUTION),
        Quantity::Geoid => Some(GEOID_CAUTION),
        _ => None,
    }
}
