//! Comparison of two models degree by degree (docs/conventions.md §5). The first model is the
//! reference A, the second the compared model B; both are made comparable first
//! ([`super::comparable::make_comparable`]).
//!
//! - Cross power S^{AB}_l = Σ_m (C^A C^B + S^A S^B); degree correlation
//!   r_l = S^{AB}/√(S^A S^B); admittance Z_l = S^{AB}/S^B (A regressed on B, docs/conventions.md §5
//!   with f = A, g = B: e.g. gravity per metre of topography for `compare GRAVITY TOPOGRAPHY`).
//! - Correlation significance: under the null hypothesis of unrelated isotropic Gaussian
//!   fields the 2l+1 coefficient pairs (zero mean, no mean removed) make r_l distributed as one
//!   coordinate of a random unit vector in 2l+1 dimensions, i.e. t = r√ν/√(1−r²) is Student-t
//!   with ν = 2l degrees of freedom (the classical result for a sample correlation, with one
//!   more dof because no mean is estimated; Fisher 1915, Biometrika 10:507). The two-sided
//!   threshold at level c is r_c = t_{(1+c)/2}/√(ν + t²_{(1+c)/2}).
//! - Power ratio ρ_l = Ŝ^B/Ŝ^A with interval [ρ/F_{(1+c)/2}, ρ/F_{(1−c)/2}], F with
//!   (2l+1, 2l+1) dof (two independent χ²(2l+1)/(2l+1) estimates; correlated models make it
//!   conservative).
//! - Difference degree variance D_l = Σ_m ((C^A − C^B)² + (S^A − S^B)²).
//! - Agreement (symmetric, docs/conventions.md §5): degree l ≥ 1 agrees when
//!   D_l < min(S^A_l, S^B_l); degrees where neither model has power are skipped; "agree up to"
//!   is the last degree before the first disagreeing one (the whole common range when there is
//!   none). Swapping A and B gives the same result, and a zero model agrees with nothing.

use super::comparable::make_comparable;
use super::degree_power::{
    cross_sum, difference_sum_of_squares, error_sum_of_squares, sum_of_squares,
};
use super::spectrum::{check_confidence, trim_number};
use super::stats::{f_quantile, student_t_quantile};
use super::table::SpectralTable;
use super::units::{half_wavelength_km, product_units, quotient_units, squared_units};
use crate::coeffs::Coefficients;
use crate::error::Result;

/// Options of [`Comparison::compute`].
#[derive(Debug, Clone, PartialEq)]
pub struct CompareOptions {
    /// Confidence level for the correlation threshold and power-ratio interval (default 0.95).
    pub confidence: f64,
    /// Compare even when units differ or radii cannot be reconciled.
    pub force: bool,
}

impl Default for CompareOptions {
    fn default() -> Self {
        CompareOptions {
            confidence: 0.95,
            force: false,
        }
    }
}

/// Degree-by-degree comparison of a reference model A and a model B (vectors indexed 0..=lmax).
#[derive(Debug, Clone, PartialEq)]
pub struct Comparison {
    pub lmax: usize,
    pub reference_radius_m: f64,
    /// Units of the reference model A's coefficients.
    pub units: String,
    /// Units of the compared model B's coefficients (differ from `units` only when forced).
    pub other_units: String,
    pub confidence: f64,
    /// Names used in plots and summaries (set by the caller; default "A" and "B").
    pub reference_label: String,
    pub other_label: String,
    pub reference_power: Vec<f64>,
    pub other_power: Vec<f64>,
    pub cross_power: Vec<f64>,
    pub correlation: Vec<f64>,
    pub correlation_threshold: Vec<f64>,
    pub admittance: Vec<f64>,
    pub power_ratio: Vec<f64>,
    pub power_ratio_lower: Vec<f64>,
    pub power_ratio_upper: Vec<f64>,
    pub difference_degree_variance: Vec<f64>,
    /// Error degree variance of the difference, E^A_l + E^B_l, when both models carry sigmas
    /// (errors taken as independent between the models).
    pub difference_error_degree_variance: Option<Vec<f64>>,
    pub half_wavelength_km: Vec<f64>,
    /// Last degree before the first one where the difference power reaches either model's
    /// power ("agree up to"; symmetric, see [`agreement_degree`]).
    pub agreement_degree: Option<usize>,
    pub agreement_half_wavelength_km: Option<f64>,
    /// The first degree ≥ 1 where D_l ≥ min(S^A_l, S^B_l), if any.
    pub first_disagreement_degree: Option<usize>,
    /// What was done to make the models comparable.
    pub notes: Vec<String>,
}

