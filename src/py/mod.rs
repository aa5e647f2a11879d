//! PyO3 bindings: numpy ⇄ slices, GIL release, errors → exceptions. No geometry here.
//!
//! One file per kernel family, each with a `register` function called below; every
//! wrapper converts its arguments with [`convert`], runs the pure kernel through
//! [`run_detached`] and returns plain numpy arrays and scalars that the Python package
//! wraps into result objects.

use pyo3::prelude::*;

mod capacity;
mod convert;
mod discrete;
mod enclose;
mod errors;
mod fields;
mod geodesic;
mod median;
mod multi;
mod network;
mod partition;
mod runtime;
mod sphere;
mod travel;

pub(crate) use convert::{labels_arg, points_arg, weights_arg};
pub(crate) use runtime::run_detached;

/// The compiled module `placewise._core`.
#[pymodule]
#[pyo3(name = "_core")]
fn core_module(m: &Bound<'_, PyModule>) -> PyResult<()> {
    errors::register(m)?;
    runtime::register(m)?;
    median::register(m)?;
    network::register(m)?;
    partition::register(m)?;
    enclose::register(m)?;
    multi::register(m)?;
    discrete::register(m)?;
    geodesic::register(m)?;
    capacity::register(m)?;
    travel::register(m)?;
    sphere::register(m)?;
    m.add("__version__", env!("CARGO_PKG_VERSION"))?;
    Ok(())
}
