"""Calculations by name: records, sweeps, options and their errors, pickling."""

from __future__ import annotations

import json
import pickle

import numpy as np
import pytest

import tieline as tl


@pytest.fixture(scope="module")
def gas() -> tl.Model:
    return tl.Model(["methane", "propane"], kind="peng_robinson")


def test_the_catalogue_describes_arguments_and_options():
    names = tl.calculations()
    assert "flash_pt" in names
    d = tl.describe("flash_pt")
    assert [a[0] for a in d["arguments"]] == ["temperature", "pressure"]
    assert [a[1] for a in d["arguments"]] == ["K", "Pa"]
    assert d["options"]["tolerance"] == 1e-10
    with pytest.raises(tl.InvalidInputError, match="flash_pt"):
        tl.describe("flash_tp")


def test_a_record_matches_the_typed_flash(gas):
    r = tl.calculate("flash_pt", gas, 250.0, 2.0e6, feed=[0.6, 0.4])
    f = tl.flash(gas, 250.0, 2.0e6, [0.6, 0.4])
    assert isinstance(r, tl.Record) and r.kind == "flash_pt"
    assert r.vapor_fraction == f.vapor_fraction
    assert r.num_phases == 2 and isinstance(r.num_phases, int)
    np.testing.assert_array_equal(r.compositions[1], f.phase("liquid").composition)
    assert r.phase_kinds == ["vapor", "liquid"]
    assert r.units["enthalpy"] == "J/mol" and r["pressure"] == 2.0e6
    assert "certificate" in r and r.certificate <= 1e-9
    assert json.loads(r.to_json())["units"]["temperature"] == "K"
    assert set(r.to_dict()) == set(r.fields)
    with pytest.raises(AttributeError, match="enthalpy"):
        r.enthalpie
    assert pickle.loads(pickle.dumps(r)) == r


def test_a_sweep_broadcasts_and_equals_the_points(gas):
    t = np.array([240.0, 250.0, 260.0])[:, None]
    p = np.array([1.0e6, 2.0e6])
    s = tl.calculate("flash_pt", gas, t, p, feed=[0.6, 0.4], block=2)
    assert isinstance(s, tl.Sweep) and s.shape == (3, 2)
    assert s.temperature.shape == (3, 2) and s.compositions.shape[:2] == (3, 2)
    assert s.units["pressure"] == "Pa" and s.ok.all() and not s.failures
    for i in range(3):
        for j in range(2):
            r = tl.calculate("flash_pt", gas, float(t[i, 0]), float(p[j]), feed=[0.6, 0.4])
            assert s.vapor_fraction[i, j] == pytest.approx(r.vapor_fraction, rel=1e-9)
            k = r.num_phases
            np.testing.assert_allclose(s.compositions[i, j, :k], r.compositions, rtol=1e-8)
    assert pickle.loads(pickle.dumps(s)).vapor_fraction.tolist() == s.vapor_fraction.tolist()


def test_options_and_arguments_are_checked(gas):
    r = tl.calculate("flash_pt", gas, 250.0, 2.0e6, feed=[0.6, 0.4], tolerance=1e-12, certificate=False)
    assert r.certificate is None
    with pytest.raises(tl.InvalidInputError, match="tolerence"):
        tl.calculate("flash_pt", gas, 250.0, 2.0e6, feed=[0.6, 0.4], tolerence=1e-12)
    with pytest.raises(tl.InvalidInputError, match="finite numbers"):
        tl.calculate("flash_pt", gas, 250.0, 2.0e6, feed=[0.6, 0.4], tolerance=float("nan"))
    with pytest.raises(tl.InvalidInputError, match="max_phases"):
        tl.calculate("flash_pt", gas, 250.0, 2.0e6, feed=[0.6, 0.4], max_phases=7)
    with pytest.raises(tl.InvalidInputError, match="temperature"):
        tl.calculate("flash_pt", gas, 250.0, feed=[0.6, 0.4])
    with pytest.raises(tl.InvalidInputError, match="feed"):
        tl.calculate("flash_pt", gas, 250.0, 2.0e6, feed=[0.6, 0.4, 0.1])


def test_failed_points_are_flagged_or_raised(gas):
    t = np.array([250.0, np.nan, 260.0])
    s = tl.calculate("flash_pt", gas, t, 2.0e6, feed=[0.6, 0.4], on_error="flag")
    assert s.ok.tolist() == [True, False, True]
    assert np.isnan(s.vapor_fraction[1]) and s.num_phases[1] == 0
    (idx, err), = s.failures
    assert idx == (1,) and isinstance(err, tl.InvalidInputError)
    with pytest.raises(tl.InvalidInputError, match="at point 1"):
        tl.calculate("flash_pt", gas, t, 2.0e6, feed=[0.6, 0.4])


_ERRORS = {
    "InvalidInput": tl.InvalidInputError,
    "UnknownComponent": tl.UnknownComponentError,
    "OutsideValidity": tl.OutsideValidityError,
    "NoSolution": tl.NoSolutionError,
    "NotConverged": tl.ConvergenceError,
    "Data": tl.DataError,
}


