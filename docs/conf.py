"""Sphinx configuration of the placewise API reference.

The reference is built from the docstrings (numpydoc format) of the installed package; the
command-line page is generated here from the argument parser itself, so it cannot drift from
what ``placewise --help`` prints.
"""

from __future__ import annotations

import os
from importlib.metadata import PackageNotFoundError
from importlib.metadata import version as _dist_version

project = "placewise"
author = "the placewise authors"
copyright = "the placewise authors"
try:
    release = _dist_version("placewise")
except PackageNotFoundError:  # a source tree without an installed build
    release = "unknown"
version = release

# What the package does, shown on the front page and in the page metadata.
description = (
    "placewise decides where things go. Given weighted demand points it finds the best single site "
    "(the weighted Fermat-Weber point) and the best p sites (p-median); shows the worst case (enclosing "
    "circle and ellipse, minimax point, p-center); splits a region into catchments (Delaunay, clipped "
    "Voronoi cells, nearest-site allocation); designs the shortest network linking sites (minimum "
    "spanning tree, Steiner tree); and chooses among candidate sites (discrete p-median, p-center and "
    "covering models). A Python library with a Rust core: numpy arrays in, small result objects out."
)

# The caution every page that presents results carries (used as |planning-aid| in the pages).
planning_aid = (
    "Results are planning aids under the stated model: straight-line (or city-block) distance and "
    "the weights you give. Real travel follows roads, terrain and timetables, and demand changes. "
    "Siting any facility that affects people must defer to local regulations and the judgement of "
    "licensed professionals."
)

extensions = ["sphinx.ext.autodoc", "numpydoc"]

# numpydoc: the pages list the members they want; the class member tables would repeat them.
numpydoc_show_class_members = False
# Types in "Parameters" stay plain text: they name numpy and pandas types this build does not link.
numpydoc_xref_param_type = False

autodoc_typehints = "none"  # the docstrings state the types; overloads would repeat every signature
autodoc_member_order = "bysource"

root_doc = "index"
exclude_patterns = ["_build"]
templates_path: list[str] = []
html_theme = "alabaster"
html_title = f"placewise {release}"
html_static_path: list[str] = []

rst_prolog = f"""
.. |planning-aid| replace:: {planning_aid}
.. |description| replace:: {description}
"""


# --------------------------------------------------------------------------- CLI page


def _cli_reference() -> str:
    """reStructuredText for every ``placewise`` subcommand, from the parser's own help text."""
    import argparse

    from placewise.cli import build_parser

    os.environ["COLUMNS"] = "100"  # argparse wraps to the terminal width; fix it for a stable page
    parser = build_parser()
    lines = ["``placewise --help``", "", ".. code-block:: text", ""]
    lines += ["   " + line for line in parser.format_help().splitlines()]
    subparsers = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    for name, sub in subparsers.choices.items():
        title = f"placewise {name}"
        lines += ["", "", f".. _cli-{name}:", "", title, "-" * len(title), ""]
        lines += [".. code-block:: text", ""]
        lines += ["   " + line.rstrip() for line in sub.format_help().splitlines()]
    return "\n".join(lines) + "\n"


def _fill_cli_page(app, docname: str, source: list[str]) -> None:
    if docname == "api/cli":
        source[0] = source[0].replace(".. placewise-cli-reference::", _cli_reference())


# --------------------------------------------------------------------------- class docstrings


def _closing_paragraph_first(app, what: str, name: str, obj, options, lines: list[str]) -> None:
    """Move a class docstring's closing prose paragraph out of its final section.

    numpydoc reads every line after a section header as part of that section, so the paragraph
    the result classes end with (which columns ``to_frame()`` and ``summary()`` hold) would be
    rendered as a list of bogus attribute names. A paragraph of unindented lines after the last
    entry of a final "Attributes" or "Parameters" section is moved up, just before the first
    section, where numpydoc keeps it as part of the extended summary.
    """
    if what != "class":
        return
    heads = [i for i in range(len(lines) - 1)
             if lines[i].strip() and set(lines[i + 1].strip()) == {"-"}
             and len(lines[i + 1].strip()) >= len(lines[i].strip())]
    if not heads or lines[heads[-1]].strip() not in ("Attributes", "Parameters"):
        return
    end = len(lines)
    while end > heads[-1] and not lines[end - 1].strip():
        end -= 1
    start = end
    while start > heads[-1] + 2 and lines[start - 1].strip():
        start -= 1
    block = lines[start:end]
    # Entries have indented descriptions; a prose paragraph has none and follows a blank line.
    if not block or start == heads[-1] + 2 or any(line.startswith((" ", "\t")) for line in block):
        return
    del lines[start - 1:end]
    lines[heads[0]:heads[0]] = [*block, ""]


# --------------------------------------------------------------------------- member order


def _order_from_private_modules(app) -> None:
    """Give autodoc the source order of the packages whose public objects live in private modules.

    A package such as ``placewise.partition`` defines its classes in private modules and names
    itself as their ``__module__`` (so reprs, pickles and this reference name the package).
    autodoc reads the source order of a class's members (``autodoc_member_order = "bysource"``)
    from the module the class names, whose ``__init__`` defines nothing; the order and attribute
    comments of the private modules are added to that module's analysis here, so the members
    keep the order of the source that defines them.
    """
    import importlib
    import pkgutil

    from sphinx.pycode import ModuleAnalyzer

    import placewise

    for package in pkgutil.iter_modules(placewise.__path__, "placewise."):
        module = importlib.import_module(package.name)
        if not package.ispkg or not any(getattr(getattr(module, name), "__module__", None) == module.__name__
                                        for name in getattr(module, "__all__", ())):
            continue
        analyzer = ModuleAnalyzer.for_module(module.__name__)
        analyzer.analyze()
        for private in pkgutil.iter_modules(module.__path__, module.__name__ + "."):
            if not private.name.rpartition(".")[2].startswith("_"):
                continue
            source = ModuleAnalyzer.for_module(private.name)
            source.analyze()
            # Numbered on from the tags already there, in source order: within one class the
            # order is the source's, and every tag stays below the count of tags, the position
            # autodoc gives a member without one (an inherited member), which so comes after.
            for tag, _ in sorted(source.tagorder.items(), key=lambda item: item[1]):
                analyzer.tagorder.setdefault(tag, len(analyzer.tagorder))
            for key, comment in source.attr_docs.items():
                analyzer.attr_docs.setdefault(key, comment)


def setup(app):
    app.connect("builder-inited", _order_from_private_modules)
    app.connect("source-read", _fill_cli_page)
    # Before numpydoc (priority 500) turns the sections into reStructuredText.
    app.connect("autodoc-process-docstring", _closing_paragraph_first, priority=400)
    return {"parallel_read_safe": True}
