//! Double-double arithmetic (a value as an unevaluated sum hi + lo of two doubles, about 106
//! bits): Dekker 1971, "A floating-point technique for extending the available precision",
//! Numer. Math. 18:224–242. Only the operations the Gauss–Legendre rules need.

#[derive(Clone, Copy, Debug)]
pub(super) struct Dd {
    pub(super) hi: f64,
    pub(super) lo: f64,
}

impl Dd {
    pub(super) fn new(x: f64) -> Self {
        Dd { hi: x, lo: 0.0 }
    }
    pub(super) fn from_parts(hi: f64, lo: f64) -> Self {
        Dd::quick_two_sum(hi, lo)
    }
    pub(super) fn to_f64(self) -> f64 {
        self.hi + self.lo
    }
    fn two_sum(a: f64, b: f64) -> Dd {
        let s = a + b;
        let bb = s - a;
        Dd {
            hi: s,
            lo: (a - (s - bb)) + (b - bb),
        }
    }
    fn quick_two_sum(a: f64, b: f64) -> Dd {
        let s = a + b;
        Dd {
            hi: s,
            lo: b - (s - a),
        }
    }
    /// Exact product a·b = hi + lo: by FMA, or by Dekker's splitting (Dekker 1971).
    #[inline(always)]
    pub(super) fn two_prod<const FMA: bool>(a: f64, b: f64) -> Dd {
        let p = a * b;
        if FMA {
            return Dd {
                hi: p,
                lo: a.mul_add(b, -p),
            };
        }
        const SPLIT: f64 = 134_217_729.0; // 2^27 + 1
        let (ah, al) = {
            let t = SPLIT * a;
            let h = t - (t - a);
            (h, a - h)
        };
        let (bh, bl) = {
            let t = SPLIT * b;
            let h = t - (t - b);
            (h, b - h)
        };
        Dd {
            hi: p,
            lo: ((ah * bh - p) + ah * bl + al * bh) + al * bl,
        }
    }
    pub(super) fn add(self, o: Dd) -> Dd {
        let s = Dd::two_sum(self.hi, o.hi);
        Dd::quick_two_sum(s.hi, s.lo + (self.lo + o.lo))
    }
    pub(super) fn sub(self, o: Dd) -> Dd {
        self.add(Dd {
            hi: -o.hi,
            lo: -o.lo,
        })
    }
    /// Double-double product (Dekker 1971), dropping the lo·lo term.
    #[inline(always)]
    pub(super) fn mul<const FMA: bool>(self, o: Dd) -> Dd {
        let p = Dd::two_prod::<FMA>(self.hi, o.hi);
        Dd::quick_two_sum(p.hi, p.lo + (self.hi * o.lo + self.lo * o.hi))
    }
    /// Quotient by a double: one correction step of the leading quotient.
    pub(super) fn div_f64(self, b: f64) -> Dd {
        let q1 = self.hi / b;
        let r = self.sub(Dd::two_prod::<false>(q1, b));
        let q2 = r.hi / b;
        Dd::quick_two_sum(q1, q2)
    }
    /// Quotient by a double-double: two correction steps of the leading quotient.
    pub(super) fn div(self, b: Dd) -> Dd {
        let q1 = self.hi / b.hi;
        let r = self.sub(b.mul::<false>(Dd::new(q1)));
        let q2 = r.hi / b.hi;
        let r = r.sub(b.mul::<false>(Dd::new(q2)));
        let q3 = r.hi / b.hi;
        Dd::quick_two_sum(q1, q2).add(Dd::new(q3))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn products_and_quotients_keep_the_low_part() {
        // common practice: 1/3 in double-double is 1/3 to about 1e-32, so 3·(1/3) − 1 vanishes
        // to that level, while in plain doubles fl(1/3)·3 − 1 is −5.6e-17 before rounding.
        let third = Dd::new(1.0).div_f64(3.0);
        let back = third.mul::<false>(Dd::new(3.0)).sub(Dd::new(1.0));
        assert!(back.to_f64().abs() < 1e-31, "{:?}", back);
        let third_dd = Dd::new(1.0).div(Dd::new(3.0));
        assert!((third_dd.hi - third.hi).abs() == 0.0 && (third_dd.lo - third.lo).abs() < 1e-32);
        // FMA and Dekker's splitting give the same exact error term
        let (a, b) = (0.1f64, 3.7f64);
        let (f, d) = (Dd::two_prod::<true>(a, b), Dd::two_prod::<false>(a, b));
        assert_eq!((f.hi, f.lo), (d.hi, d.lo));
        assert!(f.lo != 0.0);
    }
}
