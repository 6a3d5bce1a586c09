"""Shapes, broadcasting, result views and the options of the Python API."""

from __future__ import annotations

import json

import numpy as np
import pytest

import tieline as tl


def test_scalar_flash_result(binary):
    r = tl.flash(binary, 300.0, 5.0e6, [0.5, 0.5])
    assert isinstance(r, tl.FlashResult)
    assert r.num_phases == 2
    assert r.phase("vapor") is r.phases[0] and r.phase("liquid") is r.phases[1]
    assert r.phases[0].molar_volume > r.phases[1].molar_volume
    assert 0.0 < r.vapor_fraction < 1.0
    assert isinstance(r.feed, np.ndarray) and r.feed.tolist() == [0.5, 0.5]
    d = r.to_dict()
    assert d["phases"][0]["kind"] == "vapor"
    assert json.loads(r.to_json())["temperature"] == 300.0
    df = r.to_dataframe()
    assert list(df["kind"]) == ["vapor", "liquid"]
    props = r.properties(binary)
    assert props[0].kind == "vapor" and props[1].kind == "liquid"
    # The phase properties agree with the flash on each phase's volume and fugacities.
    for ph, pr in zip(r.phases, props):
        assert pr.molar_volume == pytest.approx(ph.molar_volume, rel=1e-12)
        np.testing.assert_allclose(pr.fugacity, ph.fugacities(r.pressure), rtol=1e-10)


def test_amounts_scale_out(binary):
    a = tl.flash(binary, 300.0, 5.0e6, [0.5, 0.5])
    b = tl.flash(binary, 300.0, 5.0e6, [3.0, 3.0])
    assert b.phases[0].amount == pytest.approx(6.0 * a.phases[0].amount, rel=1e-9)
    np.testing.assert_allclose(b.phases[0].composition, a.phases[0].composition, rtol=1e-9)


def test_broadcasting_grid(binary):
    t = np.linspace(240.0, 380.0, 7)
    p = np.linspace(1.0e6, 8.0e6, 5)[:, None]
    s = tl.flash(binary, t, p, [0.6, 0.4])
    assert s.shape == (5, 7)
    assert s.composition.shape == (5, 7, 2, 2)
    assert s.phase_kind.shape == (5, 7, 2)
    assert s.feed.shape == (2,)
    assert s.temperature[3, 4] == t[4] and s.pressure[3, 4] == p[3, 0]
    # Each point equals the scalar flash up to the warm start's round-off.
    for j in (0, 3):
        for i in (1, 5):
            r = tl.flash(binary, t[i], float(p[j, 0]), [0.6, 0.4])
            assert s.num_phases[j, i] == r.num_phases
            assert s.vapor_fraction[j, i] == pytest.approx(r.vapor_fraction, abs=1e-9)
    two = s.num_phases == 2
    assert two.any() and (~two).any()
    vc = s.vapor_composition
    assert vc.shape == (5, 7, 2)
    assert np.isnan(vc[s.vapor_fraction == 0]).all()
    df = s.to_dataframe()
    assert len(df) == 35 and "x0_methane" in df.columns


def test_rows_per_point(binary):
    feeds = np.array([[0.9, 0.1], [0.5, 0.5], [0.1, 0.9]])
    s = tl.flash(binary, 300.0, 3.0e6, feeds)
    assert s.shape == (3,)
    assert s.feed.shape == (3, 2)
    for k in range(3):
        r = tl.flash(binary, 300.0, 3.0e6, feeds[k])
        assert s.num_phases[k] == r.num_phases
    # Rows broadcast against T: (4, 1) temperatures with 3 rows give (4, 3).
    s2 = tl.flash(binary, np.array([[260.0], [280.0], [300.0], [320.0]]), 3.0e6, feeds)
    assert s2.shape == (4, 3) and s2.feed.shape == (4, 3, 2)


