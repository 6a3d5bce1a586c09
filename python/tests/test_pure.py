"""Pure-substance phase equilibrium (tieline.PureSubstance): stable phases, coexistence and
traced boundaries, triple points, Gibbs-energy curves and their crossings."""

from __future__ import annotations

import pickle

import numpy as np
import pytest

import tieline as tl

WATER = tl.Model.water()
ICE = tl.Solid.ice_ih()
H2O = tl.PureSubstance(WATER, solids=[ICE])
P0 = 101325.0


def test_the_phase_set():
    assert H2O.phases == ("liquid", "vapor", "solid")
    assert H2O.component == "water" and H2O.component_index == 0
    assert H2O.model == WATER and H2O.solids == (ICE,)
    assert tl.PureSubstance(WATER).phases == ("liquid", "vapor")
    two = tl.PureSubstance(WATER, "H2O", (ICE, ICE))
    assert two.phases == ("liquid", "vapor", "solid0", "solid1")
    assert tl.PureSubstance(WATER, solids=ICE) == H2O
    assert hash(tl.PureSubstance(WATER, solids=ICE)) == hash(H2O)
    assert "water" in repr(H2O)
    with pytest.raises(AttributeError):
        H2O.solids = ()  # type: ignore[misc]


@pytest.mark.parametrize("protocol", range(2, pickle.HIGHEST_PROTOCOL + 1))
def test_pickle(protocol):
    back = pickle.loads(pickle.dumps(H2O, protocol=protocol))
    assert back == H2O and back.phases == H2O.phases
    m = H2O.coexistence_at_pressure(P0, ("solid", "liquid"))
    assert back.coexistence_at_pressure(P0, ("solid", "liquid")) == m
    assert pickle.loads(pickle.dumps(m, protocol=protocol)) == m
    g = H2O.gibbs_curves_isobaric(P0, np.linspace(260.0, 390.0, 14))
    assert pickle.loads(pickle.dumps(g, protocol=protocol)) == g


def test_stable_phases_at_normal_pressure():
    # At 101325 Pa water is ice below 273.152519 K (R10-06 normal melting point,
    # published-values §2a) and vapour above 373.124 K (§9, derived from IF97 Eq. 31).
    for t, phase in ((250.0, "solid"), (273.15, "solid"), (273.16, "liquid"), (300.0, "liquid"), (373.0, "liquid"), (373.3, "vapor"), (500.0, "vapor")):
        s = H2O.stable_phase(t, P0)
        assert s.phase == phase, t
        assert s.candidates[0] == s.stable
        assert all(a.gibbs <= b.gibbs for a, b in zip(s.candidates, s.candidates[1:]))
    # Ice is not a candidate above 273.16 K (outside IAPWS-06), the vapour root not at 200 MPa.
    assert "solid" not in [c.phase for c in H2O.stable_phase(300.0, P0).candidates]
    assert H2O.evaluate("solid", 300.0, P0) is None
    assert H2O.evaluate("liquid", 300.0, P0).molar_volume == pytest.approx(
        tl.phase_properties(WATER, 300.0, P0, [1.0], root="liquid").molar_volume, rel=1e-12
    )


def test_stable_phase_map_matches_scalar_calls():
    t = np.linspace(240.0, 420.0, 19)
    p = np.array([[1e3], [P0], [1e6]])
    m = H2O.stable_phase(t, p, threads=2)
    assert m.phase.shape == (3, 19) and m.phases == H2O.phases
    for i in range(3):
        for j in range(0, 19, 3):
            s = H2O.stable_phase(float(t[j]), float(p[i, 0]))
            assert m.phase[i, j] == s.phase and m.gibbs[i, j] == s.stable.gibbs
    assert set(m.phase.ravel()) == {"solid", "liquid", "vapor"}
    assert m.ok.all() and not m.failures
    assert H2O.stable_phase(t, p, threads=1) == m
    flagged = H2O.stable_phase([300.0, -1.0], P0, on_error="flag")
    assert flagged.ok.tolist() == [True, False] and flagged.phase.tolist() == ["liquid", ""]
    assert isinstance(flagged.failures[0][1], tl.InvalidInputError)
    with pytest.raises(tl.InvalidInputError) as info:
        H2O.stable_phase([300.0, -1.0], P0)
    assert info.value.index == 1
    assert len(m.to_dataframe()) == 57


