#!/usr/bin/env bash
# Every test: set up (if needed; the extension is built once, in release mode), then the
# lints (rustfmt, clippy, ruff), the pure Rust kernels with `cargo test` (no Python
# involved) and the Python suite with pytest (unit, property, doctest, notebook, README
# and stub tests).
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
# shellcheck disable=SC1091
source .venv/bin/activate
cargo fmt --check
cargo clippy --all-targets -- -D warnings
cargo clippy --all-targets --features python -- -D warnings
ruff check python tests benchmarks
cargo test --lib --tests
python -m pytest -q
