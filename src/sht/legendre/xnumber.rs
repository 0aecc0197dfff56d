//! Extended-exponent numbers ("X-numbers") after Fukushima (2012), "Numerical computation of
//! spherical harmonics of arbitrary degree and order by extending exponent of floating point
//! numbers", J. Geodesy 86:271–285.
//!
//! A value is `mant · B^k` with B = 2^960 and an integer k; `mant` is kept in [B^-½, B^½) so a
//! product of two mantissas never leaves the double range. This carries P̄_mm = c_m · sin^m θ
//! near the poles, where sin^m θ underflows a double long before the column becomes large again.

/// B = 2^960.
pub const BIG: f64 = 9.7453140114e+288;
/// B^-1 = 2^-960.
pub const BIG_INV: f64 = 1.0261342003245941e-289;
/// B^½ = 2^480.
pub const BIG_SQRT: f64 = 3.1217485503159922e+144;
/// B^-½ = 2^-480.
pub const BIG_SQRT_INV: f64 = 3.2033329522929615e-145;

/// `mant · 2^(960 k)`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct XNumber {
    pub mant: f64,
    pub k: i32,
}

impl XNumber {
    pub const ZERO: XNumber = XNumber { mant: 0.0, k: 0 };

    /// A plain double as an X-number (normalised).
    pub fn from_f64(x: f64) -> Self {
        XNumber { mant: x, k: 0 }.normalized()
    }

    /// Brings the mantissa back into [B^-½, B^½) (zero stays zero).
    #[inline]
    pub fn normalized(mut self) -> Self {
        if self.mant == 0.0 || !self.mant.is_finite() {
            return XNumber {
                mant: self.mant,
                k: 0,
            };
        }
        while self.mant.abs() >= BIG_SQRT {
            self.mant *= BIG_INV;
            self.k += 1;
        }
        while self.mant.abs() < BIG_SQRT_INV {
            self.mant *= BIG;
            self.k -= 1;
        }
        self
    }

    /// Product of two X-numbers (a named method rather than `*`: it renormalises).
    #[inline]
    #[allow(clippy::should_implement_trait)]
    pub fn mul(self, other: XNumber) -> XNumber {
        XNumber {
            mant: self.mant * other.mant,
            k: self.k + other.k,
        }
        .normalized()
    }

    /// Scales by a plain double of moderate size.
    #[inline]
    pub fn scale(self, f: f64) -> XNumber {
        XNumber {
            mant: self.mant * f,
            k: self.k,
        }
        .normalized()
    }

    /// The nearest double (0 when the value underflows, ±inf when it overflows).
    pub fn to_f64(self) -> f64 {
        match self.k {
            0 => self.mant,
            -1 => self.mant * BIG_INV,
            1 => self.mant * BIG,
            k if k < 0 => 0.0 * self.mant,
            _ => f64::INFINITY * self.mant.signum(),
        }
    }

    /// base2 logarithm of |x| (−inf for zero).
    pub fn log2_abs(self) -> f64 {
        self.mant.abs().log2() + 960.0 * self.k as f64
    }

    /// x^n by binary powering; each step rounds once, so the relative error is at most about
    /// 2·log2(n) ulp.
    pub fn powi(self, mut n: usize) -> XNumber {
        let mut result = XNumber::from_f64(1.0);
        let mut base = self;
        while n > 0 {
            if n & 1 == 1 {
                result = result.mul(base);
            }
            n >>= 1;
            if n > 0 {
                base = base.mul(base);
            }
        }
        result
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constants_are_powers_of_two() {
        // common practice: 2^960 · 2^-960 = 1 exactly
        assert_eq!(BIG * BIG_INV, 1.0);
        // the decimal literals are exactly the powers of two (biased exponent, zero mantissa)
        assert_eq!(BIG.to_bits(), ((960 + 1023) as u64) << 52);
        assert_eq!(BIG_INV.to_bits(), ((1023 - 960) as u64) << 52);
        assert_eq!(BIG_SQRT.to_bits(), ((480 + 1023) as u64) << 52);
        assert_eq!(BIG_SQRT_INV.to_bits(), ((1023 - 480) as u64) << 52);
        assert_eq!(BIG_SQRT * BIG_SQRT, BIG);
        assert_eq!(BIG_SQRT_INV * BIG_SQRT_INV, BIG_INV);
    }

    #[test]
    fn power_far_below_double_range() {
        // 0.5^5000 = 2^-5000: exact in binary, far below the smallest double.
        let x = XNumber::from_f64(0.5).powi(5000);
        assert_eq!(x.log2_abs(), -5000.0);
        assert_eq!(x.to_f64(), 0.0);
        // 0.9^100 against the plain double (few ulp)
        let y = XNumber::from_f64(0.9).powi(100).to_f64();
        assert!((y / 0.9f64.powi(100) - 1.0).abs() < 1e-14);
    }
}
