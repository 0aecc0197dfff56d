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
        "{what} needs about {needed_mib:.0} MiB but only {available_mib:.0} MiB are available; \
         lower the degree or free memory"
    )]
    InsufficientMemory {
        what: String,
        needed_mib: f64,
        available_mib: f64,
    },

    /// A file could not be read or written.
    #[error("{path}: {source}")]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
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

    pub fn io(path: impl Into<PathBuf>, source: std::io::Error) -> Self {
        Error::Io {
            path: path.into(),
            source,
        }
    }
}
