//! Tick positions and labels for axes and colour bars.

/// About `count` "nice" tick values (multiples of [`nice_step`]) inside [lo, hi].
pub fn nice_ticks(lo: f64, hi: f64, count: usize) -> Vec<f64> {
    if !lo.is_finite() || !hi.is_finite() || hi <= lo {
        return vec![lo];
    }
    multiples_inside(lo, hi, nice_step((hi - lo) / count.max(1) as f64))
}

/// Smallest 1, 2 or 5 × 10^k not below `raw` (common practice for axis steps). The comparison
/// allows a relative 1e-12 so that a `raw` that is a round step up to rounding keeps it.
pub fn nice_step(raw: f64) -> f64 {
    let base = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * base)
        .find(|s| *s >= raw * (1.0 - 1e-12))
        .unwrap_or(10.0 * base)
}

/// The multiples of `step` inside [lo, hi].
pub fn multiples_inside(lo: f64, hi: f64, step: f64) -> Vec<f64> {
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|i| i as f64 * step).collect()
}

/// Short label: plain decimals between 0.01 and 10⁵, otherwise `1.5E-3` style.
pub fn format_tick(v: f64) -> String {
    let a = v.abs();
    if v == 0.0 {
        "0".into()
    } else if (0.01..1e5).contains(&a) {
        let s = format!("{v:.3}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        s.to_string()
    } else {
        let s = format!("{v:.1E}");
        s.replace(".0E", "E")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_inside() {
        assert_eq!(
            nice_ticks(0.0, 10.0, 5),
            vec![0.0, 2.0, 4.0, 6.0, 8.0, 10.0]
        );
        assert_eq!(nice_ticks(-3.2, 7.9, 6), vec![-2.0, 0.0, 2.0, 4.0, 6.0]);
        assert_eq!(nice_step(0.37), 0.5);
        assert_eq!(nice_step(2.0), 2.0);
        assert_eq!(nice_step(2.000_000_000_000_1), 2.0);
        assert_eq!(nice_step(7.0), 10.0);
        assert_eq!(format_tick(2.5), "2.5");
        assert_eq!(format_tick(-40.0), "-40");
        assert_eq!(format_tick(0.00012), "1.2E-4");
    }
}
