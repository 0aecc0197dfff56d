//! Point input: every validation rule with its message, the bad-row policies, column
//! mapping, duplicates, and NetCDF point files written by the reference C library.

use std::io::Write;
use std::path::{Path, PathBuf};

use kugel::observe::points::{read_points, BadRowPolicy, ColumnNames, PointReadOptions};

fn csv(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    std::fs::File::create(&path)
        .unwrap()
        .write_all(text.as_bytes())
        .unwrap();
    path
}

fn error_of(text: &str) -> String {
    let dir = tempfile::tempdir().unwrap();
    let path = csv(dir.path(), "p.csv", text);
    read_points(&path, &PointReadOptions::default())
        .unwrap_err()
        .to_string()
}

#[test]
fn each_rule_names_line_and_reason() {
    let cases = [
        (
            "lat,lon,value\n95,0,1\n",
            "line 2: latitude 95 is outside [-90, 90]",
        ),
        (
            "lat,lon,value\n-90.5,0,1\n",
            "line 2: latitude -90.5 is outside [-90, 90]",
        ),
        (
            "lat,lon,value\n0,400,1\n",
            "line 2: longitude 400 is outside [-180, 360]",
        ),
        (
            "lat,lon,value\nabc,0,1\n",
            "line 2: latitude `abc` is not a number",
        ),
        (
            "lat,lon,value\n0,0,NaN\n",
            "line 2: value NaN is not finite",
        ),
        (
            "lat,lon,value\n0,0,inf\n",
            "line 2: value inf is not finite",
        ),
        (
            "lat,lon,value,sigma\n0,0,1,0\n",
            "line 2: sigma 0 is not a finite number > 0",
        ),
        (
            "lat,lon,value,sigma\n0,0,1,-2\n",
            "line 2: sigma -2 is not a finite number > 0",
        ),
        (
            "# comment\nlat,lon,value\n\n0,0,1\n1,1,x\n",
            "line 5: value `x` is not a number",
        ),
    ];
    for (text, expected) in cases {
        let err = error_of(text);
        assert!(err.contains(expected), "expected `{expected}` in `{err}`");
        assert!(err.contains("p.csv"), "{err}");
        assert!(err.contains("--on-bad-row skip"), "{err}");
    }
}

#[test]
fn error_quotes_the_first_five_bad_rows() {
    let mut text = String::from("lat,lon,value\n");
    for i in 0..8 {
        text.push_str(&format!("{},0,1\n", 100 + i));
    }
    text.push_str("10,10,1\n");
    let err = error_of(&text);
    assert!(err.contains("8 bad rows of 9"), "{err}");
    assert!(
        err.contains("line 2:") && err.contains("line 6:") && !err.contains("line 7:"),
        "{err}"
    );
    assert!(err.contains("..."), "{err}");
}

#[test]
fn skip_policy_skips_and_counts() {
    let dir = tempfile::tempdir().unwrap();
    let path = csv(
        dir.path(),
        "p.csv",
        "lat,lon,value\n0,0,1\n91,0,1\n1,1,2\n2,2,NaN\n",
    );
    let options = PointReadOptions {
        on_bad_row: BadRowPolicy::Skip,
        ..Default::default()
    };
    let (points, report) = read_points(&path, &options).unwrap();
    assert_eq!(points.len(), 2);
    assert_eq!(report.rows_read, 4);
    assert_eq!(report.bad_rows_skipped, 2);
    assert_eq!(points.source_lines, vec![2, 4]);
    assert!(
        report.summary().contains("2 bad rows skipped"),
        "{}",
        report.summary()
    );
    assert!(report.bad_row_examples[0].contains("line 3: latitude 91"));
}

#[test]
fn all_rows_bad_is_an_error_even_when_skipping() {
    let dir = tempfile::tempdir().unwrap();
    let path = csv(dir.path(), "p.csv", "lat,lon,value\n91,0,1\n");
    let options = PointReadOptions {
        on_bad_row: BadRowPolicy::Skip,
        ..Default::default()
    };
    let err = read_points(&path, &options).unwrap_err().to_string();
    assert!(
        err.contains("no valid observations (1 rows read, 1 bad)"),
        "{err}"
    );
}

