"""Ctrl-C from outside: run Python code in a child process and send it SIGINT while it works.

The child prints ``started`` before its long call and ``interrupted <time>`` (or
``finished <time>``) after it; the latency is measured on the one wall clock of the machine.
"""

from __future__ import annotations

import signal
import subprocess
import sys
import time


def interrupt(code: str, after: float) -> tuple[str, float]:
    """Send SIGINT ``after`` seconds past the child's ``started``; return the child's word
    (``interrupted`` or ``finished``) and the seconds from the signal to that word."""
    child = subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                             text=True)
    try:
        assert child.stdout is not None
        assert child.stdout.readline().strip() == "started"
        time.sleep(after)
        sent = time.time()
        child.send_signal(signal.SIGINT)
        out, err = child.communicate(timeout=60)
    finally:
        child.kill()
    word, stamp = out.split()
    assert word in ("interrupted", "finished"), (out, err)
    return word, float(stamp) - sent


class Enough(Exception):
    """What :func:`stop_at_first_report` raises."""


def stop_at_first_report(done: int, total: int) -> None:
    """A progress callable that ends the run it watches (the watch is cancelled and this
    exception reaches the caller)."""
    raise Enough


def check_progress_reports(run) -> None:  # noqa: ANN001
    """Call ``run(progress=...)`` and check what the callable received: reports were made,
    the counts done never fall, never pass the total, and the last report is the whole."""
    calls: list[tuple[int, int]] = []
    run(progress=lambda done, total: calls.append((done, total)))
    check_counts(calls)


def check_counts(calls: list[tuple[int, int]]) -> None:
    """The ``(done, total)`` reports of one run: some were made, the counts done never fall,
    never pass the total, and the last report is the whole."""
    assert calls, "progress was never reported"
    done = [d for d, _ in calls]
    assert done == sorted(done)
    assert all(0 <= d <= t for d, t in calls)
    assert calls[-1][0] == calls[-1][1] > 0



_CHILD = """
import signal, sys, time
import numpy as np
import placewise as pw

# Ctrl-C as a terminal delivers it, whatever the parent left: a job started in the
# background of a shell ignores SIGINT, Python keeps an ignored SIGINT ignored, and a
# blocked one stays blocked across exec.
signal.signal(signal.SIGINT, signal.default_int_handler)
signal.pthread_sigmask(signal.SIG_UNBLOCK, {signal.SIGINT})

"""

_CALL = """
print("started", flush=True)
try:
    %s
    print("finished", time.time(), flush=True)
except KeyboardInterrupt:
    print("interrupted", time.time(), flush=True)
"""


def child_code(setup: str, call: str) -> str:
    """The code of a child for :func:`check_prompt_interrupt`: numpy and placewise imported,
    Ctrl-C delivered as a terminal delivers it, ``setup`` run, then ``started`` printed and
    ``call`` made (one line), then its word and time stamp printed."""
    return _CHILD + setup + _CALL % call


#: The issue's aim for Ctrl-C: KeyboardInterrupt within half a second of the signal.
PROMPT_SECONDS = 0.5


def uninterrupted_seconds(code: str) -> float:
    """Run the same child without a signal; the seconds from its ``started`` to its
    ``finished`` stamp (the kernel's own runtime, measured in the same conditions)."""
    child = subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                             text=True)
    try:
        assert child.stdout is not None
        assert child.stdout.readline().strip() == "started"
        started = time.time()
        out, err = child.communicate(timeout=300)
    finally:
        child.kill()
    word, stamp = out.split()
    assert word == "finished", (out, err)
    return float(stamp) - started


def check_prompt_interrupt(code: str, after: float) -> tuple[float, float]:
    """Ctrl-C ``after`` seconds into the child's call must raise ``KeyboardInterrupt``
    within :data:`PROMPT_SECONDS`, while the same call left alone runs on for at least twice
    that (so a kernel that never looked at the signal would miss the aim by the rest of its run).
    One retry on a miss (a machine busy with other work can hold the child off the CPU).
    Returns the uninterrupted runtime and the latency, seconds."""
    runtime = uninterrupted_seconds(code)
    # On a quicker machine the signal comes sooner, so that the run left to interrupt stays
    # several times the aim.
    after = max(0.3, min(after, runtime / 4))
    assert runtime > after + 2 * PROMPT_SECONDS, (
        f"the call takes {runtime:.2f} s: too short to tell a prompt stop from its end")
    word, latency = interrupt(code, after)
    if not (word == "interrupted" and latency < PROMPT_SECONDS):
        word, latency = interrupt(code, after)
    assert word == "interrupted" and latency < PROMPT_SECONDS, (word, latency, runtime)
    return runtime, latency
