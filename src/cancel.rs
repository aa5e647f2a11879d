//! Watching long runs: one cancel flag, one progress count and one deadline that every long
//! kernel polls (p-median search, p-center restarts, exact and heuristic Steiner trees, and
//! grouped runs of these).
//!
//! A caller makes a [`Watch`] and puts a clone in the kernel's options; from another thread
//! it may read [`Watch::progress`] or call [`Watch::cancel`]. A kernel turns the watch and
//! its `time_limit` into a [`Clock`] and polls [`Clock::stop`] at cheap intervals (between
//! descents, restarts, candidate batches), so a stop takes effect within one such interval.
//!
//! Invariant: a kernel that stops early — deadline passed or cancelled — still returns the
//! best answer it has found, flagged as not converged (not proven). The caller tells the two
//! apart with [`Watch::finish`]: a cancelled run becomes [`Cancelled`] (the Python layer
//! raises `KeyboardInterrupt`), a run that only ran out of time is an answer.

use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

/// Shared between a running kernel and the thread watching it.
#[derive(Debug, Default)]
struct Shared {
    cancelled: AtomicBool,
    done: AtomicU64,
    total: AtomicU64,
}

/// A cancel flag and a progress count, shared by cloning.
///
/// Clones share one flag and one count. [`Watch::quiet`] gives a clone that shares the flag
/// but does not count, for the inner kernels of a run that counts its own steps (a grouped
/// run counts points of finished groups, not each group's inner steps).
#[derive(Debug, Clone)]
pub struct Watch {
    shared: Arc<Shared>,
    counts: bool,
}

impl Default for Watch {
    fn default() -> Self {
        Watch { shared: Arc::default(), counts: true }
    }
}

/// Two options are equal when they watch the same run.
impl PartialEq for Watch {
    fn eq(&self, other: &Watch) -> bool {
        Arc::ptr_eq(&self.shared, &other.shared) && self.counts == other.counts
    }
}

/// The distinct outcome of a cancelled run.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Cancelled;

impl std::fmt::Display for Cancelled {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("the run was cancelled")
    }
}

impl std::error::Error for Cancelled {}

/// The outcome of a kernel that has no answer short of its whole work (a triangulation, a
/// partition), or whose answer would take long to finish (the set cover's service of its
/// plan), when it stops on a cancel: an error about `argument` that is never seen, since the
/// caller drops a cancelled run's outcome ([`Watch::finish`]).
pub(crate) fn cancelled(argument: &'static str) -> crate::error::Error {
    crate::error::Error::InvalidParameter { name: argument, reason: Cancelled.to_string() }
}

impl Watch {
    /// A fresh watch: not cancelled, nothing counted.
    pub fn new() -> Watch {
        Watch::default()
    }

    /// Ask every kernel polling this watch to stop as soon as it can.
    pub fn cancel(&self) {
        self.shared.cancelled.store(true, Ordering::Relaxed);
    }

    /// True once [`Watch::cancel`] was called on this watch or a clone.
    pub fn is_cancelled(&self) -> bool {
        self.shared.cancelled.load(Ordering::Relaxed)
    }

    /// Steps done and steps planned so far. Both only grow; `done ≤ total` once the run
    /// has planned all its steps.
    pub fn progress(&self) -> (u64, u64) {
        (self.shared.done.load(Ordering::Relaxed), self.shared.total.load(Ordering::Relaxed))
    }

    /// A clone sharing the cancel flag that does not count progress.
    pub fn quiet(&self) -> Watch {
        Watch { shared: Arc::clone(&self.shared), counts: false }
    }

    /// `outcome` unless the run was cancelled.
    ///
    /// # Errors
    /// [`Cancelled`] when [`Watch::cancel`] was called.
    pub fn finish<T>(&self, outcome: T) -> Result<T, Cancelled> {
        if self.is_cancelled() {
            Err(Cancelled)
        } else {
            Ok(outcome)
        }
    }

    /// Plan `steps` more steps.
    pub(crate) fn plan(&self, steps: u64) {
        if self.counts {
            self.shared.total.fetch_add(steps, Ordering::Relaxed);
        }
    }

    /// Count `steps` steps done.
    pub(crate) fn advance(&self, steps: u64) {
        if self.counts {
            self.shared.done.fetch_add(steps, Ordering::Relaxed);
        }
    }

