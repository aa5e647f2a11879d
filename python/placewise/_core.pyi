# Type stubs of the compiled module placewise._core (src/py/). Each family's section is
# kept beside the others in the order of src/py/mod.rs.
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

__version__: str

class ErrorDetail:
    def describe(self, name_group: Any, name_row: Any) -> str: ...
    @property
    def argument(self) -> str: ...
    @property
    def group(self) -> int | None: ...
    @property
    def row(self) -> int | None: ...
    @property
    def degenerate(self) -> bool: ...

class InputError(ValueError):
    argument: str | None
    group: Any
    row: Any
    detail: ErrorDetail | None

class DegenerateInputError(InputError): ...

# Every kernel binding returns a dict of named values (numpy arrays and Python scalars);
# grouped forms add "labels" (G,) and "problem" (G,: None or ErrorDetail).
Fields = dict[str, Any]

def set_threads(threads: int) -> None: ...
def thread_count() -> int: ...

# --- median (src/py/median.rs) ---
def weber_point_single(points: ArrayLike, weights: ArrayLike | None, metric: str, tol: Any, max_iter: Any) -> Fields: ...
def weber_point_grouped(
    points: ArrayLike, weights: ArrayLike | None, groups: ArrayLike, metric: str, tol: Any, max_iter: Any, errors: str
) -> Fields: ...

# --- enclose (src/py/enclose.rs) ---
def enclosing_circle_single(points: ArrayLike, seed: int | None) -> tuple[np.ndarray, float, np.ndarray]: ...
def enclosing_circle_grouped(
    points: ArrayLike, groups: ArrayLike, seed: int | None
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]: ...
def minimax_point_single(points: ArrayLike, weights: ArrayLike | None) -> tuple[np.ndarray, float, np.ndarray]: ...
def minimax_point_grouped(
    points: ArrayLike, weights: ArrayLike | None, groups: ArrayLike
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]: ...
def enclosing_ellipse_single(
    points: ArrayLike, tol: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float, float, np.ndarray, float, int, bool]: ...
def enclosing_ellipse_grouped(
    points: ArrayLike, groups: ArrayLike, tol: float
) -> tuple[
    np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray,
    np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray,
]: ...

# --- partition (src/py/partition.rs) ---
def delaunay_triangulation(points: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]: ...
def voronoi_cells_clipped(
    sites: ArrayLike, region_vertices: ArrayLike | None, ring_offsets: ArrayLike | None
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]: ...
def nearest_site_allocation(
    points: ArrayLike, sites: ArrayLike, weights: ArrayLike | None
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]: ...

# --- network (src/py/network.rs) ---
def spanning_tree_single(points: ArrayLike) -> tuple[np.ndarray, np.ndarray, float]: ...
def spanning_tree_grouped(
    points: ArrayLike, groups: ArrayLike
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray]: ...
def steiner_tree_single(
    points: ArrayLike, exact: bool | None, seed: int, time_limit: float | None
) -> tuple[np.ndarray, int, np.ndarray, float, float, float, bool]: ...
def steiner_tree_grouped(
    points: ArrayLike, groups: ArrayLike, exact: bool | None, seed: int, time_limit: float | None
) -> tuple[
    np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray, np.ndarray
]: ...

# --- multi (src/py/multi.rs) ---
def p_median_plan(
    points: ArrayLike, p: int, weights: ArrayLike | None, fixed: ArrayLike | None, seed: int, effort_name: str
) -> tuple[np.ndarray, np.ndarray, float, np.ndarray, int]: ...
def p_center_plan(
    points: ArrayLike, p: int, weights: ArrayLike | None, seed: int
) -> tuple[np.ndarray, np.ndarray, float, bool, int]: ...