def test_melting_boiling_and_sublimation():
    melt = H2O.coexistence_at_pressure(P0, ("solid", "liquid"))
    # R10-06 normal melting point 273.152519 K (published-values §2a), 1e-6 K.
    assert abs(melt.temperature - 273.152519) < 1e-6
    assert melt.phases == ("solid", "liquid") and melt.pressure == P0
    assert melt.states[0].gibbs == pytest.approx(melt.states[1].gibbs, rel=1e-13)
    assert melt.gibbs == melt.states[0].gibbs
    # Enthalpy of melting ≈ 6.0 kJ/mol (333.4 kJ/kg × 18.015 g/mol; textbook value, from
    # memory); within 1 %.
    assert melt.delta_h == pytest.approx(6007.0, rel=0.01)
    boil = H2O.coexistence_at_pressure(P0)
    assert boil.phases == ("liquid", "vapor")
    assert abs(boil.temperature - 373.124) < 2e-3  # §9 above
    assert boil.temperature == pytest.approx(tl.saturation_temperature(WATER, P0).temperature, rel=1e-10)
    # Sublimation at 250 K: the pressure where ice and vapour coexist, below the liquid's
    # (metastable) vapour pressure there.
    sub = H2O.coexistence_at_temperature(250.0, ("solid", "vapor"))
    lv = H2O.coexistence_at_temperature(250.0, ("liquid", "vapor"))
    assert sub.pressure < lv.pressure
    # Clausius–Clapeyron identity: the reported slope Δh/(TΔv) against a central difference.
    h = 0.01
    p1 = H2O.coexistence_at_temperature(250.0 + h, ("solid", "vapor")).pressure
    p0 = H2O.coexistence_at_temperature(250.0 - h, ("solid", "vapor")).pressure
    assert sub.clapeyron_slope == pytest.approx((p1 - p0) / (2 * h), rel=1e-6)
    assert sub.clapeyron_slope == pytest.approx(sub.delta_h / (sub.temperature * sub.delta_v), rel=1e-12)
    # Same boundary, other direction: the pressure at the sublimation temperature.
    back = H2O.coexistence_at_pressure(sub.pressure, ("solid", "vapor"), t_guess=260.0)
    assert back.temperature == pytest.approx(250.0, rel=1e-10)
    # "vapour" is accepted; the order of the pair sets the sign of the transition quantities.
    rev = H2O.coexistence_at_temperature(250.0, ("vapour", "solid"))
    assert rev.phases == ("vapor", "solid") and rev.delta_h == pytest.approx(-sub.delta_h, rel=1e-10)


def test_traced_curves():
    t = np.linspace(280.0, 640.0, 37)
    vp = H2O.coexistence_at_temperature(t)
    assert isinstance(vp, tl.CoexistenceCurve) and len(vp) == 37
    for k in (0, 12, 36):
        one = H2O.coexistence_at_temperature(float(t[k]))
        assert vp.pressure[k] == pytest.approx(one.pressure, rel=1e-10)
    assert (np.diff(vp.pressure) > 0).all()
    assert vp.molar_volume.shape == (37, 2) and (vp.delta_v > 0).all()
    # IAPWS R6-95 Table 8: p_sat(450 K) = 0.932203564 MPa (published-values §1d).
    sat450 = H2O.coexistence_at_temperature(np.array([400.0, 450.0]))
    assert sat450.pressure[1] == pytest.approx(0.932203564e6, rel=1e-8)
    melt = H2O.coexistence_at_pressure(np.geomspace(P0, 2e8, 12), ("solid", "liquid"))
    assert (np.diff(melt.temperature) < 0).all(), "ice Ih melts at lower temperature under pressure"
    assert (melt.clapeyron_slope < 0).all()
    df = vp.to_dataframe()
    assert "molar_volume_vapor" in df.columns and len(df) == 37
    with pytest.raises(tl.InvalidInputError, match="1-D"):
        H2O.coexistence_at_temperature(np.ones((2, 2)) * 300.0)
    with pytest.raises(tl.InvalidInputError, match="empty"):
        H2O.coexistence_at_temperature(np.array([]))
    with pytest.raises(tl.NoSolutionError, match="point 1"):
        H2O.coexistence_at_temperature(np.array([600.0, 700.0]))


