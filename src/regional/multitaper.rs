//! Localised spectra by the multitaper method on the sphere (Wieczorek & Simons 2005, Geophys.
//! J. Int. 162:655–675; Wieczorek & Simons 2007, J. Fourier Anal. Appl. 13:665–692).
//!
//! Each window h_k of a [`TaperSet`] multiplies the field in space, Φ_k = h_k f (a product on
//! a Gauss grid of degree L + L_W, exact for the band limits involved), and the degree variance
//! of Φ_k is one single-taper estimate Ŝ_k(l). The multitaper estimate is their mean over the K
//! windows, Ŝ(l) = (1/K) Σ_k Ŝ_k(l), and its uncertainty the standard error of that mean from
//! the scatter, σ(l) = √(Σ_k (Ŝ_k(l) − Ŝ(l))² / (K (K − 1))) (the single-taper estimates are
//! nearly uncorrelated for a stationary field; WS 2007). Cross-power Ŝ^{AB} likewise;
//! correlation Ŝ^{AB}/√(Ŝ^A Ŝ^B) and admittance Ŝ^{AB}/Ŝ^B get their uncertainty from the
//! delete-one jackknife over the windows (Thomson & Chave 1991, in *Advances in Spectrum
//! Analysis and Array Processing*, vol. 1, 58–113).
//!
//! The windows have unit mean square, so for a stationary field Ŝ(l) estimates the global
//! degree variance where it varies slowly over L_W degrees ([`super::coupling`] gives the exact
//! expectation for any global spectrum). Degrees below L_W and above L − L_W are marked
//! unreliable: there the window's bandwidth reaches outside the degrees the model holds or the
//! coupling spreads power over a range comparable to the degree itself.

use ndarray::Array2;

use super::tapers::TaperSet;
use crate::coeffs::Coefficients;
use crate::error::{Error, Result};
use crate::progress::Progress;
use crate::sht::{GaussGrid, TransformPlan};
use crate::spectral::degree_power::sum_of_squares;

/// Which windows of a set to use.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum TaperChoice {
    /// The first K windows (best concentrated).
    Count(usize),
    /// Every window with concentration at least this.
    MinConcentration(f64),
}

impl TaperChoice {
    /// The number of windows of `set` this choice takes; an error when none qualify.
    pub fn count(&self, set: &TaperSet) -> Result<usize> {
        let k = match *self {
            TaperChoice::Count(k) => {
                if k == 0 || k > set.tapers.len() {
                    return Err(Error::invalid(format!(
                        "asked for {k} windows but the region's set has {} (bandwidth {}, Shannon number {:.1})",
                        set.tapers.len(),
                        set.lmax_window,
                        set.shannon_number
                    )));
                }
                k
            }
            TaperChoice::MinConcentration(c) => set.count_at_least(c),
        };
        if k == 0 {
            return Err(Error::invalid(format!(
                "no window of bandwidth {} reaches the concentration asked for in {} (Shannon number {:.2}); use a larger region or window degree",
                set.lmax_window, set.region, set.shannon_number
            )));
        }
        Ok(k)
    }
}

/// Single-taper and multitaper estimates of one per-degree quantity.
#[derive(Debug, Clone, PartialEq)]
pub struct Estimate {
    /// Multitaper value per degree.
    pub value: Vec<f64>,
    /// Its standard error per degree (NaN with a single window).
    pub sigma: Vec<f64>,
}

/// The localised spectrum of one model in one region.
#[derive(Debug, Clone, PartialEq)]
pub struct LocalisedSpectrum {
    /// Degrees 0..=lmax (the model's degree).
    pub lmax: usize,
    pub lmax_window: usize,
    /// Number of windows used and their concentrations.
    pub taper_count: usize,
    pub concentrations: Vec<f64>,
    pub region: String,
    pub units: String,
    pub power: Estimate,
    /// Ŝ_k(l) per window k (row k).
    pub single_taper_power: Vec<Vec<f64>>,
    /// Average degree variance of the windows used (for the coupling matrix).
    pub window_power: Vec<f64>,
    /// False below L_W and above L − L_W.
    pub reliable: Vec<bool>,
}