def test_shared_vectors_match_the_rust_engine_bit_for_bit(rust_reference):
    """tests/vectors/calculations.json through Python: each record equals the Rust engine's
    record for the same case (floats compared exactly), each refusal has the same kind."""
    from conftest import ROOT

    cases = json.loads((ROOT / "tests" / "vectors" / "calculations.json").read_text())["cases"]
    ref = rust_reference["calculations"]
    assert len(cases) == len(ref) > 0
    for c in cases:
        want = ref[c["id"]]
        model = tl.Model.from_json(json.dumps(c["model"]))
        try:
            r = tl.calculate(c["calculation"], model, *c.get("args", []), feed=c["feed"], **(c.get("options") or {}))
        except tl.TielineError as e:
            assert "error" in want, f"{c['id']}: {e}"
            assert isinstance(e, _ERRORS[want["error"]]), f"{c['id']}: {type(e).__name__} for {want['error']}"
            continue
        assert "error" not in want, f"{c['id']}: the engine refuses this case"
        assert json.loads(r.to_json()) == want, c["id"]


def test_flash_sensitivities_by_name(gas):
    r = tl.flash_sensitivities(gas, 250.0, 2.0e6, [0.6, 0.4])
    assert r.cp_equilibrium > r.cp_frozen
    assert abs(r.d_phase_amounts_dt.sum()) < 1e-12
    assert r.d_phase_amounts_dn.shape == (2, 2) and r.units["d_enthalpy_dt"] == "J/K"
    s = tl.flash_sensitivities(gas, [245.0, 250.0], 2.0e6, [0.6, 0.4])
    assert s.cp_equilibrium[1] == pytest.approx(r.cp_equilibrium, rel=1e-9)
    with pytest.raises(tl.InvalidInputError):
        tl.flash_sensitivities(gas, 250.0, 2.0e6, [0.6, 0.4], tolerance=0.0)


def test_envelope_and_critical_point_by_name(gas):
    c = tl.critical_point(gas, [0.6, 0.4])
    env = tl.phase_envelope(gas, [0.6, 0.4], quality_lines=[0.5])
    assert env.critical_temperature[0] == pytest.approx(c.temperature, rel=1e-6)
    assert env.cricondenbar_pressure >= env.pressure.max() * (1 - 1e-12)
    assert set(np.unique(env.quality_line_fraction)) == {0.5}
    assert env.incipient.shape == (len(env.temperature), 2)
    rows = tl.phase_envelope(gas, [[0.6, 0.4], [0.7, 0.3]])
    assert rows.shape == (2,) and rows.temperature.shape[0] == 2
    n0 = int(np.isfinite(rows.temperature[0]).sum())
    np.testing.assert_allclose(rows.temperature[0, :n0], env.temperature, rtol=1e-12)
    with pytest.raises(tl.NoSolutionError, match="saturation"):
        tl.phase_envelope(gas, [1.0, 0.0])
    with pytest.raises(tl.InvalidInputError, match="quality"):
        tl.phase_envelope(gas, [0.6, 0.4], quality_lines=[1.5])


def test_state_flashes_by_name():
    """PH flash of water across its dome at 1 atm (IAPWS R6-95(2018); the normal boiling point
    of IAPWS-95, 373.124 K, from memory), and round trips of a two-phase mixture."""
    water = tl.Model.water()
    r = tl.flash_ph(water, 101325.0, -255000.0, [1.0])
    assert r.temperature == pytest.approx(373.124, abs=1e-3) and r.num_phases == 2
    assert r.d_temperature_d_enthalpy is None and "derivatives_error" in r
    h = np.linspace(-280000.0, -240000.0, 9)
    s = tl.flash_ph(water, 101325.0, h, [1.0])
    np.testing.assert_allclose(s.enthalpy, h, rtol=1e-9)
    assert (np.diff(s.temperature) >= 0).all()
    with pytest.raises(tl.OutsideValidityError, match="1273.15"):
        tl.flash_ph(water, 101325.0, 1.0e6, [1.0])
    gas = tl.Model(["methane", "propane"])
    pt = tl.calculate("flash_pt", gas, 250.0, 2.0e6, feed=[0.6, 0.4], tolerance=1e-12)
    for r in (
        tl.flash_ph(gas, 2.0e6, pt.enthalpy, [0.6, 0.4]),
        tl.flash_ps(gas, 2.0e6, pt.entropy, [0.6, 0.4]),
        tl.flash_tv(gas, 250.0, pt.molar_volume, [0.6, 0.4]),
        tl.flash_uv(gas, pt.internal_energy, pt.molar_volume, [0.6, 0.4]),
    ):
        assert r.temperature == pytest.approx(250.0, rel=1e-9)
        assert r.pressure == pytest.approx(2.0e6, rel=1e-8)
    r = tl.flash_ph(gas, 2.0e6, pt.enthalpy, [0.6, 0.4])
    assert r.d_temperature_d_enthalpy == pytest.approx(1.0 / tl.flash_sensitivities(gas, 250.0, 2.0e6, [0.6, 0.4]).cp_equilibrium, rel=1e-6)


