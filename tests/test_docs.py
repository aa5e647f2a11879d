"""The API reference builds with Sphinx and numpydoc, warnings as errors, and has an entry for
every public name: a new function or command without a reference entry fails here."""

from __future__ import annotations

import argparse
import importlib
import re
import subprocess
import sys
import time
from pathlib import Path

import pytest

pytest.importorskip("sphinx")
pytest.importorskip("numpydoc")

ROOT = Path(__file__).resolve().parent.parent
DOCS = ROOT / "docs"
NAMESPACES = ["placewise", "placewise.gis", "placewise.cluster", "placewise.discrete", "placewise.geodesic"]


class Build:
    def __init__(self, out: Path, result: subprocess.CompletedProcess[str], seconds: float) -> None:
        self.out = out
        self.result = result
        self.seconds = seconds

    def page(self, name: str) -> str:
        return (self.out / name).read_text(encoding="utf-8")

    def all_pages(self) -> str:
        return "\n".join(path.read_text(encoding="utf-8") for path in sorted(self.out.rglob("*.html")))


@pytest.fixture(scope="module")
def build(tmp_path_factory: pytest.TempPathFactory) -> Build:
    out = tmp_path_factory.mktemp("html")
    start = time.perf_counter()
    # -W: every warning (a docstring numpydoc cannot parse, a bad directive) fails the build;
    # --keep-going reports all of them at once; -E ignores any saved environment.
    result = subprocess.run(
        [sys.executable, "-m", "sphinx", "-W", "--keep-going", "-E", "-q", "-b", "html", str(DOCS), str(out)],
        capture_output=True, text=True, cwd=ROOT, timeout=300,
    )
    return Build(out, result, time.perf_counter() - start)


def test_builds_without_warnings(build: Build) -> None:
    assert build.result.returncode == 0, build.result.stderr
    assert build.result.stderr.strip() == "", build.result.stderr
    assert build.seconds < 60, f"the reference took {build.seconds:.0f} s to build"


@pytest.mark.parametrize("namespace", NAMESPACES)
def test_every_public_name_has_an_entry(build: Build, namespace: str) -> None:
    # autodoc gives each documented object the anchor id="<module>.<name>".
    pages = build.all_pages()
    missing = [name for name in importlib.import_module(namespace).__all__
               if f'id="{namespace}.{name}"' not in pages]
    assert not missing, f"{namespace}: no reference entry for {missing}"


def test_functions_show_their_examples(build: Build) -> None:
    pages = build.all_pages()
    for namespace in NAMESPACES:
        module = importlib.import_module(namespace)
        for name in module.__all__:
            if not callable(getattr(module, name)) or isinstance(getattr(module, name), type):
                continue
            # An entry runs to the next documented object (its own field lists are nested <dl>s).
            start = pages.index(f'id="{namespace}.{name}"')
            end = pages.find('<dl class="py ', start)
            entry = pages[start:end if end >= 0 else len(pages)]
            assert "&gt;&gt;&gt;" in entry, f"{namespace}.{name}: no example in its entry"


def test_every_cli_command_has_its_help(build: Build) -> None:
    from placewise.cli import build_parser

    page = build.page("api/cli.html")
    subparsers = next(a for a in build_parser()._actions if isinstance(a, argparse._SubParsersAction))
    assert len(subparsers.choices) >= 12
    for name, parser in subparsers.choices.items():
        assert f'id="cli-{name}"' in page, name
        assert f"usage: placewise {name}" in page, name
        for action in parser._actions:
            for flag in action.option_strings:
                assert flag in page, f"{name} {flag}"


def test_question_page_links_resolve(build: Build) -> None:
    # An unresolved :func: role renders as plain text without an error, so check the links.
    source = (DOCS / "questions.rst").read_text(encoding="utf-8")
    page = build.page("questions.html")
    targets = {m[1] for m in re.finditer(r":(?:func|mod):`~?([\w.]+)`", source)}
    assert {"placewise.weber_point", "placewise.discrete.cover_all", "placewise.cluster.grouped"} <= targets
    unresolved = [t for t in sorted(targets) if not re.search(rf'href="[^"]*#(module-)?{re.escape(t)}"', page)]
    assert not unresolved, unresolved


@pytest.mark.parametrize("page", ["index.html", "questions.html", "api/cli.html"])
def test_pages_carry_the_planning_aid_caution(build: Build, page: str) -> None:
    text = " ".join(build.page(page).split())
    assert "planning aids under the stated model" in text
    assert "local regulations" in text and "licensed professionals" in text