/// Two-sided critical degree correlation at level `confidence` for degree l (NaN for l = 0).
pub fn correlation_threshold(degree: usize, confidence: f64) -> Result<f64> {
    if degree == 0 {
        return Ok(f64::NAN);
    }
    let nu = (2 * degree) as f64;
    let t = student_t_quantile(0.5 * (1.0 + confidence), nu)?;
    Ok(t / (nu + t * t).sqrt())
}

fn ratio_or_nan(num: f64, den: f64) -> f64 {
    if den != 0.0 {
        num / den
    } else {
        f64::NAN
    }
}

/// Degree at which two models stop agreeing: (agree up to, first disagreement), from both
/// models' degree variances and their difference degree variance (docs/conventions.md §5).
///
/// Degree l ≥ 1 agrees when `difference[l] < min(power_a[l], power_b[l])`. Degrees where
/// neither model has power give nothing to compare and are skipped; where only one has
/// power the degree disagrees. Symmetric in `power_a` and `power_b`.
pub fn agreement_degree(
    power_a: &[f64],
    power_b: &[f64],
    difference: &[f64],
) -> (Option<usize>, Option<usize>) {
    let lmax = power_a.len().min(power_b.len()).saturating_sub(1);
    let has_signal = |l: usize| power_a[l] > 0.0 || power_b[l] > 0.0;
    let agrees = |l: usize| difference[l] < power_a[l].min(power_b[l]);
    match (1..=lmax).find(|&l| has_signal(l) && !agrees(l)) {
        Some(first) => ((1..first).rev().find(|&l| has_signal(l)), Some(first)),
        None if (1..=lmax).any(has_signal) => (Some(lmax), None),
        None => (None, None),
    }
}

impl Comparison {
    /// Compares `reference` (A) and `other` (B) after making them comparable.
    pub fn compute(
        reference: &Coefficients,
        other: &Coefficients,
        options: &CompareOptions,
    ) -> Result<Comparison> {
        check_confidence(options.confidence)?;
        reference.check_finite()?;
        other.check_finite()?;
        let pair = make_comparable(reference, other, options.force)?;
        let lmax = pair.lmax;
        let sa = sum_of_squares(&pair.reference);
        let sb = sum_of_squares(&pair.other);
        let sab = cross_sum(&pair.reference, &pair.other, lmax);
        let diff = difference_sum_of_squares(&pair.reference, &pair.other, lmax);
        let c = options.confidence;
        let mut threshold = Vec::with_capacity(lmax + 1);
        let (mut lower, mut upper) = (Vec::with_capacity(lmax + 1), Vec::with_capacity(lmax + 1));
        let mut ratio = Vec::with_capacity(lmax + 1);
        for l in 0..=lmax {
            threshold.push(correlation_threshold(l, c)?);
            let nu = (2 * l + 1) as f64;
            let rho = ratio_or_nan(sb[l], sa[l]);
            ratio.push(rho);
            lower.push(rho / f_quantile(0.5 * (1.0 + c), nu, nu)?);
            upper.push(rho / f_quantile(0.5 * (1.0 - c), nu, nu)?);
        }
        let correlation = (0..=lmax)
            .map(|l| ratio_or_nan(sab[l], (sa[l] * sb[l]).sqrt()))
            .collect();
        let admittance = (0..=lmax).map(|l| ratio_or_nan(sab[l], sb[l])).collect();
        let radius = pair.reference.reference_radius_m;
        let (agree, first) = agreement_degree(&sa, &sb, &diff);
        let difference_error = match (
            error_sum_of_squares(&pair.reference),
            error_sum_of_squares(&pair.other),
        ) {
            (Some(ea), Some(eb)) => Some(ea.iter().zip(&eb).map(|(x, y)| x + y).collect()),
            _ => None,
        };
        Ok(Comparison {
            lmax,
            reference_radius_m: radius,
            units: pair.reference.units.clone(),
            other_units: pair.other.units.clone(),
            confidence: c,
            reference_label: "A".into(),
            other_label: "B".into(),
            reference_power: sa,
            other_power: sb,
            cross_power: sab,
            correlation,
            correlation_threshold: threshold,
            admittance,
            power_ratio: ratio,
            power_ratio_lower: lower,
            power_ratio_upper: upper,
            difference_degree_variance: diff,
            difference_error_degree_variance: difference_error,
            half_wavelength_km: (0..=lmax).map(|l| half_wavelength_km(l, radius)).collect(),
            agreement_degree: agree,
            agreement_half_wavelength_km: agree.map(|l| half_wavelength_km(l, radius)),
            first_disagreement_degree: first,
            notes: pair.notes,
        })
    }

