//! Benchmarks behind `kugel bench`: each case in its own file, printing a table or one JSON line.

pub mod fma_peak;
pub mod nodes;
pub mod observe;
pub mod points;
pub mod rank_update;
pub mod rotation;
pub mod transform;

/// Prints a benchmark result as one JSON line (`--json`) or as the line of text `text` makes.
pub fn print_line_or_json<T: serde::Serialize>(
    result: &T,
    json: bool,
    text: impl FnOnce() -> String,
) -> anyhow::Result<()> {
    if json {
        println!("{}", serde_json::to_string(result)?);
    } else {
        println!("{}", text());
    }
    Ok(())
}
