"""A shared catalogue of awkward inputs, parametrised over by every family's tests.

Each entry is ``(name, points)``. ``BAD_POINTS`` must raise ``InputError``;
``AWKWARD_POINTS`` are legal and must give a correct answer (or a documented
``InputError`` such as ``DegenerateInputError`` for too few distinct / collinear points).
"""

from __future__ import annotations

import numpy as np

rng = np.random.default_rng(20261202)
_cloud = rng.normal(size=(40, 2))


def _unaligned(values: np.ndarray) -> np.ndarray:
    """A C-contiguous float64 array whose data is not 8-byte aligned (as arrays unpickled
    from out-of-band buffers can be)."""
    raw = np.zeros(values.size * 8 + 1, dtype=np.uint8)[1:]
    out = raw.view(np.float64).reshape(values.shape)
    out[...] = values
    return out

BAD_POINTS = [
    ("nan", np.array([[0.0, 0.0], [np.nan, 1.0], [2.0, 2.0]])),
    ("plus_inf", np.array([[0.0, 0.0], [1.0, np.inf], [2.0, 2.0]])),
    ("minus_inf", np.array([[-np.inf, 0.0], [1.0, 1.0], [2.0, 2.0]])),
    ("empty", np.empty((0, 2))),
    ("empty_list", []),
    ("one_column", np.zeros((5, 1))),
    ("three_columns", np.zeros((5, 3))),
    ("flat", np.zeros(6)),
    ("three_d", np.zeros((2, 3, 2))),
    ("strings", [["a", "b"], ["c", "d"]]),
    ("ragged", [[0.0, 1.0], [2.0]]),
    # numpy would take these as numbers (with a warning at most): the imaginary part dropped,
    # digits parsed, dates counted in days.
    ("complex", _cloud[:6] + 1j),
    ("numeric_strings", [["0", "1"], ["2", "3"], ["4", "0"]]),
    ("dates", np.array([["2026-01-01", "2026-01-02"], ["2026-01-03", "2026-01-05"]], dtype="datetime64[D]")),
]

AWKWARD_POINTS = [
    ("int_dtype", np.array([[0, 0], [4, 0], [2, 4], [1, 1]], dtype=np.int32)),
    ("float32", _cloud.astype(np.float32)),
    ("fortran_order", np.asfortranarray(_cloud)),
    ("non_contiguous", np.repeat(_cloud, 2, axis=0)[::2]),
    ("unaligned", _unaligned(_cloud)),
    ("list_of_lists", _cloud.tolist()),
    ("huge_scale", _cloud * 1e12),
    ("tiny_scale", _cloud * 1e-12),
    ("far_offset", _cloud + np.array([500_000.0, 6_000_000.0])),
    ("duplicates", np.vstack([_cloud[:10], _cloud[:10], _cloud[:5]])),
    ("collinear", np.column_stack([np.arange(12.0), 2.0 * np.arange(12.0) + 1.0])),
    ("cocircular", np.column_stack([np.cos(np.arange(16) * np.pi / 8), np.sin(np.arange(16) * np.pi / 8)])),
    ("grid", np.array([[i, j] for i in range(6) for j in range(6)], dtype=float)),
    ("all_same", np.full((7, 2), 3.5)),
    ("single", np.array([[1.5, -2.5]])),
]

BAD_WEIGHTS = [
    ("negative", lambda n: np.r_[np.ones(n - 1), -1.0]),
    ("nan", lambda n: np.r_[np.nan, np.ones(n - 1)]),
    ("inf", lambda n: np.r_[np.ones(n - 1), np.inf]),
    ("all_zero", lambda n: np.zeros(n)),
    ("too_short", lambda n: np.ones(n - 1)),
    ("too_long", lambda n: np.ones(n + 1)),
    ("two_d", lambda n: np.ones((n, 1))),
    ("complex", lambda n: np.ones(n) + 0.5j),
]
