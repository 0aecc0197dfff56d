//! Comma-separated numbers on the command line (`--pole 35,-120`, `--euler 10,45,-30`).

use kugel::error::Error;

/// Parses "x,y,…" into exactly `n` finite numbers for the option named `option`.
pub fn parse_numbers(text: &str, n: usize, option: &str, shape: &str) -> Result<Vec<f64>, Error> {
    let values: Vec<Option<f64>> = text
        .split(',')
        .map(|t| t.trim().parse::<f64>().ok().filter(|v| v.is_finite()))
        .collect();
    if values.len() != n || values.iter().any(Option::is_none) {
        return Err(Error::invalid(format!(
            "{option} '{text}': expected {n} comma-separated numbers {shape}"
        )));
    }
    Ok(values.into_iter().flatten().collect())
}
