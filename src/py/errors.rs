//! The exception tree, created once, and the one conversion from [`crate::Error`].

use std::panic::{catch_unwind, AssertUnwindSafe};

use pyo3::exceptions::{PyRuntimeError, PyValueError};
use pyo3::prelude::*;

use crate::error::Error;

pyo3::create_exception!(
    placewise,
    InputError,
    PyValueError,
    "Bad input: the message names the argument, the offending index and what was expected."
);
pyo3::create_exception!(
    placewise,
    DegenerateInputError,
    InputError,
    "Well-formed input for which no answer of the requested kind exists (too few distinct points, all collinear, a region without area)."
);

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    let py = m.py();
    m.add("InputError", py.get_type::<InputError>())?;
    m.add("DegenerateInputError", py.get_type::<DegenerateInputError>())?;
    Ok(())
}

impl From<Error> for PyErr {
    fn from(error: Error) -> PyErr {
        if error.is_degenerate() {
            DegenerateInputError::new_err(error.to_string())
        } else {
            InputError::new_err(error.to_string())
        }
    }
}

/// An `InputError` raised by the binding layer itself (shape and dtype problems).
pub(crate) fn input_error(message: String) -> PyErr {
    InputError::new_err(message)
}

/// Run a pure kernel with the GIL released.
///
/// A panic inside a kernel is a bug, never an answer: it is caught here and raised as
/// `RuntimeError` so that it cannot abort the interpreter or surface as `PanicException`.
pub(crate) fn run_detached<T, F>(py: Python<'_>, kernel: F) -> PyResult<T>
where
    T: Send,
    F: FnOnce() -> Result<T, Error> + Send,
{
    let outcome = py.detach(|| catch_unwind(AssertUnwindSafe(kernel)));
    match outcome {
        Ok(result) => result.map_err(PyErr::from),
        Err(panic) => {
            let what = panic
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| panic.downcast_ref::<String>().cloned())
                .unwrap_or_else(|| "unknown panic".to_string());
            Err(PyRuntimeError::new_err(format!("placewise internal error (please report): {what}")))
        }
    }
}