/// The localised comparison of two models in one region.
#[derive(Debug, Clone, PartialEq)]
pub struct LocalisedComparison {
    pub lmax: usize,
    pub lmax_window: usize,
    pub taper_count: usize,
    pub concentrations: Vec<f64>,
    pub region: String,
    pub power_a: Estimate,
    pub power_b: Estimate,
    pub cross_power: Estimate,
    pub correlation: Estimate,
    /// Ŝ^{AB}/Ŝ^B: A regressed on B, in units of A per unit of B.
    pub admittance: Estimate,
    pub reliable: Vec<bool>,
    pub units_a: String,
    pub units_b: String,
}

/// Degrees that a bandwidth-`lw` estimate from a degree-`lmax` model can be trusted at.
pub fn reliable_degrees(lmax: usize, lw: usize) -> Vec<bool> {
    (0..=lmax).map(|l| l >= lw && l + lw <= lmax).collect()
}

/// Bytes a localised estimate of a degree-`lmax` model with bandwidth-`lw` windows needs.
pub fn localised_memory_bytes(lmax: usize, lw: usize, fields: usize) -> u64 {
    let big = lmax + lw;
    let grid = ((big + 1) * crate::sht::grid::fft_friendly_length(2 * big + 1)) as u64;
    crate::sht::plan::plan_memory_bytes(big, big + 1, grid as usize / (big + 1))
        + (fields as u64 + 2) * grid * 8
}

/// Windowed fields' coefficients: for each window k and each model, the analysis of h_k f.
fn windowed_spectra(
    models: &[&Coefficients],
    set: &TaperSet,
    k: usize,
    progress: &dyn Progress,
) -> Result<Vec<Vec<Coefficients>>> {
    let lw = set.lmax_window;
    let lmax = models[0].lmax();
    if lw >= lmax {
        return Err(Error::invalid(format!(
            "the window degree {lw} must be below the model's degree {lmax} (LW < L)"
        )));
    }
    for m in models {
        m.check_finite()?;
    }
    let big = lmax + lw;
    crate::memory::check_fits(
        &format!("localised spectra of degree {lmax} with windows of degree {lw}"),
        localised_memory_bytes(lmax, lw, models.len()),
    )?;
    let grid = GaussGrid::new(big);
    let plan = TransformPlan::new(big, &grid)?;
    let fields: Vec<Array2<f64>> = models
        .iter()
        .map(|m| plan.synthesise(m))
        .collect::<Result<_>>()?;
    progress.stage("windows", k as u64);
    let mut out = Vec::with_capacity(k);
    for taper in &set.tapers[..k] {
        let h = plan.synthesise(&taper.coeffs)?;
        let mut per_model = Vec::with_capacity(models.len());
        for f in &fields {
            let product = &h * f;
            per_model.push(plan.analyse(&product)?.resized(lmax));
        }
        out.push(per_model);
        progress.advance(1);
    }
    Ok(out)
}

fn mean_and_standard_error(rows: &[Vec<f64>]) -> Estimate {
    let k = rows.len();
    let n = rows[0].len();
    let mut value = vec![0.0; n];
    let mut sigma = vec![f64::NAN; n];
    for l in 0..n {
        let mean = rows.iter().map(|r| r[l]).sum::<f64>() / k as f64;
        value[l] = mean;
        if k > 1 {
            let ss: f64 = rows.iter().map(|r| (r[l] - mean).powi(2)).sum();
            sigma[l] = (ss / (k * (k - 1)) as f64).sqrt();
        }
    }
    Estimate { value, sigma }
}