def test_triple_point():
    tp = H2O.triple_point()
    # ITS-90: 273.16 K; IAPWS-95's vapour pressure there 611.655 Pa (published-values §1a,
    # from memory); tolerances of the shared vectors.
    assert abs(tp.temperature - 273.16) < 1e-5 and abs(tp.pressure - 611.655) < 5e-4
    g = [p.gibbs for p in tp.phases]
    assert max(g) - min(g) <= 1e-10 * abs(g[0])
    assert tp.residual < 1e-12
    assert H2O.triple_point("solid", t_guess=273.16).temperature == tp.temperature
    assert tl.PureSubstance(WATER, solids=(ICE, ICE)).triple_point("solid1").temperature == pytest.approx(tp.temperature, abs=1e-9)
    with pytest.raises(tl.InvalidInputError, match="no solid"):
        tl.PureSubstance(WATER).triple_point()
    with pytest.raises(tl.InvalidInputError, match="2 solids"):
        tl.PureSubstance(WATER, solids=(ICE, ICE)).triple_point()
    with pytest.raises(tl.InvalidInputError, match="solid"):
        H2O.triple_point("liquid")
    with pytest.raises(tl.InvalidInputError):
        H2O.triple_point(0)  # type: ignore[arg-type]


def test_dry_ice_triple_point_and_sublimation():
    co2 = tl.Model(["carbon dioxide"])
    dry = tl.Solid.carbon_dioxide(co2)
    s = tl.PureSubstance(co2, "carbon dioxide", dry)
    tp = s.triple_point()
    # The fusion solid is anchored at 216.592 K (Span & Wagner 1996, from memory) and the
    # fluid's own vapour pressure there: that is the triple point of the combined model.
    assert tp.temperature == pytest.approx(216.592, abs=1e-9)
    assert tp.pressure == pytest.approx(dry.anchor_pressure, rel=1e-9)
    assert s.triple_point(t_guess=205.0).temperature == pytest.approx(216.592, abs=1e-9)
    # Sublimation at 1 atm: 194.7 K (published-values §5, from memory); the fusion-data
    # solid on Peng–Robinson within 0.5 K (the library's tolerance for this constant-cp
    # solid; common practice, no source).
    sub = s.coexistence_at_pressure(101325.0, ("solid", "vapor"))
    assert abs(sub.temperature - 194.7) < 0.5
    assert s.stable_phase(180.0, 101325.0).phase == "solid"
    assert s.stable_phase(200.0, 101325.0).phase == "vapor"


def test_isobaric_curves_and_crossings():
    t = np.linspace(263.15, 383.15, 49)
    g = H2O.gibbs_curves_isobaric(P0, t)
    assert g.along == "temperature" and g.phases == H2O.phases
    assert g.gibbs.shape == (3, 49) and (g.grid == t).all() and (g.pressure == P0).all()
    ice = g.curve("solid")
    assert np.isnan(ice[t > 273.16]).all() and not np.isnan(ice[t <= 273.16]).any()
    for k in (0, 20, 48):
        s = H2O.stable_phase(float(t[k]), P0)
        assert g.stable_phase[k] == s.phase and g.stable_gibbs[k] == s.stable.gibbs
    trans = g.transitions
    assert [c.phases for c in trans] == [("liquid", "vapor"), ("liquid", "solid")]
    melt = H2O.coexistence_at_pressure(P0, ("solid", "liquid"))
    boil = H2O.coexistence_at_pressure(P0)
    temps = sorted(c.temperature for c in trans)
    assert temps[0] == pytest.approx(melt.temperature, abs=1e-9)
    assert temps[1] == pytest.approx(boil.temperature, abs=1e-9)
    for c in trans:
        assert c.pressure == P0 and c.gibbs == c.point.states[0].gibbs
    df = g.to_dataframe()
    assert list(df.columns) == ["temperature", "pressure", "gibbs_liquid", "gibbs_vapor", "gibbs_solid", "stable_phase"]
    assert np.array_equal(g.curve("vapour"), g.curve("vapor"), equal_nan=True)
    with pytest.raises(tl.InvalidInputError, match="phase"):
        g.curve("plasma")


