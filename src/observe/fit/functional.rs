//! Observation equations: the design row of one observation of a functional at its own
//! radius, colatitude, longitude (and time).
//!
//! Every row is built from the per-degree factors of [`crate::field::degree_factors`] and the
//! component weights of [`FieldVector::linear_weights`], the same definitions the synthesis
//! and `kugel evaluate` use, so a fitted model evaluated at the observation points gives the
//! fit's own predictions:
//!
//! - `value`, gravity: row(C_lm) = k_l(r) P̄_lm(cos θ) cos mλ, row(S_lm) = k_l(r) P̄_lm sin mλ,
//!   with k_l the quantity's degree factor at s = R/r (e.g. (GM/R²)(l+1) s^{l+2} for the
//!   gravity disturbance, in mGal per unit coefficient);
//! - magnetic (internal Schmidt Gauss coefficients in nT, Merrill, McElhinny & McFadden 1996
//!   ch. 2): the rows of B_r, B_θ = −∂V/r∂θ and B_λ = −∂V/(r sin θ ∂λ) with the factors
//!   (l+1) s^{l+2} and s^{l+2} (external sources −l s^{1−l} and s^{1−l}), the Schmidt functions
//!   P_lm = P̄_lm/sqrt(2l+1); a component is their combination with the frame weights; the
//!   rate block repeats the internal row times (t − epoch);
//! - total intensity F = |B| is nonlinear: its row is the Gauss–Newton linearisation
//!   ∂F/∂x = (B_r ∂B_r + B_θ ∂B_θ + B_λ ∂B_λ)/F at the current model. F is homogeneous of
//!   degree one in x, so F(x₀) = J x₀ and the observation itself needs no reduction.
//!
//! dP̄_lm/dθ comes from the non-singular relation of `sht::legendre::column` and
//! P̄_lm/sin θ at a pole from its limit (`sht::legendre::pole_limit`), so rows hold at the poles.

use crate::coeffs::packed_index;
use crate::error::{Error, Result};
use crate::field::degree_factors::{
    magnetic_external_horizontal_factors, magnetic_external_radial_factors,
    magnetic_horizontal_factors, magnetic_radial_factors, scalar_factors, PotentialScale,
};
use crate::field::magnetic::FieldVector;
use crate::field::quantity::{Quantity, QuantityFamily};
use crate::sht::legendre::column::derivative_from_neighbours;
use crate::sht::legendre::{order_one_over_sin_at_pole, Pole};
use crate::spectral::continuation::{radial_factors, ContinuationOptions};

use super::design::{LegendreTable, UnknownLayout};
use super::observation::Observation;
use super::parameters::ParameterLayout;

/// What the coefficients of the fitted model are.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ModelSpace {
    /// `value` observations: `geodesy` coefficients in the units of the data, continued to
    /// each point's radius as (R/r)^{l+1}.
    Generic { reference_radius_m: f64 },
    /// Gravity functionals: dimensionless `geodesy` potential coefficients with GM and R.
    Gravity(PotentialScale),
    /// Magnetic components: Schmidt semi-normalised Gauss coefficients in nT, reference
    /// radius a.
    Magnetic { reference_radius_m: f64 },
}

impl ModelSpace {
    /// The space that `observations` call for on a body of reference radius
    /// `reference_radius_m`: the family of the first row that is not a plain value (generic
    /// when all are). Gravity needs the body's GM, `gm_m3_s2`, finite and positive;
    /// `gm_setting` names where the user gives it (a flag or a config key) in the refusal.
    pub fn for_observations(
        observations: &[Observation],
        reference_radius_m: f64,
        gm_m3_s2: Option<f64>,
        gm_setting: &str,
    ) -> Result<ModelSpace> {
        let family = observations
            .iter()
            .map(|o| o.quantity.family())
            .find(|f| *f != QuantityFamily::Generic)
            .unwrap_or(QuantityFamily::Generic);
        Ok(match family {
            QuantityFamily::Generic => ModelSpace::Generic { reference_radius_m },
            QuantityFamily::Magnetic => ModelSpace::Magnetic { reference_radius_m },
            QuantityFamily::Gravity => {
                let gm = gm_m3_s2.ok_or_else(|| {
                    Error::invalid(format!(
                        "{gm_setting}: the body's GM is needed to fit gravity quantities"
                    ))
                })?;
                if !(gm.is_finite() && gm > 0.0) {
                    return Err(Error::invalid(format!(
                        "{gm_setting} {gm} must be a positive number"
                    )));
                }
                ModelSpace::Gravity(PotentialScale {
                    reference_radius_m,
                    gm_m3_s2: gm,
                })
            }
        })
    }

