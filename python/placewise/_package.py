"""Packages whose public objects are defined in private modules but belong to the package."""

from __future__ import annotations

import inspect
from typing import Any


def adopt(namespace: dict[str, Any]) -> None:
    """Name the package whose ``namespace`` (its ``globals()``) is given as the home of every
    object its ``__all__`` lists that one of its private modules defines, and of the functions
    those classes define themselves (names it imports from elsewhere, and plain values, keep
    their own).

    As when the package was one module: reprs, pickles and reference entries name the package,
    and doctest, which collects a class's methods in the module the methods name, finds the
    examples of a public class's methods in the package, where it finds the class.
    """
    package = namespace["__name__"]
    for name in namespace["__all__"]:
        obj = namespace[name]
        home = getattr(obj, "__module__", None)
        if not (isinstance(home, str) and home.startswith(package + ".")):
            continue
        obj.__module__ = package
        if isinstance(obj, type):
            for member in vars(obj).values():
                function = getattr(member, "__func__", member)
                if inspect.isfunction(function) and function.__module__ == home:
                    function.__module__ = package