def test_thread_count_does_not_change_results(gas):
    t = np.linspace(180.0, 320.0, 300)
    z = [0.05, 0.8, 0.1, 0.05]
    a = tl.flash(gas, t, 4.0e6, z, threads=1)
    b = tl.flash(gas, t, 4.0e6, z, threads=2)
    assert a == b
    tl.set_threads(1)
    try:
        assert tl.get_threads() == 1
        c = tl.flash(gas, t, 4.0e6, z)
    finally:
        tl.set_threads(0)
    assert c == a


def test_block_of_one_is_the_cold_scalar_flash(binary):
    t = np.linspace(250.0, 330.0, 9)
    s = tl.flash(binary, t, 4.0e6, [0.5, 0.5], block=1)
    assert not s.warm_start.any()
    for i in range(9):
        r = tl.flash(binary, float(t[i]), 4.0e6, [0.5, 0.5])
        assert s.vapor_fraction[i] == r.vapor_fraction
        assert s.gibbs[i] == r.diagnostics.gibbs


def test_warm_start_used_in_sweeps(binary):
    t = np.linspace(250.0, 300.0, 64)
    s = tl.flash(binary, t, 4.0e6, [0.5, 0.5], block=64)
    assert (s.num_phases == 2).all()
    assert s.warm_start[1:].all() and not s.warm_start[0]
    # The default layout is that of the Rust flash_batch: blocks of 16 points for 64 (1/64 of
    # the points, at least 16), each starting cold.
    d = tl.flash(binary, t, 4.0e6, [0.5, 0.5])
    starts = np.arange(64) % 16 == 0
    assert not d.warm_start[starts].any() and d.warm_start[~starts].all()


def test_no_warm_start_between_distant_points(binary):
    # Alternating 250 K and 300 K: neighbours 20 % apart in T start cold, whatever the block.
    t = np.tile([250.0, 300.0], 16)
    s = tl.flash(binary, t, 4.0e6, [0.5, 0.5], block=32)
    assert not s.warm_start.any()
    for i in (0, 1):
        r = tl.flash(binary, float(t[i]), 4.0e6, [0.5, 0.5])
        assert (s.gibbs[i::2] == r.diagnostics.gibbs).all()


def test_progress_callback(binary):
    calls = []
    t = np.linspace(250.0, 350.0, 2000)
    tl.flash(binary, t, 4.0e6, [0.5, 0.5], progress=lambda done, total: calls.append((done, total)))
    assert calls[-1] == (2000, 2000)
    assert all(total == 2000 and 0 <= done <= 2000 for done, total in calls)
    assert [d for d, _ in calls] == sorted(d for d, _ in calls)


def test_progress_exception_stops_the_sweep(binary):
    class Stop(Exception):
        pass

    def cb(done, total):
        raise Stop("stop here")

    t = np.linspace(250.0, 350.0, 200000)
    with pytest.raises(Stop):
        tl.flash(binary, t, 4.0e6, [0.5, 0.5], progress=cb, certificate=False)


def test_saturation_curve(binary):
    t = np.array([[200.0, 250.0], [300.0, 350.0]])
    c = tl.saturation_pressure(binary, t, "n-butane")
    assert isinstance(c, tl.SaturationCurve) and c.pressure.shape == (2, 2)
    assert c.component == "n-butane"
    assert np.all(np.diff(c.pressure.ravel()) > 0)
    assert np.all(c.liquid_density > c.vapor_density)
    one = tl.saturation_pressure(binary, 300.0, 1)
    assert c.pressure[1, 0] == one.pressure
    assert len(c.to_dataframe()) == 4


