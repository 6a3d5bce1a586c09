"""Water by IAPWS-95 through the Python API: the model object, the generic solvers on it
(flash, saturation, phase properties), the per-kg IAPWS-95 functions, and their errors."""

from __future__ import annotations

import json
import pickle

import numpy as np
import pytest

import tieline as tl

WATER = tl.Model.water()
M = WATER.molar_masses[0]


def test_the_water_model_object():
    assert WATER.kind == "iapws95"
    assert WATER.components == ["water"] and WATER.num_components == 1
    # M = 18.015268 g/mol (IAPWS R6-95; published-values §1a, from memory).
    assert M == pytest.approx(18.015268e-3, rel=1e-12)
    # Tc = 647.096 K and pc = 22.064 MPa (IAPWS R6-95 Eq. (1) and text; §1a, from memory).
    assert WATER.critical_temperatures[0] == 647.096
    assert WATER.critical_pressures[0] == 22.064e6
    # No interaction parameters: the 1x1 k_ij matrix of a one-fluid model is zero.
    assert WATER.kij().tolist() == [[0.0]]
    assert WATER.index("water") == 0 and WATER.index("H2O") == 0 and WATER.index("steam") == 0
    with pytest.raises(tl.UnknownComponentError):
        WATER.index("methane")
    assert "iapws95" in repr(WATER)
    # Every way of asking for it gives the same model.
    same = [
        tl.Model(["water"], kind="iapws95"),
        tl.Model(["H2O"], kind="IAPWS-95"),
        tl.Model.from_description({"model": "iapws95"}),
        tl.Model.from_json('{"model": "iapws95"}'),
        tl.Model.from_json(WATER.to_json()),
        pickle.loads(pickle.dumps(WATER)),
    ]
    for m in same:
        assert m == WATER and hash(m) == hash(WATER)
    assert WATER.to_dict() == {"model": "iapws95"}
    assert json.loads(WATER.to_json()) == {"model": "iapws95"}
    assert WATER != tl.Model(["water"])


@pytest.mark.parametrize(
    "components, kwargs, what",
    [
        (["water", "methane"], {}, "components"),
        (["methane"], {}, "components"),
        ([{"name": "water", "tc": 650.0}], {}, "components"),
        (["water"], {"kij": {(0, 0): 0.1}}, "kij"),
        (["water"], {"volume_shift": "peneloux"}, "volume_shift"),
    ],
)
def test_iapws95_constructor_rejects_cubic_arguments(components, kwargs, what):
    with pytest.raises(tl.InvalidInputError) as info:
        tl.Model(components, kind="iapws95", **kwargs)
    assert info.value.what == what


def test_unknown_kind_names_the_water_model_too():
    with pytest.raises(tl.InvalidInputError, match="iapws95"):
        tl.Model(["water"], kind="steam-tables")
    with pytest.raises(tl.DataError):
        tl.Model.from_description({"model": "iapws95", "components": ["water"]})


def test_saturated_water_against_perrys_table():
    # Perry's Chemical Engineers' Handbook, 9th ed., Table 2-135 (saturated water from
    # IAPWS-95, molar units; published-values §1e, verified): at 300 K p = 0.003537 MPa,
    # rho' = 55.315 mol/dm3, cp' = 0.075320 kJ/(mol K), w' = 1501.4 m/s; at 350 K
    # p = 0.041682 MPa, rho' = 54.049; at 400 K p = 0.24577 MPa, rho' = 52.038. Tolerance: half
    # a unit of the last printed digit.
    table = [(300.0, 3537.0, 1.0, 55315.0, 1.0), (350.0, 41682.0, 1.0, 54049.0, 1.0), (400.0, 245770.0, 10.0, 52038.0, 1.0)]
    for t, p, dp, rho, drho in table:
        s = tl.saturation_pressure(WATER, t)
        assert abs(s.pressure - p) <= dp / 2, t
        assert abs(s.liquid_density - rho) <= drho / 2, t
    liquid = tl.phase_properties(WATER, 300.0, tl.saturation_pressure(WATER, 300.0).pressure, [1.0], root="liquid")
    assert liquid.kind == "liquid"
    assert abs(liquid.cp - 75.320) <= 0.0005
    assert abs(liquid.speed_of_sound - 1501.4) <= 0.05
    # The vectorised saturation curve gives the scalar results exactly.
    curve = tl.saturation_pressure(WATER, np.array([300.0, 350.0, 400.0]))
    assert curve.pressure.tolist() == [tl.saturation_pressure(WATER, t).pressure for t in (300.0, 350.0, 400.0)]


def test_normal_boiling_point():
    # 373.124 K at 101.325 kPa (published-values §9: derived from IF97 Eq. 31; IAPWS-95 gives
    # the same to about 1 mK, from memory); tolerance 2 mK.
    s = tl.saturation_temperature(WATER, 101325.0)
    assert abs(s.temperature - 373.124) < 2e-3
    # The per-kg IAPWS-95 solver and the generic one agree.
    w = tl.water_saturation(pressure=101325.0)
    assert w.temperature == pytest.approx(s.temperature, rel=1e-10)
    assert w.enthalpy_of_vaporization * M == pytest.approx(s.enthalpy_of_vaporization, rel=1e-9)
    assert w.liquid.density == pytest.approx(s.liquid_density * M, rel=1e-9)
    # Clapeyron: dp/dT = Δh/(T Δv) (an identity) against a central difference of p_sat(T).
    h = 0.01
    slope = (tl.saturation_pressure(WATER, w.temperature + h).pressure - tl.saturation_pressure(WATER, w.temperature - h).pressure) / (2 * h)
    assert w.clapeyron_slope == pytest.approx(slope, rel=1e-6)