    /// All per-degree quantities as named columns with units, first `degree`.
    pub fn to_table(&self) -> SpectralTable {
        let sq = squared_units(&self.units);
        let other_sq = squared_units(&self.other_units);
        let pct = format!("{}%", trim_number(self.confidence * 100.0));
        let mut t = SpectralTable::with_degrees(self.lmax);
        t.push(
            "reference_degree_variance",
            &sq,
            &format!(
                "degree variance of the reference model {}",
                self.reference_label
            ),
            self.reference_power.clone(),
        );
        t.push(
            "compared_degree_variance",
            &other_sq,
            &format!("degree variance of the compared model {}", self.other_label),
            self.other_power.clone(),
        );
        t.push(
            "cross_power",
            &product_units(&self.units, &self.other_units),
            "cross power: sum over m of (C_A C_B + S_A S_B)",
            self.cross_power.clone(),
        );
        t.push(
            "correlation",
            "1",
            "degree correlation S_AB / sqrt(S_A S_B)",
            self.correlation.clone(),
        );
        t.push("correlation_threshold", "1", &format!("two-sided {pct} significance threshold of the degree correlation (Student t, 2l dof)"), self.correlation_threshold.clone());
        t.push(
            "admittance",
            &quotient_units(&self.units, &self.other_units),
            "admittance S_AB / S_B (reference regressed on the compared model, in reference units per compared unit)",
            self.admittance.clone(),
        );
        t.push(
            "power_ratio",
            &quotient_units(&other_sq, &sq),
            "power ratio S_B / S_A",
            self.power_ratio.clone(),
        );
        t.push(
            "power_ratio_lower",
            &quotient_units(&other_sq, &sq),
            &format!("lower end of the {pct} interval of the power ratio (F with 2l+1, 2l+1 dof)"),
            self.power_ratio_lower.clone(),
        );
        t.push(
            "power_ratio_upper",
            &quotient_units(&other_sq, &sq),
            &format!("upper end of the {pct} interval of the power ratio (F with 2l+1, 2l+1 dof)"),
            self.power_ratio_upper.clone(),
        );
        t.push(
            "difference_degree_variance",
            &sq,
            "degree variance of the difference A - B",
            self.difference_degree_variance.clone(),
        );
        if let Some(e) = &self.difference_error_degree_variance {
            t.push(
                "difference_error_degree_variance",
                &sq,
                "error degree variance of A - B from both models' sigmas (independent errors)",
                e.clone(),
            );
        }
        t.push(
            "half_wavelength_km",
            "km",
            "half-wavelength pi R / l on the reference sphere",
            self.half_wavelength_km.clone(),
        );
        t.number_attribute("confidence_level", self.confidence);
        t.attribute("reference_model", &self.reference_label);
        t.attribute("compared_model", &self.other_label);
        t.number_attribute("reference_radius_m", self.reference_radius_m);
        t.attribute("coefficient_units", &self.units);
        if self.other_units.trim() != self.units.trim() {
            t.attribute("compared_coefficient_units", &self.other_units);
        }
        t.attribute(
            "agreement_degree",
            self.agreement_degree
                .map(|l| l.to_string())
                .unwrap_or_else(|| "none".into()),
        );
        if let Some(km) = self.agreement_half_wavelength_km {
            t.attribute("agreement_half_wavelength_km", trim_number(km));
        }
        if !self.notes.is_empty() {
            t.attribute("comparability_notes", self.notes.join("; "));
        }
        t
    }

