"""Small frozen result objects shared by every family.

Results hold plain numpy arrays (made read-only) and Python scalars. Their ``repr``
shows scalars in full and arrays by shape (with values when small), so a result printed
in a notebook reads at a glance.
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

__all__ = ["Result"]

_SMALL = 6


def _freeze(value: Any) -> Any:
    if isinstance(value, np.ndarray):
        value = np.asarray(value)
        value.flags.writeable = False
    return value


def _show(value: Any) -> str:
    if isinstance(value, np.ndarray):
        if value.size <= _SMALL:
            return np.array2string(value, precision=6, separator=", ", suppress_small=False).replace("\n", "")
        return f"<{value.dtype} array {value.shape}>"
    if isinstance(value, float):
        return f"{value:.6g}"
    return repr(value)


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class Result:
    """Base of every result object: frozen fields, read-only arrays, a readable repr."""

    def __post_init__(self) -> None:
        for field in dataclasses.fields(self):
            object.__setattr__(self, field.name, _freeze(getattr(self, field.name)))

    def __repr__(self) -> str:
        shown = ", ".join(
            f"{f.name}={_show(getattr(self, f.name))}" for f in dataclasses.fields(self) if f.repr
        )
        return f"{type(self).__name__}({shown})"

    def _plot_axes(self, ax: Any) -> Any:
        """The matplotlib axes to draw on (matplotlib is imported only when plotting)."""
        if ax is None:
            import matplotlib.pyplot as plt

            _, ax = plt.subplots()
            ax.set_aspect("equal")
        return ax
