"""The README runs as written: every Python code block executes in order, in one namespace,
and every shell command it gives names a script that exists."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
README = (ROOT / "README.md").read_text()
BLOCKS = re.findall(r"```(\w+)\n(.*?)```", README, flags=re.S)


def test_readme_has_python_examples() -> None:
    assert sum(kind == "python" for kind, _ in BLOCKS) >= 2


def test_every_python_block_runs(tmp_path, monkeypatch) -> None:
    pytest.importorskip("geopandas")
    pytest.importorskip("distributed")
    monkeypatch.chdir(tmp_path)
    namespace: dict[str, object] = {}
    for number, (kind, code) in enumerate(BLOCKS):
        if kind == "python":
            exec(compile(code, f"README.md block {number}", "exec"), namespace)  # noqa: S102
    client = namespace.get("client")
    if client is not None:
        client.close()  # type: ignore[attr-defined]


def test_shell_commands_name_existing_scripts() -> None:
    for kind, code in BLOCKS:
        if kind != "bash":
            continue
        for line in code.splitlines():
            command = line.split("#")[0].strip()
            if command.startswith("./"):
                assert (ROOT / command.split()[0]).is_file(), command
