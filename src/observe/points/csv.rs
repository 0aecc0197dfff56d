//! CSV point files: a header row naming the columns, one observation per record, `#` comment
//! lines and blank lines allowed, comma separated, quoting as in RFC 4180 (a field in double
//! quotes may hold commas, line breaks and `""` for one quote). Fields are trimmed of
//! surrounding whitespace.
//!
//! The file is streamed through the `csv` crate: one [`ByteRecord`] is reused for every
//! record and only the located columns are parsed, so memory does not grow with the file
//! beyond the parsed numbers themselves and no string is made per cell.
//!
//! **Line numbers** in messages are those of the line where a record starts. The parser's own
//! position is that of the end of the previous record (before any blank or comment lines), so
//! the start line is worked out from the end instead: the line count after the record, less
//! one if the record ended on a line feed, less the line feeds inside its quoted fields.
//!
//! A quoted field left open runs to the end of the file (the parser is lenient). When that
//! swallowed line breaks it is reported as an unterminated quoted field; a quote left open
//! on the very last line of a file, with no line break after it, is read as if closed.

use std::io::Read;
use std::path::{Path, PathBuf};

use ::csv::{ByteRecord, Reader, ReaderBuilder};

use super::recent_bytes::RecentBytes;
use super::validate::{RawExtras, RawRecord, RecordColumns};
use super::PointReadOptions;
use crate::error::{Error, Result};

/// Read-ahead buffer of the parser; the byte window is a little larger (see `recent_bytes`).
const BUFFER_BYTES: usize = 64 * 1024;
const WINDOW_BYTES: usize = BUFFER_BYTES + 1024;

/// Where the located columns sit in a record.
#[derive(Debug, Clone, Copy)]
struct ColumnIndices {
    lat: usize,
    lon: usize,
    value: Option<usize>,
    sigma: Option<usize>,
    quantity: Option<usize>,
    altitude_km: Option<usize>,
    height_m: Option<usize>,
    time: Option<usize>,
}

/// The records of a CSV point file (unvalidated), read one at a time.
pub struct CsvPointRecords<R: Read> {
    path: PathBuf,
    reader: Reader<RecentBytes<R>>,
    record: ByteRecord,
    headers: Vec<String>,
    columns: ColumnIndices,
    finished: bool,
}

/// Opens a CSV point file for streaming; the header is read and the columns located here.
pub fn read_csv_records(
    path: &Path,
    options: &PointReadOptions,
) -> Result<CsvPointRecords<std::fs::File>> {
    let file = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    CsvPointRecords::new(path, file, options)
}

impl<R: Read> CsvPointRecords<R> {
    /// Reads the header from `input` and locates the columns named in `options`. `path`
    /// only names the source in messages.
    pub fn new(path: &Path, input: R, options: &PointReadOptions) -> Result<Self> {
        let reader = ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .comment(Some(b'#'))
            .buffer_capacity(BUFFER_BYTES)
            .from_reader(RecentBytes::new(input, WINDOW_BYTES));
        let mut records = CsvPointRecords {
            path: path.to_path_buf(),
            reader,
            record: ByteRecord::new(),
            headers: Vec::new(),
            columns: ColumnIndices {
                lat: 0,
                lon: 0,
                value: None,
                sigma: None,
                quantity: None,
                altitude_km: None,
                height_m: None,
                time: None,
            },
            finished: false,
        };
        if records.next_data_record()?.is_none() {
            return Err(Error::format(path, "no header row (file is empty)"));
        }
        records.headers = records
            .record
            .iter()
            .map(|h| String::from_utf8_lossy(h).into_owned())
            .collect();
        records.columns = locate_columns(path, &records.headers, options)?;
        Ok(records)
    }

    /// Which optional columns the records carry.
    pub fn record_columns(&self) -> RecordColumns {
        RecordColumns {
            value: self.columns.value.is_some(),
            sigma: self.columns.sigma.is_some(),
            quantity: self.columns.quantity.is_some(),
            altitude_km: self.columns.altitude_km.is_some(),
            height_m: self.columns.height_m.is_some(),
            time: self.columns.time.is_some(),
        }
    }

    fn line_error(&self, line: usize, message: String) -> Error {
        Error::Line {
            path: self.path.clone(),
            line,
            message,
        }
    }

    /// Reads the next record that is neither blank nor a comment into `self.record`
    /// (trimmed) and returns the line it starts on.
    fn next_data_record(&mut self) -> Result<Option<usize>> {
        loop {
            let more = self
                .reader
                .read_byte_record(&mut self.record)
                .map_err(|e| csv_error(&self.path, e))?;
            if !more {
                return Ok(None);
            }
            let unterminated = self.quote_left_open();
            let line = self.start_line(unterminated);
            if unterminated {
                return Err(self.line_error(line, "unterminated quoted field".to_string()));
            }
            self.record.trim();
            let blank = self.record.len() == 1 && self.record[0].is_empty();
            // `#` after leading blanks is a comment too (the parser only knows column one).
            let comment = self.record.get(0).is_some_and(|f| f.starts_with(b"#"));
            if blank || comment {
                continue;
            }
            if let Err(e) = std::str::from_utf8(self.record.as_slice()) {
                return Err(self.line_error(line, format!("not UTF-8 text: {e}")));
            }
            return Ok(Some(line));
        }
    }

