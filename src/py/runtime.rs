//! Running kernels: GIL released, panics contained, on the thread pool the caller chose.

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::{Arc, RwLock};

use pyo3::exceptions::PyRuntimeError;
use pyo3::prelude::*;

use super::errors::input_error;
use crate::error::Error;

/// The pool chosen with `set_threads`; `None` means rayon's global pool, whose size follows
/// `RAYON_NUM_THREADS` (default: one thread per core).
static POOL: RwLock<Option<Arc<rayon::ThreadPool>>> = RwLock::new(None);

/// Run a pure kernel with the GIL released.
///
/// A panic inside a kernel is a bug, never an answer: it is caught here and raised as
/// `RuntimeError` so that it cannot abort the interpreter or surface as `PanicException`.
pub(crate) fn run_detached<T, F>(py: Python<'_>, kernel: F) -> PyResult<T>
where
    T: Send,
    F: FnOnce() -> Result<T, Error> + Send,
{
    let pool = POOL.read().map(|p| p.clone()).unwrap_or(None);
    let outcome = py.detach(|| {
        catch_unwind(AssertUnwindSafe(|| match pool {
            Some(pool) => pool.install(kernel),
            None => kernel(),
        }))
    });
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

/// Use `threads` worker threads for every later call (0: back to the default pool).
#[pyfunction]
fn set_threads(threads: &Bound<'_, PyAny>) -> PyResult<()> {
    // Far more threads than any machine has cores is a mistake, not a request.
    let threads = super::convert::count_arg(threads, "threads", 0, 4096)?;
    let pool = if threads == 0 {
        None
    } else {
        let built = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .thread_name(|i| format!("placewise-{i}"))
            .build()
            .map_err(|e| input_error(format!("threads: could not start {threads} threads: {e}")))?;
        Some(Arc::new(built))
    };
    *POOL.write().map_err(|_| PyRuntimeError::new_err("thread pool lock poisoned"))? = pool;
    Ok(())
}

/// Number of worker threads later calls will use.
#[pyfunction]
fn thread_count() -> usize {
    match POOL.read().ok().and_then(|p| p.clone()) {
        Some(pool) => pool.current_num_threads(),
        None => rayon::current_num_threads(),
    }
}

pub(super) fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_function(wrap_pyfunction!(set_threads, m)?)?;
    m.add_function(wrap_pyfunction!(thread_count, m)?)?;
    Ok(())
}
