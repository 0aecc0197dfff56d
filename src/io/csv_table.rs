//! Comma-separated tables with a header row. `#` starts a comment line; fields may be quoted
//! with double quotes (RFC 4180 style, `""` inside quotes is one quote).

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

/// A CSV table as text, with the file line of every row kept for error messages.
#[derive(Debug, Clone, PartialEq)]
pub struct CsvTable {
    pub path: PathBuf,
    pub headers: Vec<String>,
    pub rows: Vec<Vec<String>>,
    /// 1-based line number in the file of each row.
    pub line_numbers: Vec<usize>,
}

impl CsvTable {
    /// Index of a column by (case-insensitive) header name.
    pub fn column(&self, name: &str) -> Option<usize> {
        self.headers
            .iter()
            .position(|h| h.trim().eq_ignore_ascii_case(name.trim()))
    }

    /// A column parsed as numbers; the error names the file, line and column.
    pub fn numeric_column(&self, name: &str) -> Result<Vec<f64>> {
        let k = self.column(name).ok_or_else(|| {
            Error::format(
                &self.path,
                format!(
                    "no column '{name}' (columns are: {})",
                    self.headers.join(", ")
                ),
            )
        })?;
        self.rows
            .iter()
            .zip(&self.line_numbers)
            .map(|(row, &line)| {
                let cell = row[k].trim();
                cell.parse::<f64>().map_err(|_| Error::Line {
                    path: self.path.clone(),
                    line,
                    message: format!("column '{name}': '{cell}' is not a number"),
                })
            })
            .collect()
    }
}

/// Splits one CSV line into fields.
pub(crate) fn split_line(line: &str) -> std::result::Result<Vec<String>, String> {
    let mut out = Vec::new();
    let mut cur = String::new();
    let mut chars = line.chars().peekable();
    let mut quoted = false;
    while let Some(ch) = chars.next() {
        match (quoted, ch) {
            (true, '"') if chars.peek() == Some(&'"') => {
                chars.next();
                cur.push('"');
            }
            (true, '"') => quoted = false,
            (false, '"') if cur.trim().is_empty() => {
                cur.clear();
                quoted = true;
            }
            (false, ',') => out.push(std::mem::take(&mut cur).trim().to_string()),
            (_, c) => cur.push(c),
        }
    }
    if quoted {
        return Err("unterminated quoted field".to_string());
    }
    out.push(cur.trim().to_string());
    Ok(out)
}

/// Reads a comma-separated table: the first non-comment, non-blank line is the header; every
/// row must have as many fields as the header.
pub fn read_csv_table(path: &Path) -> Result<CsvTable> {
    let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    let text = String::from_utf8(bytes)
        .map_err(|e| Error::format(path, format!("not UTF-8 text: {e}")))?;
    let mut headers: Option<Vec<String>> = None;
    let mut rows = Vec::new();
    let mut line_numbers = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let line = raw.trim_start_matches('\u{feff}').trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let fields = split_line(line).map_err(|message| Error::Line {
            path: path.to_path_buf(),
            line: i + 1,
            message,
        })?;
        match &headers {
            None => headers = Some(fields),
            Some(h) => {
                if fields.len() != h.len() {
                    return Err(Error::Line {
                        path: path.to_path_buf(),
                        line: i + 1,
                        message: format!(
                            "{} fields, but the header has {} ({})",
                            fields.len(),
                            h.len(),
                            h.join(",")
                        ),
                    });
                }
                rows.push(fields);
                line_numbers.push(i + 1);
            }
        }
    }
    let headers = headers.ok_or_else(|| Error::format(path, "no header row (file is empty)"))?;
    Ok(CsvTable {
        path: path.to_path_buf(),
        headers,
        rows,
        line_numbers,
    })
}

/// Quotes a field when it contains a comma, quote or line break.
fn escape(field: &str) -> String {
    if field.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", field.replace('"', "\"\""))
    } else {
        field.to_string()
    }
}

/// Renders a table as CSV text (header row, then rows; `\n` line ends).
pub fn csv_text(headers: &[impl AsRef<str>], rows: &[Vec<String>]) -> String {
    let mut out = String::new();
    let head: Vec<String> = headers.iter().map(|h| escape(h.as_ref())).collect();
    out.push_str(&head.join(","));
    out.push('\n');
    for row in rows {
        let r: Vec<String> = row.iter().map(|f| escape(f)).collect();
        out.push_str(&r.join(","));
        out.push('\n');
    }
    out
}

/// Writes a CSV table atomically. Every row must have as many fields as `headers`.
pub fn write_csv_table(
    path: &Path,
    headers: &[impl AsRef<str>],
    rows: &[Vec<String>],
) -> Result<()> {
    if let Some((i, r)) = rows
        .iter()
        .enumerate()
        .find(|(_, r)| r.len() != headers.len())
    {
        return Err(Error::ShapeMismatch(format!(
            "CSV row {i} for {} has {} fields, the header {}",
            path.display(),
            r.len(),
            headers.len()
        )));
    }
    super::atomic::write_bytes_atomic(path, csv_text(headers, rows).as_bytes())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trip_with_quotes_and_comments() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("t.csv");
        let rows = vec![
            vec!["1".to_string(), "a, b".to_string()],
            vec!["2".to_string(), "say \"hi\"".to_string()],
        ];
        write_csv_table(&p, &["degree", "note"], &rows).unwrap();
        let t = read_csv_table(&p).unwrap();
        assert_eq!(t.headers, vec!["degree", "note"]);
        assert_eq!(t.rows, rows);
        assert_eq!(t.line_numbers, vec![2, 3]);
        assert_eq!(t.numeric_column("Degree").unwrap(), vec![1.0, 2.0]);
    }

    #[test]
    fn ragged_row_names_line() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("bad.csv");
        std::fs::write(&p, "# comment\na,b\n1,2\n3\n").unwrap();
        let err = read_csv_table(&p).unwrap_err().to_string();
        assert!(err.contains("bad.csv") && err.contains("line 4"), "{err}");
    }

    #[test]
    fn non_number_names_line_and_column() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("n.csv");
        std::fs::write(&p, "x,y\n1,2\n1,zz\n").unwrap();
        let t = read_csv_table(&p).unwrap();
        let err = t.numeric_column("y").unwrap_err().to_string();
        assert!(err.contains("line 3") && err.contains("'y'"), "{err}");
    }
}
