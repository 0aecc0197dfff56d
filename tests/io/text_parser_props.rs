//! Property tests of the text coefficient-table parser: random input never panics, and any
//! table kugel writes reads back bit for bit.

use std::path::Path;

use kugel::coeffs::{Coefficients, Normalization};
use kugel::io::model::text::{model_text, parse_model_text};
use kugel::io::provenance::Provenance;
use proptest::prelude::*;

fn table_like_line() -> impl Strategy<Value = String> {
    prop_oneof![
        "[ -~]{0,40}",
        (0u32..12, 0u32..12, any::<f64>(), any::<f64>()).prop_map(|(l, m, c, s)| format!("{l} {m} {c:e} {s:e}")),
        (0u32..8, 0u32..8, -1e3f64..1e3).prop_map(|(l, m, c)| format!("gfc,{l},{m},{c},0,1e-9,1e-9")),
        "(normalization|lmax|units|reference_radius_m|gm_m3_s2|condon_shortley_phase) = [ -~]{0,12}",
        Just("99999999999999999999 0 1 0".to_string()),
        Just("100001 0 1 0".to_string()),
        Just("1 0 NaN 0".to_string()),
        Just("lmax = 18446744073709551616".to_string()),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, ..ProptestConfig::default() })]

    #[test]
    fn garbage_never_panics(lines in proptest::collection::vec(table_like_line(), 0..12), raw in "\\PC{0,200}") {
        let text = lines.join("\n");
        let _ = parse_model_text(&text, Path::new("fuzz.txt"));
        let _ = parse_model_text(&raw, Path::new("fuzz.txt"));
    }

    #[test]
    fn write_read_round_trip_is_exact(
        lmax in 0usize..9,
        seed in proptest::collection::vec(any::<f64>().prop_filter("finite", |x| x.is_finite()), 100),
        norm in 0usize..4,
        phase in any::<bool>(),
        sigmas in any::<bool>(),
    ) {
        let mut c = Coefficients::zeros(lmax, Normalization::ALL[norm]);
        c.condon_shortley = phase;
        c.reference_radius_m = 1.0 + seed[0].abs().min(1e300);
        let mut k = 1;
        for l in 0..=lmax {
            for m in 0..=l {
                c.set(l, m, seed[k % 100], seed[(k + 37) % 100]);
                k += 1;
            }
        }
        if sigmas {
            let n = c.len();
            c.set_sigmas((0..n).map(|i| seed[(i + 11) % 100].abs()).collect(), (0..n).map(|i| seed[(i + 53) % 100].abs()).collect()).unwrap();
        }
        let text = model_text(&c, &Provenance::from_command_line("kugel convert a b"));
        let (back, report) = parse_model_text(&text, Path::new("round.txt")).unwrap();
        prop_assert_eq!(report.missing_pairs, 0);
        prop_assert_eq!(back.lmax(), lmax);
        prop_assert_eq!(back.normalization, c.normalization);
        prop_assert_eq!(back.condon_shortley, phase);
        prop_assert_eq!(back.reference_radius_m.to_bits(), c.reference_radius_m.to_bits());
        for (a, b) in back.c_packed().iter().zip(c.c_packed()).chain(back.s_packed().iter().zip(c.s_packed())) {
            prop_assert_eq!(a.to_bits(), b.to_bits());
        }
        prop_assert_eq!(back.sigmas(), c.sigmas());
    }
}
