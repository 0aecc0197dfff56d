//! Which keys each table of a config accepts, and the check that finds unknown ones.
//!
//! serde's `deny_unknown_fields` stops at the first unknown key and suggests nothing; this walk
//! reports every unknown key with its TOML path and the nearest valid key, e.g.
//! `steps.fit.regularisation: unknown key; did you mean 'regularization'?`. Step and input
//! tables accept the keys of their `kind` only, so a key that belongs to another kind of step is
//! reported too.

use super::suggest;

/// Top-level tables.
pub const TOP_KEYS: &[&str] = &["job", "body", "output", "inputs", "steps"];
pub const JOB_KEYS: &[&str] = &["title", "description"];
pub const BODY_KEYS: &[&str] = &["name", "radius_m", "gm_m3_s2"];
pub const OUTPUT_KEYS: &[&str] = &["folder", "formats", "float32", "lon_convention"];
pub const COLUMN_KEYS: &[&str] = &["lat", "lon", "value", "sigma"];

/// Input kinds and the keys each accepts.
pub const INPUT_KINDS: &[(&str, &[&str])] = &[
    (
        "points",
        &["kind", "path", "columns", "on_bad_row", "quantity", "units"],
    ),
    ("grid", &["kind", "path", "variable", "quantity", "units"]),
    ("model", &["kind", "path"]),
];

/// Step kinds and the keys each accepts.
pub const STEP_KINDS: &[(&str, &[&str])] = &[
    (
        "grid",
        &[
            "kind",
            "input",
            "lmax",
            "method",
            "radius_km",
            "neighbours",
            "gaps",
        ],
    ),
    ("fit", &["kind", "input", "lmax", "regularization"]),
    ("analyse", &["kind", "input", "lmax"]),
    ("spectrum", &["kind", "model", "confidence", "fit_range"]),
    (
        "compare",
        &[
            "kind",
            "models",
            "confidence",
            "cross_quantity",
            "from_degree",
        ],
    ),
    ("filter", &["kind", "model", "filter"]),
    (
        "synthesize",
        &[
            "kind",
            "model",
            "quantities",
            "altitude_m",
            "filter",
            "grid_lmax",
        ],
    ),
    (
        "evaluate",
        &["kind", "model", "points", "quantity", "altitude_m"],
    ),
];

fn names(kinds: &[(&'static str, &'static [&'static str])]) -> Vec<&'static str> {
    kinds.iter().map(|(k, _)| *k).collect()
}

/// Names of the step kinds, in the order of [`STEP_KINDS`].
pub fn step_kind_names() -> Vec<&'static str> {
    names(STEP_KINDS)
}

/// Names of the input kinds.
pub fn input_kind_names() -> Vec<&'static str> {
    names(INPUT_KINDS)
}

/// Keys accepted by a step of `kind`, or `None` for an unknown kind.
pub fn step_keys(kind: &str) -> Option<&'static [&'static str]> {
    STEP_KINDS
        .iter()
        .find(|(k, _)| *k == kind)
        .map(|(_, keys)| *keys)
}

fn input_keys(kind: &str) -> Option<&'static [&'static str]> {
    INPUT_KINDS
        .iter()
        .find(|(k, _)| *k == kind)
        .map(|(_, keys)| *keys)
}

/// Walks a parsed config and returns one message per unknown key or kind, each starting with
/// its TOML path. An empty list means every key is known.
pub fn check_keys(root: &toml::Value) -> Vec<String> {
    let mut problems = Vec::new();
    let Some(top) = root.as_table() else {
        return vec!["the config is not a TOML table".into()];
    };
    check_table(top, "", TOP_KEYS, &mut problems);
    for (section, keys) in [
        ("job", JOB_KEYS),
        ("body", BODY_KEYS),
        ("output", OUTPUT_KEYS),
    ] {
        if let Some(t) = top.get(section).and_then(|v| v.as_table()) {
            check_table(t, section, keys, &mut problems);
        }
    }
    let input_kinds = input_kind_names();
    if let Some(inputs) = top.get("inputs").and_then(|v| v.as_table()) {
        for (name, value) in inputs {
            let path = format!("inputs.{name}");
            let Some(t) = value.as_table() else {
                problems.push(format!("{path}: expected a table such as [{path}]"));
                continue;
            };
            match kind_of(t, &path, &input_kinds, &mut problems).and_then(input_keys) {
                Some(keys) => check_table(t, &path, keys, &mut problems),
                None => continue,
            }
            if let Some(c) = t.get("columns").and_then(|v| v.as_table()) {
                check_table(c, &format!("{path}.columns"), COLUMN_KEYS, &mut problems);
            }
        }
    }
    let step_kinds = step_kind_names();
    if let Some(steps) = top.get("steps").and_then(|v| v.as_table()) {
        for (name, value) in steps {
            let path = format!("steps.{name}");
            let Some(t) = value.as_table() else {
                problems.push(format!("{path}: expected a table such as [{path}]"));
                continue;
            };
            if let Some(keys) = kind_of(t, &path, &step_kinds, &mut problems).and_then(step_keys) {
                check_table(t, &path, keys, &mut problems);
            }
        }
    }
    problems
}