    /// The line the record just read (untrimmed) starts on. A record whose quote was left
    /// open has no terminator: its final line feed, if any, is part of its last field.
    fn start_line(&self, quote_left_open: bool) -> usize {
        let after = self.reader.position();
        let source = self.reader.get_ref();
        let ended_on_line_feed =
            !quote_left_open && after.byte() > 0 && source.byte_at(after.byte() - 1) == Some(b'\n');
        let line_feeds_inside = bytecount(self.record.as_slice(), b'\n');
        let end_line = after.line() - u64::from(ended_on_line_feed);
        (end_line - line_feeds_inside) as usize
    }

    /// Whether the record just read (untrimmed) is a last field that swallowed line breaks
    /// up to the end of the input without a closing quote (see the module doc).
    fn quote_left_open(&self) -> bool {
        let source = self.reader.get_ref();
        let at_end = source.reached_end() && self.reader.position().byte() == source.delivered();
        let last_field_spans_lines = self
            .record
            .iter()
            .next_back()
            .is_some_and(|f| f.contains(&b'\n'));
        at_end && last_field_spans_lines && source.last_non_line_break() != Some(b'"')
    }

    /// Turns the current record into a raw record (fields not yet validated).
    fn raw_record(&self, line: usize) -> Result<RawRecord> {
        if self.record.len() != self.headers.len() {
            let spans_lines = self.record.iter().any(|f| f.contains(&b'\n'));
            return Err(self.line_error(
                line,
                format!(
                    "{} fields, but the header has {} ({}){}",
                    self.record.len(),
                    self.headers.len(),
                    self.headers.join(","),
                    if spans_lines {
                        "; a quoted field here runs over several lines: is a closing quote missing?"
                    } else {
                        ""
                    }
                ),
            ));
        }
        let field = |k: usize| -> std::result::Result<f64, String> {
            // The whole record was checked as UTF-8 when it was read.
            let text = std::str::from_utf8(&self.record[k]).unwrap_or_default();
            text.parse::<f64>().map_err(|_| text.to_string())
        };
        let c = self.columns;
        Ok(RawRecord {
            line,
            lat: field(c.lat),
            lon: field(c.lon),
            value: c.value.map(field),
            sigma: c.sigma.map(field),
            extras: RawExtras {
                quantity: c
                    .quantity
                    .map(|k| String::from_utf8_lossy(&self.record[k]).into_owned()),
                altitude_km: c.altitude_km.map(field),
                height_m: c.height_m.map(field),
                time: c.time.map(field),
            },
        })
    }
}

impl<R: Read> Iterator for CsvPointRecords<R> {
    type Item = Result<RawRecord>;

    fn next(&mut self) -> Option<Result<RawRecord>> {
        if self.finished {
            return None;
        }
        let result = match self.next_data_record() {
            Ok(Some(line)) => self.raw_record(line),
            Ok(None) => {
                self.finished = true;
                return None;
            }
            Err(e) => Err(e),
        };
        if result.is_err() {
            self.finished = true;
        }
        Some(result)
    }
}

fn bytecount(bytes: &[u8], byte: u8) -> u64 {
    bytes.iter().filter(|&&b| b == byte).count() as u64
}

fn csv_error(path: &Path, e: ::csv::Error) -> Error {
    let message = e.to_string();
    match e.into_kind() {
        ::csv::ErrorKind::Io(io) => Error::io(path, io),
        _ => Error::format(path, message),
    }
}

/// Finds a column by case-insensitive name.
fn column_index(headers: &[String], name: &str) -> Option<usize> {
    headers.iter().position(|h| h.eq_ignore_ascii_case(name))
}

/// Locates the columns named in `options`; a required one that is missing is named with the
/// header it was looked for in, and a name that matches two header columns is refused (which
/// one was meant cannot be known).
fn locate_columns(
    path: &Path,
    headers: &[String],
    options: &PointReadOptions,
) -> Result<ColumnIndices> {
    let names = &options.columns;
    let hint = |key: &str| match &options.column_hint {
        Some(config_key) => format!("set {config_key}.{key} = \"NAME\" in the config"),
        None => format!("name it with --columns {key}=NAME"),
    };
    for name in [&names.lat, &names.lon, &names.value, &names.sigma] {
        let matching: Vec<usize> = headers
            .iter()
            .enumerate()
            .filter(|(_, h)| h.eq_ignore_ascii_case(name))
            .map(|(i, _)| i + 1)
            .collect();
        if matching.len() > 1 {
            return Err(Error::format(
                path,
                format!(
                    "the header has {} columns named `{name}` (columns {}); rename all but one",
                    matching.len(),
                    matching
                        .iter()
                        .map(|i| i.to_string())
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            ));
        }
    }
    let required = |key: &str, name: &str| -> Result<usize> {
        column_index(headers, name).ok_or_else(|| {
            Error::format(
                path,
                format!(
                    "no `{name}` column for {key} in the header (columns: {}); {}",
                    headers.join(", "),
                    hint(key)
                ),
            )
        })
    };
    Ok(ColumnIndices {
        lat: required("lat", &names.lat)?,
        lon: required("lon", &names.lon)?,
        value: if options.require_value {
            Some(required("value", &names.value)?)
        } else {
            column_index(headers, &names.value)
        },
        sigma: column_index(headers, &names.sigma),
        quantity: column_index(headers, &names.quantity),
        altitude_km: column_index(headers, &names.altitude_km),
        height_m: column_index(headers, &names.height_m),
        time: column_index(headers, &names.time),
    })
}
