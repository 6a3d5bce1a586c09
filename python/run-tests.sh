#!/usr/bin/env bash
# Test the Python package as a user gets it: build the wheel (release), install it into a
# fresh virtual environment, write the Rust reference outputs, run pytest (which also runs
# the notebooks), then check the type stubs against the compiled module.
#
# Needs only Python >= 3.9 with pip and venv, a Rust toolchain, and access to PyPI.
# Environment: PYTHON (interpreter, default python3.11 / python3), TIELINE_BUILD (output
# directory, default <repo>/build/python).
set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
root="$(cd "$here/.." && pwd)"
build="${TIELINE_BUILD:-$root/build/python}"

if [[ -z "${PYTHON:-}" ]]; then
    for candidate in python3.11 "$HOME/.pyenv/versions/3.11.7/bin/python" python3; do
        if command -v "$candidate" >/dev/null 2>&1 && "$candidate" -c 'import venv, sys; assert sys.version_info >= (3, 9)' 2>/dev/null; then
            PYTHON="$candidate"
            break
        fi
    done
fi
: "${PYTHON:?no Python >= 3.9 with venv found; set PYTHON}"

venv="$build/venv"
rm -rf "$venv" "$build/wheels"
mkdir -p "$build"
echo "== creating a fresh virtual environment with $("$PYTHON" --version)"
"$PYTHON" -m venv "$venv"
py="$venv/bin/python"
"$py" -m pip install --quiet --upgrade pip
"$py" -m pip install --quiet \
    "maturin>=1.16,<2" numpy pytest hypothesis pandas "dask[distributed]" \
    nbclient nbformat ipykernel matplotlib tqdm mypy

echo "== building the wheel (release)"
export PYO3_PYTHON="$py"
# Its own target directory, so cargo and maturin do not rebuild each other's pyo3.
CARGO_TARGET_DIR="$root/target/maturin" "$venv/bin/maturin" build --release \
    --manifest-path "$here/Cargo.toml" --interpreter "$py" --out "$build/wheels"
"$py" -m pip install --quiet --no-index --find-links "$build/wheels" tieline

echo "== writing the Rust reference outputs"
export TIELINE_REFERENCE_OUT="$build/rust-reference.json"
rm -f "$TIELINE_REFERENCE_OUT"
(cd "$root" && cargo test --quiet -p tieline-python --test rust_reference)

echo "== pytest (against the installed wheel)"
export TIELINE_FIGURES_DIR="$build/figures"
export MPLBACKEND=Agg
# Run from a directory outside the source tree so that `import tieline` finds the wheel.
(cd "$build" && "$py" -m pytest -c "$here/pyproject.toml" --rootdir "$here" -p no:cacheprovider "$here/tests")

echo "== stubtest"
(cd "$build" && "$py" -m mypy.stubtest tieline --allowlist "$here/stubtest-allowlist.txt")
echo "== Python package: all checks passed; figures in $TIELINE_FIGURES_DIR"
