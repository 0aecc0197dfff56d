//! Process exit codes, as documented in README.md.
//!
//! | code | meaning |
//! |---:|---|
//! | 0 | success |
//! | 1 | any other failure |
//! | 2 | bad command line (reported by the argument parser) |
//! | 3 | invalid input or config |
//! | 4 | input/output failure |
//! | 5 | not enough memory |

use kugel::Error;

/// The exit code for a failed command: from the library error at the root of the chain.
pub fn exit_code_for(err: &anyhow::Error) -> i32 {
    match err.downcast_ref::<Error>() {
        Some(Error::InvalidInput(_))
        | Some(Error::NonFiniteCoefficient { .. })
        | Some(Error::ShapeMismatch(_))
        | Some(Error::Format { .. })
        | Some(Error::Line { .. }) => 3,
        Some(Error::Io { .. }) => 4,
        Some(Error::InsufficientMemory { .. }) => 5,
        None => 1,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn library_errors_map_to_the_documented_codes() {
        let invalid = anyhow::Error::new(Error::invalid("bad degree"));
        assert_eq!(exit_code_for(&invalid), 3);
        let memory = anyhow::Error::new(kugel::memory::check_fits_within("x", 10, 1).unwrap_err());
        assert_eq!(exit_code_for(&memory), 5);
        // context added on top keeps the root's code
        let wrapped = invalid.context("reading model.nc");
        assert_eq!(exit_code_for(&wrapped), 3);
        assert_eq!(exit_code_for(&anyhow::anyhow!("something else")), 1);
    }
}
