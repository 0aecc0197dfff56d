//! Degree-band filters with raised-cosine (Hann) tapers.
//!
//! A falling taper over degrees L1..L2 (L1 < L2) is
//!   W_l = 1 for l ≤ L1,  ½(1 + cos(π (l − L1)/(L2 − L1))) for L1 < l < L2,  0 for l ≥ L2,
//! and a rising taper is its complement ½(1 − cos(…)). With L1 = L2 = L the cut is ideal and
//! inclusive on the kept side: `lowpass:L-L` keeps degrees 0..=L, `highpass:L-L` keeps degrees
//! ≥ L. For L1 < L2, `lowpass:L1-L2` and `highpass:L1-L2` add up to 1 at every degree, so they
//! split a field into two parts that sum back to it (common practice).

use crate::error::{Error, Result};

/// Weight of a falling raised-cosine taper from 1 at `l1` to 0 at `l2` (ideal, inclusive cut
/// when `l1 == l2`).
pub fn falling(l: usize, l1: usize, l2: usize) -> f64 {
    if l <= l1 {
        1.0
    } else if l >= l2 {
        0.0
    } else {
        let x = (l - l1) as f64 / (l2 - l1) as f64;
        0.5 * (1.0 + (std::f64::consts::PI * x).cos())
    }
}

/// Weight of a rising raised-cosine taper from 0 at `l1` to 1 at `l2` (ideal, inclusive cut
/// when `l1 == l2`: 0 below `l1`, 1 from `l1` on).
pub fn rising(l: usize, l1: usize, l2: usize) -> f64 {
    if l < l1 {
        0.0
    } else if l >= l2 {
        1.0
    } else {
        1.0 - falling(l, l1, l2)
    }
}

fn check_order(kind: &str, degrees: &[usize]) -> Result<()> {
    const NAMES: [&str; 4] = ["L1", "L2", "L3", "L4"];
    for i in 1..degrees.len() {
        if degrees[i - 1] > degrees[i] {
            let spec = degrees
                .iter()
                .map(|d| d.to_string())
                .collect::<Vec<_>>()
                .join("-");
            return Err(Error::invalid(format!(
                "{kind}:{spec}: {} must not exceed {}",
                NAMES[i - 1],
                NAMES[i]
            )));
        }
    }
    Ok(())
}

/// Keeps the low degrees: 1 up to L1, cosine taper to 0 at L2.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Lowpass {
    pub l1: usize,
    pub l2: usize,
}

impl Lowpass {
    pub fn new(l1: usize, l2: usize) -> Result<Self> {
        check_order("lowpass", &[l1, l2])?;
        Ok(Lowpass { l1, l2 })
    }

    pub fn weights(&self, lmax: usize) -> Vec<f64> {
        (0..=lmax).map(|l| falling(l, self.l1, self.l2)).collect()
    }
}

/// Keeps the high degrees: 0 up to L1, cosine taper to 1 at L2.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Highpass {
    pub l1: usize,
    pub l2: usize,
}

impl Highpass {
    pub fn new(l1: usize, l2: usize) -> Result<Self> {
        check_order("highpass", &[l1, l2])?;
        Ok(Highpass { l1, l2 })
    }

    pub fn weights(&self, lmax: usize) -> Vec<f64> {
        (0..=lmax).map(|l| rising(l, self.l1, self.l2)).collect()
    }
}

/// Keeps a band: rising taper L1..L2, flat L2..L3, falling taper L3..L4.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Bandpass {
    pub l1: usize,
    pub l2: usize,
    pub l3: usize,
    pub l4: usize,
}

impl Bandpass {
    pub fn new(l1: usize, l2: usize, l3: usize, l4: usize) -> Result<Self> {
        check_order("bandpass", &[l1, l2, l3, l4])?;
        Ok(Bandpass { l1, l2, l3, l4 })
    }

    pub fn weights(&self, lmax: usize) -> Vec<f64> {
        (0..=lmax)
            .map(|l| rising(l, self.l1, self.l2) * falling(l, self.l3, self.l4))
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ideal_cuts_are_inclusive() {
        let lo = Lowpass::new(5, 5).unwrap().weights(8);
        assert_eq!(lo, vec![1., 1., 1., 1., 1., 1., 0., 0., 0.]);
        let hi = Highpass::new(5, 5).unwrap().weights(8);
        assert_eq!(hi, vec![0., 0., 0., 0., 0., 1., 1., 1., 1.]);
        let band = Bandpass::new(2, 2, 4, 4).unwrap().weights(6);
        assert_eq!(band, vec![0., 0., 1., 1., 1., 0., 0.]);
    }

    #[test]
    fn taper_midpoint_is_one_half() {
        // raised cosine (Hann) taper, common practice: ½ half-way, symmetric about it
        let w = Lowpass::new(10, 20).unwrap().weights(30);
        assert!((w[15] - 0.5).abs() < 1e-15);
        assert!((w[12] + w[18] - 1.0).abs() < 1e-15);
        assert!((w[12] - 0.5 * (1.0 + (0.2 * std::f64::consts::PI).cos())).abs() < 1e-15);
        assert_eq!((w[10], w[20]), (1.0, 0.0));
    }

    #[test]
    fn tapered_low_and_high_pass_are_complementary() {
        let lo = Lowpass::new(7, 19).unwrap().weights(40);
        let hi = Highpass::new(7, 19).unwrap().weights(40);
        for l in 0..=40 {
            assert!((lo[l] + hi[l] - 1.0).abs() < 1e-15, "l={l}");
        }
    }

    #[test]
    fn order_errors_name_the_spec() {
        let msg = Lowpass::new(50, 40).unwrap_err().to_string();
        assert_eq!(msg, "lowpass:50-40: L1 must not exceed L2");
        let msg = Bandpass::new(10, 20, 15, 30).unwrap_err().to_string();
        assert!(msg.contains("bandpass:10-20-15-30") && msg.contains("L2 must not exceed L3"));
    }
}
