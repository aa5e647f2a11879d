"""What every enclosing result shares: the polygon standing for a circle or ellipse, the
drawing, the table helpers and the grouped form that names each group's support rows."""

from __future__ import annotations

import dataclasses
from typing import Any, ClassVar

import numpy as np
from numpy.typing import ArrayLike

from .._region import draw_region
from .._results import Grouped, Result

# Vertices of the polygon standing for a circle or ellipse. The regular N-gon whose
# vertices lie at radius r / cos(pi / N) has its edges tangent to the circle of radius r, so
# it contains the disk; an affine map keeps containment and tangency, so the same holds for
# the image of the unit circle's polygon under an ellipse's axes and rotation.
_VERTICES = 128
_UNIT_RING = np.exp(1j * np.linspace(0.0, 2.0 * np.pi, _VERTICES, endpoint=False)) / np.cos(np.pi / _VERTICES)


def _rings(center: Any, semi_major: Any, semi_minor: Any, angle_deg: Any) -> np.ndarray:
    """Closed rings (G, N + 1, 2) of the polygons circumscribing G ellipses (circles when the
    semi-axes are equal); ``angle_deg`` is the major axis, degrees counter-clockwise from +x."""
    center = np.asarray(center, dtype=np.float64).reshape(-1, 2)
    a = np.asarray(semi_major, dtype=np.float64).reshape(-1, 1)
    b = np.asarray(semi_minor, dtype=np.float64).reshape(-1, 1)
    turn = np.exp(1j * np.radians(np.asarray(angle_deg, dtype=np.float64).reshape(-1, 1)))
    ring = (a * _UNIT_RING.real + 1j * b * _UNIT_RING.imag) * turn + (center[:, :1] + 1j * center[:, 1:])
    ring = np.concatenate([ring, ring[:, :1]], axis=1)
    return np.stack([ring.real, ring.imag], axis=-1)


def _geometries(build: Any, coords: np.ndarray) -> np.ndarray:
    """``build(coords[g])`` for every row of ``coords`` (G, ..., 2) as one object array,
    None where a coordinate is missing (a group skipped with ``errors="skip"``)."""
    missing = ~np.isfinite(coords.reshape(len(coords), -1)).all(axis=1)
    out = np.empty(len(coords), dtype=object)
    if (~missing).any():
        out[~missing] = build(coords[~missing])
    return out


def _plot_enclosing(result: Any, ax: Any, points: ArrayLike | None, style: dict[str, Any], what: str,
                    title: str) -> Any:
    """The one drawing of every enclosing result: the demand ``points`` as context with the
    support rows ringed (when the caller passes the points, which results do not keep), each
    shape's outline or site in its group's colour, a title, unit-labelled axes and a legend.
    ``style`` goes to the outlines (circles, ellipses) or the sites (minimax points)."""
    from ..plotting import INK, draw_context, draw_sites, finish, site_colours

    ax = result._plot_axes(ax)
    grouped = isinstance(result, Grouped)
    draw_region(ax, getattr(result, "region", None))
    if points is not None:
        xy = np.asarray(points, dtype=np.float64).reshape(-1, 2)
        draw_context(ax, xy)
        support = np.asarray(result.support_index if grouped else result.support, dtype=np.int64)
        if len(support):
            ax.plot(xy[support, 0], xy[support, 1], linestyle="none", marker="o", markersize=7,
                    markerfacecolor="none", markeredgecolor=INK, markeredgewidth=1.1, zorder=5,
                    label="support points (fix the shape)")
    colours = site_colours(len(result.labels) if grouped else 1)
    suffix = " (colour = group)" if grouped and len(colours) > 1 else ""
    if isinstance(result, _Outlined):
        centres = np.asarray(result._outline()[0], dtype=np.float64).reshape(-1, 2)
        drawn = 0
        for g, ring in enumerate(_rings(*result._outline())):
            if np.isfinite(ring).all():
                ax.plot(ring[:, 0], ring[:, 1], **{"color": colours[g], "linewidth": 1.6, "zorder": 4,
                                                   "label": what + suffix if not drawn else "_nolegend_", **style})
                drawn += 1
        ax.plot(centres[:, 0], centres[:, 1], linestyle="none", marker="+", markersize=10, color=INK, zorder=6,
                label="centre" if len(centres) == 1 else "centres")
    else:
        draw_sites(ax, result.location, colours, label=what + suffix, **style)
        if points is None:
            # A site alone gives degenerate limits: frame it with a unit margin.
            at = np.asarray(result.location, dtype=np.float64).reshape(-1, 2)
            at = at[np.isfinite(at).all(axis=1)]
            if len(at):
                ax.update_datalim(np.vstack([at.min(axis=0) - 1, at.max(axis=0) + 1]))
                ax.autoscale_view()
    return finish(ax, title, result.unit)


def _shown(result: Any, value: Any) -> str:
    from ..plotting import quantity

    return quantity(value, result.unit)


def _xy(points: Any) -> dict[str, np.ndarray]:
    points = np.asarray(points, dtype=np.float64).reshape(-1, 2)
    return {"x": points[:, 0], "y": points[:, 1]}


def _one(value: Any) -> np.ndarray:
    return np.atleast_1d(np.asarray(value))


class _Outlined:
    """Table and drawing of results shaped as ellipses (circles included), shared by the
    single and grouped forms: ``_outline()`` gives (center, semi_major, semi_minor,
    angle in degrees) per row."""

    def _outline(self) -> tuple[Any, Any, Any, Any]:
        raise NotImplementedError

    def _geometry(self) -> Any:
        import shapely

        return _geometries(shapely.polygons, _rings(*self._outline()))


@dataclasses.dataclass(frozen=True, repr=False, eq=False)
class _GroupedWithSupport(Grouped):
    """Grouped results whose groups each name their support rows, in CSR layout; the single
    result of a group (``_single``) has the same field names, holding that group's values.

    Attributes
    ----------
    support_offsets : ndarray of int, shape (G + 1,)
    support_index : ndarray of int
        Group ``g``'s support rows (indices into the whole input) are
        ``support_index[support_offsets[g]:support_offsets[g + 1]]``; :meth:`support`
        gives them by label.
    """

    _single: ClassVar[type[Result]]

    support_offsets: np.ndarray = dataclasses.field(repr=False)
    support_index: np.ndarray = dataclasses.field(repr=False)
    # Group position of every input row (to give each group's result in its own row numbers).
    row_group: np.ndarray = dataclasses.field(repr=False, kw_only=True)

    def _support_at(self, position: int) -> np.ndarray:
        return self.support_index[self.support_offsets[position]:self.support_offsets[position + 1]].copy()

    def support(self, label: Any) -> np.ndarray:
        """Support rows (indices into the whole input) of the group labelled ``label``;
        empty for a group skipped with ``errors="skip"``."""
        return self._support_at(self.position(label))

    def _item(self, position: int) -> Any:
        # What a separate call on the group's rows gives: support as positions within the group.
        values: dict[str, Any] = {"support": self._within(self._support_at(position), self.row_group, position)}
        for field in dataclasses.fields(self._single):
            if field.name not in values and field.init and not field.kw_only:
                value = getattr(self, field.name)[position]
                values[field.name] = value.copy() if isinstance(value, np.ndarray) else value.item()
        return self._single(**values, unit=self.unit)
