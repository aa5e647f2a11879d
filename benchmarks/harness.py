"""The benchmark harness: every family's ``bench_<family>.py`` exposes ``cases(quick)``.

A case times placewise and a reference implementation on the same data in the same run
and reports the ratio ``reference time / placewise time`` (higher is better for us),
together with the target from the issue that asked for it, if any.
"""

from __future__ import annotations

import dataclasses
import gc
import time
from collections.abc import Callable
from typing import Any


@dataclasses.dataclass
class Case:
    """One row of the benchmark table."""

    kernel: str
    size: str
    ours: Callable[[], Any]
    reference: Callable[[], Any] | None
    reference_name: str
    target: float | None = None
    # Optional: (ours_result, reference_result) -> str, a short quality note (e.g. cost excess)
    compare: Callable[[Any, Any], str] | None = None
    repeat: int = 3
    reference_repeat: int = 1


def best_time(fn: Callable[[], Any], repeat: int) -> tuple[float, Any]:
    """Best wall-clock time of ``repeat`` runs and the last result."""
    best = float("inf")
    result = None
    for _ in range(max(1, repeat)):
        gc.collect()
        start = time.perf_counter()
        result = fn()
        best = min(best, time.perf_counter() - start)
    return best, result
