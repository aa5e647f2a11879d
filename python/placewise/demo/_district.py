"""The district of every part: the scenario, the model note, the number of depots, and the
numbers and colours a depot keeps in every map and layer."""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

from .. import plotting
from .._scenario import Scenario, orsavel

DISCLAIMER = (
    "These results are planning aids under a model: straight-line distance and the given "
    "weights (people per household). They are not a plan. Check them against local "
    "regulations and licensed professional judgement before acting on them. The district of "
    "Orsavel and all its data are invented."
)
DEPOTS = 5


def scenario(seed: int = 7, households: int = 12_000) -> Scenario:
    """The demo's invented district of Orsavel (see :class:`Scenario`), for notebooks and examples.

    Parameters
    ----------
    seed : int
        Seed of the invented households.
    households : int
        Number of households to place.

    Returns
    -------
    Scenario

    Examples
    --------
    >>> from placewise.demo import scenario
    >>> s = scenario(households=500)
    >>> s.name, s.households.shape, len(s.region.interiors), s.crs    # one lake
    ('Orsavel', (500, 2), 1, 'EPSG:32626')
    >>> scenario(households=0).households.shape                       # no demand at all
    (0, 2)
    """
    return orsavel(seed, households)


def _in_metres(result: Any) -> Any:
    """``result`` with its lengths named in the grid's unit, metres (``distance_m``, ``area_m2``)."""
    return dataclasses.replace(result, unit="m")


def _colour(number: int) -> str:
    """The colour of depot ``number`` (1-based), the same in every map."""
    return plotting.site_colour(number - 1)


def _pair_numbers(sites: np.ndarray, reference: np.ndarray) -> np.ndarray:
    """Depot numbers (1-based) for ``sites``: each takes the number of the ``reference``
    depot (numbered 1, 2, ... in its row order) it is paired with, pairing the nearest
    pairs first (a greedy matching); sites left over take the next free numbers.

    Only for display (same colour, same number for the depots that stand for each other),
    so a few distances on at most a handful of depots are formed here.
    """
    gap = np.hypot(*(sites[:, None, :] - reference[None, :, :]).transpose(2, 0, 1))
    numbers = np.zeros(len(sites), dtype=np.int64)
    taken: set[int] = set()
    for flat in np.argsort(gap, axis=None, kind="stable"):
        i, j = divmod(int(flat), len(reference))
        if numbers[i] == 0 and j not in taken:
            numbers[i] = j + 1
            taken.add(j)
    spare = iter(range(len(reference) + 1, len(reference) + len(sites) + 1))
    return np.array([n if n else next(spare) for n in numbers], dtype=np.int64)
