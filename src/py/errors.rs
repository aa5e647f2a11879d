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
///
/// A detail pickled (to cross a process, as Dask and `multiprocessing` do) is restored as its
/// message and attributes only: the structured error lives in Rust and is not rebuilt, so
/// `describe` of a restored detail returns the message as it was, names included.
#[pyclass(frozen, module = "placewise._core")]
pub(crate) struct ErrorDetail {
    form: DetailForm,
}

enum DetailForm {
    /// Raised in this process: the kernel's own error, which can be restated in other names.
    Live(Error),
    /// Restored from a pickle: what the live form answered when it was pickled.
    Restored { message: String, argument: String, group: Option<i64>, row: Option<usize>, degenerate: bool },
}

impl ErrorDetail {
    fn live(error: Error) -> Self {
        ErrorDetail { form: DetailForm::Live(error) }
    }
}

/// Names rows and groups by calling back into Python.
struct PythonNamer<'a, 'py> {
    group: &'a Bound<'py, PyAny>,
    row: &'a Bound<'py, PyAny>,
    /// The units of the call's lengths (`"m"`) and costs (`"min"`), written after each of them.
    length_unit: Option<&'a str>,
    cost_unit: Option<&'a str>,
}

/// `number` followed by `unit`, when there is one.
fn with_unit(number: String, unit: Option<&str>) -> String {
    match unit {
        Some(unit) if !unit.is_empty() => format!("{number} {unit}"),
        _ => number,
    }
}

impl Namer for PythonNamer<'_, '_> {
    fn row(&self, argument: &str, row: usize) -> String {
        self.row.call1((argument, row)).and_then(|s| s.extract::<String>()).unwrap_or_else(|_| row.to_string())
    }
    fn group(&self, label: i64) -> String {
        self.group.call1((label,)).and_then(|s| s.extract::<String>()).unwrap_or_else(|_| label.to_string())
    }
    fn length(&self, number: String) -> String {
        with_unit(number, self.length_unit)
    }
    fn cost(&self, number: String) -> String {
        with_unit(number, self.cost_unit)
    }
}

#[pymethods]
impl ErrorDetail {
    /// The message with groups named by `name_group(label) -> str`, rows by
    /// `name_row(argument, row) -> str`, lengths followed by `length_unit` and costs by
    /// `cost_unit` when given (a restored detail: its message as it was).
    #[pyo3(signature = (name_group, name_row, length_unit=None, cost_unit=None))]
    fn describe(
        &self,
        name_group: &Bound<'_, PyAny>,
        name_row: &Bound<'_, PyAny>,
        length_unit: Option<&str>,
        cost_unit: Option<&str>,
    ) -> String {
        match &self.form {
            DetailForm::Live(error) => {
                error.describe(&PythonNamer { group: name_group, row: name_row, length_unit, cost_unit })
            }
            DetailForm::Restored { message, .. } => message.clone(),
        }
    }

    /// The argument the error concerns.
    #[getter]
    fn argument(&self) -> &str {
        match &self.form {
            DetailForm::Live(error) => error.argument(),
            DetailForm::Restored { argument, .. } => argument,
        }
    }

    /// The integer label of the group it happened in, or None.
    #[getter]
    fn group(&self) -> Option<i64> {
        match &self.form {
            DetailForm::Live(error) => error.group(),
            DetailForm::Restored { group, .. } => *group,
        }
    }

    /// The input row (position) it concerns, or None.
    #[getter]
    fn row(&self) -> Option<usize> {
        match &self.form {
            DetailForm::Live(error) => error.row(),
            DetailForm::Restored { row, .. } => *row,
        }
    }

    /// True for well-formed but degenerate input.
    #[getter]
    fn degenerate(&self) -> bool {
        match &self.form {
            DetailForm::Live(error) => error.is_degenerate(),
            DetailForm::Restored { degenerate, .. } => *degenerate,
        }
    }

    /// The detail rebuilt from its pickled parts (see [`ErrorDetail::__reduce__`]).
    #[staticmethod]
    fn _restore(message: String, argument: String, group: Option<i64>, row: Option<usize>, degenerate: bool) -> Self {
        ErrorDetail { form: DetailForm::Restored { message, argument, group, row, degenerate } }
    }

    /// Pickling: the message and attributes, so an `InputError` raised in a worker process
    /// reaches the caller whole.
    #[allow(clippy::type_complexity)]
    fn __reduce__<'py>(
        slf: &Bound<'py, Self>,
    ) -> PyResult<(Bound<'py, PyAny>, (String, String, Option<i64>, Option<usize>, bool))> {
        let this = slf.get();
        let restore = slf.get_type().getattr("_restore")?;
        Ok((restore, (this.message(), this.argument().to_owned(), this.group(), this.row(), this.degenerate())))
    }

    fn __repr__(&self) -> String {
        format!("ErrorDetail({:?})", self.message())
    }
}

impl ErrorDetail {
    /// The message in the kernel's own terms (rows by position, groups by label).
    fn message(&self) -> String {
        match &self.form {
            DetailForm::Live(error) => error.to_string(),
            DetailForm::Restored { message, .. } => message.clone(),
        }
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
        value.setattr("detail", Py::new(py, ErrorDetail::live(error))?)?;
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
        Err(error) => Ok(Some(Py::new(py, ErrorDetail::live(error.clone()))?)),
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