    /// The stopping rule of one kernel call: this watch and a deadline `time_limit` seconds
    /// from now (`None`: no deadline).
    pub(crate) fn clock(&self, time_limit: Option<f64>) -> Clock {
        self.clock_since(Instant::now(), time_limit)
    }

    /// This watch and a deadline `time_limit` seconds after `start` (`None`: no deadline).
    fn clock_since(&self, start: Instant, time_limit: Option<f64>) -> Clock {
        // Durations beyond ~30 years overflow `Instant`; such a limit is no limit.
        let deadline = time_limit.and_then(|s| start.checked_add(Duration::from_secs_f64(s.clamp(0.0, 1e9))));
        Clock { watch: self.clone(), deadline }
    }
}

/// The stopping rule a caller gives a kernel that takes no other options: a deadline
/// `time_limit` seconds from the call's start (`None`: none) and the [`Watch`] to poll.
///
/// Built with [`RunLimits::new`] or [`RunLimits::from_now`] (the struct is
/// `#[non_exhaustive]`, so a field added later breaks no caller outside the crate).
#[derive(Debug, Clone, Default, PartialEq)]
#[non_exhaustive]
pub struct RunLimits {
    /// Wall-clock budget in seconds (`None`: none). When it passes, the kernel returns the
    /// best answer it has, flagged as not proven.
    pub time_limit: Option<f64>,
    /// Cancel flag and progress count shared with the caller.
    pub watch: Watch,
    /// The instant `time_limit` counts from (`None`: the kernel's own start). A caller that
    /// works before the kernel starts (reading its arguments, building a search tree of the
    /// candidates) sets the start of the whole call here, so the limit bounds the call.
    pub since: Option<Instant>,
}

impl RunLimits {
    /// `time_limit` seconds counted from the kernel's own start, polling `watch`.
    pub fn new(time_limit: Option<f64>, watch: Watch) -> RunLimits {
        RunLimits { time_limit, watch, since: None }
    }

    /// A fresh watch and a `time_limit` counted from now: for a call that starts here and
    /// may work before its kernel starts.
    pub fn from_now(time_limit: Option<f64>) -> RunLimits {
        RunLimits { time_limit, watch: Watch::new(), since: Some(Instant::now()) }
    }

    /// This call's clock: the deadline counts from `since`, or from now when it is `None`.
    pub(crate) fn clock(&self) -> Clock {
        self.watch.clock_since(self.since.unwrap_or_else(Instant::now), self.time_limit)
    }
}

/// Steps one kernel call planned and did on its [`Watch`], so that the call can plan more
/// as it learns its work and close its count at the total whatever path it took.
#[derive(Debug)]
pub(crate) struct Steps<'a> {
    watch: &'a Watch,
    planned: u64,
    done: u64,
}

impl<'a> Steps<'a> {
    /// Plan `planned` steps on `watch`.
    pub(crate) fn new(watch: &'a Watch, planned: u64) -> Steps<'a> {
        watch.plan(planned);
        Steps { watch, planned, done: 0 }
    }

    /// Plan `more` steps.
    pub(crate) fn plan(&mut self, more: u64) {
        self.watch.plan(more);
        self.planned += more;
    }

    /// Count one step done, never beyond the planned ones (done ≤ total stays true).
    pub(crate) fn step(&mut self) {
        if self.done < self.planned {
            self.done += 1;
            self.watch.advance(1);
        }
    }

    /// Count up to `steps` steps done, never beyond the planned ones.
    pub(crate) fn advance(&mut self, steps: u64) {
        let steps = steps.min(self.planned - self.done);
        self.done += steps;
        self.watch.advance(steps);
    }

    /// Count every planned step done: the call has ended (a bound that converged early, a
    /// search that found nothing more to do, or a stop).
    pub(crate) fn finish(&mut self) {
        self.watch.advance(self.planned - self.done);
        self.done = self.planned;
    }
}

/// `item(scratch, k)` for `k` in `0..count`, in parallel (each worker with its own
/// `scratch()`), one step of `watch` each (planned by the caller). Once `watch` is cancelled
/// the items left are skipped and the outcome is [`cancelled`] about `argument`: the kernels
/// that use this (areas of a triangulation, lengths of a tree's candidate edges, the rings of
/// a set of cells) have an answer only when every item is done.
pub(crate) fn each_watched<S, T: Send + Default>(
    count: usize,
    watch: &Watch,
    argument: &'static str,
    scratch: impl Fn() -> S + Sync + Send,
    item: impl Fn(&mut S, usize) -> T + Sync + Send,
) -> crate::error::Result<Vec<T>> {
    use rayon::prelude::*;
    let values = (0..count)
        .into_par_iter()
        .map_init(scratch, |scratch, k| {
            // A cancelled run's values are never read (a default fills the items skipped).
            if watch.is_cancelled() {
                return T::default();
            }
            let value = item(scratch, k);
            watch.advance(1);
            value
        })
        .collect();
    if watch.is_cancelled() {
        return Err(cancelled(argument));
    }
    Ok(values)
}

/// One kernel call's stopping rule: its [`Watch`] and its deadline.
#[derive(Debug, Clone)]
pub(crate) struct Clock {
    pub(crate) watch: Watch,
    deadline: Option<Instant>,
}

impl Clock {
    /// A clock that never stops (no deadline, a watch nobody else holds).
    pub(crate) fn unlimited() -> Clock {
        Watch::new().clock(None)
    }