#[test]
fn columns_are_case_insensitive_and_can_be_renamed() {
    let dir = tempfile::tempdir().unwrap();
    let path = csv(
        dir.path(),
        "p.csv",
        "Latitude,LONG,Grav,Err\n10,-170,5,0.5\n",
    );
    let options = PointReadOptions {
        columns: ColumnNames::parse("lat=latitude,lon=long,value=GRAV,sigma=err").unwrap(),
        ..Default::default()
    };
    let (points, _) = read_points(&path, &options).unwrap();
    assert_eq!(points.lat_deg, vec![10.0]);
    assert_eq!(points.lon_deg, vec![-170.0]);
    assert_eq!(points.value, vec![5.0]);
    assert_eq!(points.sigma, Some(vec![0.5]));
    // upper-case default names work too
    let path = csv(dir.path(), "q.csv", "LAT,LON,VALUE\n1,2,3\n");
    let (points, _) = read_points(&path, &PointReadOptions::default()).unwrap();
    assert!(points.sigma.is_none());
    assert_eq!(points.value, vec![3.0]);
}

#[test]
fn missing_columns_and_bad_column_specs_are_named() {
    let err = error_of("latitude,lon,value\n1,2,3\n");
    assert!(
        err.contains("no `lat` column for lat") && err.contains("latitude, lon, value"),
        "{err}"
    );
    assert!(err.contains("--columns lat=NAME"), "{err}");
    let err = error_of("lat,lon,g\n1,2,3\n");
    assert!(err.contains("no `value` column"), "{err}");
    let err = ColumnNames::parse("height=H").unwrap_err().to_string();
    assert!(err.contains("key `height` is not known"), "{err}");
    let err = ColumnNames::parse("lat").unwrap_err().to_string();
    assert!(err.contains("`lat` is not KEY=NAME"), "{err}");
    assert!("maybe"
        .parse::<BadRowPolicy>()
        .unwrap_err()
        .to_string()
        .contains("expected `error` or `skip`"));
}

#[test]
fn positions_alone_are_accepted_when_values_are_not_required() {
    let dir = tempfile::tempdir().unwrap();
    let path = csv(dir.path(), "p.csv", "lat,lon\n1,2\n1,2\n");
    let options = PointReadOptions {
        require_value: false,
        merge_duplicates: false,
        ..Default::default()
    };
    let (points, report) = read_points(&path, &options).unwrap();
    assert_eq!(points.len(), 2);
    assert!(!points.has_values() && points.value.is_empty());
    assert_eq!(report.duplicates_merged, 0);
}

#[test]
fn duplicates_merge_by_inverse_variance_across_longitude_conventions() {
    // 1 ± 1 at 170°W and 4 ± 2 at 190°E (the same place): mean (1 + 4/4)/(1 + 1/4) = 1.6,
    // σ = 1/sqrt(1.25) (inverse-variance weighting; common practice).
    let dir = tempfile::tempdir().unwrap();
    let path = csv(
        dir.path(),
        "p.csv",
        "lat,lon,value,sigma\n10,-170,1,1\n5,5,7,1\n10,190,4,2\n",
    );
    let (points, report) = read_points(&path, &PointReadOptions::default()).unwrap();
    assert_eq!(points.len(), 2);
    assert_eq!(report.duplicates_merged, 1);
    assert_eq!(report.duplicate_positions, 1);
    assert!((points.value[0] - 1.6).abs() < 1e-12);
    assert!((points.sigma.as_ref().unwrap()[0] - 1.25f64.sqrt().recip()).abs() < 1e-12);
    assert!(report
        .summary()
        .contains("1 duplicate observations merged into 1 positions"));
}

