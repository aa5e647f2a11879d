"""Errors in the user's terms.

The kernels know rows by position and groups by integer label. The GeoPandas layer, the
Dask layer and the command line know the user's own names: a DataFrame's index labels and
the values of a group column. :func:`restate` rewrites a kernel's ``InputError`` with those
names (one message layout, built by the kernel's own error description) and writes the
call's unit after each length and cost (``radius 500 m``), and :func:`restate_problems` does
the same for the ``problem`` column of groups skipped with ``errors="skip"``.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Mapping
from contextlib import contextmanager
from typing import Any, NoReturn

import numpy as np

from ._core import DegenerateInputError, InputError

__all__ = ["check_errors", "in_unit", "labelled", "plain", "refuse", "restate", "restate_problems"]


def refuse(argument: str, text: str) -> NoReturn:
    """Raise an ``InputError`` saying ``text`` about ``argument`` (named in its ``argument``)."""
    error = InputError(text)
    error.argument = argument
    raise error


def check_errors(errors: Any) -> None:
    """Refuse an ``errors=`` other than "raise" or "skip" on every path of a function that
    takes it, grouped or not (a misspelt "skipp" would otherwise pass unnoticed until the
    data gained groups).

    Examples
    --------
    >>> from placewise._errors import check_errors
    >>> check_errors("skip")
    >>> check_errors("ignore")
    Traceback (most recent call last):
        ...
    placewise.InputError: errors must be "raise" or "skip"; got 'ignore'
    """
    if not (isinstance(errors, str) and errors in ("raise", "skip")):
        refuse("errors", f'errors must be "raise" or "skip"; got {errors!r}')


def plain(value: Any) -> Any:
    """A value as the user wrote it: numpy scalars become Python scalars."""
    return value.item() if isinstance(value, np.generic) else value


class _Names:
    """Group and row namers for one call: ``group_values[code]`` and ``row_labels[argument][row]``."""

    def __init__(self, group_values: Any = None, row_labels: Mapping[str, Any] | None = None) -> None:
        self.group_values = None if group_values is None else np.asarray(group_values, dtype=object)
        self.row_labels = {k: np.asarray(v, dtype=object) for k, v in (row_labels or {}).items()}

    def group_value(self, code: int | None) -> Any:
        if code is None or self.group_values is None or not 0 <= code < len(self.group_values):
            return code
        return plain(self.group_values[code])

    def row_label(self, argument: str | None, row: int | None) -> Any:
        labels = self.row_labels.get(argument or "")
        if row is None or labels is None or not 0 <= row < len(labels):
            return row
        return plain(labels[row])

    def group(self) -> Callable[[int], str]:
        return lambda code: repr(self.group_value(code))

    def row(self) -> Callable[[str, int], str]:
        return lambda argument, row: repr(self.row_label(argument, row))


def _stated(unit: str | None) -> str | None:
    """The unit to write after a number: none for the unnamed default ``"u"``."""
    return None if unit in (None, "", "u") else unit


def _units(unit: str | None, length_unit: str | None) -> tuple[str | None, str | None]:
    """``(length_unit, cost_unit)`` as :meth:`ErrorDetail.describe` takes them."""
    return _stated(unit if length_unit is None else length_unit), _stated(unit)


def restate(exc: InputError, group_values: Any = None, row_labels: Mapping[str, Any] | None = None,
            unit: str | None = None, length_unit: str | None = None) -> InputError:
    """``exc`` restated with the user's group values, row labels and unit.

    Parameters
    ----------
    exc : InputError
        Raised by a kernel; its ``detail`` holds the structured error.
    group_values : sequence, optional
        The user's group value of each integer group label ``0..G-1``.
    row_labels : mapping of str to sequence, optional
        Per argument name (``"points"``, ``"weights"``, ``"sites"``), the user's label of
        each input row.
    unit : str, optional
        The unit of the call's costs (``"min"``; on coordinates the costs are distances, so
        ``"m"``), written after each of them in the message (``radius 500 m``). None, or the
        unnamed default ``"u"``: bare numbers.
    length_unit : str, optional
        The unit of its lengths (a gap to a street network) when it is not ``unit``.

    Returns
    -------
    InputError
        Of the same class, with ``group`` and ``row`` set to the user's values. Errors
        without structured detail (argument errors) come back unchanged.
    """
    detail = getattr(exc, "detail", None)
    if detail is None:
        return exc
    names = _Names(group_values, row_labels)
    kind = DegenerateInputError if isinstance(exc, DegenerateInputError) else InputError
    out = kind(detail.describe(names.group(), names.row(), *_units(unit, length_unit)))
    out.argument = detail.argument
    out.group = names.group_value(detail.group)
    out.row = names.row_label(detail.argument, detail.row)
    out.detail = detail
    return out


def restate_problems(details: Any, group_values: Any = None, row_labels: Mapping[str, Any] | None = None,
                     unit: str | None = None) -> np.ndarray:
    """The ``problem`` messages of a grouped result, restated as :func:`restate` does."""
    names = _Names(group_values, row_labels)
    out = np.empty(len(details), dtype=object)
    for g, detail in enumerate(details):
        out[g] = None if detail is None else str(detail.describe(names.group(), names.row(), *_units(unit, None)))
    return out


@contextmanager
def in_unit(unit: str | None, length_unit: str | None = None) -> Iterator[None]:
    """Run a kernel call, restating its ``InputError`` with ``unit`` after every cost and
    ``length_unit`` (default ``unit``) after every length (see :func:`restate`); other
    errors pass unchanged."""
    try:
        yield
    except InputError as exc:
        if _units(unit, length_unit) == (None, None) or getattr(exc, "detail", None) is None:
            raise
        raise restate(exc, unit=unit, length_unit=length_unit) from None


def labelled(positions: Any, labels: np.ndarray) -> np.ndarray:
    """Input row positions (-1, or missing for a skipped group, for none) as the user's row
    labels (None for none)."""
    import pandas as pd

    values = pd.to_numeric(pd.Series(np.asarray(positions)), errors="coerce").to_numpy(dtype=np.float64,
                                                                                      na_value=np.nan)
    valid = values >= 0  # False for NaN
    named = np.full(len(values), None, dtype=object)
    named[valid] = np.asarray(labels, dtype=object)[values[valid].astype(np.int64)]
    return named
