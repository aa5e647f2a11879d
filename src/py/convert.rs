//! numpy → slices. Any numeric dtype and any memory layout is accepted and converted once;
//! a C-contiguous, aligned float64 array is borrowed without a copy.
//!
//! Invariant: every array these functions return is C-contiguous and aligned, so turning it
//! into a slice cannot fail. (Arrays unpickled from out-of-band buffers — as Dask workers
//! receive them — can be contiguous yet unaligned; those are copied once.)

use numpy::{
    Element, PyArray, PyArray1, PyArray2, PyArrayMethods, PyReadonlyArray1, PyReadonlyArray2, PyUntypedArrayMethods,
};
use pyo3::prelude::*;
use pyo3::types::PyDict;

use super::errors::{argument_error, input_error};
use crate::geometry::{FeasibleRegion, Point};

/// True when the array can be viewed as a slice as it is: C-contiguous and aligned.
fn borrowable<T: Element, D: numpy::ndarray::Dimension>(array: &Bound<'_, PyArray<T, D>>) -> bool {
    array.is_c_contiguous() && (array.data() as usize).is_multiple_of(std::mem::align_of::<T>())
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
        argument_error(
            argument,
            format!("{argument} must be a numeric array; it could not be converted to {dtype}: {e}"),
        )
    })?;
    // numpy would cast complex values to real with only a warning (dropping the imaginary
    // part) and parse numeric strings or timestamps as numbers: refused, so a value that is
    // not a real number never becomes one silently.
    let kind: String = as_array.getattr("dtype")?.getattr("kind")?.extract()?;
    let refused = match kind.as_str() {
        "c" => Some("complex values (drop the imaginary part first if it is meant to go)"),
        "U" | "S" => Some("text"),
        "M" | "m" => Some("dates or durations (convert them to numbers in a stated unit first)"),
        "V" => Some("structured records"),
        _ => None,
    };
    if let Some(what) = refused {
        return Err(argument_error(argument, format!("{argument} must hold real numbers; got {what}")));
    }
    numpy.call_method("require", (as_array,), Some(&kwargs)).map_err(|e| {
        argument_error(
            argument,
            format!("{argument} must be a numeric array; it could not be converted to {dtype}: {e}"),
        )
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
        Ok(array) => Err(argument_error(
            argument,
            format!("{argument} must have shape (n, 2); got shape {}", shape_of(array.as_any())),
        )),
        Err(e) => Err(argument_error(
            argument,
            format!("{argument} must have shape (n, 2); got shape {}", shape_of(e.into_inner().as_any())),
        )),
    }
}

/// A float64 matrix of any shape `(n, m)` (a cost matrix), borrowed when already
/// C-contiguous and aligned; values are checked by the kernel.
pub(crate) fn matrix_arg<'py>(obj: &Bound<'py, PyAny>, argument: &str) -> PyResult<PyReadonlyArray2<'py, f64>> {
    if let Ok(array) = obj.cast::<PyArray2<f64>>() {
        if borrowable(array) {
            return Ok(array.readonly());
        }
    }
    match contiguous(obj, argument, "float64")?.cast_into::<PyArray2<f64>>() {
        Ok(array) => Ok(array.readonly()),
        Err(e) => Err(argument_error(
            argument,
            format!("{argument} must have shape (n, m); got shape {}", shape_of(e.into_inner().as_any())),
        )),
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
        Err(e) => Err(argument_error(
            argument,
            format!("{argument} must have shape (n,); got shape {}", shape_of(e.into_inner().as_any())),
        )),
    }
}

