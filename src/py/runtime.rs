//! Running kernels: GIL released, panics contained, on the thread pool the caller chose;
//! long kernels on a worker thread that the calling thread watches, so Ctrl-C and progress
//! reach Python while the kernel runs.

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::mpsc::{self, RecvTimeoutError};
use std::sync::{Arc, RwLock};
use std::time::Duration;

use pyo3::exceptions::PyRuntimeError;
use pyo3::prelude::*;
use pyo3::types::{PyBool, PyDict};

use super::convert::{as_point_slice, points_arg};
use super::errors::{argument_error, input_error};
use crate::cancel::Watch;
use crate::error::Error;
use crate::geometry::Point;

/// The pool chosen with `set_threads`; `None` means rayon's global pool, whose size follows
/// `RAYON_NUM_THREADS` (default: one thread per core).
static POOL: RwLock<Option<Arc<rayon::ThreadPool>>> = RwLock::new(None);

/// How long the calling thread waits with the GIL released before it checks for signals
/// and shows progress again: Ctrl-C reaches the kernel within one slice plus the kernel's
/// own polling interval.
const SLICE: Duration = Duration::from_millis(50);

/// A kernel's outcome, or the message of the panic that ended it.
type Contained<T> = Result<Result<T, Error>, String>;

fn current_pool() -> Option<Arc<rayon::ThreadPool>> {
    POOL.read().map(|p| p.clone()).unwrap_or(None)
}

/// Run `kernel` on `pool` (or rayon's global pool), catching a panic as its message.
fn contain<T, F>(pool: Option<Arc<rayon::ThreadPool>>, kernel: F) -> Contained<T>
where
    T: Send,
    F: FnOnce() -> Result<T, Error> + Send,
{
    catch_unwind(AssertUnwindSafe(|| match pool {
        Some(pool) => pool.install(kernel),
        None => kernel(),
    }))
    .map_err(|panic| {
        panic
            .downcast_ref::<&str>()
            .map(|s| s.to_string())
            .or_else(|| panic.downcast_ref::<String>().cloned())
            .unwrap_or_else(|| "unknown panic".to_string())
    })
}

/// A contained outcome as a Python result.
///
/// A panic inside a kernel is a bug, never an answer: it is raised as `RuntimeError` so that
/// it cannot abort the interpreter or surface as `PanicException`.
fn settle<T>(outcome: Contained<T>) -> PyResult<T> {
    match outcome {
        Ok(result) => result.map_err(PyErr::from),
        Err(what) => Err(PyRuntimeError::new_err(format!("placewise internal error (please report): {what}"))),
    }
}

