"""Solid phases (tieline.Solid), the PT flash with solids and the frost point through the
Python API."""

from __future__ import annotations

import json
import pickle

import numpy as np
import pytest

import tieline as tl

WATER = tl.Model.water()
ICE = tl.Solid.ice_ih()
CO2_CH4 = tl.Model(["methane", "carbon dioxide"])
DRY = tl.Solid.carbon_dioxide(CO2_CH4)
HUMID = tl.Model(["methane", "water"])
PPM = [1.0 - 1e-6, 1e-6]  # 1 ppm of water in methane (an invented feed)


def test_ice_object():
    assert ICE.kind == "ice_ih" and ICE.species == "water"
    # IAPWS R10-06: valid for T <= 273.16 K and p <= 210 MPa; triple point 273.16 K,
    # 611.657 Pa (published-values §2a, from memory + recomputed).
    assert ICE.validity["t_max"] == 273.16 and ICE.validity["p_max"] == 210e6
    assert ICE.triple_point_estimate == (273.16, 611.657)
    assert ICE.anchor_pressure is None and ICE.fusion_data is None
    assert ICE.molar_mass == WATER.molar_masses[0]
    assert repr(ICE) == "Solid.ice_ih()"
    assert ICE == tl.Solid.ice_ih() and hash(ICE) == hash(tl.Solid.ice_ih())
    assert ICE != DRY
    assert ICE.to_dict() == {"solid": "ice_ih"}


def test_dry_ice_object():
    assert DRY.kind == "fusion" and DRY.species == "carbon dioxide"
    data = DRY.fusion_data
    # Triple point 216.592 K (Span & Wagner 1996; published-values §9, from memory).
    assert data["t_triple"] == 216.592
    assert DRY.triple_point_estimate == (216.592, DRY.anchor_pressure)
    # The anchor is the fluid model's own vapour pressure at the triple-point temperature.
    sat = tl.saturation_pressure(tl.Model(["carbon dioxide"]), 216.592)
    assert DRY.anchor_pressure == pytest.approx(sat.pressure, rel=1e-9)
    # By index or by name; the same data give the same solid.
    assert tl.Solid.carbon_dioxide(CO2_CH4, 1) == DRY
    assert tl.Solid.carbon_dioxide(CO2_CH4, "CO2") == DRY
    assert tl.Solid.from_fusion_data(CO2_CH4, "carbon dioxide", data) == DRY
    assert "carbon dioxide" in repr(DRY)


@pytest.mark.parametrize("protocol", range(2, pickle.HIGHEST_PROTOCOL + 1))
def test_solids_pickle(protocol):
    for s in (ICE, DRY):
        back = pickle.loads(pickle.dumps(s, protocol=protocol))
        assert back == s and back.to_json() == s.to_json()
        assert back.properties(200.0, 1e5) == s.properties(200.0, 1e5)


def test_solids_are_immutable():
    with pytest.raises(AttributeError):
        ICE.species = "ice"  # type: ignore[misc]


def test_molar_and_specific_ice_properties_agree():
    t, p = 250.0, 1e6
    molar = ICE.properties(t, p)
    kg = ICE.specific_properties(t, p)
    m = ICE.molar_mass
    assert molar.species == "water" and molar.temperature == t and molar.pressure == p
    assert molar.cp == pytest.approx(m * kg.cp, rel=1e-12)
    assert molar.molar_volume == pytest.approx(m / kg.density, rel=1e-12)
    # g = h − Ts in both (an identity), and entropy differences are reference-free.
    assert molar.gibbs == pytest.approx(molar.enthalpy - t * molar.entropy, rel=1e-12)
    other = ICE.properties(200.0, p)
    kg2 = ICE.specific_properties(200.0, p)
    assert molar.entropy - other.entropy == pytest.approx(m * (kg.entropy - kg2.entropy), rel=1e-10)
    assert json.loads(molar.to_json())["cp"] == molar.cp


def test_vectorised_solid_properties():
    t = np.linspace(240.0, 280.0, 5)
    p = np.array([[1e5], [1e7]])
    tab = ICE.properties(t, p, on_error="flag")
    assert tab.gibbs.shape == (2, 5) and len(tab) == 10
    for i in range(2):
        for j in range(5):
            if t[j] <= 273.16:
                assert tab.ok[i, j]
                assert tab.gibbs[i, j] == ICE.properties(t[j], p[i, 0]).gibbs
            else:
                assert not tab.ok[i, j] and np.isnan(tab.gibbs[i, j])
    assert {idx for idx, _ in tab.failures} == {(0, 4), (1, 4)}
    assert all(isinstance(e, tl.OutsideValidityError) for _, e in tab.failures)
    with pytest.raises(tl.OutsideValidityError) as info:
        ICE.properties(t, 1e5)
    assert info.value.index == 4
    assert len(tab.to_dataframe()) == 10


