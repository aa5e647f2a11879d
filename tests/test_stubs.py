"""The type stubs match the compiled module and the package (mypy.stubtest)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

pytest.importorskip("mypy")

HERE = Path(__file__).resolve().parent / "stubtest"


def test_stubtest():
    # mypy.stubtest imports the modules and compares every name and signature with the stubs
    # (_core.pyi for the compiled module, the typed sources for the package).
    done = subprocess.run(
        [sys.executable, "-m", "mypy.stubtest", "placewise", "--mypy-config-file", str(HERE / "mypy.ini"),
         "--allowlist", str(HERE / "allowlist.txt")],
        capture_output=True, text=True, timeout=600,
    )
    assert done.returncode == 0, done.stdout + done.stderr


def test_package_is_marked_typed():
    import placewise

    assert (Path(placewise.__file__).parent / "py.typed").is_file()


def test_dir_lists_each_public_name_once():
    # Reference: the package's own __all__ and its lazily loaded modules. A lazy module
    # becomes a global once loaded (placewise.discrete is loaded by coverage), and was then
    # listed twice.
    import placewise

    placewise.discrete  # noqa: B018 - load the lazy module so it is a global too
    names = dir(placewise)
    assert len(names) == len(set(names))
    assert set(placewise.__all__) <= set(names)
    assert {"gis", "cluster", "cli", "demo", "plotting", "discrete", "geodesic"} <= set(names)
    assert "annotations" not in names and "Any" not in names
