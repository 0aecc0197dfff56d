//! Run order of a job: a small directed acyclic graph over named products.
//!
//! Inputs are products with no dependencies; each step depends on the products it names. The
//! order is Kahn's topological sort (Kahn 1962, Commun. ACM 5:558–562) taking ready products
//! in name order, so the same config always runs in the same order. Steps of one *level* (all
//! of whose dependencies lie in earlier levels) are independent and may run in parallel.

use std::collections::{BTreeMap, BTreeSet};

/// Dependencies of each product: `name → names it uses`.
pub type Dependencies = BTreeMap<String, Vec<String>>;

/// Products grouped by level: level 0 has no dependencies, level k depends only on levels < k.
pub fn levels(deps: &Dependencies) -> Result<Vec<Vec<String>>, String> {
    for (name, uses) in deps {
        for u in uses {
            if !deps.contains_key(u) {
                return Err(format!("{name} uses '{u}', which no input or step defines"));
            }
        }
    }
    let mut remaining: BTreeMap<&str, BTreeSet<&str>> = deps
        .iter()
        .map(|(k, v)| (k.as_str(), v.iter().map(String::as_str).collect()))
        .collect();
    let mut out = Vec::new();
    while !remaining.is_empty() {
        let ready: Vec<&str> = remaining
            .iter()
            .filter(|(_, uses)| uses.is_empty())
            .map(|(k, _)| *k)
            .collect();
        if ready.is_empty() {
            return Err(format!("dependency cycle: {}", describe_cycle(&remaining)));
        }
        for r in &ready {
            remaining.remove(r);
        }
        for uses in remaining.values_mut() {
            for r in &ready {
                uses.remove(r);
            }
        }
        out.push(ready.into_iter().map(String::from).collect());
    }
    Ok(out)
}

/// Follows unresolved dependencies from the first blocked product until a name repeats, and
/// prints that loop as `a → b → a`.
fn describe_cycle(blocked: &BTreeMap<&str, BTreeSet<&str>>) -> String {
    let Some(start) = blocked.keys().next() else {
        return String::new();
    };
    let mut path = vec![*start];
    loop {
        let last = path[path.len() - 1];
        let next = blocked[last].iter().next().copied().unwrap_or(last);
        if let Some(pos) = path.iter().position(|p| *p == next) {
            let mut cycle: Vec<&str> = path[pos..].to_vec();
            cycle.push(next);
            return cycle.join(" → ");
        }
        path.push(next);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn deps(pairs: &[(&str, &[&str])]) -> Dependencies {
        pairs
            .iter()
            .map(|(k, v)| (k.to_string(), v.iter().map(|s| s.to_string()).collect()))
            .collect()
    }

    #[test]
    fn orders_by_level_then_name() {
        let d = deps(&[("b", &["a"]), ("a", &[]), ("c", &["a"]), ("d", &["b", "c"])]);
        assert_eq!(
            levels(&d).unwrap(),
            vec![
                vec!["a".to_string()],
                vec!["b".into(), "c".into()],
                vec!["d".into()]
            ]
        );
    }

    #[test]
    fn reports_cycle_and_missing_product() {
        let d = deps(&[("a", &[]), ("x", &["y"]), ("y", &["x"])]);
        assert_eq!(levels(&d).unwrap_err(), "dependency cycle: x → y → x");
        let d = deps(&[("a", &["nowhere"])]);
        assert_eq!(
            levels(&d).unwrap_err(),
            "a uses 'nowhere', which no input or step defines"
        );
    }
}