def test_solid_errors():
    with pytest.raises(tl.OutsideValidityError):
        ICE.properties(280.0, 1e5)
    with pytest.raises(tl.OutsideValidityError):
        ICE.properties(250.0, 3e8)
    for bad in (float("nan"), -1.0, 0.0):
        with pytest.raises(tl.InvalidInputError):
            ICE.properties(bad, 1e5)
        with pytest.raises(tl.InvalidInputError):
            DRY.properties(200.0, bad)
        with pytest.raises(tl.InvalidInputError):
            ICE.specific_properties(bad, 1e5)
    with pytest.raises(tl.InvalidInputError):
        ICE.properties("cold", 1e5)
    with pytest.raises(tl.InvalidInputError):
        ICE.specific_properties(True, 1e5)
    with pytest.raises(tl.InvalidInputError, match="shapes"):
        ICE.properties([200.0, 210.0], [1e5, 1e6, 1e7])
    with pytest.raises(tl.InvalidInputError, match="on_error"):
        ICE.properties([200.0, 210.0], 1e5, on_error="ignore")
    with pytest.raises(tl.InvalidInputError, match="ice Ih"):
        DRY.specific_properties(200.0, 1e5)
    # Dry ice needs a CO2 component, and only that one.
    with pytest.raises(tl.UnknownComponentError):
        tl.Solid.carbon_dioxide(tl.Model(["methane"]))
    with pytest.raises(tl.InvalidInputError, match="carbon dioxide"):
        tl.Solid.carbon_dioxide(CO2_CH4, 0)
    with pytest.raises(tl.InvalidInputError):
        tl.Solid.carbon_dioxide(CO2_CH4, 5)
    with pytest.raises(tl.InvalidInputError):
        tl.Solid.carbon_dioxide(CO2_CH4, True)
    data = DRY.fusion_data
    with pytest.raises(tl.DataError):
        tl.Solid.from_fusion_data(CO2_CH4, 1, {**data, "colour": "white"})
    with pytest.raises(tl.DataError):
        tl.Solid.from_fusion_data(CO2_CH4, 1, {k: v for k, v in data.items() if k != "t_triple"})
    with pytest.raises(tl.InvalidInputError, match="enthalpy_of_fusion"):
        tl.Solid.from_fusion_data(CO2_CH4, 1, {**data, "enthalpy_of_fusion": -1.0})
    with pytest.raises(tl.InvalidInputError, match="t_min"):
        tl.Solid.from_fusion_data(CO2_CH4, 1, {**data, "t_max": 200.0})
    with pytest.raises(tl.InvalidInputError, match="fusion data are of 'carbon dioxide'"):
        tl.Solid.from_fusion_data(CO2_CH4, 0, data)
    with pytest.raises(tl.DataError):
        tl._core._solid_from_json("{not json")


def test_ln_fugacity_at_the_anchor_equals_the_saturated_fluids():
    # Equal fugacities at coexistence (the equilibrium condition): at its anchor, the triple
    # point of the combined model, the solid's fugacity is that of the saturated vapour.
    pure = tl.Model(["carbon dioxide"])
    solid = tl.Solid.carbon_dioxide(pure)
    t, p = solid.triple_point_estimate
    vap = tl.PhaseState(pure, t, p, [1.0], root="vapor")
    assert solid.ln_fugacity(pure, t, p) == pytest.approx(np.log(vap.fugacity[0]), abs=1e-9)
    # Ice against IAPWS-95 water at the computed normal melting point (R10-06: 273.152519 K).
    ps = tl.PureSubstance(WATER, solids=ICE)
    m = ps.coexistence_at_pressure(101325.0, ("solid", "liquid"))
    liq = tl.PhaseState(WATER, m.temperature, m.pressure, [1.0], root="liquid")
    assert ICE.ln_fugacity(WATER, m.temperature, m.pressure) == pytest.approx(np.log(liq.fugacity[0]), abs=1e-10)
    with pytest.raises(tl.InvalidInputError, match="no component named"):
        ICE.ln_fugacity(CO2_CH4, 250.0, 1e5)
    with pytest.raises(tl.OutsideValidityError):
        ICE.ln_fugacity(WATER, 300.0, 1e5)


