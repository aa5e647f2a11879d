"""One progress count for a call that runs watched kernels one after another.

Every watched kernel reports its own ``(done, total)`` from 0 (see ``progress=`` in the
public functions). A call made of stages — the travel-cost searches and then a discrete
model, the spherical cells and then the demand they serve — hands a ``progress`` callable
one count over all of them instead, so a bar driven by it runs once from 0 to its total.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any


class Stages:
    """The ``progress`` argument of each of ``stages`` kernel calls made one after another.

    A callable sees the stages' counts laid end to end: ``done`` is the steps of the stages
    finished plus those of the current one; ``total`` is the steps planned so far plus one
    step for each stage still to come (its own steps are known only when it starts, and the
    total then grows by them). Neither ever falls, and ``done`` reaches ``total`` only when
    the call ends (:meth:`close`). ``True`` (a bar on stderr) and ``False`` are handed to
    every stage as they are: each stage then draws its own bar, labelled with what it counts.
    """

    def __init__(self, progress: Any, stages: int) -> None:
        self._progress = progress
        self._later = stages
        # Steps of the stages finished, the current stage's last total, the last report.
        self._base = 0
        self._current = 0
        self._done = 0
        self._total = 0

    def _relays(self) -> bool:
        return callable(self._progress) and not isinstance(self._progress, bool)

    def next(self) -> Any:
        """The ``progress`` argument of the next stage's kernel."""
        if not self._relays():
            return self._progress
        self._base += self._current
        self._current = 0
        self._later -= 1
        return self._relay(self._progress, self._base, self._later)

    def close(self) -> None:
        """After the last stage: a last report of the whole, unless the last stage made it
        (a stage that planned no steps leaves the count a step short)."""
        if self._relays() and self._done < self._total:
            self._done = self._total
            self._progress(self._total, self._total)

    def _relay(self, progress: Callable[[int, int], object], base: int, later: int) -> Callable[[int, int], object]:
        def report(done: int, total: int) -> object:
            self._current = total
            self._total = max(self._total, base + total + later)
            self._done = max(self._done, base + done)
            return progress(self._done, self._total)

        return report