#[test]
fn netcdf_point_file_from_the_reference_library() {
    // Fixture: tests/reference/observe_points_netcdf.py (netCDF4-python 1.7.5, libnetcdf 4.10.1).
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/observe/points.nc");
    let columns = ColumnNames::parse("value=g,sigma=err").unwrap();
    let err = read_points(
        &path,
        &PointReadOptions {
            columns: columns.clone(),
            ..Default::default()
        },
    )
    .unwrap_err()
    .to_string();
    assert!(err.contains("record 3: value NaN is not finite"), "{err}");
    let options = PointReadOptions {
        columns,
        on_bad_row: BadRowPolicy::Skip,
        ..Default::default()
    };
    let (points, report) = read_points(&path, &options).unwrap();
    assert_eq!(report.rows_read, 5);
    assert_eq!(report.bad_rows_skipped, 1);
    assert_eq!(points.lat_deg, vec![10.0, -45.5, 89.0, -90.0]);
    assert_eq!(points.lon_deg, vec![-170.0, 200.0, 0.0, 12.0]);
    assert_eq!(points.value, vec![1.5, -2.25, 3.0, 4.0]);
    assert_eq!(points.sigma, Some(vec![0.1, 0.2, 0.3, 0.5]));
    assert_eq!(points.source_lines, vec![0, 1, 2, 4]);
    let err = read_points(&path, &PointReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("no variable `value` for value") && err.contains("LAT"),
        "{err}"
    );
}

#[test]
fn quoted_field_with_line_break_and_comma_is_one_field() {
    // RFC 4180 §2 (6)–(7): a quoted field may hold commas, line breaks and "" for a quote.
    let dir = tempfile::tempdir().unwrap();
    let path = csv(
        dir.path(),
        "p.csv",
        "lat,lon,value,station\n10,20,1.5,\"Wickline ridge,\nnorth cairn\"\n11,21,2.5,\"say \"\"Halyard\"\"\"\n12,22,3.5,plain\n",
    );
    let (points, report) = read_points(&path, &PointReadOptions::default()).unwrap();
    assert_eq!(report.rows_read, 3);
    assert_eq!(points.lat_deg, vec![10.0, 11.0, 12.0]);
    assert_eq!(points.value, vec![1.5, 2.5, 3.5]);
    // a record is numbered by the line it starts on
    assert_eq!(points.source_lines, vec![2, 4, 5]);
}

#[test]
fn bad_value_after_a_multi_line_record_names_its_own_line() {
    let err = error_of("lat,lon,value,note\n1,1,1,\"a\nb, c\nd\"\n2,2,x,ok\n");
    assert!(err.contains("line 5: value `x` is not a number"), "{err}");
    // CRLF line ends, blank and comment lines (indented too) before the record
    let err = error_of("\u{feff}lat,lon,value\r\n\r\n# c\r\n   # indented\r\n1,1,1\r\n2,2,zz\r\n");
    assert!(err.contains("line 6: value `zz` is not a number"), "{err}");
    let err = error_of("lat,lon,value,note\n1,1,1,\"x\r\ny\"\r\n\n\n2,2,q,ok");
    assert!(err.contains("line 6: value `q` is not a number"), "{err}");
}

#[test]
fn malformed_records_are_refused_with_their_line() {
    let err = error_of("lat,lon,value\n1,1,1\n1,2\n");
    assert!(
        err.contains("line 3") && err.contains("2 fields, but the header has 3 (lat,lon,value)"),
        "{err}"
    );
    // an open quote that swallows the following lines
    let err = error_of("lat,lon,value,note\n1,1,1,ok\n1,1,1,\"open\n2,2,2,x\n");
    assert!(err.contains("line 3: unterminated quoted field"), "{err}");
    let err = error_of("lat,lon,value\n1,\"2,3\n4,5,6\n");
    assert!(err.contains("line 2: unterminated quoted field"), "{err}");
    // a closed multi-line field at the very end of a file without a final line break is fine
    let dir = tempfile::tempdir().unwrap();
    let path = csv(dir.path(), "p.csv", "lat,lon,value,note\n1,1,1,\"a\nb\"");
    let (points, _) = read_points(&path, &PointReadOptions::default()).unwrap();
    assert_eq!(points.source_lines, vec![2]);
    let err = error_of("# only a comment\n\n");
    assert!(err.contains("no header row"), "{err}");
    let err = error_of("lat,lon,value\n1,1,\u{0}\u{0}\n");
    assert!(err.contains("line 2: value"), "{err}");
}