    pub fn reference_radius_m(&self) -> f64 {
        match *self {
            ModelSpace::Generic { reference_radius_m }
            | ModelSpace::Magnetic { reference_radius_m } => reference_radius_m,
            ModelSpace::Gravity(s) => s.reference_radius_m,
        }
    }

    /// The family of quantities the space accepts.
    pub fn family(&self) -> QuantityFamily {
        match self {
            ModelSpace::Generic { .. } => QuantityFamily::Generic,
            ModelSpace::Gravity(_) => QuantityFamily::Gravity,
            ModelSpace::Magnetic { .. } => QuantityFamily::Magnetic,
        }
    }

    /// Refuses quantities the fit cannot take or that belong to another kind of model.
    pub fn check_quantity(&self, q: Quantity) -> std::result::Result<(), String> {
        if matches!(
            q,
            Quantity::H | Quantity::Declination | Quantity::Inclination
        ) {
            return Err(format!(
                "quantity `{q}` cannot be fitted (give the components x, y, z or the intensity f)"
            ));
        }
        if q.family() != self.family() {
            return Err(format!(
                "quantity `{q}` is a {} quantity, but this fit is of {} quantities; fit gravity, \
                 magnetic and plain values separately",
                family_name(q.family()),
                family_name(self.family())
            ));
        }
        Ok(())
    }
}

fn family_name(f: QuantityFamily) -> &'static str {
    match f {
        QuantityFamily::Generic => "plain `value`",
        QuantityFamily::Gravity => "gravity",
        QuantityFamily::Magnetic => "magnetic",
    }
}

/// Rows are forward models (upward or downward alike): no continuation cap applies.
const FORWARD: ContinuationOptions = ContinuationOptions {
    regularization: None,
    max_amplification: f64::INFINITY,
};

/// Builds observation rows over the full unknown vector of a [`ParameterLayout`].
#[derive(Debug, Clone)]
pub struct RowBuilder {
    pub space: ModelSpace,
    pub layout: ParameterLayout,
    /// Epoch of the rates, decimal year.
    pub epoch_year: f64,
    /// Normal-field coefficients (full vector, internal block) whose functional is taken off
    /// potential and radial-gradient observations; `None` when no normal field is used.
    normal: Option<Vec<f64>>,
    table: LegendreTable,
    /// Start of each order's column in the order-major copy used for derivatives.
    column_base: Vec<usize>,
    /// 1/sqrt(2l+1) per degree for Schmidt unknowns, 1 otherwise.
    normalization: Vec<f64>,
}

/// Working memory of one thread building rows.
#[derive(Debug, Clone)]
pub struct RowScratch {
    p: Vec<f64>,
    columns: Vec<f64>,
    d_theta: Vec<f64>,
    /// B_r, B_θ, B_λ rows (magnetic) or the scalar row in `components[0]`.
    components: [Vec<f64>; 3],
    /// The combined full row.
    pub row: Vec<f64>,
}

impl RowBuilder {
    /// `normal_zonals` are (degree, C̄) pairs of the normal potential in the model's terms
    /// (see `field::normal_field::NormalField::zonals_for`).
    pub fn new(
        space: ModelSpace,
        layout: ParameterLayout,
        epoch_year: f64,
        normal_zonals: &[(usize, f64)],
    ) -> RowBuilder {
        let lmax = layout
            .internal
            .lmax
            .max(layout.external.as_ref().map_or(0, |e| e.lmax));
        let mut column_base = Vec::with_capacity(lmax + 3);
        let mut next = 0;
        for m in 0..=lmax + 1 {
            column_base.push(next);
            next += (lmax + 1).saturating_sub(m);
        }
        column_base.push(next);
        let normalization = (0..=lmax)
            .map(|l| match space {
                ModelSpace::Magnetic { .. } => 1.0 / ((2 * l + 1) as f64).sqrt(),
                _ => 1.0,
            })
            .collect();
        let normal = (!normal_zonals.is_empty()).then(|| {
            let mut x = vec![0.0; layout.full_len()];
            for &(l, c) in normal_zonals {
                if l <= layout.internal.lmax {
                    x[layout.internal.c_index(l, 0)] = c;
                }
            }
            x
        });
        RowBuilder {
            space,
            layout,
            epoch_year,
            normal,
            table: LegendreTable::new(lmax),
            column_base,
            normalization,
        }
    }

    fn table_lmax(&self) -> usize {
        self.table.lmax
    }