def test_reaction_equilibrium_by_name():
    """Water-gas shift at 1000 K against K from NIST-JANAF 4th ed. (Chase 1998) formation Gibbs
    energies, from memory (K = 1.438); a stoichiometric methane-air flame against Turns, An
    Introduction to Combustion, 2nd ed., Table B.1 (2226 K, from memory), within 5 K."""
    wgs = tl.Model(["carbon monoxide", "water", "carbon dioxide", "hydrogen"])
    r = tl.reaction_tp(wgs, 1000.0, 1.0e5, [1.0, 1.0, 0.0, 0.0])
    n = r.amounts
    assert n[2] * n[3] / (n[0] * n[1]) == pytest.approx(1.438, rel=2e-3)
    assert r.elements == ["C", "H", "O"] and r.certificate is None or r.certificate >= -1e-9
    t = np.linspace(600.0, 1400.0, 9)
    s = tl.reaction_tp(wgs, t, 1.0e5, [1.0, 1.0, 0.0, 0.0])
    assert s.amounts.shape == (9, 4) and (np.diff(s.amounts[:, 2]) < 0).all()  # exothermic: less CO2 hot
    assert pickle.loads(pickle.dumps(r)) == r
    air = tl.Model(["methane", "oxygen", "nitrogen", "water", "carbon dioxide", "carbon monoxide", "hydrogen"])
    extra = ["OH", "H", "O", "NO"]
    f = tl.reaction_hp(air, 101325.0, -74873.0, [1.0, 2.0, 7.52, 0, 0, 0, 0, 0, 0, 0, 0], extra_species=extra)
    assert f.temperature == pytest.approx(2226.0, abs=5.0)
    with pytest.raises(tl.InvalidInputError, match="extra_species"):
        tl.reaction_hp(air, 101325.0, -74873.0, [1.0, 2.0, 7.52, 0, 0, 0, 0], extra_species=extra)
    with pytest.raises(tl.UnknownComponentError):
        tl.reaction_tp(wgs, 1000.0, 1.0e5, [1.0, 1.0, 0.0, 0.0, 0.0], extra_species=["unobtainium"])


def test_constant_volume_explosion_by_name():
    """Stoichiometric methane-air from 298.15 K, 1 atm in a closed rigid vessel: about 2590 K
    (from memory, tolerance 40 K); p_final/p_initial = (T_f/T_i)(n_products/n_reactants) exactly
    for an ideal gas."""
    air = tl.Model(["methane", "oxygen", "nitrogen", "water", "carbon dioxide", "carbon monoxide", "hydrogen"])
    feed = [1.0, 2.0, 7.52, 0, 0, 0, 0, 0, 0, 0, 0]
    n, r_gas, t0, p0 = 10.52, 8.314462618, 298.15, 101325.0
    v = n * r_gas * t0 / p0
    e = tl.reaction_uv(air, -74873.0 - n * r_gas * t0, v, feed, extra_species=["OH", "H", "O", "NO"])
    assert e.temperature == pytest.approx(2590.0, abs=40.0)
    assert e.pressure / p0 == pytest.approx(e.temperature / t0 * e.gas_amount / n, rel=1e-9)
    t = tl.reaction_tv(air, e.temperature, v, feed, extra_species=["OH", "H", "O", "NO"])
    assert t.pressure == pytest.approx(e.pressure, rel=1e-9)
    with pytest.raises(tl.InvalidInputError):
        tl.reaction_tv(air, 2000.0, -1.0, feed, extra_species=["OH", "H", "O", "NO"])


def test_reactive_split_by_name():
    """H2 + O2 (2:1) with N2 at 298.15 K, 1 bar (Peng-Robinson): water forms and condenses; the
    vapour's water fugacity equals the liquid's (equal potentials are checked in the core's
    tests); at 400 K the same feed stays one phase."""
    m = tl.Model(["hydrogen", "oxygen", "nitrogen", "water"])
    r = tl.reaction_tp_fluid_phases(m, 298.15, 1e5, [2.0, 1.0, 4.0, 0.0])
    assert r.num_phases == 2 and r.phase_kinds == ["vapor", "liquid"]
    assert r.compositions[1, 3] > 0.999 and r.one_phase_min_tpd < 0 and r.certificate > -1e-9
    assert r.amounts[3] == pytest.approx(2.0, rel=1e-9)
    hot = tl.reaction_tp_fluid_phases(m, 400.0, 1e5, [2.0, 1.0, 4.0, 0.0])
    assert hot.num_phases == 1 and hot.stable


def test_the_package_version_is_the_crates():
    """The wheel's version, the compiled module's and the workspace Cargo.toml's agree."""
    import importlib.metadata
    import re

    from conftest import ROOT

    cargo = (ROOT / "Cargo.toml").read_text()
    version = re.search(r'^version = "([0-9.]+)"', cargo, re.M).group(1)
    assert tl.__version__ == version
    assert importlib.metadata.version("tieline") == version
