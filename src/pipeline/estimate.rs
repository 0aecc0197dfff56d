//! Memory estimate of a job, printed before it runs and checked against the machine.
//!
//! Counts the big arrays only: Gauss grids (8 bytes per node, (L+1)·nlon nodes, nlon ≥ 2L+1),
//! least-squares normal matrices (8·n² bytes for n = (L+1)² unknowns, twice: matrix and factor)
//! and coefficient sets. Steps run one at a time except the syntheses of one level, so the peak
//! is the largest step plus the models kept for later steps.

use std::collections::BTreeMap;
use std::fmt::Write as _;

use super::config::Config;
use crate::sht::grid::fft_friendly_length;

/// Bytes of one Gauss grid for band limit `lmax`.
pub fn gauss_grid_bytes(lmax: usize) -> u64 {
    ((lmax + 1) * fft_friendly_length(2 * lmax + 1) * 8) as u64
}

/// Bytes of one coefficient set (C, S and their sigmas) to `lmax`.
pub fn coefficient_bytes(lmax: usize) -> u64 {
    (crate::coeffs::packed_len(lmax) * 4 * 8) as u64
}

/// Bytes of the normal matrix and its Cholesky factor of a fit to `lmax`.
pub fn normal_matrix_bytes(lmax: usize) -> u64 {
    let n = ((lmax + 1) * (lmax + 1)) as u64;
    2 * n * n * 8
}

/// Per-step estimates and the resulting peak.
#[derive(Debug, Clone, Default)]
pub struct MemoryEstimate {
    /// (step, what, bytes)
    pub items: Vec<(String, String, u64)>,
    pub peak_bytes: u64,
}

impl MemoryEstimate {
    pub fn describe(&self) -> String {
        let mut s = String::from("memory estimate (largest arrays per step):\n");
        for (step, what, bytes) in &self.items {
            let _ = writeln!(s, "  {step:<18} {:>10}  {what}", human_bytes(*bytes));
        }
        let _ = writeln!(s, "  peak about {}", human_bytes(self.peak_bytes));
        s
    }
}

/// "12.3 MiB"-style size.
pub fn human_bytes(bytes: u64) -> String {
    let b = bytes as f64;
    if b < 1024.0 {
        format!("{bytes} B")
    } else if b < 1024.0 * 1024.0 {
        format!("{:.1} KiB", b / 1024.0)
    } else if b < 1024.0 * 1024.0 * 1024.0 {
        format!("{:.1} MiB", b / 1024.0 / 1024.0)
    } else {
        format!("{:.2} GiB", b / 1024.0 / 1024.0 / 1024.0)
    }
}

/// Estimates every step of `config` given the model degrees known before the run.
pub fn estimate(config: &Config, model_lmax: &BTreeMap<String, usize>) -> MemoryEstimate {
    let mut items = Vec::new();
    let mut syntheses = 0u64;
    let mut largest = 0u64;
    for (name, step) in &config.steps {
        let model_l = step.model.as_ref().and_then(|m| model_lmax.get(m)).copied();
        let (what, bytes) = match step.kind.as_str() {
            "grid" => {
                let l = step.lmax.unwrap_or(0);
                (
                    format!("3 Gauss grids to degree {l}"),
                    3 * gauss_grid_bytes(l),
                )
            }
            "fit" => {
                let l = step.lmax.unwrap_or(0);
                (
                    format!("normal matrix and factor, {} unknowns", (l + 1) * (l + 1)),
                    normal_matrix_bytes(l),
                )
            }
            "analyse" => {
                let l = step.lmax.unwrap_or(0);
                (
                    "input grid and transform".to_string(),
                    2 * gauss_grid_bytes(l),
                )
            }
            "synthesize" => {
                let l = step.grid_lmax.or(model_l).unwrap_or(0);
                let n = step.quantities.as_ref().map_or(1, Vec::len) as u64;
                let b = (n + 1) * gauss_grid_bytes(l);
                syntheses += b;
                (format!("{n} maps on a degree-{l} Gauss grid"), b)
            }
            _ => continue,
        };
        largest = largest.max(bytes);
        items.push((name.clone(), what, bytes));
    }
    let models: u64 = model_lmax.values().map(|&l| coefficient_bytes(l)).sum();
    MemoryEstimate {
        items,
        peak_bytes: largest.max(syntheses) + models,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_follow_the_formulas() {
        // degree 10: 11 rows × 24 columns (smallest 2,3,5-smooth length ≥ 21) × 8 bytes
        assert_eq!(gauss_grid_bytes(10), 11 * 24 * 8);
        // degree 40: 1681 unknowns, 2 matrices of 1681² doubles
        assert_eq!(normal_matrix_bytes(40), 2 * 1681 * 1681 * 8);
        assert_eq!(human_bytes(3 * 1024 * 1024), "3.0 MiB");
    }
}