    /// True when the kernel must stop now: cancelled, or past its deadline.
    pub(crate) fn stop(&self) -> bool {
        self.watch.is_cancelled() || self.expired()
    }

    /// True when the deadline has passed.
    pub(crate) fn expired(&self) -> bool {
        self.deadline.is_some_and(|d| Instant::now() >= d)
    }

    /// The deadline, if any.
    pub(crate) fn deadline(&self) -> Option<Instant> {
        self.deadline
    }

    /// The same deadline and cancel flag, counting no progress: for an inner kernel of a
    /// run that counts its own steps.
    pub(crate) fn quiet(&self) -> Clock {
        Clock { watch: self.watch.quiet(), deadline: self.deadline }
    }
}

/// Fewest separate allocations for which [`FreedAside`] frees on another thread: below it,
/// freeing in place is cheaper than starting a thread.
const FREE_ASIDE_ALLOCATIONS: usize = 10_000;

/// A value freed on a thread of its own when it goes out of scope. A kernel's structures of
/// many small allocations (coverage lists of every point and candidate, a search tree of the
/// candidates) take tenths of a second to free on a loaded machine, which a run stopped by
/// its deadline or by Ctrl-C would otherwise spend after the stop. Dereferences to the value.
pub(crate) struct FreedAside<T: Send + 'static> {
    value: Option<T>,
    aside: bool,
}

impl<T: Send + 'static> FreedAside<T> {
    /// `value`, held in `allocations` separate allocations: freed on another thread when
    /// they are at least [`FREE_ASIDE_ALLOCATIONS`], else in place.
    pub(crate) fn new(value: T, allocations: usize) -> FreedAside<T> {
        FreedAside { value: Some(value), aside: allocations >= FREE_ASIDE_ALLOCATIONS }
    }
}

impl<T: Send + 'static> std::ops::Deref for FreedAside<T> {
    type Target = T;
    fn deref(&self) -> &T {
        self.value.as_ref().expect("held until dropped")
    }
}

impl<T: Send + 'static> std::ops::DerefMut for FreedAside<T> {
    fn deref_mut(&mut self) -> &mut T {
        self.value.as_mut().expect("held until dropped")
    }
}

impl<T: Send + 'static> Drop for FreedAside<T> {
    fn drop(&mut self) {
        let Some(value) = self.value.take() else { return };
        if self.aside {
            spawn_free(value);
        }
    }
}

/// Frees `value`, held in `allocations` separate allocations, now: on another thread when
/// they are at least [`FREE_ASIDE_ALLOCATIONS`] (as [`FreedAside`] does when dropped), else
/// in place. For a structure the kernel no longer needs once it has answered.
pub(crate) fn free_aside<T: Send + 'static>(value: T, allocations: usize) {
    if allocations >= FREE_ASIDE_ALLOCATIONS {
        spawn_free(value);
    }
}

fn spawn_free<T: Send + 'static>(value: T) {
    // When no thread can be started, the refused closure drops the value here.
    let _ = std::thread::Builder::new().name("placewise-free".into()).spawn(move || drop(value));
}

