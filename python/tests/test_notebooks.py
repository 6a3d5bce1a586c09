"""The example notebooks (examples/notebooks/) run from top to bottom against the installed
wheel and save their figures as PNG into $TIELINE_FIGURES_DIR."""

from __future__ import annotations

import os
from pathlib import Path

import nbformat
import pytest
from nbclient import NotebookClient

from conftest import ROOT

NOTEBOOKS = {
    "natural_gas_phase_map.ipynb": ["natural_gas_phase_map.png"],
    "gibbs_branches.ipynb": ["gibbs_branches.png"],
    "water_phases_gibbs.ipynb": ["water_phases_gibbs.png"],
    "envelope_and_valve.ipynb": ["envelope_and_valve.png"],
    "reaction_equilibrium.ipynb": ["reaction_equilibrium.png"],
    "liquid_solutions.ipynb": ["liquid_solutions.png"],
}


def test_every_notebook_is_listed():
    found = {p.name for p in (ROOT / "examples" / "notebooks").glob("*.ipynb")}
    assert found == set(NOTEBOOKS)


@pytest.mark.parametrize("name", sorted(NOTEBOOKS))
def test_notebook_runs_and_saves_figures(name, tmp_path, monkeypatch):
    figures = Path(os.environ.get("TIELINE_FIGURES_DIR", str(tmp_path / "figures")))
    monkeypatch.setenv("TIELINE_FIGURES_DIR", str(figures))
    monkeypatch.setenv("MPLBACKEND", "Agg")
    for png in NOTEBOOKS[name]:
        (figures / png).unlink(missing_ok=True)
    nb = nbformat.read(ROOT / "examples" / "notebooks" / name, as_version=4)
    assert all(not c.get("outputs") for c in nb.cells if c.cell_type == "code"), "outputs are not committed"
    NotebookClient(nb, timeout=600, kernel_name="python3", resources={"metadata": {"path": str(tmp_path)}}).execute()
    for png in NOTEBOOKS[name]:
        data = (figures / png).read_bytes()
        assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 20_000