/// Group labels of shape `(n,)`: any integer (or boolean) dtype, converted to int64 once; a
/// uint64 value beyond the int64 range is refused, naming the argument, the row and the value.
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
        return Err(argument_error(
            argument,
            format!(
                "{argument} must hold integer labels; got dtype {dtype} (codes such as \
             pandas.factorize(column)[0] will do; placewise.gis and placewise.cluster take a column of any values)"
            ),
        ));
    }
    if kind == "u" && size > 0 && as_array.getattr("ndim")?.extract::<usize>()? == 1 {
        // Labels are int64: a uint64 label at or above 2^63 has no int64 value, and the cast
        // below would wrap it to a negative label the caller never gave.
        let row: usize = as_array.call_method0("argmax")?.extract()?;
        let largest: u64 = as_array.get_item(row)?.extract()?;
        if largest > i64::MAX as u64 {
            let err = argument_error(
                argument,
                format!(
                    "{argument}[{row}] is {largest}, above the largest int64 label ({}); labels must fit in int64 \
                     (codes such as pandas.factorize(column)[0] will do; placewise.gis and placewise.cluster take a \
                     column of any values)",
                    i64::MAX
                ),
            );
            err.value(obj.py()).setattr("row", row)?;
            return Err(err);
        }
    }
    let converted = contiguous(&as_array, argument, "int64")?;
    match converted.cast_into::<PyArray1<i64>>() {
        Ok(array) => Ok(array.readonly()),
        Err(e) => Err(argument_error(
            argument,
            format!("{argument} must have shape (n,); got shape {}", shape_of(e.into_inner().as_any())),
        )),
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

// ------------------------------------------------------------------ number arguments
//
// The one validation path for every number argument (counts, seeds, iteration limits,
// tolerances, time limits, thread counts): a wrong type or range is an `InputError` naming
// the argument, with the value printed as the user wrote it (plain numbers, not numpy
// reprs). Integers accept Python and numpy integers (anything with `__index__`), never a
// float or a bool: `p = 2.0` is refused rather than silently truncated.

/// The value as the user would write it: `3`, `2.5`, `nan`, `'a'` (numpy scalars unwrapped).
fn shown(obj: &Bound<'_, PyAny>) -> String {
    let from_numpy = obj.get_type().getattr("__module__").map(|m| m.to_string() == "numpy").unwrap_or(false);
    let value = if from_numpy { obj.call_method0("item").unwrap_or_else(|_| obj.clone()) } else { obj.clone() };
    value.repr().map(|r| r.to_string()).unwrap_or_else(|_| "?".into())
}

fn type_name(obj: &Bound<'_, PyAny>) -> String {
    obj.get_type().name().map(|n| n.to_string()).unwrap_or_else(|_| "?".into())
}

/// An integer argument within `[min, max]`.
pub(crate) fn int_arg(obj: &Bound<'_, PyAny>, argument: &str, min: i64, max: i64) -> PyResult<i64> {
    let is_bool = obj.is_instance_of::<pyo3::types::PyBool>() || type_name(obj) == "bool_" || type_name(obj) == "bool";
    let index = if is_bool { None } else { obj.call_method0("__index__").ok() };
    let Some(index) = index else {
        return Err(super::errors::argument_error(
            argument,
            format!("{argument} must be an integer; got {} ({})", shown(obj), type_name(obj)),
        ));
    };
    let value: Option<i128> = index.extract().ok();
    match value {
        Some(v) if v >= min as i128 && v <= max as i128 => Ok(v as i64),
        _ => {
            let range = if max == i64::MAX { format!(">= {min}") } else { format!("from {min} to {max}") };
            Err(super::errors::argument_error(
                argument,
                format!("{argument} must be an integer {range}; got {}", shown(obj)),
            ))
        }
    }
}

/// A count argument (`p`, `max_iter`, threads) within `[min, max]`.
pub(crate) fn count_arg(obj: &Bound<'_, PyAny>, argument: &str, min: usize, max: usize) -> PyResult<usize> {
    let max = max.min(i64::MAX as usize) as i64;
    int_arg(obj, argument, min as i64, max).map(|v| v as usize)
}

/// A seed for a randomised step: any integer from 0 to 2**64 - 1.
pub(crate) fn seed_arg(obj: &Bound<'_, PyAny>) -> PyResult<u64> {
    let is_bool = obj.is_instance_of::<pyo3::types::PyBool>() || type_name(obj) == "bool_";
    let index = if is_bool { None } else { obj.call_method0("__index__").ok() };
    let value: Option<i128> = index.and_then(|i| i.extract().ok());
    match value {
        Some(v) if (0..=u64::MAX as i128).contains(&v) => Ok(v as u64),
        _ => Err(super::errors::argument_error(
            "seed",
            format!("seed must be an integer from 0 to 2**64 - 1; got {}", shown(obj)),
        )),
    }
}

/// A real argument for which `accept(value)` holds; `expected` says what that means
/// (`"finite and >= 0"`).
pub(crate) fn float_arg(
    obj: &Bound<'_, PyAny>,
    argument: &str,
    expected: &str,
    accept: impl Fn(f64) -> bool,
) -> PyResult<f64> {
    let is_bool = obj.is_instance_of::<pyo3::types::PyBool>() || type_name(obj) == "bool_";
    let value: Option<f64> = if is_bool || obj.is_instance_of::<pyo3::types::PyString>() {
        None
    } else {
        obj.call_method0("__float__").ok().and_then(|v| v.extract().ok())
    };
    match value {
        Some(v) if accept(v) => Ok(v),
        Some(_) => {
            Err(super::errors::argument_error(argument, format!("{argument} must be {expected}; got {}", shown(obj))))
        }
        None => Err(super::errors::argument_error(
            argument,
            format!("{argument} must be a number ({expected}); got {} ({})", shown(obj), type_name(obj)),
        )),
    }
}

/// An optional real argument: `None` stays `None`.
pub(crate) fn optional_float_arg(
    obj: Option<&Bound<'_, PyAny>>,
    argument: &str,
    expected: &str,
    accept: impl Fn(f64) -> bool,
) -> PyResult<Option<f64>> {
    match obj.filter(|o| !o.is_none()) {
        None => Ok(None),
        Some(o) => float_arg(o, argument, expected, accept).map(Some),
    }
}

/// `time_limit`: None, or seconds, finite and above zero.
pub(crate) fn time_limit_arg(time_limit: Option<&Bound<'_, PyAny>>) -> PyResult<Option<f64>> {
    optional_float_arg(time_limit, "time_limit", "finite and > 0 (seconds)", |t| t.is_finite() && t > 0.0)
}

/// `errors="raise"` or `errors="skip"`: what a grouped run does with a group without an answer.
pub(crate) fn on_error_arg(obj: &str) -> PyResult<crate::batch::OnGroupError> {
    match obj {
        "raise" => Ok(crate::batch::OnGroupError::Raise),
        "skip" => Ok(crate::batch::OnGroupError::Skip),
        other => {
            Err(super::errors::argument_error("errors", format!("errors must be \"raise\" or \"skip\"; got {other:?}")))
        }
    }
}

/// The point cloud of one call, converted once: points, optional weights and optional group
/// labels, each named in its errors as the user named it.
pub(crate) struct Cloud<'py> {
    points: PyReadonlyArray2<'py, f64>,
    weights: Option<PyReadonlyArray1<'py, f64>>,
    labels: Option<PyReadonlyArray1<'py, i64>>,
}

