"""Families kept as a package of private modules behave as when each was one module: every
public object names the package (reprs, pickles, the reference), its field annotations resolve
there, and every example written in the package's sources is collected by doctest once."""

from __future__ import annotations

import ast
import doctest
import importlib
import inspect
import pickle
import pkgutil
import typing
from pathlib import Path

import numpy as np
import pytest

import placewise as pw

PACKAGES = ["placewise.capacity", "placewise.demo", "placewise.discrete", "placewise.enclose", "placewise.multi",
            "placewise.network", "placewise.partition", "placewise.travel"]


def _public(packages: list[str]) -> list[tuple[str, str]]:
    return [(package, name) for package in packages for name in importlib.import_module(package).__all__]


@pytest.mark.parametrize(("package", "name"), _public(PACKAGES))
def test_public_name_belongs_to_the_package(package: str, name: str) -> None:
    module = importlib.import_module(package)
    obj = getattr(module, name)
    if not (inspect.isclass(obj) or inspect.isfunction(obj)):
        return  # a plain value (the demo's DEPOTS, DISCLAIMER)
    if Path(inspect.getsourcefile(obj)).parent != Path(module.__file__).parent:
        # Defined outside the package (the demo's Scenario): it keeps its own module.
        assert obj.__module__ != package
        return
    assert obj.__module__ == package
    assert pickle.loads(pickle.dumps(obj)) is obj
    if isinstance(obj, type):
        # Field annotations resolve in the module the class names (typing.get_type_hints).
        typing.get_type_hints(obj)
        # The methods the class defines name the package too, as doctest looks for them there.
        own = [m for m in vars(obj).values() if inspect.isfunction(m) and m.__qualname__.startswith(obj.__name__ + ".")]
        assert [m.__qualname__ for m in own if m.__module__ != package] == []


@pytest.mark.parametrize("package", PACKAGES)
def test_package_exports_every_public_object_it_defines(package: str) -> None:
    module = importlib.import_module(package)
    defined = {name for name, obj in vars(module).items()
               if not name.startswith("_") and str(getattr(obj, "__module__", "")).startswith(package)}
    assert defined <= set(module.__all__)
    assert set(module.__all__) <= set(vars(module))


@pytest.mark.parametrize("package", PACKAGES)
def test_every_written_example_is_collected_once(package: str) -> None:
    # Reference: the docstrings holding an example, read from the sources with ast (no import).
    module = importlib.import_module(package)
    written = 0
    for path in Path(module.__file__).parent.glob("*.py"):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, (ast.Module, ast.ClassDef, ast.FunctionDef, ast.AsyncFunctionDef)):
                written += ">>>" in (ast.get_docstring(node) or "")
    # What doctest (and so pytest --doctest-modules) finds in the package and each private module.
    finder = doctest.DocTestFinder()
    found = [test.name for test in finder.find(module) if test.examples]
    for info in pkgutil.iter_modules(module.__path__, package + "."):
        found += [test.name for test in finder.find(importlib.import_module(info.name)) if test.examples]
    assert written > 0
    assert len(found) == len(set(found)) == written, sorted(found)


@pytest.mark.parametrize(
    ("package", "make"),
    [
        ("placewise.capacity", lambda: pw.capacity_cells([[0, 0], [1, 0], [2, 0]], [[0, 0], [2, 0]], [1.5, 1.5])),
        ("placewise.discrete", lambda: pw.discrete.p_median_planar([[0, 0], [1, 0], [9, 0]], [[0, 0], [10, 0]], 1)),
        ("placewise.enclose", lambda: pw.enclosing_circle([[0, 0], [4, 0], [2, 1]])),
        ("placewise.network", lambda: pw.steiner_tree([[0, 0], [1, 0], [1, 1], [0, 1]])),
    ],
)
def test_pickled_result_names_the_package(package: str, make: typing.Callable[[], typing.Any]) -> None:
    result = make()
    data = pickle.dumps(result)
    assert package.encode() in data and (package + "._").encode() not in data
    back = pickle.loads(data)
    assert type(back) is type(result)
    assert all(np.array_equal(getattr(back, f), getattr(result, f)) for f in result.__dataclass_fields__)
