//! The library's error type. Every variant carries enough context (file, line, variable,
//! degree and order, sizes) for the message alone to tell a user what to fix.

use std::path::PathBuf;

/// Result alias used throughout the library.
pub type Result<T, E = Error> = std::result::Result<T, E>;

#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A value given by the caller is outside what the operation accepts.
    #[error("{0}")]
    InvalidInput(String),

    /// A coefficient that must be finite is NaN or infinite.
    #[error("coefficient {which}_{{{l},{m}}} is not finite ({value})")]
    NonFiniteCoefficient {
        which: &'static str,
        l: usize,
        m: usize,
        value: f64,
    },

    /// Two objects that must agree in shape do not (grid vs plan, model vs grid, ...).
    #[error("shape mismatch: {0}")]
    ShapeMismatch(String),

    /// A planned allocation does not fit in the memory this machine has available.
    #[error(
        "{what} needs {} but only {available_mib:.0} MiB are available; \
         lower the degree or free memory",
        needed_text(*needed_mib)
    )]
    InsufficientMemory {
        what: String,
        needed_mib: f64,
        available_mib: f64,
    },

    /// A file could not be read or written. The operating system's message is part of the
    /// text and deliberately not exposed as the error's source, so that printing the chain
    /// shows it once.
    #[error("{path}: {cause}")]
    Io {
        path: PathBuf,
        cause: std::io::Error,
    },

    /// A file was read but its content is not what was expected.
    #[error("{path}: {message}")]
    Format { path: PathBuf, message: String },

    /// A file was read but one of its lines is malformed.
    #[error("{path}, line {line}: {message}")]
    Line {
        path: PathBuf,
        line: usize,
        message: String,
    },
}

impl Error {
    pub fn invalid(message: impl Into<String>) -> Self {
        Error::InvalidInput(message.into())
    }

    pub fn format(path: impl Into<PathBuf>, message: impl Into<String>) -> Self {
        Error::Format {
            path: path.into(),
            message: message.into(),
        }
    }

    pub fn io(path: impl Into<PathBuf>, cause: std::io::Error) -> Self {
        Error::Io {
            path: path.into(),
            cause,
        }
    }
}

/// The size in a memory refusal: "about N MiB", or "more than N MiB" when the estimate hit the
/// ceiling of the saturating size arithmetic (2^64 bytes), where "about" would not be true.
fn needed_text(needed_mib: f64) -> String {
    let ceiling_mib = u64::MAX as f64 / (1024.0 * 1024.0);
    if needed_mib >= ceiling_mib {
        format!("more than {ceiling_mib:.0} MiB")
    } else {
        format!("about {needed_mib:.0} MiB")
    }
}

#[cfg(test)]
mod tests {
    use super::needed_text;

    #[test]
    fn saturated_estimates_say_more_than() {
        assert_eq!(needed_text(2000.0), "about 2000 MiB");
        let saturated = u64::MAX as f64 / (1024.0 * 1024.0);
        assert!(needed_text(saturated).starts_with("more than "));
    }
}