/// Delete-one jackknife of a ratio-like statistic of the window means (Thomson & Chave 1991).
fn jackknife(
    a: &[Vec<f64>],
    b: &[Vec<f64>],
    c: &[Vec<f64>],
    statistic: impl Fn(f64, f64, f64) -> f64,
) -> Estimate {
    let k = a.len();
    let n = a[0].len();
    let mean = |rows: &[Vec<f64>], l: usize, skip: Option<usize>| {
        let (mut s, mut cnt) = (0.0, 0.0);
        for (i, r) in rows.iter().enumerate() {
            if Some(i) != skip {
                s += r[l];
                cnt += 1.0;
            }
        }
        s / cnt
    };
    let mut value = vec![0.0; n];
    let mut sigma = vec![f64::NAN; n];
    for l in 0..n {
        value[l] = statistic(mean(a, l, None), mean(b, l, None), mean(c, l, None));
        if k > 1 {
            let leave: Vec<f64> = (0..k)
                .map(|i| {
                    statistic(
                        mean(a, l, Some(i)),
                        mean(b, l, Some(i)),
                        mean(c, l, Some(i)),
                    )
                })
                .collect();
            let lm = leave.iter().sum::<f64>() / k as f64;
            let ss: f64 = leave.iter().map(|v| (v - lm).powi(2)).sum();
            sigma[l] = ((k - 1) as f64 / k as f64 * ss).sqrt();
        }
    }
    Estimate { value, sigma }
}

fn window_power(set: &TaperSet, k: usize) -> Vec<f64> {
    let mut avg = vec![0.0; set.lmax_window + 1];
    for t in &set.tapers[..k] {
        for (a, v) in avg.iter_mut().zip(sum_of_squares(&t.coeffs)) {
            *a += v / k as f64;
        }
    }
    avg
}

/// The multitaper localised spectrum of `model` with the first `k` windows of `set`.
pub fn localised_spectrum(
    model: &Coefficients,
    set: &TaperSet,
    choice: TaperChoice,
    progress: &dyn Progress,
) -> Result<LocalisedSpectrum> {
    let k = choice.count(set)?;
    let windowed = windowed_spectra(&[model], set, k, progress)?;
    let single: Vec<Vec<f64>> = windowed.iter().map(|w| sum_of_squares(&w[0])).collect();
    let lmax = model.lmax();
    Ok(LocalisedSpectrum {
        lmax,
        lmax_window: set.lmax_window,
        taper_count: k,
        concentrations: set.tapers[..k].iter().map(|t| t.concentration).collect(),
        region: set.region.clone(),
        units: model.units.clone(),
        power: mean_and_standard_error(&single),
        single_taper_power: single,
        window_power: window_power(set, k),
        reliable: reliable_degrees(lmax, set.lmax_window),
    })
}

/// The multitaper localised comparison of `a` (reference) and `b` in one region.
pub fn localised_comparison(
    a: &Coefficients,
    b: &Coefficients,
    set: &TaperSet,
    choice: TaperChoice,
    progress: &dyn Progress,
) -> Result<LocalisedComparison> {
    let lmax = a.lmax().min(b.lmax());
    let (a, b) = (a.resized(lmax), b.resized(lmax));
    let k = choice.count(set)?;
    let windowed = windowed_spectra(&[&a, &b], set, k, progress)?;
    let cross = |x: &Coefficients, y: &Coefficients| -> Vec<f64> {
        (0..=lmax)
            .map(|l| {
                (0..=l)
                    .map(|m| x.c(l, m) * y.c(l, m) + x.s(l, m) * y.s(l, m))
                    .sum()
            })
            .collect()
    };
    let saa: Vec<Vec<f64>> = windowed.iter().map(|w| sum_of_squares(&w[0])).collect();
    let sbb: Vec<Vec<f64>> = windowed.iter().map(|w| sum_of_squares(&w[1])).collect();
    let sab: Vec<Vec<f64>> = windowed.iter().map(|w| cross(&w[0], &w[1])).collect();
    let ratio = |num: f64, den: f64| if den > 0.0 { num / den } else { f64::NAN };
    Ok(LocalisedComparison {
        lmax,
        lmax_window: set.lmax_window,
        taper_count: k,
        concentrations: set.tapers[..k].iter().map(|t| t.concentration).collect(),
        region: set.region.clone(),
        power_a: mean_and_standard_error(&saa),
        power_b: mean_and_standard_error(&sbb),
        cross_power: mean_and_standard_error(&sab),
        correlation: jackknife(&saa, &sbb, &sab, |x, y, c| ratio(c, (x * y).sqrt())),
        admittance: jackknife(&saa, &sbb, &sab, |_, y, c| ratio(c, y)),
        reliable: reliable_degrees(lmax, set.lmax_window),
        units_a: a.units.clone(),
        units_b: b.units.clone(),
    })
}
