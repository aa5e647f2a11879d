#!/usr/bin/env bash
# Set up from nothing but Rust and Python 3.10+: a virtual environment in .venv, the Python
# packages of the requested extras, and placewise built in release mode (editable: the Python
# sources are used in place).
#
#   scripts/setup.sh [EXTRAS]      EXTRAS: comma-separated extras [test,geo,dask,notebook,bench]
#
# Work already done is skipped, so a second run takes a second or two:
# - packages: a stamp per extras set holds the hash of pyproject.toml, Cargo.lock and the
#   extras requested; pip runs (quietly) only when that hash changed;
# - the build: a stamp holds the hash of src/**, Cargo.toml, Cargo.lock, pyproject.toml and
#   the compiler version, with the hash of the module it built; maturin runs only when the
#   sources changed or the module in place is not that build (a debug `maturin develop`
#   since). The build goes to target/release, which `cargo test --release` reuses.
set -euo pipefail
cd "$(dirname "$0")/.."

EXTRAS="${1:-test,geo,dask,notebook,bench}"
PYTHON="${PYTHON:-python3}"
if [ ! -x .venv/bin/python ]; then
    "$PYTHON" -m venv .venv
fi
# shellcheck disable=SC1091
source .venv/bin/activate
STAMPS=.venv/placewise-stamps
mkdir -p "$STAMPS"
hash_stdin() { sha256sum | cut -d' ' -f1; }

# --- Python packages: the extras' requirements, read from pyproject.toml (never through the
# build backend, which would build the extension a second time).
deps_key="$({ cat pyproject.toml Cargo.lock; echo "extras=$EXTRAS"; } | hash_stdin)"
deps_stamp="$STAMPS/packages-${EXTRAS//,/-}"
if [ "$(cat "$deps_stamp" 2>/dev/null || true)" != "$deps_key" ]; then
    echo "setup: installing the packages of extras '$EXTRAS'" >&2
    python -m pip install --quiet --disable-pip-version-check --upgrade pip
    python -c "import tomllib" 2>/dev/null || python -m pip install --quiet --disable-pip-version-check tomli
    python - "$EXTRAS" > "$STAMPS/requirements.txt" <<'PY'
import sys
try:
    import tomllib
except ModuleNotFoundError:  # Python 3.10
    import tomli as tomllib
with open("pyproject.toml", "rb") as f:
    meta = tomllib.load(f)
build = meta["build-system"]["requires"]
project = meta["project"]
optional = project.get("optional-dependencies", {})
wanted = [e for e in sys.argv[1].split(",") if e]
unknown = [e for e in wanted if e not in optional]
if unknown:
    sys.exit(f"setup: unknown extras {unknown}; pyproject.toml has {sorted(optional)}")
print("\n".join([*build, *project.get("dependencies", []), *(r for e in wanted for r in optional[e])]))
PY
    python -m pip install --quiet --disable-pip-version-check -r "$STAMPS/requirements.txt"
    echo "$deps_key" > "$deps_stamp"
fi

# --- The extension: rebuilt only when its inputs changed.
build_key() {
    {
        find src -type f -print0 | sort -z | xargs -0 sha256sum
        sha256sum Cargo.toml Cargo.lock pyproject.toml
        rustc -V
    } | hash_stdin
}
module_hash() {
    local so
    so="$(find python/placewise -maxdepth 1 -name '_core*.so' -o -maxdepth 1 -name '_core*.pyd' | head -n 1)"
    if [ -n "$so" ]; then sha256sum "$so" | cut -d' ' -f1; else echo none; fi
}
build_stamp="$STAMPS/build-release"
if [ "$(cat "$build_stamp" 2>/dev/null || true)" != "$(build_key) $(module_hash)" ] \
        || ! python -c "import placewise._core" 2>/dev/null; then
    echo "setup: building placewise (release; a few minutes the first time)" >&2
    log="$STAMPS/build.log"
    # The build's own output (and pip's report on the already installed packages) only if it fails.
    maturin develop --release > "$log" 2>&1 || { cat "$log" >&2; exit 1; }
    echo "$(build_key) $(module_hash)" > "$build_stamp"
fi
