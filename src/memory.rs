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

/// Requests up to this size pass [`check_fits`] without asking the system: reading
/// `/proc/meminfo` takes about 10 µs, a few percent of a degree-255 transform called in a loop
/// (from Python, say), while a block this small is never what exhausts a machine that runs
/// kugel; the checks exist for the grids and matrices that grow with the degree.
pub const SMALL_REQUEST_BYTES: u64 = 16 << 20;

/// Refuses an allocation of `needed_bytes` for `what` when it exceeds the available memory.
///
/// A safety margin of 10% of the available memory is kept for the rest of the process.
/// Requests of at most [`SMALL_REQUEST_BYTES`] always pass.
pub fn check_fits(what: &str, needed_bytes: u64) -> Result<()> {
    if needed_bytes <= SMALL_REQUEST_BYTES {
        return Ok(());
    }
    if let Some(available) = available_bytes() {
        check_fits_within(what, needed_bytes, available)
    } else {
        Ok(())
    }
}

/// As [`check_fits`] with an explicit limit, for requests of any size (used by tests).
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

/// Saturating product of sizes: a count typed by a user or declared by a file can never
/// overflow into a small number (or a panic) on its way to [`check_fits`].
pub fn saturating_product(factors: &[u64]) -> u64 {
    factors.iter().fold(1u64, |acc, &f| acc.saturating_mul(f))
}

/// Number of (l, m) pairs with 0 ≤ m ≤ l ≤ L, (L + 1)(L + 2)/2, saturating.
pub fn coefficient_pairs(lmax: usize) -> u64 {
    let l1 = (lmax as u64).saturating_add(1);
    saturating_product(&[l1, l1.saturating_add(1)]) / 2
}

/// Bytes of one coefficient set of degree L with sigmas (C, S, σC, σS as f64), saturating.
pub fn coefficient_set_bytes(lmax: usize) -> u64 {
    coefficient_pairs(lmax).saturating_mul(4 * 8)
}

/// Upper bound of the nodes of the Gauss grid of band limit L (L + 1 rows of at most
/// 2·(2L + 1) columns, the FFT-friendly length), saturating; computed without building it.
pub fn gauss_grid_nodes_bound(lmax: usize) -> u64 {
    let l = lmax as u64;
    saturating_product(&[
        l.saturating_add(1),
        l.saturating_mul(2).saturating_add(1).saturating_mul(2),
    ])
}

/// Refuses a coefficient set of degree `lmax` for `what` that does not fit in memory (exit 5
/// with the estimate), before it is allocated.
pub fn check_coefficients_fit(what: &str, lmax: usize) -> Result<()> {
    check_fits(
        &format!("{what} (degree {lmax})"),
        coefficient_set_bytes(lmax),
    )
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
    fn sizes_saturate_instead_of_overflowing() {
        assert_eq!(coefficient_pairs(2), 6);
        assert_eq!(coefficient_pairs(usize::MAX), u64::MAX / 2);
        assert_eq!(coefficient_set_bytes(usize::MAX), u64::MAX);
        assert_eq!(gauss_grid_nodes_bound(usize::MAX), u64::MAX);
        assert_eq!(saturating_product(&[1 << 40, 1 << 40]), u64::MAX);
        let err = check_fits_within("a huge model", coefficient_set_bytes(usize::MAX), 1 << 30)
            .unwrap_err()
            .to_string();
        assert!(err.contains("a huge model"), "{err}");
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
