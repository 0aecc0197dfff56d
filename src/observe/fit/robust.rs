//! Robust weights for iteratively reweighted least squares.
//!
//! Huber's weight (Huber 1981, *Robust Statistics*, Wiley, §7.8): a row whose standardised
//! residual v = r/σ exceeds C in size keeps a weight factor C/|v|, the others 1; the fit is
//! repeated with the new weights until they settle.

use crate::error::{Error, Result};

/// A robust weight function.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Robust {
    /// Huber's weight with threshold C (in units of σ).
    Huber { threshold: f64 },
}

impl Robust {
    /// Parses `huber:C` (C > 0, e.g. `huber:1.5`).
    pub fn parse(spec: &str) -> Result<Robust> {
        let lower = spec.trim().to_ascii_lowercase();
        let bad = |why: &str| {
            Error::invalid(format!(
                "--robust `{spec}`: {why}; expected huber:C with C > 0 (in units of sigma), e.g. huber:1.5"
            ))
        };
        let Some(rest) = lower.strip_prefix("huber:") else {
            return Err(bad("unknown form"));
        };
        let c: f64 = rest
            .trim()
            .parse()
            .map_err(|_| bad(&format!("`{rest}` is not a number")))?;
        if !(c.is_finite() && c > 0.0) {
            return Err(bad("C must be a positive number"));
        }
        Ok(Robust::Huber { threshold: c })
    }

    /// The weight factor for a standardised residual.
    pub fn weight(&self, standardised_residual: f64) -> f64 {
        match *self {
            Robust::Huber { threshold } => {
                let a = standardised_residual.abs();
                if a <= threshold {
                    1.0
                } else {
                    threshold / a
                }
            }
        }
    }

    pub fn describe(&self) -> String {
        match self {
            Robust::Huber { threshold } => format!("Huber weights, C = {threshold} σ"),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn huber_weights() {
        // Huber (1981): w = 1 inside the threshold, C/|v| outside.
        let h = Robust::parse("huber:2").unwrap();
        assert_eq!(h.weight(1.5), 1.0);
        assert_eq!(h.weight(-4.0), 0.5);
        assert!(Robust::parse("huber:-1").is_err());
        assert!(Robust::parse("tukey:3").is_err());
    }
}