def test_flash_of_water_names_its_phase():
    # One component: a single phase on either side of the saturation curve (p_sat(300 K) =
    # 3.537 kPa, Perry's Table 2-135, verified; T_sat(0.1 MPa) = 372.756 K, IF97 Table 36,
    # published-values §4, from memory + recomputed).
    liquid = tl.flash(WATER, 300.0, 1e5, [1.0])
    vapour = tl.flash(WATER, 400.0, 1e5, [1.0])
    assert liquid.num_phases == 1 and liquid.phases[0].kind == "liquid"
    assert vapour.num_phases == 1 and vapour.phases[0].kind == "vapor"
    assert liquid.diagnostics.certificate >= -1e-10
    # The flash's phase is the per-kg IAPWS-95 state at (T, p).
    w = tl.water_properties(300.0, pressure=1e5)
    assert M / liquid.phases[0].molar_volume == pytest.approx(w.density, rel=1e-10)
    # Vectorised across the boiling point, on the grid of the sweep.
    t = np.linspace(300.0, 420.0, 13)
    sweep = tl.flash(WATER, t, 101325.0, [1.0])
    tb = tl.saturation_temperature(WATER, 101325.0).temperature
    assert (sweep.phase_kind[:, 0] == np.where(t < tb, "liquid", "vapor")).all()


def test_phase_properties_of_water_per_mol_match_iapws95_per_kg():
    for t, p, root in [(300.0, 1e5, "liquid"), (500.0, 1e6, "vapor"), (650.0, 3e7, "stable")]:
        molar = tl.phase_properties(WATER, t, p, [2.0], root=root)
        per_kg = tl.water_properties(t, pressure=p, root=root)
        assert molar.mass_density == pytest.approx(per_kg.density, rel=1e-10)
        assert molar.cp / M == pytest.approx(per_kg.cp, rel=1e-10)
        assert molar.cv / M == pytest.approx(per_kg.cv, rel=1e-10)
        assert molar.speed_of_sound == pytest.approx(per_kg.speed_of_sound, rel=1e-10)
        assert molar.joule_thomson == pytest.approx(per_kg.joule_thomson, rel=1e-9)
        # Enthalpy differences are reference-free: h(T, p) − h(300 K, 1e5 Pa) per kg.
        ref_m = tl.phase_properties(WATER, 300.0, 1e5, [1.0], root="liquid").enthalpy
        ref_k = tl.water_properties(300.0, pressure=1e5, root="liquid").enthalpy
        assert (molar.enthalpy - ref_m) / M == pytest.approx(per_kg.enthalpy - ref_k, rel=1e-9)
    table = tl.phase_properties(WATER, np.array([300.0, 500.0]), np.array([1e5, 1e6]), [1.0])
    assert table.kind.tolist() == ["liquid", "vapor"]


def test_metastable_roots_per_kg():
    # Superheated liquid and subcooled vapour at 400 K, 1e5 Pa, below the saturation pressure
    # of 0.24577 MPa (Perry's Table 2-135): both roots exist, the vapour is the stable one.
    liq = tl.water_properties(400.0, pressure=1e5, root="liquid")
    vap = tl.water_properties(400.0, pressure=1e5, root="vapor")
    stable = tl.water_properties(400.0, pressure=1e5)
    assert liq.density > 900.0 and vap.density < 1.0
    assert stable == vap and vap.gibbs < liq.gibbs
    assert pickle.loads(pickle.dumps(stable)) == stable
    assert json.loads(stable.to_json())["density"] == stable.density


def test_water_functions_reject_bad_input():
    with pytest.raises(tl.InvalidInputError, match="exactly one"):
        tl.water_properties(300.0)
    with pytest.raises(tl.InvalidInputError, match="exactly one"):
        tl.water_properties(300.0, density=1000.0, pressure=1e5)
    with pytest.raises(tl.InvalidInputError, match="exactly one"):
        tl.water_saturation()
    with pytest.raises(tl.InvalidInputError, match="exactly one"):
        tl.water_saturation(temperature=300.0, pressure=1e5)
    for bad in (float("nan"), -1.0, 0.0, float("inf")):
        with pytest.raises(tl.InvalidInputError):
            tl.water_properties(bad, density=1000.0)
        with pytest.raises(tl.InvalidInputError):
            tl.water_properties(300.0, density=bad)
        with pytest.raises(tl.InvalidInputError):
            tl.water_properties(300.0, pressure=bad)
    with pytest.raises(tl.InvalidInputError):
        tl.water_properties("hot", density=1000.0)
    with pytest.raises(tl.InvalidInputError, match="root"):
        tl.water_properties(300.0, pressure=1e5, root="dense")
    # Outside IAPWS-95's range (R6-95: 130–1273.15 K, up to 1000 MPa in this library's policy).
    with pytest.raises(tl.OutsideValidityError):
        tl.water_properties(2000.0, density=1.0)
    with pytest.raises(tl.OutsideValidityError):
        tl.water_properties(300.0, pressure=2e9)
    # No saturation above the critical point (647.096 K, R6-95) nor below the triple point.
    with pytest.raises(tl.NoSolutionError):
        tl.water_saturation(temperature=650.0)
    with pytest.raises(tl.OutsideValidityError):
        tl.water_saturation(temperature=250.0)
    with pytest.raises(tl.NoSolutionError):
        tl.saturation_pressure(WATER, 700.0)
    with pytest.raises(tl.OutsideValidityError):
        tl.flash(WATER, 2000.0, 1e5, [1.0])
    with pytest.raises(tl.InvalidInputError, match="one amount per component"):
        tl.flash(WATER, 300.0, 1e5, [0.5, 0.5])
