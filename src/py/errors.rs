//! The exception tree, created once, and the one conversion from [`crate::Error`].
//!
//! Every `InputError` raised from a kernel error carries the error itself as `detail` (an
//! [`ErrorDetail`]), with `argument`, `group` (the integer group label) and `row` (the input
//! row position) as attributes. The Python package renames groups and rows into the user's
//! own terms (a group column's values, a DataFrame's index labels) with
//! `detail.describe(name_group, name_row)`, so one message layout serves every caller.

use pyo3::exceptions::PyValueError;
use pyo3::prelude::*;

use crate::error::{Error, Namer};

pyo3::create_exception!(
    placewise,
    InputError,
    PyValueError,
    "Bad input: the message names the argument, the offending row (and group) and what was expected.\n\n\
     Attributes: ``argument`` (str or None), ``group`` (the group's label or None), ``row`` (the\n\
     input row's label or None), ``detail`` (structured form, or None)."
);
pyo3::create_exception!(
    placewise,
    DegenerateInputError,
    InputError,
    "Well-formed input for which no answer of the requested kind exists (too few distinct points, all collinear, a region without area)."
);

/// A kernel's refusal in structured form: what the Python package needs to restate it in the
/// user's terms.
#[pyclass(frozen, module = "placewise._core")]
pub(crate) struct ErrorDetail {
    error: Error,
}

/// Names rows and groups by calling back into Python.
struct PythonNamer<'a, 'py> {
    group: &'a Bound<'py, PyAny>,
    row: &'a Bound<'py, PyAny>,
}

impl Namer for PythonNamer<'_, '_> {
    fn row(&self, argument: &str, row: usize) -> String {
        self.row.call1((argument, row)).and_then(|s| s.extract::<String>()).unwrap_or_else(|_| row.to_string())
    }
    fn group(&self, label: i64) -> String {
        self.group.call1((label,)).and_then(|s| s.extract::<String>()).unwrap_or_else(|_| label.to_string())
    }
}

#[pymethods]
impl ErrorDetail {
    /// The message with groups named by `name_group(label) -> str` and rows by
    /// `name_row(argument, row) -> str`.
    fn describe(&self, name_group: &Bound<'_, PyAny>, name_row: &Bound<'_, PyAny>) -> String {
        self.error.describe(&PythonNamer { group: name_group, row: name_row })
    }

    /// The argument the error concerns.
    #[getter]
    fn argument(&self) -> &'static str {
        self.error.argument()
    }

    /// The integer label of the group it happened in, or None.
    #[getter]
    fn group(&self) -> Option<i64> {
        self.error.group()
    }

    /// The input row (position) it concerns, or None.
    #[getter]
    fn row(&self) -> Option<usize> {
        self.error.row()
    }

    /// True for well-formed but degenerate input.
    #[getter]
    fn degenerate(&self) -> bool {
        self.error.is_degenerate()
    }

    fn __repr__(&self) -> String {
        format!("ErrorDetail({:?})", self.error.to_string())
    }
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    let py = m.py();
    let input_error = py.get_type::<InputError>();
    // Class-level defaults, so every InputError answers these attributes.
    for name in ["argument", "group", "row", "detail"] {
        input_error.setattr(name, py.None())?;
    }
    m.add("InputError", input_error)?;
    m.add("DegenerateInputError", py.get_type::<DegenerateInputError>())?;
    m.add_class::<ErrorDetail>()?;
    Ok(())
}

/// The exception for `error`, with its structured form attached.
pub(crate) fn exception(py: Python<'_>, error: Error) -> PyErr {
    let message = error.to_string();
    let err = if error.is_degenerate() { DegenerateInputError::new_err(message) } else { InputError::new_err(message) };
    let value = err.value(py);
    let attach = || -> PyResult<()> {
        value.setattr("argument", error.argument())?;
        value.setattr("group", error.group())?;
        value.setattr("row", error.row())?;
        value.setattr("detail", Py::new(py, ErrorDetail { error })?)?;
        Ok(())
    };
    match attach() {
        Ok(()) => err,
        Err(e) => e,
    }
}

/// A kernel's outcome for one group as Python: `None` when solved, else its [`ErrorDetail`].
pub(crate) fn problem<T>(py: Python<'_>, outcome: &Result<T, Error>) -> PyResult<Option<Py<ErrorDetail>>> {
    match outcome {
        Ok(_) => Ok(None),
        Err(error) => Ok(Some(Py::new(py, ErrorDetail { error: error.clone() })?)),
    }
}

impl From<Error> for PyErr {
    fn from(error: Error) -> PyErr {
        Python::attach(|py| exception(py, error))
    }
}

/// An `InputError` raised by the binding layer itself (shape, dtype and argument problems),
/// naming the argument.
pub(crate) fn argument_error(argument: &str, message: String) -> PyErr {
    let err = InputError::new_err(message);
    Python::attach(|py| {
        let value = err.value(py);
        let _ = value.setattr("argument", argument);
        let _ = value.setattr("group", py.None());
        let _ = value.setattr("row", py.None());
        let _ = value.setattr("detail", py.None());
    });
    err
}

/// An `InputError` raised by the binding layer itself (shape and dtype problems).
pub(crate) fn input_error(message: String) -> PyErr {
    InputError::new_err(message)
}