def test_saturation_flagged_above_critical(binary):
    c = tl.saturation_pressure(binary, [150.0, 180.0, 200.0], "methane", on_error="flag")
    assert c.ok.tolist() == [True, True, False]
    assert np.isnan(c.pressure[2]) and c.temperature[2] == 200.0
    (idx, err), = c.failures
    assert idx == (2,) and isinstance(err, tl.NoSolutionError) and err.index == 2
    with pytest.raises(tl.NoSolutionError) as info:
        tl.saturation_pressure(binary, [150.0, 200.0], "methane")
    assert info.value.index == 1 and "at point 1" in str(info.value)


def test_bubble_and_dew_curves(binary):
    t = np.linspace(220.0, 320.0, 6)
    z = [0.3, 0.7]
    bub = tl.bubble_pressure(binary, t, z)
    dew = tl.dew_pressure(binary, t, z)
    assert bub.ok.all() and dew.ok.all()
    assert np.all(bub.pressure > dew.pressure)
    # At the bubble point the incipient vapour is richer in methane than the feed.
    assert np.all(bub.incipient[:, 0] > 0.3)
    np.testing.assert_allclose(bub.incipient.sum(axis=1), 1.0, rtol=1e-12)
    # A flash just inside the envelope is two-phase, just outside it is one phase.
    for k in range(len(t)):
        assert tl.flash(binary, t[k], bub.pressure[k] * 0.98, z).num_phases == 2
        assert tl.flash(binary, t[k], bub.pressure[k] * 1.02, z).num_phases == 1
        assert tl.flash(binary, t[k], dew.pressure[k] * 1.02, z).num_phases == 2
        assert tl.flash(binary, t[k], dew.pressure[k] * 0.98, z).num_phases == 1
    bt = tl.bubble_temperature(binary, bub.pressure[2], z)
    assert bt.temperature == pytest.approx(t[2], rel=1e-8)
    dt = tl.dew_temperature(binary, dew.pressure[2], z)
    assert dt.temperature == pytest.approx(t[2], rel=1e-8)
    assert "incipient_methane" in bub.to_dataframe().columns


def test_phase_state_and_properties(binary):
    st = tl.PhaseState(binary, 250.0, 2.0e6, [1.0, 3.0], root="liquid")
    assert st.kind == "liquid"
    assert st.composition.tolist() == [0.25, 0.75]
    assert st.volume == pytest.approx(4.0 * st.molar_volume)
    pr = st.properties()
    assert pr.molar_density == pytest.approx(1.0 / pr.molar_volume)
    assert pr.gibbs == pytest.approx(pr.enthalpy - 250.0 * pr.entropy, rel=1e-12)
    assert pr.helmholtz == pytest.approx(pr.internal_energy - 250.0 * pr.entropy, rel=1e-12)
    assert pr.cp > pr.cv > 0 and pr.speed_of_sound > 0
    assert st.model == binary
    tab = tl.phase_properties(binary, np.linspace(200.0, 300.0, 4), 2.0e6, [1.0, 3.0], "liquid")
    assert tab.kind.tolist() == ["liquid"] * 4 and tab.gibbs.shape == (4,)
    assert len(tab.to_dataframe()) == 4


def test_model_construction(binary):
    assert binary.components == ["methane", "n-butane"]
    assert binary.num_components == 2 and binary.kind == "peng_robinson"
    k = binary.kij()
    assert k[0, 1] == k[1, 0] == 0.02 and k[0, 0] == 0.0
    same = tl.Model(["CH4", "n-butane"], kij=[[0.0, 0.02], [0.02, 0.0]])
    assert same == binary
    by_dict = tl.Model.from_description(
        {"model": "cubic", "kind": "peng_robinson", "components": ["methane", "n-butane"], "kij": [[0, 1, 0.02]]}
    )
    assert by_dict == binary
    assert tl.Model.from_description(binary.to_json()) == binary
    assert binary.to_dict()["model"] == "cubic"
    pinned = tl.Model([{"name": "methane", "tc": 190.6, "pc": 4.6e6, "acentric": 0.008}], kind="srk")
    assert pinned.critical_temperatures.tolist() == [190.6]
    assert pinned.kind == "soave_redlich_kwong"
    t_dep = tl.Model(["methane", "ethane"], kij={("methane", "ethane"): (0.01, 1e-4)})
    assert t_dep.kij(300.0)[0, 1] == pytest.approx(0.04)
    shifted = tl.Model(["methane", "ethane"], volume_shift="peneloux")
    plain = tl.Model(["methane", "ethane"])
    a = tl.PhaseState(shifted, 150.0, 1e6, [1, 1], "liquid").molar_volume
    b = tl.PhaseState(plain, 150.0, 1e6, [1, 1], "liquid").molar_volume
    assert a != b
    assert binary.molar_masses[0] == pytest.approx(16.043e-3)
    assert binary.index("C1") == 0


