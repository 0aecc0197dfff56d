//! A small XML well-formedness checker for the SVG tests (no XML crate in the dependency
//! tree): tags nest and close, attribute values are quoted, attribute names are unique per
//! element, entities are the five predefined ones. Returns the element names in document order.

pub fn check_well_formed(doc: &str) -> Result<Vec<String>, String> {
    let mut stack: Vec<String> = Vec::new();
    let mut elements = Vec::new();
    let mut rest = doc;
    let mut root_closed = false;
    while let Some(start) = rest.find('<') {
        check_text(&rest[..start])?;
        rest = &rest[start..];
        if rest.starts_with("<?") {
            let end = rest
                .find("?>")
                .ok_or("unterminated processing instruction")?;
            rest = &rest[end + 2..];
        } else if rest.starts_with("<!--") {
            let end = rest.find("-->").ok_or("unterminated comment")?;
            if rest[4..end].contains("--") {
                return Err("'--' inside a comment".into());
            }
            rest = &rest[end + 3..];
        } else if let Some(after) = rest.strip_prefix("</") {
            let end = after.find('>').ok_or("unterminated end tag")?;
            let name = after[..end].trim();
            match stack.pop() {
                Some(open) if open == name => {}
                other => return Err(format!("end tag </{name}> does not match {other:?}")),
            }
            if stack.is_empty() {
                root_closed = true;
            }
            rest = &after[end + 1..];
        } else {
            if root_closed {
                return Err("content after the root element".into());
            }
            let end = find_tag_end(rest).ok_or("unterminated start tag")?;
            let inner = &rest[1..end];
            let self_closing = inner.ends_with('/');
            let inner = inner.trim_end_matches('/');
            let (name, attrs) = inner.split_once(char::is_whitespace).unwrap_or((inner, ""));
            if name.is_empty()
                || !name
                    .chars()
                    .all(|c| c.is_alphanumeric() || c == ':' || c == '-' || c == '_')
            {
                return Err(format!("bad element name '{name}'"));
            }
            check_attributes(name, attrs)?;
            elements.push(name.to_string());
            if !self_closing {
                stack.push(name.to_string());
            } else if stack.is_empty() {
                root_closed = true;
            }
            rest = &rest[end + 1..];
        }
    }
    check_text(rest)?;
    if !stack.is_empty() {
        return Err(format!("unclosed elements {stack:?}"));
    }
    Ok(elements)
}

fn find_tag_end(s: &str) -> Option<usize> {
    let mut quote = None;
    for (i, c) in s.char_indices() {
        match (quote, c) {
            (None, '"') | (None, '\'') => quote = Some(c),
            (Some(q), c) if c == q => quote = None,
            (None, '>') => return Some(i),
            _ => {}
        }
    }
    None
}

fn check_attributes(element: &str, attrs: &str) -> Result<(), String> {
    let mut seen = Vec::new();
    let mut rest = attrs.trim();
    while !rest.is_empty() {
        let eq = rest
            .find('=')
            .ok_or(format!("<{element}>: attribute without value in '{rest}'"))?;
        let name = rest[..eq].trim().to_string();
        let value_part = rest[eq + 1..].trim_start();
        let q = value_part.chars().next().ok_or("missing attribute value")?;
        if q != '"' && q != '\'' {
            return Err(format!("<{element}>: unquoted value of {name}"));
        }
        let close = value_part[1..]
            .find(q)
            .ok_or("unterminated attribute value")?;
        let value = &value_part[1..1 + close];
        if value.contains('<') {
            return Err(format!("<{element}>: '<' in attribute {name}"));
        }
        check_text(value)?;
        if seen.contains(&name) {
            return Err(format!("<{element}>: duplicate attribute {name}"));
        }
        seen.push(name);
        rest = value_part[close + 2..].trim_start();
    }
    Ok(())
}

fn check_text(text: &str) -> Result<(), String> {
    let mut rest = text;
    while let Some(amp) = rest.find('&') {
        let after = &rest[amp + 1..];
        let semi = after.find(';').ok_or("'&' without ';'")?;
        let entity = &after[..semi];
        let ok = matches!(entity, "amp" | "lt" | "gt" | "quot" | "apos")
            || (entity.starts_with('#') && entity.len() > 1);
        if !ok {
            return Err(format!("unknown entity &{entity};"));
        }
        rest = &after[semi + 1..];
    }
    Ok(())
}

#[test]
fn checker_rejects_broken_documents() {
    assert!(check_well_formed("<a><b/></a>").is_ok());
    assert!(check_well_formed("<a><b></a>").is_err());
    assert!(check_well_formed("<a x=1/>").is_err());
    assert!(check_well_formed("<a x='1' x='2'/>").is_err());
    assert!(check_well_formed("<a>&nbsp;</a>").is_err());
    assert!(check_well_formed("<a/><b/>").is_err());
}