def test_isothermal_curves_and_crossings():
    p = np.geomspace(100.0, 1e7, 41)
    g = H2O.gibbs_curves_isothermal(265.0, p)
    assert g.along == "pressure" and (g.temperature == 265.0).all() and (g.grid == p).all()
    # At 265 K: vapour at low pressure, ice above the sublimation pressure; the liquid is
    # metastable throughout, so its crossings are not transitions.
    stable = [c for c in g.crossings if c.stable]
    assert len(stable) == 1 and set(stable[0].phases) == {"vapor", "solid"}
    sub = H2O.coexistence_at_temperature(265.0, ("solid", "vapor"))
    assert stable[0].pressure == pytest.approx(sub.pressure, rel=1e-9)
    assert any(not c.stable for c in g.crossings)
    # ∂g/∂ln p = p v at fixed T (an identity): a central difference of the vapour curve in
    # ln p (nearly linear there) against the molar volume.
    gv = g.curve("vapor")
    k = 3
    slope = (gv[k + 1] - gv[k - 1]) / (np.log(p[k + 1]) - np.log(p[k - 1]))
    v = H2O.evaluate("vapor", 265.0, float(p[k])).molar_volume
    assert slope == pytest.approx(p[k] * v, rel=1e-4)


def test_bad_arguments():
    for bad in (float("nan"), float("inf"), -1.0, 0.0):
        with pytest.raises(tl.InvalidInputError):
            H2O.stable_phase(bad, P0)
        with pytest.raises(tl.InvalidInputError):
            H2O.stable_phase(300.0, bad)
        with pytest.raises(tl.InvalidInputError):
            H2O.coexistence_at_pressure(bad)
        with pytest.raises(tl.InvalidInputError):
            H2O.coexistence_at_temperature(bad)
        with pytest.raises(tl.InvalidInputError):
            H2O.gibbs_curves_isobaric(bad, [270.0, 280.0])
        with pytest.raises(tl.InvalidInputError):
            H2O.evaluate("liquid", bad, P0)
        with pytest.raises(tl.InvalidInputError):
            H2O.coexistence_at_pressure(P0, t_guess=bad)
    with pytest.raises(tl.InvalidInputError, match="temperatures"):
        H2O.gibbs_curves_isobaric(P0, [280.0, 270.0])
    with pytest.raises(tl.InvalidInputError, match="temperatures"):
        H2O.gibbs_curves_isobaric(P0, [280.0])
    with pytest.raises(tl.InvalidInputError, match="pressures"):
        H2O.gibbs_curves_isothermal(300.0, [1e5, 1e5])
    with pytest.raises(tl.InvalidInputError, match="1-D"):
        H2O.gibbs_curves_isothermal(300.0, [[1e5, 2e5]])
    with pytest.raises(tl.InvalidInputError, match="different"):
        H2O.coexistence_at_pressure(P0, ("liquid", "liquid"))
    with pytest.raises(tl.InvalidInputError, match="plasma"):
        H2O.coexistence_at_pressure(P0, ("liquid", "plasma"))
    with pytest.raises(tl.InvalidInputError, match="pair"):
        H2O.coexistence_at_pressure(P0, "liquid")
    with pytest.raises(tl.InvalidInputError, match="pair"):
        H2O.coexistence_at_pressure(P0, ("solid", "liquid", "vapor"))
    with pytest.raises(tl.InvalidInputError, match="solid2"):
        tl.PureSubstance(WATER, solids=(ICE, ICE)).coexistence_at_pressure(P0, ("solid2", "liquid"))
    with pytest.raises(tl.InvalidInputError, match="ambiguous"):
        tl.PureSubstance(WATER, solids=(ICE, ICE)).coexistence_at_pressure(P0, ("solid", "liquid"))
    with pytest.raises(tl.InvalidInputError, match="solid"):
        tl.PureSubstance(WATER).coexistence_at_pressure(P0, ("solid", "liquid"))
    with pytest.raises(tl.InvalidInputError):
        H2O.evaluate("gas", 300.0, P0)
    # A set must be consistent: the component in the model, the solids of its species.
    with pytest.raises(tl.InvalidInputError, match="cannot coexist"):
        tl.PureSubstance(tl.Model(["methane", "carbon dioxide"]), "methane", ICE)
    with pytest.raises(tl.UnknownComponentError):
        tl.PureSubstance(WATER, "ethanol")
    with pytest.raises(tl.InvalidInputError):
        tl.PureSubstance(WATER, 1)
    with pytest.raises(tl.InvalidInputError, match="model"):
        tl.PureSubstance("water")
    with pytest.raises(tl.InvalidInputError, match="Solid"):
        tl.PureSubstance(WATER, solids=["ice"])
    # Phases that do not coexist where asked.
    with pytest.raises(tl.NoSolutionError):
        H2O.coexistence_at_temperature(700.0)
    with pytest.raises((tl.NoSolutionError, tl.ConvergenceError, tl.OutsideValidityError)):
        H2O.coexistence_at_pressure(P0, ("solid", "vapor"))
