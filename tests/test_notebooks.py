"""Every notebook in notebooks/ runs top to bottom, and is stored without outputs."""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

nbformat = pytest.importorskip("nbformat")
nbclient = pytest.importorskip("nbclient")
pytest.importorskip("ipykernel")
pytest.importorskip("matplotlib")

NOTEBOOKS = sorted((Path(__file__).resolve().parent.parent / "notebooks").glob("*.ipynb"))
# The worked notebooks, by file name: a renamed or lost notebook fails here, not silently.
EXPECTED = ["01_depot_siting", "02_catchments", "03_network_design", "04_research_crosscheck",
            "05_many_districts_on_dask", "06_across_the_date_line", "07_candidates_and_coverage",
            "08_capacities", "09_street_network"]


@pytest.fixture(scope="module")
def kernel_env(tmp_path_factory):
    """A Jupyter kernel named python3 that runs this very interpreter.

    A fresh virtual environment may have no kernel spec, or a user-wide "python3" spec may
    point at another Python without placewise; so a spec is written to a private data folder
    that is searched first (JUPYTER_PATH).
    """
    from ipykernel.kernelspec import write_kernel_spec

    data = tmp_path_factory.mktemp("jupyter")
    kernels = data / "kernels"
    kernels.mkdir()
    spec = write_kernel_spec(path=str(kernels / "python3"))
    with open(Path(spec) / "kernel.json") as fh:
        argv = json.load(fh)["argv"]
    assert argv[0] == sys.executable or Path(argv[0]).resolve() == Path(sys.executable).resolve()
    return str(data)


def test_there_are_notebooks():
    assert [p.stem for p in NOTEBOOKS] == EXPECTED


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.stem for p in NOTEBOOKS])
def test_notebook_speaks_of_catchments(path):
    # "Service area" is a product's term for travel reach along roads; ours is "catchment".
    text = "\n".join(cell.source for cell in nbformat.read(path, as_version=4).cells).lower()
    assert "service area" not in text and "service_area" not in text


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.stem for p in NOTEBOOKS])
def test_notebook_is_stored_without_outputs(path):
    nb = nbformat.read(path, as_version=4)
    for cell in nb.cells:
        if cell.cell_type == "code":
            assert cell.outputs == [] and cell.execution_count is None, f"{path.name}: strip outputs before committing"


@pytest.mark.parametrize("path", NOTEBOOKS, ids=[p.stem for p in NOTEBOOKS])
def test_notebook_runs(path, kernel_env, monkeypatch, tmp_path):
    monkeypatch.setenv("JUPYTER_PATH", kernel_env)
    monkeypatch.setenv("MPLBACKEND", "Agg")
    nb = nbformat.read(path, as_version=4)
    client = nbclient.NotebookClient(
        nb, kernel_name="python3", timeout=300, resources={"metadata": {"path": str(tmp_path)}},
    )
    client.execute()
    errors = [o for c in nb.cells if c.cell_type == "code" for o in c.outputs if o.output_type == "error"]
    assert not errors
