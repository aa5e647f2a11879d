"""Cutting one group's rows out of a grouped result's shared arrays."""

from __future__ import annotations

from typing import Any

import numpy as np


def _members(row_group: np.ndarray, position: int) -> np.ndarray:
    """Input rows of the group at ``position`` (ascending)."""
    return np.flatnonzero(row_group == position)


def _group_slice(offsets: np.ndarray, position: int) -> slice:
    return slice(int(offsets[position]), int(offsets[position + 1]))


def _cell_rings_of(cells: Any, rows: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The cells of ``rows`` cut out of a grouped result's shared arrays: their vertices,
    vertex offsets and ring offsets renumbered from 0, and the indices of their rings."""
    lo, hi = cells.offsets[rows], cells.offsets[rows + 1]
    first, last = np.searchsorted(cells.parts, lo), np.searchsorted(cells.parts, hi)
    rings = np.concatenate([np.arange(a, b) for a, b in zip(first, last)] + [np.empty(0, np.int64)])
    vertices = np.concatenate([cells.vertices[a:b] for a, b in zip(lo, hi)] + [np.empty((0, 2))])
    offsets = np.concatenate([[0], np.cumsum(hi - lo)]).astype(np.int64)
    parts = np.concatenate([[0], np.cumsum(cells.parts[rings + 1] - cells.parts[rings])]).astype(np.int64)
    return vertices, offsets, parts, rings