impl<'py> Cloud<'py> {
    /// Convert `points` (and `weights`, `groups` where given) as [`points_arg`],
    /// [`weights_arg`] and [`labels_arg`] do.
    pub(crate) fn read(
        points: &Bound<'py, PyAny>,
        weights: Option<&Bound<'py, PyAny>>,
        groups: Option<&Bound<'py, PyAny>>,
    ) -> PyResult<Cloud<'py>> {
        Ok(Cloud {
            points: points_arg(points, "points")?,
            weights: weights_arg(weights, "weights")?,
            labels: groups.map(|g| labels_arg(g, "groups")).transpose()?,
        })
    }

    /// The points, borrowed.
    pub(crate) fn points(&self) -> &[Point] {
        as_point_slice(&self.points)
    }

    /// The weights, borrowed, or `None` for unit weights.
    pub(crate) fn weights(&self) -> PyResult<Option<&[f64]>> {
        Ok(self.weights.as_ref().map(|w| w.as_slice()).transpose()?)
    }

    /// The group labels, borrowed (empty when the call has none).
    pub(crate) fn labels(&self) -> PyResult<&[i64]> {
        Ok(self.labels.as_ref().map(|l| l.as_slice()).transpose()?.unwrap_or(&[]))
    }
}

/// The region's vertices and ring offsets, both given or both absent.
pub(crate) type RegionArrays<'py> = Option<(PyReadonlyArray2<'py, f64>, Vec<usize>)>;

pub(crate) fn region_arg<'py>(
    region_vertices: Option<&Bound<'py, PyAny>>,
    ring_offsets: Option<&Bound<'py, PyAny>>,
) -> PyResult<RegionArrays<'py>> {
    match (region_vertices.filter(|r| !r.is_none()), ring_offsets.filter(|r| !r.is_none())) {
        (Some(vertices), Some(offsets)) => {
            let offsets = labels_arg(offsets, "region ring offsets")?;
            let offsets: Vec<usize> = offsets
                .as_slice()?
                .iter()
                .map(|&o| usize::try_from(o))
                .collect::<Result<_, _>>()
                .map_err(|_| input_error("region ring offsets must be >= 0".into()))?;
            Ok(Some((points_arg(vertices, "region")?, offsets)))
        }
        (None, None) => Ok(None),
        _ => Err(input_error("region vertices and ring offsets must be given together".into())),
    }
}

/// The feasible region of sites, from its vertices and ring offsets (both `None`: no region),
/// validated by the kernel's own constructor.
pub(crate) fn feasible_region_arg(
    region_vertices: Option<&Bound<'_, PyAny>>,
    ring_offsets: Option<&Bound<'_, PyAny>>,
) -> PyResult<Option<FeasibleRegion>> {
    match region_arg(region_vertices, ring_offsets)? {
        Some((vertices, offsets)) => Ok(Some(FeasibleRegion::new(as_point_slice(&vertices), &offsets)?)),
        None => Ok(None),
    }
}