    /// A few lines for people: agreement degree, correlation, notes.
    pub fn summary(&self) -> String {
        let mut out = String::new();
        for n in &self.notes {
            out += &format!("note: {n}\n");
        }
        out += &format!(
            "compared degrees 0-{} of {} (reference) and {}\n",
            self.lmax, self.reference_label, self.other_label
        );
        match (self.agreement_degree, self.first_disagreement_degree) {
            (Some(l), None) => out += &format!(
                "agree up to degree {l} (half-wavelength {:.0} km): difference power stays below both models' powers over the whole common range\n",
                self.half_wavelength_km[l]
            ),
            (Some(l), Some(first)) => out += &format!(
                "agree up to degree {l} (half-wavelength {:.0} km); from degree {first} the difference power reaches one model's power\n",
                self.half_wavelength_km[l]
            ),
            (None, Some(first)) => out += &format!("no agreement: difference power reaches one model's power already at degree {first}\n"),
            (None, None) => out += "too few degrees with power to judge agreement\n",
        }
        let significant = (1..=self.lmax)
            .filter(|&l| self.correlation[l] > self.correlation_threshold[l])
            .count();
        out += &format!(
            "degree correlation above the {}% significance threshold at {significant} of {} degrees\n",
            trim_number(self.confidence * 100.0),
            self.lmax
        );
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn agreement_rule() {
        // D reaches min(S^A, S^B) first at degree 4 → agree up to 3
        let sa = [1.0, 1.0, 1.0, 1.0, 1.0, 1.0];
        let sb = [1.0, 1.2, 0.8, 1.0, 1.0, 1.0];
        let d = [5.0, 0.1, 0.2, 0.9, 1.5, 0.5];
        assert_eq!(agreement_degree(&sa, &sb, &d), (Some(3), Some(4)));
        assert_eq!(agreement_degree(&sb, &sa, &d), (Some(3), Some(4)));
        assert_eq!(agreement_degree(&sa, &sa, &[0.0; 6]), (Some(5), None));
        assert_eq!(
            agreement_degree(&sa, &sa, &[0.0, 2.0, 0.0, 0.0, 0.0, 0.0]),
            (None, Some(1))
        );
        // the smaller power decides: 0.85 > 0.8 at degree 2
        let d2 = [0.0, 0.1, 0.85, 0.1, 0.1, 0.1];
        assert_eq!(agreement_degree(&sa, &sb, &d2), (Some(1), Some(2)));
        assert_eq!(agreement_degree(&sb, &sa, &d2), (Some(1), Some(2)));
    }

    #[test]
    fn a_zero_model_agrees_with_nothing_either_way() {
        let sa = [1.0, 1.0, 1.0, 1.0];
        let zero = [0.0; 4];
        // the difference of A and zero is A itself
        assert_eq!(agreement_degree(&sa, &zero, &sa), (None, Some(1)));
        assert_eq!(agreement_degree(&zero, &sa, &sa), (None, Some(1)));
        // two zero models: nothing to judge
        assert_eq!(agreement_degree(&zero, &zero, &zero), (None, None));
    }

    #[test]
    fn degrees_without_power_in_either_model_are_skipped() {
        let sa = [1.0, 0.0, 1.0, 1.0, 1.0, 1.0];
        let d0 = [0.0, 0.0, 0.1, 2.0, 0.0, 0.0];
        assert_eq!(agreement_degree(&sa, &sa, &d0), (Some(2), Some(3)));
        let d1 = [0.0, 0.0, 2.0, 0.0, 0.0, 0.0];
        assert_eq!(agreement_degree(&sa, &sa, &d1), (None, Some(2)));
    }

    #[test]
    fn threshold_matches_closed_form_for_one_degree() {
        // l = 1: three pairs, r is a coordinate of a uniform unit vector in R³, which is uniform
        // on [−1, 1] (Archimedes' hat-box theorem), so the two-sided 95% threshold is 0.95.
        let r = correlation_threshold(1, 0.95).unwrap();
        assert!((r - 0.95).abs() < 1e-12, "{r}");
    }
}
