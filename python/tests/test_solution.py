"""Liquid solutions from Python: activity coefficients, azeotropes and the multiphase flash by
name, vectorised, pickled, and their bad input as typed exceptions.

Published values: Smith, Van Ness & Abbott, Introduction to Chemical Engineering
Thermodynamics, 7th ed., Example 10.3 (methanol/methyl acetate; ln g1 = A x2^2,
A = 2.771 - 0.00523 T/K; azeotrope at 318.15 K: 73.76 kPa, x1 = 0.3245; statement verified,
answers from memory + recomputed), and the ethanol-water azeotrope at 1 atm, 78.17 degC and
95.6 wt % ethanol (x about 0.894; Evans 1916 via published-values.md section 8), by UNIFAC
within 1 K and 0.01.
"""

import pickle

import numpy as np
import pytest

import tieline as tl

SVNA_10_3 = {
    "model": "solution",
    "components": ["methanol", "methyl acetate"],
    "liquid": {"kind": "margules", "a": [[0, 2.771], [2.771, 0]], "b": [[0, -0.00523], [-0.00523, 0]],
               "t_min": 273.15, "t_max": 360.0},
    "vapor_pressures": [
        {"component": "methanol", "t_min": 273.15, "t_max": 360.0, "source": "SVNA Ex. 10.3",
         "equation": {"form": "antoine", "a": 16.59158, "b": 3643.31, "c": -33.424,
                      "units": {"base": "ln", "pressure": "kPa", "temperature": "kelvin"}}},
        {"component": "methyl acetate", "t_min": 273.15, "t_max": 360.0, "source": "SVNA Ex. 10.3",
         "equation": {"form": "antoine", "a": 14.25326, "b": 2665.54, "c": -53.424,
                      "units": {"base": "ln", "pressure": "kPa", "temperature": "kelvin"}}},
    ],
}


@pytest.fixture(scope="module")
def svna():
    return tl.Model.from_description(SVNA_10_3)


def test_activity_coefficients_of_the_margules_example(svna):
    r = tl.activity_coefficients(svna, 318.15, [0.25, 0.75])
    a = 2.771 - 0.00523 * 318.15
    assert r.ln_gamma == pytest.approx([a * 0.75**2, a * 0.25**2], rel=1e-12)
    assert r.gamma == pytest.approx(np.exp(r.ln_gamma), rel=1e-14)
    back = pickle.loads(pickle.dumps(r))
    assert np.array_equal(back.ln_gamma, r.ln_gamma)


def test_activity_coefficients_vectorised(svna):
    x = np.linspace(0.1, 0.9, 5)
    sw = tl.activity_coefficients(svna, 318.15, np.column_stack([x, 1 - x]))
    a = 2.771 - 0.00523 * 318.15
    assert np.asarray(sw.ln_gamma)[:, 0] == pytest.approx(a * (1 - x) ** 2, rel=1e-12)


def test_azeotrope_of_the_example(svna):
    az = tl.azeotrope_at_temperature(svna, 318.15, [0.5, 0.5])
    assert az.pressure == pytest.approx(73760.0, abs=10.0)
    assert az.composition[0] == pytest.approx(0.3245, abs=5e-4)
    back = tl.azeotrope_at_pressure(svna, az.pressure, [0.3, 0.7])
    assert back.temperature == pytest.approx(318.15, abs=1e-6)


def test_ethanol_water_azeotrope_by_unifac():
    m = tl.Model.from_description(
        {"model": "solution", "components": ["ethanol", "water"], "liquid": {"kind": "unifac"}}
    )
    az = tl.azeotrope_at_pressure(m, 101325.0, [0.9, 0.1])
    assert az.temperature == pytest.approx(351.32, abs=1.0)
    assert az.composition[0] == pytest.approx(0.894, abs=0.01)


def test_multiphase_flash_three_phases():
    pr = tl.Model.from_description(
        {"model": "cubic", "kind": "peng_robinson", "components": ["methane", "n-hexane", "water"],
         "kij": [[0, 2, 0.5], [1, 2, 0.5]]}
    )
    r = tl.flash_multiphase(pr, 300.0, 2.0e6, [0.3, 0.2, 0.5])
    assert r.num_phases == 3
    assert list(r.phase_kinds) == ["vapor", "liquid2", "liquid"]
    assert r.residual <= 1e-10
    feed = np.asarray(r.compositions).T @ np.asarray(r.phase_fractions)
    assert feed == pytest.approx([0.3, 0.2, 0.5], abs=1e-12)
    lle = tl.flash_multiphase(pr, 300.0, 2.0e7, [0.1, 0.4, 0.5], allow_vapor=False)
    assert "vapor" not in list(lle.phase_kinds)


def test_bad_input_is_typed(svna):
    with pytest.raises(tl.OutsideValidityError):
        tl.activity_coefficients(svna, 500.0, [0.5, 0.5])
    pr = tl.Model.from_description({"model": "cubic", "kind": "peng_robinson", "components": ["methane", "ethane"]})
    with pytest.raises(tl.InvalidInputError, match="activity"):
        tl.activity_coefficients(pr, 300.0, [0.5, 0.5])
    with pytest.raises(tl.TielineError, match="toluene"):
        tl.Model.from_description(
            {"model": "solution", "components": ["methanol", "toluene"], "liquid": {"kind": "nrtl", "parameters": "bank"}}
        )
    with pytest.raises(tl.TielineError, match="methane"):
        tl.Model.from_description({"model": "solution", "components": ["methane", "water"], "liquid": {"kind": "unifac"}})
    with pytest.raises(tl.InvalidInputError):
        tl.flash_multiphase(pr, 300.0, 2.0e6, [0.5, 0.5], max_liquids=9)
