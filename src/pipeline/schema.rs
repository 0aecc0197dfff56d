//! The key check of a config: every unknown key or kind, with its TOML path and the nearest
//! valid name, and every missing required key — all reported together, before the config is
//! read into its types.
//!
//! serde's `deny_unknown_fields` stops at the first unknown key, suggests nothing and does not
//! work with the internally tagged step and input enums, so this walk does the job. The keys a
//! table accepts are the fields of the struct it is read into (`field_names.rs`), and a step or
//! input accepts the keys of its own `kind` only, so a key of another kind is reported too, e.g.
//! `steps.fit.regularisation: unknown key; did you mean 'regularization'?`.

use serde::de::DeserializeOwned;

use super::config::{BodySection, Config, JobSection, OutputSection};
use super::field_names::field_names;
use super::input_spec::{ColumnMap, Input, InputKind};
use super::step_spec::{Step, StepKind};
use super::suggest;

/// Keys that kugel once spelled otherwise, with a note on what changed beside the name. The
/// nearest-key hint already points to the new name; the note says what else to change.
const RENAMED_KEYS: &[(&str, &str)] = &[(
    "altitude_m",
    "altitudes are given in km: divide the value by 1000",
)];

/// Walks a parsed config and returns one message per unknown key or kind and per missing
/// required key, each starting with its TOML path. An empty list means the config can be read.
pub fn check_keys(root: &toml::Value) -> Vec<String> {
    let mut problems = Vec::new();
    let Some(top) = root.as_table() else {
        return vec!["the config is not a TOML table".into()];
    };
    check_table(top, "", field_names::<Config>(), &mut problems);
    for (section, keys) in [
        ("job", field_names::<JobSection>()),
        ("body", field_names::<BodySection>()),
        ("output", field_names::<OutputSection>()),
    ] {
        if let Some(t) = top.get(section).and_then(|v| v.as_table()) {
            check_table(t, section, keys, &mut problems);
        }
    }
    for (name, value) in named_tables(top, "inputs", &mut problems) {
        let path = format!("inputs.{name}");
        let Some(kind) = kind_of(value, &path, &InputKind::names(), &mut problems) else {
            continue;
        };
        let kind = InputKind::from_name(kind).expect("kind_of returns known names");
        if check_table(value, &path, &kind.keys(), &mut problems) {
            check_required::<Input>(value, &path, kind.name(), &mut problems);
        }
        if let Some(c) = value.get("columns").and_then(|v| v.as_table()) {
            check_table(
                c,
                &format!("{path}.columns"),
                field_names::<ColumnMap>(),
                &mut problems,
            );
        }
    }
    for (name, value) in named_tables(top, "steps", &mut problems) {
        let path = format!("steps.{name}");
        let Some(kind) = kind_of(value, &path, &StepKind::names(), &mut problems) else {
            continue;
        };
        let kind = StepKind::from_name(kind).expect("kind_of returns known names");
        if check_table(value, &path, &kind.keys(), &mut problems) {
            check_required::<Step>(value, &path, kind.name(), &mut problems);
        }
    }
    problems
}

/// The tables under `[section.NAME]`, reporting entries that are not tables.
fn named_tables<'t>(
    top: &'t toml::Table,
    section: &str,
    problems: &mut Vec<String>,
) -> Vec<(&'t String, &'t toml::Table)> {
    let Some(tables) = top.get(section).and_then(|v| v.as_table()) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for (name, value) in tables {
        match value.as_table() {
            Some(t) => out.push((name, t)),
            None => problems.push(format!(
                "{section}.{name}: expected a table such as [{section}.{name}]"
            )),
        }
    }
    out
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

/// Reports every key of `t` not in `known`; true when all are known.
fn check_table(t: &toml::Table, path: &str, known: &[&str], problems: &mut Vec<String>) -> bool {
    let before = problems.len();
    for key in t.keys() {
        if known.contains(&key.as_str()) {
            continue;
        }
        let full = if path.is_empty() {
            key.clone()
        } else {
            format!("{path}.{key}")
        };
        let note = RENAMED_KEYS
            .iter()
            .find(|(old, _)| old == key)
            .map(|(_, note)| format!(" ({note})"))
            .unwrap_or_default();
        problems.push(format!(
            "{full}: unknown key{}{note}",
            suggest::hint(key, known)
        ));
    }
    problems.len() == before
}

/// Reads the table as a `T` and reports the required keys it lacks, each with its path. Other
/// read errors (wrong types) are left to the typed read of the whole file, whose messages
/// carry line numbers.
fn check_required<T: DeserializeOwned>(
    t: &toml::Table,
    path: &str,
    kind: &str,
    problems: &mut Vec<String>,
) {
    let table = if path.starts_with("inputs.") {
        "input"
    } else {
        "step"
    };
    let Err(e) = toml::Value::Table(t.clone()).try_into::<T>() else {
        return;
    };
    // serde's derive words a missing field as "missing field `NAME`"
    let message = e.to_string();
    if let Some(field) = message
        .split_once("missing field `")
        .and_then(|(_, rest)| rest.split_once('`'))
        .map(|(field, _)| field)
    {
        problems.push(format!(
            "{path}.{field}: missing; this {kind} {table} needs it"
        ));
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
        let p = problems(
            "[steps.fit]\nkind = \"fit\"\ninput = \"a\"\nlmax = 3\nregularisation = \"gcv\"\n",
        );
        assert_eq!(
            p,
            vec!["steps.fit.regularisation: unknown key; did you mean 'regularization'?"]
        );
    }

    #[test]
    fn key_of_another_step_kind_is_rejected() {
        // radius_km belongs to grid steps, not fits
        let p = problems("[steps.f]\nkind = \"fit\"\ninput = \"a\"\nlmax = 3\nradius_km = 100.0\n");
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
    fn missing_required_keys_are_all_reported() {
        let p = problems("[steps.a]\nkind = \"analyze\"\nlmax = 3\n[steps.b]\nkind = \"filter\"\nfilter = \"gauss:100\"\n");
        assert_eq!(
            p,
            vec![
                "steps.a.input: missing; this analyze step needs it",
                "steps.b.model: missing; this filter step needs it"
            ]
        );
    }

    #[test]
    fn old_altitude_key_points_to_km() {
        let p = problems(
            "[steps.e]\nkind = \"evaluate\"\nmodel = \"m\"\npoints = \"p\"\naltitude_m = 5000.0\n",
        );
        assert_eq!(
            p,
            vec!["steps.e.altitude_m: unknown key; did you mean 'altitude_km'? (altitudes are given in km: divide the value by 1000)"]
        );
    }
}