def test_dry_ice_from_methane():
    # CO2 (2 %) in methane at 160 K, 5e5 Pa: CO2 freezes out (an invented case; the Rust
    # core's own freeze-out test uses the same).
    z = np.array([0.98, 0.02])
    r = tl.flash_with_solids(CO2_CH4, 160.0, 5e5, z, [DRY])
    assert r.phase_kinds == ("vapor", "solid") and r.num_phases == 2
    s = r.solids[0]
    assert s.species == "carbon dioxide" and s.component == 1 and s.candidate == 0
    # Conservation of CO2 and of the total amount (mass balance, 1e-14 relative).
    fluid_co2 = sum(ph.amount * ph.composition[1] for ph in r.fluid.phases)
    assert s.amount + fluid_co2 == pytest.approx(z[1], abs=1e-14)
    assert r.fluid_amount + s.amount == pytest.approx(1.0, abs=1e-14)
    assert r.solid_fraction == s.fraction
    assert r.solid_amounts().tolist() == [s.amount]
    assert r.fluid_fractions.tolist() == [r.fluid_amount]
    # A present solid has a zero margin within the tolerance (1e-9, the default), and the
    # fluid flash of what remains carries its own certificate.
    assert r.margins[0].present and abs(r.margins[0].margin) <= 1e-9
    assert r.diagnostics.residual <= 1e-9
    assert r.fluid.diagnostics.certificate >= -1e-10
    # The fluid's fugacity of CO2 equals the solid's.
    f = r.fluid.phases[0].fugacities(r.pressure)[1]
    assert np.log(f) == pytest.approx(s.ln_fugacity, abs=1e-9)
    back = pickle.loads(pickle.dumps(r))
    assert back == r and back.to_dict() == r.to_dict()
    assert json.loads(r.to_json())["solids"][0]["amount"] == s.amount


def test_frost_point_brackets_the_appearance_of_the_solid():
    z = [0.98, 0.02]
    tf = tl.frost_point_temperature(CO2_CH4, 5e5, z, DRY)
    assert 150.0 < tf < 216.592
    above = tl.flash_with_solids(CO2_CH4, tf + 0.05, 5e5, z, DRY)
    below = tl.flash_with_solids(CO2_CH4, tf - 0.05, 5e5, z, DRY)
    assert not above.solids and above.margins[0].margin > 0
    assert below.solids and below.solids[0].amount > 0
    # At the frost point itself the fluid (the whole feed) has the solid's CO2 fugacity.
    at = tl.flash(CO2_CH4, tf, 5e5, z)
    lnf = np.log(at.phases[0].fugacities(5e5)[1])
    assert lnf == pytest.approx(DRY.ln_fugacity(CO2_CH4, tf, 5e5), abs=1e-9)
    # Another start converges to the same frost point.
    assert tl.frost_point_temperature(CO2_CH4, 5e5, z, DRY, t_guess=180.0) == pytest.approx(tf, rel=1e-10)


def test_ice_from_humid_methane():
    # 1 ppm of water in methane at 5 MPa: ice appears from the vapour at the frost point
    # (far above the cubic's dew point of the same feed), not below it.
    tf = tl.frost_point_temperature(HUMID, 5e6, PPM, ICE)
    assert tl.dew_temperature(HUMID, 5e6, PPM).temperature < tf - 5.0
    above = tl.flash_with_solids(HUMID, tf + 1.0, 5e6, PPM, [ICE])
    below = tl.flash_with_solids(HUMID, tf - 1.0, 5e6, PPM, [ICE])
    assert above.phase_kinds == ("vapor",) and above.margins[0].margin > 0
    assert below.phase_kinds == ("vapor", "solid")
    assert 0 < below.solids[0].amount < 1e-6
    assert below.solids[0].amount + below.fluid.phases[0].amount * below.fluid.phases[0].composition[1] == pytest.approx(1e-6, rel=1e-9)


