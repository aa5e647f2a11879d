//! Named values across the boundary: every binding returns a `dict` of named numpy arrays
//! and Python scalars (never a positional tuple), which the Python package unpacks into its
//! frozen result objects by name.

use pyo3::prelude::*;
use pyo3::types::PyDict;
use pyo3::IntoPyObject;

use super::errors::problem;
use crate::batch::Grouped;

/// A result under construction: `Fields::new(py).put("cost", 3.0)?.put(...)?.done()`.
pub(crate) struct Fields<'py> {
    dict: Bound<'py, PyDict>,
}

impl<'py> Fields<'py> {
    pub(crate) fn new(py: Python<'py>) -> Fields<'py> {
        Fields { dict: PyDict::new(py) }
    }

    /// Add one named value.
    pub(crate) fn put<V: IntoPyObject<'py>>(self, name: &str, value: V) -> PyResult<Fields<'py>> {
        self.dict.set_item(name, value)?;
        Ok(self)
    }

    /// Add the `labels` and `problem` fields of a grouped run: the sorted group labels, and
    /// per group `None` (solved) or the error that made it skip.
    pub(crate) fn grouped<T>(self, grouped: &Grouped<T>) -> PyResult<Fields<'py>> {
        let py = self.dict.py();
        let problems = grouped.results.iter().map(|r| problem(py, r)).collect::<PyResult<Vec<_>>>()?;
        self.put("labels", numpy::PyArray1::from_slice(py, &grouped.labels))?.put("problem", problems)
    }

    pub(crate) fn done(self) -> Bound<'py, PyDict> {
        self.dict
    }
}