USER_FILE = """
[references.mine]
citation = "Invented constants for a test of user component files"

[[component]]
name = "testane"
aliases = ["TST"]
formula = "C5H12"
cas = "0000-00-0"
molar_mass = 72.15e-3
tc = 470.0
pc = 33.7e5
acentric = 0.25
vc = 311e-6
hf298 = -146.8e3
gf298 = -8.2e3
elements = { C = 5, H = 12 }
cp = { form = "poly4", coefficients = [7.554, -0.368e-3, 11.846e-5, -14.939e-8, 5.753e-11], t_min = 200.0, t_max = 1000.0 }
sources = { molar_mass = "mine", tc = "mine", pc = "mine", acentric = "mine", vc = "mine", hf298 = "mine", gf298 = "mine", cp = "mine" }
"""


def test_user_component_file(tmp_path):
    path = tmp_path / "mine.toml"
    path.write_text(USER_FILE)
    only = tl.ComponentBank.from_file(path)
    assert only.names == ["testane"] and len(only) == 1 and "TST" in only
    both = tl.ComponentBank.from_toml(USER_FILE, include_embedded=True)
    assert "methane" in both and "testane" in both
    m = tl.Model(["methane", "testane"], bank=both)
    assert m.critical_temperatures[1] == 470.0
    assert tl.flash(m, 350.0, 2e6, [0.5, 0.5]).num_phases == 2
    assert only.component("TST")["tc"] == 470.0
    with pytest.raises(tl.UnknownComponentError):
        tl.Model(["methane"], bank=only)


def test_negative_flash_tie_line(binary):
    # Just below the dew pressure the feed is a vapour; the extended tie line has beta > 1.
    dew = tl.dew_pressure(binary, 300.0, [0.5, 0.5])
    r = tl.flash(binary, 300.0, 0.95 * dew.pressure, [0.5, 0.5], negative_flash=True)
    assert r.num_phases == 1 and r.phases[0].kind == "vapor"
    assert r.tie_line is not None and r.tie_line.beta > 1.0
    # Mass balance along the extended tie line: z = beta y + (1 - beta) x.
    tlx = r.tie_line
    np.testing.assert_allclose(tlx.beta * tlx.y + (1 - tlx.beta) * tlx.x, [0.5, 0.5], atol=1e-9)
    assert tl.flash(binary, 300.0, 0.95 * dew.pressure, [0.5, 0.5]).tie_line is None


def test_certificate_switch(binary):
    r = tl.flash(binary, 300.0, 5.0e6, [0.5, 0.5], certificate=False)
    assert r.diagnostics.certificate is None
    s = tl.flash(binary, [300.0, 310.0], 5.0e6, [0.5, 0.5], certificate=False)
    assert np.isnan(s.certificate).all()


def test_stability(binary):
    r = tl.stability(binary, 300.0, 5.0e6, [0.5, 0.5])
    assert not r.stable and r.min_tpd < 0
    assert r.points[0].tpd == r.min_tpd
    assert r.points[0].composition.sum() == pytest.approx(1.0)
    assert tl.stability(binary, 300.0, 5.0e5, [0.9, 0.1]).stable