/// Helpers for the tests of watched kernels.
#[cfg(test)]
pub(crate) mod testing {
    use super::{Cancelled, Watch};

    /// `run(watch)` while another thread cancels `watch` as soon as `mark` steps are done:
    /// the outcome is cancelled ([`Watch::finish`]), and unless the run ended before the
    /// cancel reached it (every planned step done), the kernel itself stopped with an error;
    /// the count never passes the total. Returns the progress at the end.
    pub(crate) fn cancelled_after<T>(mark: u64, run: impl FnOnce(&Watch) -> crate::Result<T>) -> (u64, u64) {
        let watch = Watch::new();
        let outcome = std::thread::scope(|scope| {
            let canceller = watch.clone();
            let ended = watch.clone();
            scope.spawn(move || {
                // Polls until the mark, or until the run ended (cancelled below) without it.
                while canceller.progress().0 < mark && !canceller.is_cancelled() {
                    std::thread::yield_now();
                }
                canceller.cancel();
            });
            let outcome = run(&watch);
            ended.cancel();
            outcome
        });
        let (done, total) = watch.progress();
        assert!(done <= total, "a cancelled run counted {done} steps of {total} planned");
        assert!(outcome.is_err() || done == total, "a cancelled run answered at {done} of {total} steps");
        assert_eq!(watch.finish(()), Err(Cancelled));
        (done, total)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn clones_share_the_flag_and_quiet_ones_do_not_count() {
        let watch = Watch::new();
        let clock = watch.clock(None);
        let quiet = watch.quiet();
        quiet.plan(5);
        watch.plan(2);
        watch.advance(1);
        quiet.advance(3);
        assert_eq!(watch.progress(), (1, 2));
        assert!(!clock.stop());
        assert_eq!(watch.finish(7), Ok(7));
        quiet.cancel();
        assert!(clock.stop() && watch.is_cancelled());
        assert_eq!(watch.finish(7), Err(Cancelled));
    }

    #[test]
    fn steps_never_pass_the_plan_and_finish_at_it() {
        let watch = Watch::new();
        let mut steps = Steps::new(&watch, 2);
        steps.step();
        steps.step();
        steps.step();
        assert_eq!(watch.progress(), (2, 2));
        steps.plan(3);
        steps.step();
        assert_eq!(watch.progress(), (3, 5));
        steps.finish();
        assert_eq!(watch.progress(), (5, 5));
        let limits = RunLimits::new(Some(0.0), watch.clone());
        assert!(limits.clock().stop() && !RunLimits::default().clock().stop());
    }

    #[test]
    fn a_limit_counts_from_its_start_when_one_is_given() {
        // Started an hour ago, a limit of a minute has passed; counted from the kernel's
        // start (no `since`), the same minute has not, nor has it from a start just now.
        let hour_ago = Instant::now().checked_sub(Duration::from_secs(3600));
        let late = RunLimits { time_limit: Some(60.0), since: hour_ago, ..RunLimits::default() };
        assert!(hour_ago.is_none() || late.clock().expired());
        assert!(!RunLimits { since: None, ..late.clone() }.clock().expired());
        assert!(!RunLimits::from_now(Some(60.0)).clock().expired());
        assert!(RunLimits::from_now(None).clock().deadline().is_none());
    }

    #[test]
    fn a_value_freed_aside_is_dropped_on_another_thread_only_when_large() {
        // The value reports the thread that drops it through a channel.
        struct Tell(std::sync::mpsc::Sender<std::thread::ThreadId>);
        impl Drop for Tell {
            fn drop(&mut self) {
                let _ = self.0.send(std::thread::current().id());
            }
        }
        let here = std::thread::current().id();
        for (allocations, elsewhere) in [(FREE_ASIDE_ALLOCATIONS, true), (FREE_ASIDE_ALLOCATIONS - 1, false)] {
            let (sender, receiver) = std::sync::mpsc::channel();
            drop(FreedAside::new(Tell(sender), allocations));
            let by = receiver.recv_timeout(Duration::from_secs(60)).expect("dropped");
            assert_eq!(by != here, elsewhere);
        }
    }

    #[test]
    fn a_zero_time_limit_has_expired_and_a_huge_one_never_does() {
        assert!(Watch::new().clock(Some(0.0)).expired());
        let far = Watch::new().clock(Some(f64::MAX));
        assert!(!far.stop());
    }
}
