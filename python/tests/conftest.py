"""Shared fixtures of the Python suite.

The suite runs against the installed wheel (see run-tests.sh): importing the source tree
instead would hide a file missing from the wheel, so that is refused here.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

import tieline as tl

ROOT = Path(__file__).resolve().parents[2]
VECTORS = ROOT / "tests" / "vectors" / "cases.json"

if Path(tl.__file__).resolve().is_relative_to(ROOT / "python" / "pysrc"):  # pragma: no cover
    raise RuntimeError("tieline was imported from the source tree; install the wheel into a venv")


@pytest.fixture(scope="session")
def vectors() -> dict:
    """The shared test vectors (tests/vectors/cases.json)."""
    return json.loads(VECTORS.read_text())


@pytest.fixture(scope="session")
def rust_reference() -> dict:
    """Outputs of the Rust core for the same calls (written by tests/rust_reference.rs)."""
    path = os.environ.get("TIELINE_REFERENCE_OUT")
    if not path or not Path(path).is_file():
        raise RuntimeError(
            "TIELINE_REFERENCE_OUT must name the file written by `cargo test -p tieline-python "
            "--test rust_reference`; python/run-tests.sh does both steps"
        )
    return json.loads(Path(path).read_text())


@pytest.fixture(scope="session")
def binary() -> tl.Model:
    """Methane + n-butane, Peng–Robinson, k_ij = 0.02."""
    return tl.Model(["methane", "n-butane"], kind="peng_robinson", kij={(0, 1): 0.02})


@pytest.fixture(scope="session")
def gas() -> tl.Model:
    """A four-component natural-gas-like model (composition invented for the tests)."""
    return tl.Model(
        ["nitrogen", "methane", "ethane", "n-butane"],
        kind="peng_robinson",
        kij={("nitrogen", "methane"): 0.03, ("nitrogen", "ethane"): 0.04, ("methane", "n-butane"): 0.02},
    )
