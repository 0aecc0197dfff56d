//! Butterworth low-pass filter in the degree domain.
//!
//! Amplitude response of order N and corner degree L0 (Butterworth 1930, "On the theory of
//! filter amplifiers", Wireless Engineer 7:536–541; common practice in the degree domain):
//!
//!   W_l = 1 / sqrt(1 + (l/L0)^{2N}),
//!
//! applied to the coefficients, so that the degree variance is multiplied by W_l² =
//! 1/(1 + (l/L0)^{2N}) and falls to one half at l = L0.

use crate::error::{Error, Result};

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Butterworth {
    /// Corner degree L0 (> 0), where W = 1/√2.
    pub corner_degree: f64,
    /// Order N (≥ 1): the response falls like (L0/l)^N beyond the corner.
    pub order: u32,
}

impl Butterworth {
    pub fn new(corner_degree: f64, order: u32) -> Result<Self> {
        if !(corner_degree.is_finite() && corner_degree > 0.0) {
            return Err(Error::invalid(format!(
                "butterworth:{corner_degree},{order}: corner degree L0 must be a positive number"
            )));
        }
        if order == 0 {
            return Err(Error::invalid(format!(
                "butterworth:{corner_degree},{order}: order N must be at least 1"
            )));
        }
        Ok(Butterworth {
            corner_degree,
            order,
        })
    }

    pub fn weights(&self, lmax: usize) -> Vec<f64> {
        let two_n = 2.0 * self.order as f64;
        (0..=lmax)
            .map(|l| {
                // (l/L0)^{2N} via exp/ln so that large N at large l saturates to 0 cleanly
                let x = l as f64 / self.corner_degree;
                let p = if l == 0 { 0.0 } else { (two_n * x.ln()).exp() };
                1.0 / (1.0 + p).sqrt()
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn response_at_corner_and_far_beyond() {
        // Butterworth amplitude response: 1/√2 at the corner, ~ (L0/l)^N far beyond it
        let f = Butterworth::new(30.0, 4).unwrap();
        let w = f.weights(300);
        assert_eq!(w[0], 1.0);
        assert!((w[30] - std::f64::consts::FRAC_1_SQRT_2).abs() < 1e-15);
        let expect = 1.0 / (1.0 + 10f64.powi(8)).sqrt();
        assert!((w[300] - expect).abs() < 1e-15 * expect.max(1e-300) * 10.0);
        assert!(w.windows(2).all(|p| p[1] < p[0]));
    }

    #[test]
    fn rejects_bad_parameters() {
        assert!(Butterworth::new(0.0, 2).is_err());
        let msg = Butterworth::new(20.0, 0).unwrap_err().to_string();
        assert!(
            msg.contains("butterworth:20,0") && msg.contains("order"),
            "{msg}"
        );
    }
}
