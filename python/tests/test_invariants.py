"""Property tests (hypothesis): every converged flash conserves mass, has equal fugacities
in its phases, a stability certificate ≥ −1e-10 and a Gibbs energy no higher than the
single-phase feed's. Thermodynamic identities, not a published source."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

import tieline as tl

GAS = tl.Model(
    ["nitrogen", "methane", "ethane", "n-butane"],
    kind="peng_robinson",
    kij={("nitrogen", "methane"): 0.03, ("nitrogen", "ethane"): 0.04, ("methane", "n-butane"): 0.02},
)
SRK = tl.Model(["methane", "hydrogen sulfide"], kind="soave_redlich_kwong", kij={(0, 1): 0.08})

temperature = st.floats(150.0, 450.0)
pressure = st.floats(1.0e5, 1.5e7)
amounts4 = st.lists(st.floats(0.01, 10.0), min_size=4, max_size=4)
amounts2 = st.lists(st.floats(0.01, 10.0), min_size=2, max_size=2)

SETTINGS = settings(max_examples=80, deadline=None, derandomize=True, database=None)


def check(model, t, p, n):
    r = tl.flash(model, t, p, n)
    n = np.asarray(n)
    total = sum(ph.amount * ph.composition for ph in r.phases)
    np.testing.assert_allclose(total, n, rtol=1e-9, atol=1e-12 * n.sum())
    assert sum(ph.fraction for ph in r.phases) == np.float64(1.0) or abs(sum(ph.fraction for ph in r.phases) - 1) < 1e-12
    if r.num_phases == 2:
        a, b = r.phases
        ln_fa = np.log(a.composition) + a.ln_phi
        ln_fb = np.log(b.composition) + b.ln_phi
        np.testing.assert_allclose(ln_fa, ln_fb, atol=1e-8, rtol=0)
    cert = r.diagnostics.certificate
    assert cert is not None and cert >= -1e-10, cert
    # Least Gibbs energy: no worse than the feed as one phase on its stable root.
    z = n / n.sum()
    single = tl.PhaseState(model, t, p, list(n), root="stable")
    g1 = float(np.sum(z * (np.log(z) + single.ln_phi)))
    assert r.diagnostics.gibbs <= g1 + 1e-10
    return r


@SETTINGS
@given(temperature, pressure, amounts4)
def test_flash_invariants_natural_gas(t, p, n):
    check(GAS, t, p, n)


@SETTINGS
@given(st.floats(190.0, 300.0), st.floats(1.0e6, 8.0e6), amounts2)
def test_flash_invariants_liquid_liquid(t, p, n):
    check(SRK, t, p, n)


@settings(max_examples=20, deadline=None, derandomize=True, database=None)
@given(st.lists(temperature, min_size=1, max_size=40), pressure, amounts4)
def test_sweep_equals_cold_scalar_within_tolerance(ts, p, n):
    s = tl.flash(GAS, np.array(ts), p, n)
    for i, t in enumerate(ts):
        r = tl.flash(GAS, t, p, n)
        assert s.num_phases[i] == r.num_phases
        assert abs(s.vapor_fraction[i] - r.vapor_fraction) < 1e-8
        assert abs(s.gibbs[i] - r.diagnostics.gibbs) < 1e-10


@settings(max_examples=40, deadline=None, derandomize=True, database=None)
@given(st.floats(200.0, 420.0))
def test_saturation_equal_fugacity_and_clapeyron(t):
    m = tl.Model(["n-butane"])
    s = tl.saturation_pressure(m, t)
    liq = tl.PhaseState(m, t, s.pressure, [1.0], root="liquid").properties()
    vap = tl.PhaseState(m, t, s.pressure, [1.0], root="vapor").properties()
    assert abs(liq.ln_phi[0] - vap.ln_phi[0]) < 1e-9
    assert abs(liq.gibbs - vap.gibbs) < 1e-6 * abs(vap.enthalpy - liq.enthalpy)
    assert abs((vap.enthalpy - liq.enthalpy) - s.enthalpy_of_vaporization) < 1e-6 * s.enthalpy_of_vaporization
    # Clapeyron: dp/dT = Δh / (T Δv), by a central difference (relative step 1e-5).
    h = 1e-5 * t
    dpdt = (tl.saturation_pressure(m, t + h).pressure - tl.saturation_pressure(m, t - h).pressure) / (2 * h)
    clap = s.enthalpy_of_vaporization / (t * (s.vapor_molar_volume - s.liquid_molar_volume))
    assert abs(dpdt - clap) < 1e-5 * clap


WATER_SET = tl.PureSubstance(tl.Model.water(), solids=[tl.Solid.ice_ih()])
CO2_CH4 = tl.Model(["methane", "carbon dioxide"])
DRY_ICE = tl.Solid.carbon_dioxide(CO2_CH4)


@SETTINGS
@given(st.floats(200.0, 1000.0), st.floats(10.0, 2.0e8))
def test_stable_phase_of_water_is_the_least_gibbs_energy(t, p):
    # At any (T, p) in range, the stable phase has the least molar Gibbs energy of the phases
    # that exist there, each of which has g = h − Ts.
    s = WATER_SET.stable_phase(t, p)
    assert s.stable == s.candidates[0]
    for c in s.candidates:
        assert np.isfinite([c.gibbs, c.enthalpy, c.entropy, c.molar_volume]).all()
        assert c.gibbs >= s.stable.gibbs
        assert abs(c.gibbs - (c.enthalpy - t * c.entropy)) <= 1e-9 * abs(c.enthalpy)
        assert c.molar_volume > 0


@SETTINGS
@given(st.floats(150.0, 215.0), st.floats(1.0e5, 3.0e6), st.floats(1e-3, 0.2))
def test_flash_with_dry_ice_conserves_mass_and_certifies(t, p, x):
    # CO2 freeze-out from methane: the solid plus the fluid hold the feed; a present solid
    # fixes the fluid's CO2 fugacity, an absent one is no less stable than the fluid.
    z = np.array([1.0 - x, x])
    r = tl.flash_with_solids(CO2_CH4, t, p, z, DRY_ICE)
    fluid = np.zeros(2) if r.fluid is None else sum(ph.amount * ph.composition for ph in r.fluid.phases)
    solid = np.array([0.0, r.solid_amounts()[0]])
    np.testing.assert_allclose(fluid + solid, z, rtol=0, atol=1e-12)
    m = r.margins[0]
    assert m.margin >= -1e-9 if not m.present else abs(m.margin) <= 1e-9
    if r.fluid is not None:
        assert r.fluid.diagnostics.certificate >= -1e-10
