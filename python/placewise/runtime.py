"""How many threads placewise uses."""

from __future__ import annotations

from . import _core

__all__ = ["set_threads", "thread_count"]


def set_threads(threads: int) -> None:
    """Use ``threads`` worker threads for every later placewise call.

    By default placewise uses one thread per core, or ``RAYON_NUM_THREADS`` when that
    environment variable is set before the first call. Callers who share a machine (for
    example a Dask worker running several tasks) can cap it here; ``0`` restores the default.
    All kernels give the same answer whatever the thread count. ``threads`` must be an
    integer from 0 to 4096; anything else (``1.5``, ``-1``, ``"2"``) is an ``InputError``.

    Examples
    --------
    >>> import placewise as pw
    >>> pw.set_threads(1)
    >>> pw.thread_count()
    1
    >>> pw.set_threads(0)   # back to the default pool
    >>> pw.set_threads(1.5)
    Traceback (most recent call last):
    ...
    placewise.InputError: threads must be an integer; got 1.5 (float)
    """
    _core.set_threads(threads)


def thread_count() -> int:
    """Number of worker threads later calls will use.

    Examples
    --------
    >>> import placewise as pw
    >>> pw.thread_count() >= 1
    True
    """
    return int(_core.thread_count())
