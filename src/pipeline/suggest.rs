//! "Did you mean …?" suggestions for mistyped config keys and names.
//!
//! Uses the optimal-string-alignment distance (Levenshtein distance plus transposition of two
//! adjacent characters; Damerau 1964, Commun. ACM 7:171–176) as computed by `strsim`, which
//! counts `regularisation` → `regularization` as one edit and `lmxa` → `lmax` as one.

/// The known name closest to `given`, if it is close enough to be a plausible typo: at most
/// a third of the longer name's length in edits (and at least 2 allowed), ties broken by the
/// number of characters the two share (so `lng` suggests `lon`, not `lat`), then by the order of
/// `known`. Case is ignored when measuring.
pub fn nearest<'a>(given: &str, known: &[&'a str]) -> Option<&'a str> {
    let g = given.to_lowercase();
    let mut best: Option<(usize, usize, &'a str)> = None;
    for &k in known {
        let kl = k.to_lowercase();
        let dist = strsim::osa_distance(&g, &kl);
        let allowed = (g.chars().count().max(k.chars().count()) / 3).max(2);
        let shared = shared_chars(&g, &kl);
        let better = best.is_none_or(|(bd, bs, _)| dist < bd || (dist == bd && shared > bs));
        if dist <= allowed && better {
            best = Some((dist, shared, k));
        }
    }
    best.map(|(_, _, k)| k)
}

/// Size of the multiset intersection of the characters of `a` and `b`.
fn shared_chars(a: &str, b: &str) -> usize {
    let mut rest: Vec<char> = b.chars().collect();
    a.chars()
        .filter(|c| {
            rest.iter()
                .position(|r| r == c)
                .map(|i| rest.swap_remove(i))
                .is_some()
        })
        .count()
}

/// "; did you mean 'x'?" or, when nothing is close, "; expected one of: a, b, c".
pub fn hint(given: &str, known: &[&str]) -> String {
    match nearest(given, known) {
        Some(k) => format!("; did you mean '{k}'?"),
        None if known.is_empty() => String::new(),
        None => format!("; expected one of: {}", known.join(", ")),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn transpositions_and_substitutions_count_once() {
        // common practice: in the optimal-string-alignment distance an adjacent transposition
        // is one edit (Damerau 1964), so both typos below are within reach of their key
        let known = ["lmax", "regularization", "lat", "lon"];
        assert_eq!(nearest("lmxa", &known), Some("lmax"));
        assert_eq!(nearest("regularisation", &known), Some("regularization"));
        // lng is two edits from both lat and lon; the tie goes to lon, which shares two
        // characters with it (lat shares one)
        assert_eq!(nearest("lng", &known), Some("lon"));
    }

    #[test]
    fn suggests_only_plausible_keys() {
        let known = ["regularization", "lmax", "input", "kind"];
        assert_eq!(nearest("regularisation", &known), Some("regularization"));
        assert_eq!(nearest("LMAX", &known), Some("lmax"));
        assert_eq!(nearest("imput", &known), Some("input"));
        assert_eq!(nearest("colour", &known), None);
        assert!(hint("colour", &known).contains("expected one of: regularization"));
    }
}
