"""Hostile inputs raise the right typed exception, with a message that says what was wrong
and what is allowed; nothing crashes the interpreter or returns NaN as a result."""

from __future__ import annotations

import math

import numpy as np
import pytest

import tieline as tl

BAD_NUMBERS = [float("nan"), float("inf"), -float("inf"), -1.0, 0.0]


def test_hierarchy():
    assert issubclass(tl.InvalidInputError, ValueError)
    assert issubclass(tl.UnknownComponentError, tl.InvalidInputError)
    assert issubclass(tl.OutsideValidityError, ValueError)
    assert issubclass(tl.DataError, ValueError)
    for cls in (tl.InvalidInputError, tl.UnknownComponentError, tl.OutsideValidityError,
                tl.NoSolutionError, tl.ConvergenceError, tl.DataError):
        assert issubclass(cls, tl.TielineError)
    assert not issubclass(tl.ConvergenceError, ValueError)


@pytest.mark.parametrize("bad", BAD_NUMBERS)
def test_bad_temperature_and_pressure(binary, bad):
    with pytest.raises(tl.InvalidInputError, match="temperature.*> 0 K"):
        tl.flash(binary, bad, 1e6, [0.5, 0.5])
    with pytest.raises(tl.InvalidInputError, match="pressure.*> 0 Pa"):
        tl.flash(binary, 300.0, bad, [0.5, 0.5])
    with pytest.raises(tl.InvalidInputError):
        tl.stability(binary, bad, 1e6, [0.5, 0.5])
    with pytest.raises(tl.InvalidInputError):
        tl.PhaseState(binary, 300.0, bad, [0.5, 0.5])
    with pytest.raises(tl.InvalidInputError):
        tl.bubble_pressure(binary, bad, [0.5, 0.5])
    with pytest.raises(tl.InvalidInputError):
        tl.saturation_pressure(binary, bad)
    with pytest.raises(tl.InvalidInputError) as info:
        tl.flash(binary, [300.0, 310.0, bad], 1e6, [0.5, 0.5])
    assert info.value.index == 2
    s = tl.flash(binary, [300.0, bad], 1e6, [0.5, 0.5], on_error="flag")
    assert s.ok.tolist() == [True, False] and s.num_phases[1] == 0
    assert isinstance(s.failures[0][1], tl.InvalidInputError)


@pytest.mark.parametrize(
    "feed, match",
    [
        ([0.5, float("nan")], "component 1"),
        ([0.5, -0.1], "component 1"),
        ([0.0, 0.0], "at least one"),
        ([0.5, 0.3, 0.2], "one amount per component"),
        ([1.0], "one amount per component"),
        (0.5, "one amount per component"),
        ([[[0.5, 0.5]]] * 0, "one amount per component"),
        ("ab", "numbers"),
        (["a", "b"], "real numbers"),
        ([1 + 2j, 1.0], "real numbers"),
        ([True, False], "real numbers"),
        ([None, 1.0], "real numbers"),
    ],
)
def test_bad_feeds(binary, feed, match):
    with pytest.raises(tl.InvalidInputError, match=match):
        tl.flash(binary, 300.0, 1e6, feed)


def test_bad_arguments(binary):
    with pytest.raises(tl.InvalidInputError, match="tieline.Model"):
        tl.flash("methane", 300.0, 1e6, [1.0])
    with pytest.raises(tl.InvalidInputError, match="numbers are required"):
        tl.flash(binary, "hot", 1e6, [0.5, 0.5])
    with pytest.raises(tl.InvalidInputError, match="a number is required"):
        tl.stability(binary, "hot", 1e6, [0.5, 0.5])
    with pytest.raises(tl.InvalidInputError, match="not a bool"):
        tl.stability(binary, True, 1e6, [0.5, 0.5])
    with pytest.raises(tl.InvalidInputError, match="broadcast"):
        tl.flash(binary, np.ones(3) * 300, np.ones(4) * 1e6, [0.5, 0.5])
    with pytest.raises(tl.InvalidInputError, match="broadcast"):
        tl.flash(binary, np.ones(3) * 300, 1e6, np.ones((4, 2)))
    with pytest.raises(tl.InvalidInputError, match="block"):
        tl.flash(binary, [300.0], 1e6, [0.5, 0.5], block=0)
    with pytest.raises(tl.InvalidInputError, match="threads"):
        tl.flash(binary, [300.0], 1e6, [0.5, 0.5], threads=-1)
    with pytest.raises(tl.InvalidInputError, match="threads"):
        tl.set_threads(-2)
    with pytest.raises(tl.InvalidInputError, match="on_error"):
        tl.flash(binary, [300.0], 1e6, [0.5, 0.5], on_error="ignore")
    with pytest.raises(tl.InvalidInputError, match="progress"):
        tl.flash(binary, [300.0], 1e6, [0.5, 0.5], progress=3)
    with pytest.raises(tl.InvalidInputError, match=r"tolerance.*\(0, 1e-2\)"):
        tl.flash(binary, 300.0, 1e6, [0.5, 0.5], tolerance=0.5)
    with pytest.raises(tl.InvalidInputError, match="root"):
        tl.PhaseState(binary, 300.0, 1e6, [0.5, 0.5], root="solid")
    with pytest.raises(tl.InvalidInputError, match="index 5"):
        tl.saturation_pressure(binary, 150.0, 5)
    with pytest.raises(tl.UnknownComponentError):
        tl.saturation_pressure(binary, 150.0, "ethane")
    with pytest.raises(tl.InvalidInputError, match="1-D"):
        tl.stability(binary, 300.0, 1e6, [[0.5, 0.5]])
    with pytest.raises(tl.InvalidInputError, match="threshold"):
        tl.stability(binary, 300.0, 1e6, [0.5, 0.5], threshold=float("nan"))


