//! numpy → slices. Any numeric dtype and any memory layout is accepted and converted once;
//! a C-contiguous, aligned float64 array is borrowed without a copy.
//!
//! Invariant: every array these functions return is C-contiguous and aligned, so turning it
//! into a slice cannot fail. (Arrays unpickled from out-of-band buffers — as Dask workers
//! receive them — can be contiguous yet unaligned; those are copied once.)

use numpy::{Element, PyArray, PyArray1, PyArray2, PyArrayMethods, PyReadonlyArray1, PyReadonlyArray2, PyUntypedArrayMethods};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::errors::input_error;
use crate::geometry::Point;

/// True when the array can be viewed as a slice as it is: C-contiguous and aligned.
fn borrowable<T: Element, D: numpy::ndarray::Dimension>(array: &Bound<'_, PyArray<T, D>>) -> bool {
    array.is_c_contiguous() && (array.data() as usize) % std::mem::align_of::<T>() == 0
}

/// Convert with `numpy.require(obj, dtype, ["C", "A"])` (C-contiguous and aligned, copied
/// only when needed); a failure becomes an `InputError` naming the argument.
fn contiguous<'py>(obj: &Bound<'py, PyAny>, argument: &str, dtype: &str) -> PyResult<Bound<'py, PyAny>> {
    let py = obj.py();
    let numpy = py.import("numpy")?;
    let kwargs = PyDict::new(py);
    kwargs.set_item("dtype", dtype)?;
    kwargs.set_item("requirements", ["C", "A"])?;
    let as_array = numpy.call_method1("asarray", (obj,)).map_err(|e| {
        input_error(format!("{argument} must be a numeric array; it could not be converted to {dtype}: {e}"))
    })?;
    numpy.call_method("require", (as_array,), Some(&kwargs)).map_err(|e| {
        input_error(format!("{argument} must be a numeric array; it could not be converted to {dtype}: {e}"))
    })
}

fn shape_of(obj: &Bound<'_, PyAny>) -> String {
    obj.getattr("shape").and_then(|s| s.str().map(|s| s.to_string())).unwrap_or_else(|_| "?".into())
}

/// Points as an `(n, 2)` float64 array, borrowed when already C-contiguous float64.
/// An empty array of any shape counts as zero points (the kernel then says how many it needs).
pub(crate) fn points_arg<'py>(obj: &Bound<'py, PyAny>, argument: &str) -> PyResult<PyReadonlyArray2<'py, f64>> {
    if let Ok(array) = obj.cast::<PyArray2<f64>>() {
        if borrowable(array) && array.shape()[1] == 2 {
            return Ok(array.readonly());
        }
    }
    let mut converted = contiguous(obj, argument, "float64")?;
    let size: usize = converted.getattr("size")?.extract()?;
    if size == 0 {
        converted = converted.call_method1("reshape", ((0usize, 2usize),))?;
    }
    match converted.cast_into::<PyArray2<f64>>() {
        Ok(array) if array.shape()[1] == 2 => Ok(array.readonly()),
        Ok(array) => Err(input_error(format!(
            "{argument} must have shape (n, 2); got shape {}",
            shape_of(array.as_any())
        ))),
        Err(e) => Err(input_error(format!(
            "{argument} must have shape (n, 2); got shape {}",
            shape_of(e.into_inner().as_any())
        ))),
    }
}

/// Reinterpret a C-contiguous `(n, 2)` float64 array as points, without a copy.
pub(crate) fn as_point_slice<'a>(array: &'a PyReadonlyArray2<'_, f64>) -> &'a [Point] {
    let flat = array.as_slice().expect("points_arg returns C-contiguous, aligned arrays");
    bytemuck::cast_slice(flat)
}

/// Optional per-point float64 values of shape `(n,)` (weights).
pub(crate) fn weights_arg<'py>(
    obj: Option<&Bound<'py, PyAny>>,
    argument: &str,
) -> PyResult<Option<PyReadonlyArray1<'py, f64>>> {
    let Some(obj) = obj.filter(|o| !o.is_none()) else { return Ok(None) };
    if let Ok(array) = obj.cast::<PyArray1<f64>>() {
        if borrowable(array) {
            return Ok(Some(array.readonly()));
        }
    }
    let converted = contiguous(obj, argument, "float64")?;
    match converted.cast_into::<PyArray1<f64>>() {
        Ok(array) => Ok(Some(array.readonly())),
        Err(e) => Err(input_error(format!(
            "{argument} must have shape (n,); got shape {}",
            shape_of(e.into_inner().as_any())
        ))),
    }
}

/// Group labels of shape `(n,)`: any integer (or boolean) dtype, converted to int64 once.
pub(crate) fn labels_arg<'py>(obj: &Bound<'py, PyAny>, argument: &str) -> PyResult<PyReadonlyArray1<'py, i64>> {
    if let Ok(array) = obj.cast::<PyArray1<i64>>() {
        if borrowable(array) {
            return Ok(array.readonly());
        }
    }
    let py = obj.py();
    let as_array = py.import("numpy")?.call_method1("asarray", (obj,))?;
    let kind: String = as_array.getattr("dtype")?.getattr("kind")?.extract()?;
    let size: usize = as_array.getattr("size")?.extract()?;
    if !matches!(kind.as_str(), "i" | "u" | "b") && size > 0 {
        let dtype = as_array.getattr("dtype")?.str()?.to_string();
        return Err(input_error(format!("{argument} must hold integer labels; got dtype {dtype}")));
    }
    let converted = contiguous(&as_array, argument, "int64")?;
    match converted.cast_into::<PyArray1<i64>>() {
        Ok(array) => Ok(array.readonly()),
        Err(e) => Err(input_error(format!(
            "{argument} must have shape (n,); got shape {}",
            shape_of(e.into_inner().as_any())
        ))),
    }
}

/// Index rows as flat int64 values, reusing the allocation: `usize` and `i64` have the same
/// size and alignment on 64-bit targets and every index is below 2^63, so the bytes already
/// are the int64 values (copied only on targets where the sizes differ).
pub(crate) fn index_rows<const K: usize>(rows: Vec<[usize; K]>) -> Vec<i64> {
    let flat: Vec<usize> = match bytemuck::allocation::try_cast_vec(rows) {
        Ok(flat) => flat,
        Err((_, rows)) => rows.into_iter().flatten().collect(),
    };
    index_values(flat)
}

/// Indices as int64 values, reusing the allocation (see [`index_rows`]).
pub(crate) fn index_values(flat: Vec<usize>) -> Vec<i64> {
    match bytemuck::allocation::try_cast_vec(flat) {
        Ok(values) => values,
        Err((_, flat)) => flat.into_iter().map(|i| i as i64).collect(),
    }
}

/// Input-row indices as an int64 numpy array (numpy's default integer, what callers index with).
pub(crate) fn index_array<'py>(py: Python<'py>, indices: &[usize]) -> Bound<'py, PyArray1<i64>> {
    PyArray1::from_iter(py, indices.iter().map(|&i| i as i64))
}
