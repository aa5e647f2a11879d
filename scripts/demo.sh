#!/usr/bin/env bash
# The main job: set up (only what the demo needs, the "demo" extra; skipped when done) and run
# the demo on its built-in invented scenario. Output goes to ./demo-output (maps, layers,
# summary table); the table is printed.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh demo
# shellcheck disable=SC1091
source .venv/bin/activate
python -m placewise demo --out "${1:-demo-output}"