def test_pure_water_freezes_completely():
    r = tl.flash_with_solids(WATER, 263.15, 101325.0, [2.0], ICE)
    assert r.fluid is None and r.phase_kinds == ("solid",)
    assert r.solids[0].amount == 2.0 and r.solids[0].fraction == 1.0
    # The margin compares the solid with the fluid it displaced: negative (less stable fluid).
    assert r.margins[0].present and r.margins[0].margin < 0
    warm = tl.flash_with_solids(WATER, 283.15, 101325.0, [2.0], ICE)
    assert warm.phase_kinds == ("liquid",)
    # Above 273.16 K ice Ih is outside IAPWS-06's range: not considered.
    assert not warm.margins[0].evaluated and not warm.margins[0].present


def test_several_solids_and_margins_order():
    # Two candidates of two species; only dry ice can form in a dry methane–CO2 gas, and ice is
    # reported as not a component of the model.
    with pytest.raises(tl.InvalidInputError, match="solids\\[1\\]"):
        tl.flash_with_solids(CO2_CH4, 160.0, 5e5, [0.98, 0.02], [DRY, ICE])
    m = tl.Model(["methane", "carbon dioxide", "water"])
    dry = tl.Solid.carbon_dioxide(m)
    r = tl.flash_with_solids(m, 160.0, 5e5, [0.98, 0.02 - 1e-7, 1e-7], (ICE, dry))
    assert [x.species for x in r.margins] == ["water", "carbon dioxide"]
    assert {s.species for s in r.solids} == {"water", "carbon dioxide"}
    for mg in r.margins:
        assert mg.present and abs(mg.margin) <= 1e-9
    assert r.solid_amounts().shape == (2,)


def test_flash_with_solids_rejects_bad_input():
    z = [0.98, 0.02]
    with pytest.raises(tl.InvalidInputError, match="Solid"):
        tl.flash_with_solids(CO2_CH4, 160.0, 5e5, z, ["dry ice"])
    with pytest.raises(tl.InvalidInputError, match="Solid"):
        tl.flash_with_solids(CO2_CH4, 160.0, 5e5, z, "dry ice")
    with pytest.raises(tl.InvalidInputError, match="Solid"):
        tl.flash_with_solids(CO2_CH4, 160.0, 5e5, z, 3)
    with pytest.raises(tl.InvalidInputError, match="one point"):
        tl.flash_with_solids(CO2_CH4, [160.0, 170.0], 5e5, z, DRY)
    with pytest.raises(tl.InvalidInputError, match="1-D"):
        tl.flash_with_solids(CO2_CH4, 160.0, 5e5, [z, z], DRY)
    with pytest.raises(tl.InvalidInputError, match="tolerance"):
        tl.flash_with_solids(CO2_CH4, 160.0, 5e5, z, DRY, solid_tolerance=0.5)
    with pytest.raises(tl.InvalidInputError, match="model"):
        tl.flash_with_solids("methane", 160.0, 5e5, z, DRY)
    for bad in (float("nan"), -1.0, 0.0):
        with pytest.raises(tl.InvalidInputError):
            tl.flash_with_solids(CO2_CH4, bad, 5e5, z, DRY)
        with pytest.raises(tl.InvalidInputError):
            tl.flash_with_solids(CO2_CH4, 160.0, bad, z, DRY)
        with pytest.raises(tl.InvalidInputError):
            tl.frost_point_temperature(CO2_CH4, bad, z, DRY)
    with pytest.raises(tl.InvalidInputError):
        tl.flash_with_solids(CO2_CH4, 160.0, 5e5, [0.98, -0.02], DRY)
    # No solid at all is the ordinary flash.
    plain = tl.flash_with_solids(CO2_CH4, 250.0, 5e5, z, [])
    assert plain.fluid == tl.flash(CO2_CH4, 250.0, 5e5, z) and not plain.margins
    # Frost point of a species absent from the feed, or of a solid not in the model.
    with pytest.raises(tl.InvalidInputError, match="present in the feed"):
        tl.frost_point_temperature(CO2_CH4, 5e5, [1.0, 0.0], DRY)
    with pytest.raises(tl.InvalidInputError):
        tl.frost_point_temperature(CO2_CH4, 5e5, z, ICE)
    with pytest.raises(tl.InvalidInputError, match="Solid"):
        tl.frost_point_temperature(CO2_CH4, 5e5, z, "dry ice")
    # A frost point above the solid's range: the search leaves it, and says so.
    with pytest.raises((tl.OutsideValidityError, tl.NoSolutionError)):
        tl.frost_point_temperature(WATER, 1e5, [1.0], ICE, t_guess=270.0)
