//! Bounded fuzzing of the config loader and the spec parsers it calls: configs assembled from
//! valid pieces and hostile values (huge degrees, separators in names, wrong types, NaN), then
//! mutated, and random filter specs, must load or be refused with a message — never panic, and
//! never write anything. `PROPTEST_CASES` raises the count for a longer run (DEVELOPERS.md).

use kugel::io::filter_spectra::parse_filter_chain;
use kugel::pipeline::Job;
use proptest::prelude::*;

fn value() -> impl Strategy<Value = String> {
    prop_oneof![
        Just("3".to_string()),
        Just("18446744073709551615".to_string()),
        Just("-1".to_string()),
        Just("nan".to_string()),
        Just("1e308".to_string()),
        Just("\"pts\"".to_string()),
        Just("\"../x\"".to_string()),
        Just("[2, 99999999]".to_string()),
        Just("\"gauss:300+lowpass:2-3\"".to_string()),
        Just("{ value = \"nope\" }".to_string()),
        "\"[ -~]{0,12}\"",
    ]
}

fn line() -> impl Strategy<Value = String> {
    let key = prop_oneof![
        Just("kind"),
        Just("input"),
        Just("lmax"),
        Just("model"),
        Just("models"),
        Just("filter"),
        Just("fit_range"),
        Just("quantities"),
        Just("altitude_km"),
        Just("radius_km"),
        Just("gaps"),
        Just("regularization"),
        Just("columns"),
        Just("path"),
        Just("folder"),
        Just("formats"),
    ];
    let table = prop_oneof![
        Just("[steps.a]".to_string()),
        Just("[steps.\"../b\"]".to_string()),
        Just("[inputs.q]".to_string()),
        Just("[output]".to_string()),
        Just("[body]".to_string()),
    ];
    prop_oneof![
        (key, value()).prop_map(|(k, v)| format!("{k} = {v}")),
        table,
        (prop_oneof![
            Just("fit"),
            Just("grid"),
            Just("spectrum"),
            Just("compare"),
            Just("synthesize"),
            Just("filter"),
            Just("analyze"),
            Just("evaluate")
        ])
        .prop_map(|k| format!("kind = \"{k}\"")),
        "[ -~]{0,30}",
    ]
}

/// The bounded default, or `PROPTEST_CASES` for a longer run.
fn cases(default: u32) -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(default)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: cases(128), failure_persistence: None, ..ProptestConfig::default() })]

    #[test]
    fn hostile_configs_never_panic_or_write(lines in proptest::collection::vec(line(), 0..16), cut in any::<usize>()) {
        let dir = tempfile::tempdir().unwrap();
        std::fs::write(dir.path().join("pts.csv"), "lat,lon,value\n0,0,1\n1,1,2\n").unwrap();
        let mut text = String::from("[body]\nradius_m = 6.0e6\n[output]\nfolder = \"out\"\n[inputs.pts]\nkind = \"points\"\npath = \"pts.csv\"\n");
        text += &lines.join("\n");
        let keep = if text.is_empty() { 0 } else { cut % (text.len() + 1) };
        let text: String = text.char_indices().take_while(|(i, _)| *i < keep.max(90)).map(|(_, c)| c).collect();
        let path = dir.path().join("job.toml");
        std::fs::write(&path, &text).unwrap();
        if let Ok(job) = Job::load(&path) {
            let _ = job.describe();
        }
        prop_assert!(!dir.path().join("out").exists(), "loading a config must not create its output folder");
    }

    #[test]
    fn random_filter_specs_never_panic(spec in "[a-z:0-9,.+=-]{0,40}", exotic in prop_oneof![
        Just("gauss:1e308".to_string()), Just("lowpass:18446744073709551615-18446744073709551615".to_string()),
        Just("butterworth:3,1e9".to_string()), Just("bandpass:1-2-3".to_string()), Just("gauss:-0".to_string()),
        Just("wiener:nonexistent.csv,noise=1".to_string()), Just("highpass:5-2".to_string()),
    ]) {
        let _ = parse_filter_chain(&spec, None);
        if let Ok(chain) = parse_filter_chain(&exotic, None) {
            // building weights for a moderate degree must not panic either
            let _ = chain.weights(50, 6.0e6);
        }
    }
}
