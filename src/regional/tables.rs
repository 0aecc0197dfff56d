//! Localised spectra and comparisons as per-degree tables (written by `io::degree_table` as
//! NetCDF or CSV, like the global ones). Unreliable degrees carry `reliable = 0`.

use super::multitaper::{LocalisedComparison, LocalisedSpectrum};
use crate::spectral::table::{number_text, SpectralTable};
use crate::spectral::units::{product_units, quotient_units, squared_units};

fn flags(reliable: &[bool]) -> Vec<f64> {
    reliable
        .iter()
        .map(|r| if *r { 1.0 } else { 0.0 })
        .collect()
}

fn common_attributes(
    t: &mut SpectralTable,
    region: &str,
    lw: usize,
    k: usize,
    concentrations: &[f64],
) {
    t.attribute("region", region);
    t.attribute("window_lmax", lw);
    t.attribute("taper_count", k);
    t.attribute(
        "taper_concentrations",
        concentrations
            .iter()
            .map(|c| number_text(*c))
            .collect::<Vec<_>>()
            .join(","),
    );
    t.attribute(
        "method",
        "multitaper on the sphere (Wieczorek & Simons 2005, 2007); uncertainty from the scatter of the single-window estimates",
    );
    t.attribute(
        "reliable_note",
        format!("degrees below {lw} and above lmax - {lw} are marked reliable = 0"),
    );
}

impl LocalisedSpectrum {
    /// Columns `localised_degree_variance`, `localised_degree_variance_sigma`, `reliable`,
    /// and `expected_localised_degree_variance` when given.
    pub fn to_table(&self, expected: Option<&[f64]>) -> SpectralTable {
        let sq = squared_units(&self.units);
        let mut t = SpectralTable::with_degrees(self.lmax);
        t.push(
            "localised_degree_variance",
            &sq,
            "multitaper estimate of the degree variance inside the region",
            self.power.value.clone(),
        );
        t.push(
            "localised_degree_variance_sigma",
            &sq,
            "standard error of the multitaper estimate (scatter of the windows)",
            self.power.sigma.clone(),
        );
        if let Some(e) = expected {
            t.push(
                "expected_localised_degree_variance",
                &sq,
                "expected localised degree variance of the global spectrum (coupling matrix)",
                e.to_vec(),
            );
        }
        t.push(
            "reliable",
            "1",
            "1 where the window bandwidth allows a trustworthy estimate, else 0",
            flags(&self.reliable),
        );
        common_attributes(
            &mut t,
            &self.region,
            self.lmax_window,
            self.taper_count,
            &self.concentrations,
        );
        t
    }
}

impl LocalisedComparison {
    /// Powers, cross-power, correlation and admittance with their sigmas, and `reliable`.
    pub fn to_table(&self) -> SpectralTable {
        let mut t = SpectralTable::with_degrees(self.lmax);
        let (ua, ub) = (self.units_a.as_str(), self.units_b.as_str());
        let columns = [
            (
                "reference_localised_degree_variance",
                squared_units(ua),
                "localised degree variance of the reference model A",
                &self.power_a,
            ),
            (
                "compared_localised_degree_variance",
                squared_units(ub),
                "localised degree variance of the compared model B",
                &self.power_b,
            ),
            (
                "localised_cross_power",
                product_units(ua, ub),
                "localised cross power of A and B",
                &self.cross_power,
            ),
            (
                "localised_correlation",
                "1".to_string(),
                "localised correlation S_AB / sqrt(S_A S_B)",
                &self.correlation,
            ),
            (
                "localised_admittance",
                quotient_units(ua, ub),
                "localised admittance S_AB / S_B (A regressed on B)",
                &self.admittance,
            ),
        ];
        for (name, units, long_name, e) in columns {
            t.push(name, &units, long_name, e.value.clone());
            t.push(
                &format!("{name}_sigma"),
                &units,
                &format!("standard error of the {long_name}"),
                e.sigma.clone(),
            );
        }
        t.push(
            "reliable",
            "1",
            "1 where the window bandwidth allows a trustworthy estimate, else 0",
            flags(&self.reliable),
        );
        common_attributes(
            &mut t,
            &self.region,
            self.lmax_window,
            self.taper_count,
            &self.concentrations,
        );
        t
    }
}
