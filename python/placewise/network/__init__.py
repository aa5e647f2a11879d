"""Networks linking sites: the Euclidean minimum spanning tree and the Euclidean Steiner tree.

Every tree's rows are its edges. An edge is undirected: its ends are ``end_a`` and
``end_b``, smaller first. In a spanning tree both ends are input rows. In a Steiner tree an
end may also be a *junction* (a Steiner point, added where three edges meet at 120°); such
an end has ``end_a`` / ``end_b`` equal to -1 and its junction number (a row of
``junctions``) in ``junction_a`` / ``junction_b``, which is -1 for an input-row end. Input
rows come before junctions, so ``end_a`` is an input row unless both ends are junctions.

In grouped results (``groups=``) the ends are rows of the whole input, never positions
inside a group, and junctions are numbered within their group's tree.
"""

from __future__ import annotations

# typing.get_type_hints resolves a class's field annotations ("np.ndarray") in the module the
# class names, which is this package (see the end): the names they use must be here.
import numpy as np  # noqa: F401

from .._package import adopt
from ._spanning import SpanningTree, SpanningTrees, spanning_tree
from ._steiner import SteinerTree, SteinerTrees, steiner_tree

__all__ = ["SpanningTree", "SpanningTrees", "SteinerTree", "SteinerTrees", "spanning_tree", "steiner_tree"]

# The public objects live in the private modules above but belong to this package: their
# reprs, pickles, reference entries and doctests name it, as they did when it was one module.
adopt(globals())
