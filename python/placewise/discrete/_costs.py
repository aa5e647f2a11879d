"""Costs as the kernels take them: a dense or ``scipy.sparse`` matrix, or coordinates whose
straight-line costs the kernel computes; results given back their coordinates."""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from .. import _core
from .._results import as_points


def _input_error(argument: str, message: str) -> Exception:
    error = _core.InputError(message)
    error.argument = argument
    return error


def _matrix(costs: Any) -> Any:
    """``costs`` as the kernels take it. A ``scipy.sparse`` matrix goes over as its allowed
    pairs (compressed rows, columns ascending) and is never densified: a pair it does not
    store may not be used. Anything else passes through to the kernel's own conversion."""
    if not type(costs).__module__.startswith("scipy.sparse"):
        return costs
    import scipy.sparse

    n, m = costs.shape
    if costs.dtype.kind not in "biuf":
        # As for dense costs: complex values would lose their imaginary part with a warning only.
        raise _input_error("costs", f"costs must hold real numbers; got a sparse matrix of dtype {costs.dtype}")
    csr = scipy.sparse.csr_array(costs, dtype=np.float64, copy=True)
    if costs.format == "coo" and csr.nnz < costs.nnz:
        raise _input_error("costs", "costs: the sparse matrix stores some pair twice; store each allowed pair once")
    csr.sort_indices()
    return ("csr", csr.indptr, csr.indices, csr.data, int(n), int(m))


def _planar(points: ArrayLike, candidates: ArrayLike, name: str = "candidates") -> tuple:
    """Straight-line costs from ``points`` to ``candidates``, computed by the kernel (held as
    a matrix only when it is small); its errors call the columns ``name`` ("candidates", or
    "sites" for existing sites evaluated as they are)."""
    return ("planar", points, candidates, name)


def _placed(result: Any, points: ArrayLike, candidates: ArrayLike) -> Any:
    """``result`` with the coordinates it was computed from (the kernel accepted them)."""
    return dataclasses.replace(result, points=as_points(points), candidates=as_points(candidates))
