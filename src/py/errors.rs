//! The exception tree, created once, and the one conversion from [`crate::Error`].

use pyo3::exceptions::PyValueError;
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
