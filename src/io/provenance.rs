//! Provenance stamped on every output: the command line (`history`), the config digest, the
//! inputs with their SHA-256 digests, and the degree, normalisation and filter of the run.

use std::io::Read;
use std::path::Path;

use sha2::{Digest, Sha256};

use crate::error::{Error, Result};

/// What produced a file. Turned into NetCDF global attributes (or text-table header lines) by
/// [`Provenance::to_attributes`].
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Provenance {
    /// The command line as typed; recorded in `history` with a UTC time stamp.
    pub command_line: String,
    /// SHA-256 of the config file that drove the run, if any.
    pub config_digest: Option<String>,
    /// (path, SHA-256 hex) of every input file.
    pub inputs: Vec<(String, String)>,
    pub lmax: Option<usize>,
    pub normalization: Option<String>,
    /// Description of the filter applied, if any.
    pub filter: Option<String>,
    /// Further (name, value) pairs, written as given.
    pub extra: Vec<(String, String)>,
}

impl Provenance {
    /// A provenance record with only the command line set.
    pub fn from_command_line(command_line: impl Into<String>) -> Self {
        Provenance {
            command_line: command_line.into(),
            ..Default::default()
        }
    }

    /// Adds an input file with its digest.
    pub fn add_input(&mut self, path: &Path) -> Result<()> {
        let digest = sha256_file(path)?;
        self.inputs.push((path.display().to_string(), digest));
        Ok(())
    }

    /// Global attributes: `history` (`"<UTC time>: <command line>"`), `source` is left to the
    /// writer; `kugel_config_sha256`, `kugel_inputs` ("path sha256:HEX; ..."), `kugel_lmax`,
    /// `kugel_normalization`, `kugel_filter`, then `extra` as given. Empty items are omitted.
    ///
    /// The time stamp honours `SOURCE_DATE_EPOCH` (reproducible-builds convention), so runs
    /// can produce byte-identical files when asked to.
    pub fn to_attributes(&self) -> Vec<(String, String)> {
        let mut out = Vec::new();
        if !self.command_line.is_empty() {
            out.push((
                "history".to_string(),
                format!("{}: {}", utc_timestamp_now(), self.command_line),
            ));
        }
        if let Some(d) = &self.config_digest {
            out.push(("kugel_config_sha256".to_string(), d.clone()));
        }
        if !self.inputs.is_empty() {
            let list: Vec<String> = self
                .inputs
                .iter()
                .map(|(p, d)| format!("{p} sha256:{d}"))
                .collect();
            out.push(("kugel_inputs".to_string(), list.join("; ")));
        }
        if let Some(l) = self.lmax {
            out.push(("kugel_lmax".to_string(), l.to_string()));
        }
        if let Some(n) = &self.normalization {
            out.push(("kugel_normalization".to_string(), n.clone()));
        }
        if let Some(f) = &self.filter {
            out.push(("kugel_filter".to_string(), f.clone()));
        }
        out.extend(self.extra.iter().cloned());
        out
    }
}

/// A new history line in front of an input's history (newest first), separated by `sep`.
pub fn chain_history(new: &str, previous: Option<&str>, sep: &str) -> String {
    match previous.map(str::trim).filter(|p| !p.is_empty()) {
        Some(p) => format!("{new}{sep}{p}"),
        None => new.to_string(),
    }
}

/// The `source` attribute value: `"kugel <version>"`.
pub fn source_attribute() -> String {
    format!("kugel {}", env!("CARGO_PKG_VERSION"))
}

/// SHA-256 of a file's contents as lower-case hex.
pub fn sha256_file(path: &Path) -> Result<String> {
    let mut f = std::fs::File::open(path).map_err(|e| Error::io(path, e))?;
    let mut hasher = Sha256::new();
    let mut buf = vec![0u8; 1 << 16];
    loop {
        let n = f.read(&mut buf).map_err(|e| Error::io(path, e))?;
        if n == 0 {
            break;
        }
        hasher.update(&buf[..n]);
    }
    Ok(hasher
        .finalize()
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect())
}

/// Current UTC time as ISO 8601 (`SOURCE_DATE_EPOCH` overrides the clock).
fn utc_timestamp_now() -> String {
    let secs = std::env::var("SOURCE_DATE_EPOCH")
        .ok()
        .and_then(|s| s.trim().parse::<i64>().ok())
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map(|d| d.as_secs() as i64)
                .unwrap_or(0)
        });
    utc_timestamp(secs)
}

/// Seconds since 1970 as `YYYY-MM-DDTHH:MM:SSZ` (proleptic Gregorian calendar; civil-from-days
/// algorithm of H. Hinnant, "chrono-Compatible Low-Level Date Algorithms").
fn utc_timestamp(secs: i64) -> String {
    let days = secs.div_euclid(86_400);
    let rem = secs.rem_euclid(86_400);
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        (rem / 60) % 60,
        rem % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_of_known_string() {
        // FIPS 180-2 appendix B.1 test vector: SHA-256("abc")
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("abc.txt");
        std::fs::write(&p, b"abc").unwrap();
        assert_eq!(
            sha256_file(&p).unwrap(),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn timestamps() {
        // common practice: Unix epoch conventions (0 = 1970-01-01, 951782400 = 2000-02-29)
        assert_eq!(utc_timestamp(0), "1970-01-01T00:00:00Z");
        assert_eq!(utc_timestamp(951_782_400), "2000-02-29T00:00:00Z");
        assert_eq!(utc_timestamp(1_700_000_000), "2023-11-14T22:13:20Z");
    }

    #[test]
    fn attributes_carry_every_item() {
        let p = Provenance {
            command_line: "kugel analyze a.nc".into(),
            config_digest: Some("ab12".into()),
            inputs: vec![("a.nc".into(), "ff00".into())],
            lmax: Some(40),
            normalization: Some("geodesy".into()),
            filter: Some("gauss:300".into()),
            extra: vec![("kugel_step".into(), "analyse".into())],
        };
        let a = p.to_attributes();
        let get = |k: &str| a.iter().find(|(n, _)| n == k).map(|(_, v)| v.clone());
        assert!(get("history").unwrap().ends_with(": kugel analyze a.nc"));
        assert_eq!(get("kugel_inputs").unwrap(), "a.nc sha256:ff00");
        assert_eq!(get("kugel_lmax").unwrap(), "40");
        assert_eq!(get("kugel_filter").unwrap(), "gauss:300");
        assert_eq!(get("kugel_step").unwrap(), "analyse");
        assert_eq!(get("kugel_config_sha256").unwrap(), "ab12");
    }
}