    pub fn scratch(&self) -> RowScratch {
        let n = self.layout.full_len();
        let lmax = self.table_lmax();
        RowScratch {
            p: vec![0.0; crate::coeffs::packed_len(lmax)],
            columns: vec![0.0; self.column_base[lmax + 2]],
            d_theta: vec![0.0; crate::coeffs::packed_len(lmax)],
            components: [vec![0.0; n], vec![0.0; n], vec![0.0; n]],
            row: vec![0.0; n],
        }
    }

    /// Writes the full row of `o` into `scratch.row` and returns the part of the observation
    /// explained by fixed terms (the normal field), which the caller takes off the value.
    /// `current` is the full unknown vector at which F rows are linearised (needed for F).
    pub fn fill(
        &self,
        o: &Observation,
        current: Option<&[f64]>,
        sc: &mut RowScratch,
    ) -> Result<f64> {
        match self.space {
            ModelSpace::Generic { .. } | ModelSpace::Gravity(_) => self.fill_scalar(o, sc),
            ModelSpace::Magnetic { .. } => {
                self.fill_components(o, sc)?;
                let w = match FieldVector::linear_weights(o.quantity, o.position.tilt_rad) {
                    Some(w) => w,
                    None => {
                        let x = current.ok_or_else(|| {
                            Error::invalid(
                                "internal: a total-intensity row needs a model to linearise at",
                            )
                        })?;
                        let b: Vec<f64> = sc.components.iter().map(|r| dot(r, x)).collect();
                        let f = (b[0] * b[0] + b[1] * b[1] + b[2] * b[2]).sqrt();
                        if f == 0.0 {
                            return Err(Error::invalid(
                                "the model to linearise F at has no field at an observation; give a start model with a field",
                            ));
                        }
                        [b[0] / f, b[1] / f, b[2] / f]
                    }
                };
                let RowScratch {
                    components, row, ..
                } = sc;
                for (k, r) in row.iter_mut().enumerate() {
                    *r =
                        w[0] * components[0][k] + w[1] * components[1][k] + w[2] * components[2][k];
                }
                Ok(0.0)
            }
        }
    }

    /// The model's value of observation `o` for the full unknown vector `x`.
    pub fn predict(&self, o: &Observation, x: &[f64], sc: &mut RowScratch) -> Result<f64> {
        if o.quantity == Quantity::F {
            self.fill_components(o, sc)?;
            let b: Vec<f64> = sc.components.iter().map(|r| dot(r, x)).collect();
            return Ok((b[0] * b[0] + b[1] * b[1] + b[2] * b[2]).sqrt());
        }
        let offset = self.fill(o, Some(x), sc)?;
        Ok(dot(&sc.row, x) + offset)
    }

    fn angles(o: &Observation) -> (f64, f64, f64) {
        let theta = o.position.colatitude_rad;
        let (u, t) = theta.sin_cos();
        (t, u.abs(), o.position.longitude_rad)
    }

    fn continuation(&self, o: &Observation, lmax: usize) -> Result<(f64, Vec<f64>)> {
        let r_ref = self.space.reference_radius_m();
        let r = o.position.radius_m;
        let c = radial_factors(lmax, r_ref, r, &FORWARD)?;
        Ok((r_ref / r, c))
    }

    /// Whether every row is a scalar functional k_l(r) P̄_lm (cos mλ | sin mλ) of the internal
    /// coefficients alone (plain values and gravity, no rates or external terms).
    pub fn rows_are_scalar(&self) -> bool {
        !matches!(self.space, ModelSpace::Magnetic { .. })
            && !self.layout.secular_variation
            && self.layout.external.is_none()
    }

    /// The Legendre recursion table of the rows.
    pub fn legendre_table(&self) -> &LegendreTable {
        &self.table
    }

    /// (cos θ, sin θ, λ) of an observation.
    pub fn angles_of(o: &Observation) -> (f64, f64, f64) {
        Self::angles(o)
    }

