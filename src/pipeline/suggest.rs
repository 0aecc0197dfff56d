//! "Did you mean …?" suggestions for mistyped config keys and names.
//!
//! Uses the optimal-string-alignment distance (Levenshtein distance plus transposition of two
//! adjacent characters; Damerau 1964, Commun. ACM 7:171–176), which counts `regularisation` →
//! `regularization` as one edit and `lmxa` → `lmax` as one.

/// Optimal-string-alignment edit distance between `a` and `b`, counted in characters.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    let (n, m) = (a.len(), b.len());
    // d[i][j] = distance between the first i chars of a and the first j chars of b
    let mut d = vec![vec![0usize; m + 1]; n + 1];
    for (i, row) in d.iter_mut().enumerate() {
        row[0] = i;
    }
    for j in 0..=m {
        d[0][j] = j;
    }
    for i in 1..=n {
        for j in 1..=m {
            let cost = usize::from(a[i - 1] != b[j - 1]);
            let mut best = (d[i - 1][j] + 1)
                .min(d[i][j - 1] + 1)
                .min(d[i - 1][j - 1] + cost);
            if i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1] {
                best = best.min(d[i - 2][j - 2] + 1);
            }
            d[i][j] = best;
        }
    }
    d[n][m]
}

/// The known name closest to `given`, if it is close enough to be a plausible typo: at most
/// a third of the longer name's length in edits (and at least 2 allowed), ties broken by the
/// number of characters the two share (so `lng` suggests `lon`, not `lat`), then by the order of
/// `known`. Case is ignored when measuring.
pub fn nearest<'a>(given: &str, known: &[&'a str]) -> Option<&'a str> {
    let g = given.to_lowercase();
    let mut best: Option<(usize, usize, &'a str)> = None;
    for &k in known {
        let kl = k.to_lowercase();
        let dist = edit_distance(&g, &kl);
        let allowed = (g.chars().count().max(k.chars().count()) / 3).max(2);
        let shared = shared_chars(&g, &kl);
        let better = best.map_or(true, |(bd, bs, _)| dist < bd || (dist == bd && shared > bs));
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
    fn distances_of_known_pairs() {
        // common practice: textbook Levenshtein examples (kitten → sitting = 3)
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("abc", "abc"), 0);
        // a transposition is one edit in the optimal-string-alignment distance
        assert_eq!(edit_distance("lmxa", "lmax"), 1);
        assert_eq!(edit_distance("regularisation", "regularization"), 1);
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
