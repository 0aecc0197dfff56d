//! Escaping of text for HTML and SVG (both XML-compatible markup): one rule for the run report
//! and the plots.

/// Escapes text for element content and attribute values of HTML and XML/SVG: `&`, `<`, `>`,
/// `"` and `'` become character references (`&#39;` for the apostrophe, which HTML 4 lacks as
/// a named entity but XML and HTML both accept as a numeric one; common practice).
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for ch in text.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markup_characters_become_references_and_others_stay() {
        // the five characters XML 1.0 §2.4 and HTML reserve (common practice)
        assert_eq!(
            escape(r#"a<b & "c" 'd' >"#),
            "a&lt;b &amp; &quot;c&quot; &#39;d&#39; &gt;"
        );
        assert_eq!(escape("χ² ≤ 1, m² s⁻²"), "χ² ≤ 1, m² s⁻²");
        // escaping is not idempotent on purpose: an already escaped '&' is escaped again
        assert_eq!(escape("&amp;"), "&amp;amp;");
    }
}