/// Run a pure kernel with the GIL released.
pub(crate) fn run_detached<T, F>(py: Python<'_>, kernel: F) -> PyResult<T>
where
    T: Send,
    F: FnOnce() -> Result<T, Error> + Send,
{
    let pool = current_pool();
    settle(py.detach(|| contain(pool, kernel)))
}

/// How a long call reports progress: not at all, to a callable `(done, total)`, or as a bar
/// on stderr (tqdm's when it is installed, else a plain line rewritten in place).
pub(crate) enum Progress<'py> {
    Off,
    Call(Bound<'py, PyAny>),
    Bar { label: &'static str, tqdm: Option<Bound<'py, PyAny>>, shown: bool },
}

/// `progress=`: False/None (off), True (a bar on stderr labelled `label`) or a callable.
pub(crate) fn progress_arg<'py>(obj: Option<&Bound<'py, PyAny>>, label: &'static str) -> PyResult<Progress<'py>> {
    let Some(obj) = obj.filter(|o| !o.is_none()) else {
        return Ok(Progress::Off);
    };
    if obj.is_instance_of::<PyBool>() {
        return Ok(if obj.is_truthy()? { Progress::Bar { label, tqdm: None, shown: false } } else { Progress::Off });
    }
    if obj.is_callable() {
        return Ok(Progress::Call(obj.clone()));
    }
    let type_name = obj.get_type().name().map(|n| n.to_string()).unwrap_or_default();
    Err(argument_error(
        "progress",
        format!("progress must be True, False or a callable taking (done, total); got {} ({type_name})", obj.repr()?),
    ))
}

impl<'py> Progress<'py> {
    /// Report `(done, total)`; only called from the calling thread, with the GIL held.
    fn show(&mut self, py: Python<'py>, (done, total): (u64, u64)) -> PyResult<()> {
        match self {
            Progress::Off => Ok(()),
            Progress::Call(f) => f.call1((done, total)).map(drop),
            Progress::Bar { label, tqdm, shown } => {
                *shown = true;
                if tqdm.is_none() {
                    if let Ok(module) = py.import("tqdm") {
                        let kwargs = PyDict::new(py);
                        kwargs.set_item("total", total)?;
                        kwargs.set_item("desc", *label)?;
                        kwargs.set_item("file", py.import("sys")?.getattr("stderr")?)?;
                        *tqdm = Some(module.getattr("tqdm")?.call((), Some(&kwargs))?);
                    }
                }
                match tqdm {
                    Some(bar) => {
                        bar.setattr("total", total)?;
                        bar.setattr("n", done)?;
                        bar.call_method0("refresh").map(drop)
                    }
                    None => {
                        let percent = (100 * done.min(total)).checked_div(total).unwrap_or(0);
                        let line = format!("\r{label}: {done}/{total} ({percent}%)");
                        py.import("sys")?.getattr("stderr")?.call_method1("write", (line,)).map(drop)
                    }
                }
            }
        }
    }

    /// Close the bar (end its line).
    fn close(&mut self, py: Python<'py>) -> PyResult<()> {
        match self {
            Progress::Bar { tqdm: Some(bar), .. } => bar.call_method0("close").map(drop),
            Progress::Bar { tqdm: None, shown: true, .. } => {
                py.import("sys")?.getattr("stderr")?.call_method1("write", ("\n",)).map(drop)
            }
            _ => Ok(()),
        }
    }
}

/// `kernel` on the points of `argument`, watched: a progress bar or callable labelled
/// `label`, and Ctrl-C. The kernels run this way (spherical and planar triangulations,
/// Voronoi cells and spanning trees) have no partial answer, so they take no time limit.
pub(crate) fn run_on_points<'py, T: Send>(
    py: Python<'py>,
    points: &Bound<'py, PyAny>,
    argument: &'static str,
    progress: Option<&Bound<'py, PyAny>>,
    label: &'static str,
    kernel: impl FnOnce(&[Point], &Watch) -> Result<T, Error> + Send,
) -> PyResult<T> {
    let mut progress = progress_arg(progress, label)?;
    let points = points_arg(points, argument)?;
    let pts = as_point_slice(&points);
    let watch = Watch::new();
    run_watched(py, &watch, &mut progress, || kernel(pts, &watch))
}

/// Run a long kernel that polls `watch`: on a worker thread with the GIL released, while
/// the calling thread waits in slices of [`SLICE`], re-acquiring the GIL between slices to
/// run Python's signal handlers and to report progress.
///
/// When a signal handler raises (Ctrl-C: `KeyboardInterrupt`) or the progress callable
/// raises, the watch is cancelled, the kernel is awaited (it stops at its next poll) and
/// that exception is raised; the kernel's answer is dropped.
pub(crate) fn run_watched<'py, T, F>(
    py: Python<'py>,
    watch: &Watch,
    progress: &mut Progress<'py>,
    kernel: F,
) -> PyResult<T>
where
    T: Send,
    F: FnOnce() -> Result<T, Error> + Send,
{
    let pool = current_pool();
    std::thread::scope(|scope| {
        let (sender, mut receiver) = mpsc::channel::<Contained<T>>();
        scope.spawn(move || {
            // The receiver outlives the worker (the loop below waits for this message).
            let _ = sender.send(contain(pool, kernel));
        });
        let mut shown = None;
        let mut raised: Option<PyErr> = None;
        loop {
            // The receiver goes into the GIL-free closure and back (it is Send, not Sync).
            let (waited, back) = py.detach(move || (receiver.recv_timeout(SLICE), receiver));
            receiver = back;
            let outcome = match waited {
                Ok(outcome) => Some(outcome),
                Err(RecvTimeoutError::Timeout) => None,
                Err(RecvTimeoutError::Disconnected) => {
                    Some(Err("the worker thread ended without an answer".to_string()))
                }
            };
            if raised.is_none() {
                let now = watch.progress();
                let checked = py.check_signals().and_then(|()| {
                    if shown != Some(now) {
                        shown = Some(now);
                        progress.show(py, now)?;
                    }
                    Ok(())
                });
                if let Err(e) = checked {
                    watch.cancel();
                    raised = Some(e);
                }
            }
            if let Some(outcome) = outcome {
                let closed = progress.close(py);
                return match raised {
                    Some(e) => Err(e),
                    None => closed.and_then(|()| settle(outcome)),
                };
            }
        }
    })
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