    /// The degree factors of `quantity` split as k_l(s) = g_l s^e s^{l+1} (s = R/r), with
    /// (g_l, e) returned: the form every scalar factor of [`scalar_factors`] has (the
    /// continuation (R/r)^{l+1} times a degree term and a power of s). Found from
    /// [`scalar_factors`] itself at s = 1 and checked at s = 2 and s = 1/2, so it cannot drift
    /// from that definition; `None` when the factors are not of that form (then use
    /// [`RowBuilder::scalar_degree_factors`] per observation).
    pub fn scalar_degree_profile(&self, quantity: Quantity) -> Option<(Vec<f64>, i32)> {
        let lmax = self.layout.internal.lmax;
        let scale = match self.space {
            ModelSpace::Gravity(scale) => Some(scale),
            _ => None,
        };
        let factors = |s: f64| {
            let c: Vec<f64> = (0..=lmax).map(|l| s.powi(l as i32 + 1)).collect();
            scalar_factors(quantity, scale, s, &c)
        };
        let g = factors(1.0)?;
        let l_ref = g.iter().position(|v| *v != 0.0)?;
        let ratio = factors(2.0)?[l_ref] / (g[l_ref] * 2f64.powi(l_ref as i32 + 1));
        let e = ratio.log2().round();
        if !(0.0..=8.0).contains(&e) || ratio != 2f64.powi(e as i32) {
            return None;
        }
        let e = e as i32;
        for s in [2.0, 0.5] {
            let k = factors(s)?;
            let agree = k.iter().zip(&g).enumerate().all(|(l, (kl, gl))| {
                let expected = gl * s.powi(e + l as i32 + 1);
                (kl - expected).abs() <= 1e-14 * expected.abs()
            });
            if !agree {
                return None;
            }
        }
        Some((g, e))
    }

    /// The degree factors k_l (l = 0..L) of a scalar observation at its own radius: row(C_lm)
    /// = k_l P̄_lm cos mλ, row(S_lm) = k_l P̄_lm sin mλ.
    pub fn scalar_degree_factors(&self, o: &Observation) -> Result<Vec<f64>> {
        let (s, c) = self.continuation(o, self.layout.internal.lmax)?;
        let scale = match self.space {
            ModelSpace::Gravity(scale) => Some(scale),
            _ => None,
        };
        scalar_factors(o.quantity, scale, s, &c).ok_or_else(|| {
            Error::invalid(format!(
                "internal: quantity `{}` has no scalar degree factors",
                o.quantity
            ))
        })
    }

    fn fill_scalar(&self, o: &Observation, sc: &mut RowScratch) -> Result<f64> {
        let layout = &self.layout.internal;
        let lmax = layout.lmax;
        let (t, u, lambda) = Self::angles(o);
        self.table.fill(t, u, &mut sc.p);
        let k = self.scalar_degree_factors(o)?;
        sc.row.iter_mut().for_each(|v| *v = 0.0);
        for m in 0..=lmax {
            let (sm, cm) = (m as f64 * lambda).sin_cos();
            for (l, kl) in k.iter().enumerate().skip(m) {
                let v = kl * sc.p[packed_index(l, m)];
                sc.row[layout.c_index(l, m)] = v * cm;
                if m > 0 {
                    sc.row[layout.s_index(l, m)] = v * sm;
                }
            }
        }
        Ok(match self.normal_reduction(o.quantity) {
            Some(x) => dot(&sc.row, x),
            None => 0.0,
        })
    }

    /// The normal-field coefficients (full unknown vector) whose functional is taken off
    /// observations of `quantity`: potential and radial-gradient rows when a normal field is
    /// used (the other gravity quantities are disturbances or anomalies already).
    pub fn normal_reduction(&self, quantity: Quantity) -> Option<&[f64]> {
        let reduces = matches!(quantity, Quantity::Potential | Quantity::RadialGradient);
        self.normal.as_deref().filter(|_| reduces)
    }

    /// dP̄_lm/dθ for all (l, m) ≤ the table's degree, packed, from the values in `sc.p`.
    fn fill_theta_derivatives(&self, sc: &mut RowScratch) {
        let lmax = self.table_lmax();
        let base = &self.column_base;
        for (m, &start) in base.iter().enumerate().take(lmax + 1) {
            for l in m..=lmax {
                sc.columns[start + l - m] = sc.p[packed_index(l, m)];
            }
        }
        #[allow(clippy::needless_range_loop)] // m indexes three columns at once
        for m in 0..=lmax {
            let below = if m > 0 {
                &sc.columns[base[m - 1]..base[m]]
            } else {
                &[][..]
            };
            let above = &sc.columns[base[m + 1]..base[m + 2]];
            let d = derivative_from_neighbours(m, lmax, below, above);
            for l in m..=lmax {
                sc.d_theta[packed_index(l, m)] = d[l - m];
            }
        }
    }