/// The `kind` of an input or step table, reporting a missing or unknown kind.
fn kind_of<'t>(
    t: &'t toml::Table,
    path: &str,
    known: &[&str],
    problems: &mut Vec<String>,
) -> Option<&'t str> {
    match t.get("kind") {
        None => {
            problems.push(format!(
                "{path}.kind: missing; expected one of: {}",
                known.join(", ")
            ));
            None
        }
        Some(toml::Value::String(k)) if known.contains(&k.as_str()) => Some(k.as_str()),
        Some(toml::Value::String(k)) => {
            problems.push(format!(
                "{path}.kind: unknown kind '{k}'{}",
                suggest::hint(k, known)
            ));
            None
        }
        Some(_) => {
            problems.push(format!(
                "{path}.kind: expected a string, one of: {}",
                known.join(", ")
            ));
            None
        }
    }
}

fn check_table(t: &toml::Table, path: &str, known: &[&str], problems: &mut Vec<String>) {
    for key in t.keys() {
        if !known.contains(&key.as_str()) {
            let full = if path.is_empty() {
                key.clone()
            } else {
                format!("{path}.{key}")
            };
            problems.push(format!("{full}: unknown key{}", suggest::hint(key, known)));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn problems(text: &str) -> Vec<String> {
        check_keys(&text.parse::<toml::Value>().unwrap())
    }

    #[test]
    fn unknown_step_key_names_path_and_suggestion() {
        let p = problems("[steps.fit]\nkind = \"fit\"\nregularisation = \"gcv\"\n");
        assert_eq!(
            p,
            vec!["steps.fit.regularisation: unknown key; did you mean 'regularization'?"]
        );
    }

    #[test]
    fn key_of_another_step_kind_is_rejected() {
        // radius_km belongs to grid steps, not fits
        let p = problems("[steps.f]\nkind = \"fit\"\nradius_km = 100.0\n");
        assert_eq!(p.len(), 1);
        assert!(p[0].starts_with("steps.f.radius_km: unknown key"), "{p:?}");
    }

    #[test]
    fn unknown_kind_and_top_key() {
        let p = problems("outptu = 1\n[steps.a]\nkind = \"synthesise\"\n");
        assert!(
            p.contains(&"outptu: unknown key; did you mean 'output'?".to_string()),
            "{p:?}"
        );
        assert!(
            p.contains(
                &"steps.a.kind: unknown kind 'synthesise'; did you mean 'synthesize'?".into()
            ),
            "{p:?}"
        );
    }

    #[test]
    fn column_keys_checked() {
        let p = problems(
            "[inputs.s]\nkind = \"points\"\npath = \"a.csv\"\ncolumns = { lat = \"a\", lng = \"b\" }\n",
        );
        assert_eq!(
            p,
            vec!["inputs.s.columns.lng: unknown key; did you mean 'lon'?"]
        );
    }

    #[test]
    fn every_listed_key_is_a_field_of_the_typed_config() {
        // a key listed here but missing from config.rs would be rejected by serde later
        let fields: Vec<&str> = STEP_KINDS
            .iter()
            .flat_map(|(_, k)| k.iter().copied())
            .collect();
        for key in fields {
            let value = match key {
                "kind" => "kind = \"fit\"".to_string(),
                "models" | "quantities" => format!("{key} = [\"a\", \"b\"]"),
                "fit_range" => "fit_range = [2, 10]".into(),
                "lmax" | "neighbours" | "grid_lmax" | "from_degree" => format!("{key} = 3"),
                "cross_quantity" => format!("{key} = true"),
                "radius_km" | "altitude_m" | "confidence" => format!("{key} = 1.0"),
                _ => format!("{key} = \"x\""),
            };
            let extra = if key == "kind" {
                String::new()
            } else {
                "kind = \"fit\"\n".into()
            };
            let text = format!("{extra}{value}\n");
            let r: Result<super::super::config::StepSpec, _> = toml::from_str(&text);
            assert!(r.is_ok(), "{key}: {r:?}");
        }
    }
}
