//! Library errors as Python exceptions, by the same kinds the command line maps to exit codes
//! (`cli/src/exit_code.rs`): bad input → `ValueError`, input/output → `OSError`, not enough
//! memory → `MemoryError`. The message is the library's, as the command line prints it.

use pyo3::exceptions::{PyMemoryError, PyOSError, PyValueError};
use pyo3::PyErr;

/// The Python exception for a library error.
pub fn to_py(err: kugel::Error) -> PyErr {
    let message = err.to_string();
    match err {
        kugel::Error::Io { .. } => PyOSError::new_err(message),
        kugel::Error::InsufficientMemory { .. } => PyMemoryError::new_err(message),
        kugel::Error::InvalidInput(_)
        | kugel::Error::NonFiniteCoefficient { .. }
        | kugel::Error::ShapeMismatch(_)
        | kugel::Error::Format { .. }
        | kugel::Error::Line { .. } => PyValueError::new_err(message),
    }
}

/// `Result<T, kugel::Error>` → `PyResult<T>`.
pub trait IntoPyResult<T> {
    fn py_err(self) -> pyo3::PyResult<T>;
}

impl<T> IntoPyResult<T> for kugel::Result<T> {
    fn py_err(self) -> pyo3::PyResult<T> {
        self.map_err(to_py)
    }
}
