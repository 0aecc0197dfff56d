//! Units strings for people: a CF units string such as `m2 s-2` or `mGal m-1` written with
//! superscript exponents (m² s⁻², mGal m⁻¹) for picture labels. Files keep the CF spelling.

use super::plots::axis::superscript_digits;

/// `units` with every integer exponent that follows a unit symbol (`s-2`, `m^2`, `m**2`)
/// written as superscripts, and `-` as a superscript minus; other text unchanged.
///
/// Convention: the grammar of CF units strings, where a power is a symbol followed directly by an integer,
/// optionally after `^` or `**` (common practice for CF units strings).
pub fn units_for_display(units: &str) -> String {
    units
        .split(' ')
        .map(word_for_display)
        .collect::<Vec<_>>()
        .join(" ")
}

fn word_for_display(word: &str) -> String {
    // split the word into its symbol and a trailing integer exponent
    let digits_start = word
        .char_indices()
        .rev()
        .take_while(|(_, c)| c.is_ascii_digit())
        .last()
        .map(|(i, _)| i);
    let Some(start) = digits_start else {
        return word.to_string();
    };
    let (mut symbol, digits) = word.split_at(start);
    let negative = symbol.ends_with('-');
    if negative {
        symbol = &symbol[..symbol.len() - 1];
    }
    symbol = symbol
        .strip_suffix("**")
        .or_else(|| symbol.strip_suffix('^'))
        .unwrap_or(symbol);
    // a bare number (a scale factor such as `1e-5` or `1`) or a symbol ending in a digit
    // in its own right is left as written
    if symbol.is_empty() || !symbol.chars().all(|c| c.is_alphabetic() || c == '_') {
        return word.to_string();
    }
    let Ok(exponent) = digits.parse::<i32>() else {
        return word.to_string();
    };
    let exponent = if negative { -exponent } else { exponent };
    if exponent == 1 {
        return symbol.to_string();
    }
    format!("{symbol}{}", superscript_digits(exponent))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exponents_become_superscripts() {
        // CF units strings (common practice) and their usual typeset forms
        assert_eq!(units_for_display("m2 s-2"), "m² s⁻²");
        assert_eq!(units_for_display("mGal m-1"), "mGal m⁻¹");
        assert_eq!(units_for_display("nT^2"), "nT²");
        assert_eq!(units_for_display("m**3 s-2"), "m³ s⁻²");
        assert_eq!(units_for_display("m s-1"), "m s⁻¹");
        assert_eq!(units_for_display("m1"), "m");
        assert_eq!(units_for_display("mGal"), "mGal");
        assert_eq!(units_for_display("1"), "1");
        assert_eq!(units_for_display("1e-5 m s-2"), "1e-5 m s⁻²");
        assert_eq!(units_for_display(""), "");
    }
}
