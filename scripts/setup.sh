#!/usr/bin/env bash
# Set up a development environment from nothing but Rust and Python 3.10+:
# a virtual environment in .venv, the build tool, every optional dependency,
# and placewise itself built in release mode (editable: the Python sources are used in place).
set -euo pipefail
cd "$(dirname "$0")/.."

PYTHON="${PYTHON:-python3}"
if [ ! -x .venv/bin/python ]; then
    "$PYTHON" -m venv .venv
fi
# shellcheck disable=SC1091
source .venv/bin/activate
python -m pip install --quiet --upgrade pip
python -m pip install --quiet "maturin>=1.8,<2"
maturin develop --release --extras test,geo,dask,notebook