def test_bad_models():
    with pytest.raises(tl.UnknownComponentError) as info:
        tl.Model(["methane", "nitrogn"])
    assert info.value.name == "nitrogn" and "nitrogen" in info.value.suggestions
    assert "did you mean" in str(info.value)
    with pytest.raises(tl.InvalidInputError, match="peng_robinson"):
        tl.Model(["methane"], kind="van_der_waals")
    with pytest.raises(tl.InvalidInputError, match="single string"):
        tl.Model("methane")
    with pytest.raises(tl.InvalidInputError, match="at least one"):
        tl.Model([])
    with pytest.raises(tl.InvalidInputError, match="symmetric"):
        tl.Model(["methane", "ethane"], kij=[[0.0, 0.1], [0.2, 0.0]])
    with pytest.raises(tl.InvalidInputError, match="2×2"):
        tl.Model(["methane", "ethane"], kij=[[0.0, 0.1, 0.0], [0.1, 0.0, 0.0]])
    with pytest.raises(tl.InvalidInputError, match="diagonal"):
        tl.Model(["methane", "ethane"], kij=[[0.1, 0.0], [0.0, 0.0]])
    with pytest.raises(tl.InvalidInputError):
        tl.Model(["methane", "ethane"], kij={(0, 0): 0.1})
    with pytest.raises(tl.InvalidInputError, match="finite"):
        tl.Model(["methane", "ethane"], kij={(0, 1): float("nan")})
    with pytest.raises(tl.InvalidInputError, match="not a component of this model"):
        tl.Model(["methane", "ethane"], kij={("methane", "nitrogen"): 0.1})
    with pytest.raises(tl.InvalidInputError, match="index 7"):
        tl.Model(["methane", "ethane"], kij={(0, 7): 0.1})
    with pytest.raises(tl.InvalidInputError, match="finite"):
        tl.Model([{"name": "methane", "tc": float("nan")}])
    with pytest.raises(tl.InvalidInputError, match="finite"):
        tl.Model(["methane", "ethane"], kij=[[0.0, float("inf")], [float("inf"), 0.0]])
    with pytest.raises(tl.InvalidInputError, match="override 'vc'"):
        tl.Model([{"name": "methane", "vc": 1e-4}])
    with pytest.raises(tl.InvalidInputError, match="peneloux"):
        tl.Model(["methane"], volume_shift="other")
    with pytest.raises(tl.DataError):
        tl.Model.from_description('{"model": "cubic", "kind": "peng_robinson"')
    with pytest.raises(tl.DataError):
        tl.Model.from_description({"model": "cubic", "kind": "nope", "components": ["methane"]})
    with pytest.raises(tl.InvalidInputError):
        tl.Model.from_description(42)
    with pytest.raises(tl.DataError):
        tl.ComponentBank.from_toml("[[component]]\nname = 3\n")
    with pytest.raises(FileNotFoundError):
        tl.ComponentBank.from_file("/nonexistent/components.toml")


def test_no_solution_and_convergence(binary):
    with pytest.raises(tl.NoSolutionError, match="critical"):
        tl.saturation_pressure(binary, 250.0, "methane")
    with pytest.raises(tl.NoSolutionError, match="critical pressure"):
        tl.saturation_temperature(binary, 5.0e6, "methane")
    with pytest.raises(tl.ConvergenceError) as info:
        tl.saturation_pressure(binary, 300.0, "n-butane", max_iterations=1)
    e = info.value
    assert e.iterations and all(isinstance(v, int) for v in e.iterations.values())
    assert e.residual > e.tolerance > 0 and e.method
    assert "did not converge" in str(e)


def test_outside_validity(binary):
    # The ideal-gas heat capacities of the embedded bank hold from 50 K.
    st = tl.PhaseState(binary, 30.0, 1e3, [0.0, 1.0], root="liquid")
    with pytest.raises(tl.OutsideValidityError) as info:
        st.properties()
    e = info.value
    assert e.value == 30.0 and e.min <= e.max and not (e.min <= e.value <= e.max)


def test_no_nan_results_without_a_flag(binary, gas):
    t = np.linspace(150.0, 450.0, 40)
    p = np.geomspace(1e5, 2e7, 30)[:, None]
    s = tl.flash(gas, t, p, [0.05, 0.8, 0.1, 0.05])
    assert s.ok.all()
    assert np.isfinite(s.vapor_fraction).all() and np.isfinite(s.gibbs).all()
    one = s.num_phases == 1
    assert np.isnan(s.phase_fraction[..., 1][one]).all()
    assert np.isfinite(s.phase_fraction[..., 0]).all()
    assert math.isfinite(tl.flash(binary, 300.0, 5e6, [0.5, 0.5]).vapor_fraction)