    /// The B_r, B_θ, B_λ rows of `o` into `sc.components`.
    fn fill_components(&self, o: &Observation, sc: &mut RowScratch) -> Result<()> {
        let (t, u, lambda) = Self::angles(o);
        self.table.fill(t, u, &mut sc.p);
        self.fill_theta_derivatives(sc);
        let pole = Pole::at(o.position.colatitude_rad);
        for r in sc.components.iter_mut() {
            r.iter_mut().for_each(|v| *v = 0.0);
        }
        let internal = &self.layout.internal;
        let (s, c) = self.continuation(o, internal.lmax)?;
        let radial = magnetic_radial_factors(s, &c);
        let horizontal = magnetic_horizontal_factors(s, &c);
        self.component_block(internal, 0, &radial, &horizontal, lambda, u, pole, sc);
        if self.layout.secular_variation {
            let time = o.time_year.ok_or_else(|| {
                Error::invalid("internal: secular variation needs a time for every observation")
            })?;
            let dt = time - self.epoch_year;
            let (n, off) = (internal.len(), self.layout.rate_offset());
            for r in sc.components.iter_mut() {
                let (head, tail) = r.split_at_mut(off);
                tail[..n]
                    .iter_mut()
                    .zip(&head[..n])
                    .for_each(|(rate, v)| *rate = v * dt);
            }
        }
        if let Some(external) = &self.layout.external {
            let radial = magnetic_external_radial_factors(s, external.lmax);
            let horizontal = magnetic_external_horizontal_factors(s, external.lmax);
            let off = self.layout.external_offset();
            self.component_block(external, off, &radial, &horizontal, lambda, u, pole, sc);
        }
        Ok(())
    }

    /// One block's B_r, B_θ, B_λ rows with degree factors `radial` and `horizontal`.
    #[allow(clippy::too_many_arguments)]
    fn component_block(
        &self,
        layout: &UnknownLayout,
        offset: usize,
        radial: &[f64],
        horizontal: &[f64],
        lambda: f64,
        u: f64,
        pole: Option<Pole>,
        sc: &mut RowScratch,
    ) {
        let RowScratch {
            p,
            d_theta,
            components,
            ..
        } = sc;
        let [br, bt, bl] = components;
        for m in 0..=layout.lmax {
            let (sm, cm) = (m as f64 * lambda).sin_cos();
            for l in m..=layout.lmax {
                let n = self.normalization[l];
                let k = packed_index(l, m);
                let value = n * p[k];
                let dtheta = n * d_theta[k];
                // P_lm / sin θ, with its limit at a pole (only order 1 survives there)
                let over_sin = match pole {
                    Some(pole) if m == 1 => n * order_one_over_sin_at_pole(l, pole),
                    Some(_) => 0.0,
                    None => value / u,
                };
                let mf = m as f64;
                let ci = offset + layout.c_index(l, m);
                br[ci] = radial[l] * value * cm;
                bt[ci] = -horizontal[l] * dtheta * cm;
                bl[ci] = horizontal[l] * mf * over_sin * sm;
                if m > 0 {
                    let si = offset + layout.s_index(l, m);
                    br[si] = radial[l] * value * sm;
                    bt[si] = -horizontal[l] * dtheta * sm;
                    bl[si] = -horizontal[l] * mf * over_sin * cm;
                }
            }
        }
    }
}

pub(super) fn dot(a: &[f64], b: &[f64]) -> f64 {
    a.iter().zip(b).map(|(x, y)| x * y).sum()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::field::GeocentricPoint;

    fn obs(q: Quantity, lat: f64, lon: f64, r: f64) -> Observation {
        Observation {
            position: GeocentricPoint::from_degrees(lat, lon, r),
            quantity: q,
            value: 0.0,
            sigma: None,
            time_year: None,
            dataset: 0,
            source_line: 0,
        }
    }

    #[test]
    fn value_row_on_the_sphere_is_the_plain_design_row() {
        // The scalar reference row of `design::design_row` (P̄_lm cos mλ, P̄_lm sin mλ).
        let r = 6.0e6;
        let space = ModelSpace::Generic {
            reference_radius_m: r,
        };
        let builder = RowBuilder::new(space, ParameterLayout::new(6, false, None, &[]), 0.0, &[]);
        let mut sc = builder.scratch();
        let layout = UnknownLayout::new(6);
        let table = LegendreTable::new(6);
        let (mut p, mut row) = (vec![0.0; 28], vec![0.0; 49]);
        for (lat, lon) in [(12.0, 40.0), (-89.0, 3.0), (90.0, 10.0)] {
            builder
                .fill(&obs(Quantity::Value, lat, lon, r), None, &mut sc)
                .unwrap();
            super::super::design::design_row(&layout, &table, lat, lon, &mut p, &mut row);
            for (a, b) in sc.row.iter().zip(&row) {
                assert!((a - b).abs() < 1e-13, "{lat} {lon}");
            }
        }
    }
}