#[test]
fn non_utf8_record_names_its_line() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("p.csv");
    std::fs::write(&path, b"lat,lon,value\n1,1,1\n2,2,\xff\n").unwrap();
    let err = read_points(&path, &PointReadOptions::default())
        .unwrap_err()
        .to_string();
    assert!(err.contains("line 3") && err.contains("not UTF-8"), "{err}");
}

/// An endless CSV source, generated row by row, that counts what it hands out and refuses to
/// give more than `limit` bytes (so a reader that tried to take the whole input fails at once
/// instead of exhausting memory).
struct EndlessRows {
    next_row: u64,
    pending: Vec<u8>,
    given: std::rc::Rc<std::cell::Cell<u64>>,
    limit: u64,
}

impl std::io::Read for EndlessRows {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        if self.given.get() >= self.limit {
            return Err(std::io::Error::other("read past the limit"));
        }
        while self.pending.len() < buf.len() {
            let row = if self.next_row == 0 {
                "lat,lon,value\n".to_string()
            } else {
                let i = self.next_row;
                format!("{},{},{}\n", (i % 180) as f64 - 89.5, i % 360, i)
            };
            self.pending.extend_from_slice(row.as_bytes());
            self.next_row += 1;
        }
        let n = buf.len();
        buf.copy_from_slice(&self.pending[..n]);
        self.pending.drain(..n);
        self.given.set(self.given.get() + n as u64);
        Ok(n)
    }
}

#[test]
fn csv_is_streamed_not_read_whole() {
    // By design the reader holds one record and a fixed read-ahead buffer: taking 20 000
    // records (~300 kB of text) from an endless source must not pull more than that text plus
    // one buffer, whatever the size of the input.
    use kugel::observe::points::csv::CsvPointRecords;
    let given = std::rc::Rc::new(std::cell::Cell::new(0));
    let source = EndlessRows {
        next_row: 0,
        pending: Vec::new(),
        given: given.clone(),
        limit: 16 << 20,
    };
    let records = CsvPointRecords::new(
        Path::new("endless.csv"),
        source,
        &PointReadOptions::default(),
    )
    .unwrap();
    let taken: Vec<_> = records.take(20_000).collect::<Result<_, _>>().unwrap();
    assert_eq!(taken.len(), 20_000);
    assert_eq!(taken[19_999].line, 20_001);
    assert_eq!(taken[19_999].value, Some(Ok(20_000.0)));
    let text_bytes: u64 = (1..=20_000u64)
        .map(|i| format!("{},{},{}\n", (i % 180) as f64 - 89.5, i % 360, i).len() as u64)
        .sum::<u64>()
        + 14;
    assert!(
        given.get() <= text_bytes + (128 << 10),
        "{} bytes pulled for {text_bytes} bytes of records",
        given.get()
    );
}

#[test]
fn large_file_reads_every_row() {
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::from("lat,lon,value\n");
    let n = 200_000usize;
    for i in 0..n {
        text.push_str(&format!(
            "{},{},{}\n",
            (i % 179) as f64 - 89.0,
            (i / 179) % 360,
            i
        ));
    }
    let path = csv(dir.path(), "big.csv", &text);
    let options = PointReadOptions {
        merge_duplicates: false,
        ..Default::default()
    };
    let (points, report) = read_points(&path, &options).unwrap();
    assert_eq!(report.rows_read, n);
    assert_eq!(points.len(), n);
    assert_eq!(points.source_lines[n - 1], n + 1);
    let sum: f64 = points.value.iter().sum();
    assert_eq!(sum, (n * (n - 1) / 2) as f64);
}
