//! Memory budgeting: every large allocation (grids, plans, normal matrices) is estimated first
//! and refused with the estimate when it would not fit.

use crate::error::{Error, Result};

/// Bytes of memory the operating system reports as available to a new allocation.
///
/// Reads `MemAvailable` from `/proc/meminfo` on Linux; where that is not readable, returns
/// `None` and callers skip the check rather than guess.
pub fn available_bytes() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    parse_mem_available(&text)
}

fn parse_mem_available(meminfo: &str) -> Option<u64> {
    let line = meminfo.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib * 1024)
}

/// Refuses an allocation of `needed_bytes` for `what` when it exceeds the available memory.
///
/// A safety margin of 10% of the available memory is kept for the rest of the process.
pub fn check_fits(what: &str, needed_bytes: u64) -> Result<()> {
    if let Some(available) = available_bytes() {
        check_fits_within(what, needed_bytes, available)
    } else {
        Ok(())
    }
}

/// As [`check_fits`] with an explicit limit (used by tests and by `--memory-limit`).
pub fn check_fits_within(what: &str, needed_bytes: u64, available_bytes: u64) -> Result<()> {
    let usable = available_bytes as f64 * 0.9;
    if needed_bytes as f64 > usable {
        return Err(Error::InsufficientMemory {
            what: what.to_string(),
            needed_mib: needed_bytes as f64 / MIB,
            available_mib: usable / MIB,
        });
    }
    Ok(())
}

/// Bytes in a mebibyte, for messages.
pub const MIB: f64 = 1024.0 * 1024.0;

/// Peak resident set size of this process in MiB (`VmHWM` in `/proc/self/status`).
pub fn peak_rss_mib() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = text.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib / 1024.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_meminfo_line() {
        let text = "MemTotal:       24000000 kB\nMemAvailable:   1000 kB\n";
        assert_eq!(parse_mem_available(text), Some(1000 * 1024));
    }

    #[test]
    fn refuses_with_estimate() {
        let err = check_fits_within("a test grid", 2_000 * 1024 * 1024, 1_000 * 1024 * 1024)
            .unwrap_err()
            .to_string();
        assert!(err.contains("a test grid"), "{err}");
        assert!(err.contains("2000 MiB"), "{err}");
        assert!(check_fits_within("small", 10, 1_000_000).is_ok());
    }
}
