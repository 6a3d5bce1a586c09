"""The Python package gives the same numbers as the Rust core, bit for bit.

The reference file is written by python/tests/rust_reference.rs (cargo test) from the same
inputs; every float is compared exactly (JSON keeps the shortest round-trip form).
"""

from __future__ import annotations

import json

import numpy as np
import pytest

import tieline as tl

from conftest import VECTORS

CASES = json.loads(VECTORS.read_text())


def outcome(call):
    try:
        return call().to_dict()
    except tl.TielineError as e:
        kinds = {
            tl.UnknownComponentError: "UnknownComponent",
            tl.InvalidInputError: "InvalidInput",
            tl.OutsideValidityError: "OutsideValidity",
            tl.NoSolutionError: "NoSolution",
            tl.ConvergenceError: "NotConverged",
            tl.DataError: "Data",
        }
        return {"error": next(v for k, v in kinds.items() if isinstance(e, k))}


def without_kind(d):
    d = dict(d)
    d.pop("kind", None)
    return d


def test_shared_vectors_bit_for_bit(rust_reference):
    ref = rust_reference["cases"]
    checked = 0
    for c in CASES["flash"]:
        def run(c=c):
            m = tl.Model.from_description(c["model"])
            return tl.flash(m, c["temperature"], c["pressure"], c["feed"])
        assert outcome(run) == ref[f"flash/{c['id']}"], c["id"]
        checked += 1
    for c in CASES["stability"]:
        def run(c=c):
            m = tl.Model.from_description(c["model"])
            return tl.stability(m, c["temperature"], c["pressure"], c["feed"])
        assert outcome(run) == ref[f"stability/{c['id']}"], c["id"]
        checked += 1
    for c in CASES["volumes"]:
        for root in ("vapor", "liquid"):
            def run(c=c, root=root):
                m = tl.Model.from_description(c["model"])
                return tl.phase_properties(m, c["temperature"], c["pressure"], c["feed"], root)
            got = outcome(run)
            assert without_kind(got) == ref[f"volumes/{c['id']}/{root}"], c["id"]
            checked += 1
    for c in CASES["saturation"]:
        def run(c=c):
            m = tl.Model.from_description(c["model"])
            return tl.saturation_pressure(m, c["temperature"], c["component"])
        assert outcome(run) == ref[f"saturation/{c['id']}"], c["id"]
        checked += 1
    assert checked == len(ref)


def test_sweep_bit_for_bit(rust_reference):
    b = rust_reference["binary"]
    m = tl.Model.from_description(b["model"])
    sw = b["sweep"]
    t = np.array(sw["temperature"])
    p = np.array(sw["pressure"])
    # A fixed block, and the default layout of the Rust flash_batch (block=None).
    for block, results, threads in [
        (sw["block"], sw["results"], 1),
        (sw["block"], sw["results"], 2),
        (None, sw["default_block_results"], 2),
    ]:
        res = tl.flash(m, t, p, b["feed"], block=block, threads=threads)
        for i, want in enumerate(results):
            n = len(want["phases"])
            assert res.num_phases[i] == n
            assert res.vapor_fraction[i] == sum(ph["fraction"] for ph in want["phases"] if ph["kind"] == "vapor")
            for k, ph in enumerate(want["phases"]):
                assert res.phase_kind[i, k] == ph["kind"]
                assert res.phase_fraction[i, k] == ph["fraction"]
                assert res.phase_amount[i, k] == ph["amount"]
                assert res.molar_volume[i, k] == ph["molar_volume"]
                assert res.z[i, k] == ph["z"]
                assert res.composition[i, k].tolist() == ph["composition"]
                assert res.ln_phi[i, k].tolist() == ph["ln_phi"]
            d = want["diagnostics"]
            assert res.residual[i] == d["residual"]
            assert res.certificate[i] == d["certificate"]
            assert res.gibbs[i] == d["gibbs"]
            assert res.ss_iterations[i] == d["ss_iterations"]
            assert res.newton_iterations[i] == d["newton_iterations"]
            assert bool(res.warm_start[i]) == d["warm_start"]


def test_curves_bit_for_bit(rust_reference):
    b = rust_reference["binary"]
    m = tl.Model.from_description(b["model"])
    cv = b["curves"]
    t = np.array(cv["temperature"])
    for name, fn in (("bubble_pressure", tl.bubble_pressure), ("dew_pressure", tl.dew_pressure)):
        curve = fn(m, t, b["feed"], on_error="flag")
        for i, want in enumerate(cv[name]):
            scalar = outcome(lambda: fn(m, float(t[i]), b["feed"]))
            assert scalar == want, (name, i)
            if "error" in want:
                assert not curve.ok[i]
            else:
                assert curve.ok[i]
                assert curve.pressure[i] == want["pressure"]
                assert curve.incipient[i].tolist() == want["incipient"]
                assert curve.k_values[i].tolist() == want["k_values"]
    sat = tl.saturation_pressure(m, t, 1, on_error="flag")
    for i, want in enumerate(cv["saturation_pressure_component1"]):
        if "error" in want:
            assert not sat.ok[i]
            continue
        for key in ("pressure", "liquid_density", "vapor_density", "enthalpy_of_vaporization", "residual"):
            assert getattr(sat, key)[i] == want[key], key
    tp = np.array(cv["saturation_temperature_pressure"])
    tsat = tl.saturation_temperature(m, tp, "n-butane", on_error="flag")
    for i, want in enumerate(cv["saturation_temperature_component1"]):
        assert outcome(lambda: tl.saturation_temperature(m, float(tp[i]), 1)) == want
        if "error" not in want:
            assert tsat.temperature[i] == want["temperature"]


def test_properties_bit_for_bit(rust_reference):
    b = rust_reference["binary"]
    m = tl.Model.from_description(b["model"])
    sw = b["sweep"]
    n = len(b["properties_stable"])
    t = np.array(sw["temperature"][:n])
    p = np.array(sw["pressure"][:n])
    table = tl.phase_properties(m, t, p, b["feed"], on_error="flag")
    for i, want in enumerate(b["properties_stable"]):
        got = outcome(lambda: tl.phase_properties(m, float(t[i]), float(p[i]), b["feed"]))
        assert without_kind(got) == want
        if "error" not in want:
            assert table.gibbs[i] == want["gibbs"]
            assert table.enthalpy[i] == want["enthalpy"]
            assert table.speed_of_sound[i] == want["speed_of_sound"]


def point_dict(p):
    return {k: getattr(p, k) for k in ("temperature", "pressure", "gibbs", "enthalpy", "entropy", "molar_volume")}


def coexistence_dict(c):
    return {
        "temperature": c.temperature,
        "pressure": c.pressure,
        "a": point_dict(c.states[0]),
        "b": point_dict(c.states[1]),
        "delta_h": c.delta_h,
        "delta_s": c.delta_s,
        "delta_v": c.delta_v,
        "clapeyron_slope": c.clapeyron_slope,
        "iterations": c.iterations,
    }


def curves_dict(g):
    return {
        "grid": g.grid.tolist(),
        "gibbs": [[None if np.isnan(x) else x for x in row] for row in g.gibbs.tolist()],
        "crossings": [
            {"point": coexistence_dict(c.point), "gibbs": c.gibbs, "stable": c.stable} for c in g.crossings
        ],
    }


def test_water_bit_for_bit(rust_reference):
    # Every case of the "water" section through the Python API, as the Rust calls.
    water = tl.Model.water()
    ice = tl.Solid.ice_ih()
    ps = tl.PureSubstance(water, solids=[ice])
    ref = rust_reference["water"]
    assert [r["id"] for r in ref] == [c["id"] for c in CASES["water"]]
    for c, r in zip(CASES["water"], ref):
        want = r["result"]
        kind = c["kind"]
        if kind == "state_td":
            assert tl.water_properties(c["temperature"], density=c["density"]).to_dict() == want["state"], c["id"]
        elif kind == "saturation_t":
            assert tl.water_saturation(temperature=c["temperature"]).to_dict() == want["saturation"], c["id"]
            got = ps.coexistence_at_temperature(c["temperature"], ("liquid", "vapor"))
            assert coexistence_dict(got) == want["coexistence"], c["id"]
        elif kind == "ice_tp":
            assert ice.specific_properties(c["temperature"], c["pressure"]).to_dict() == want["specific"], c["id"]
            molar = ice.properties(c["temperature"], c["pressure"]).to_dict()
            assert molar.pop("species") == "water"
            assert molar == want["molar"], c["id"]
        elif kind == "melting_p":
            p = c["pressure"]
            assert coexistence_dict(ps.coexistence_at_pressure(p, ("solid", "liquid"))) == want["melting"], c["id"]
            for key, t in (("stable_263", 263.15), ("stable_283", 283.15)):
                assert point_dict(ps.stable_phase(t, p).stable) == want[key], key
            g = ps.gibbs_curves_isobaric(p, want["curves_temperatures"])
            assert curves_dict(g) == want["curves"], c["id"]
        elif kind == "triple_point":
            tp = ps.triple_point()
            got = {
                "temperature": tp.temperature,
                "pressure": tp.pressure,
                "residual": tp.residual,
                "iterations": tp.iterations,
                "phases": [point_dict(p) for p in tp.phases],
            }
            assert got == want, c["id"]
        else:
            pytest.fail(f"unknown kind {kind}")


def test_water_traces_and_isothermal_curves_bit_for_bit(rust_reference):
    x = rust_reference["water_extra"]
    ps = tl.PureSubstance(tl.Model.water(), solids=[tl.Solid.ice_ih()])
    melt = ps.coexistence_at_pressure(np.array(x["melting_pressures"]), ("solid", "liquid"))
    boil = ps.coexistence_at_temperature(np.array(x["boiling_temperatures"]))
    for curve, want in ((melt, x["melting_trace"]), (boil, x["boiling_trace"])):
        assert len(curve) == len(want)
        for i, w in enumerate(want):
            assert curve.temperature[i] == w["temperature"] and curve.pressure[i] == w["pressure"]
            assert curve.gibbs[i] == w["a"]["gibbs"]
            assert curve.delta_h[i] == w["delta_h"] and curve.delta_s[i] == w["delta_s"]
            assert curve.delta_v[i] == w["delta_v"] and curve.clapeyron_slope[i] == w["clapeyron_slope"]
            assert curve.molar_volume[i].tolist() == [w["a"]["molar_volume"], w["b"]["molar_volume"]]
            assert curve.enthalpy[i].tolist() == [w["a"]["enthalpy"], w["b"]["enthalpy"]]
            assert curve.iterations[i] == w["iterations"]
    g = ps.gibbs_curves_isothermal(x["isothermal_temperature"], x["isothermal_pressures"])
    assert curves_dict(g) == x["isothermal"]
    assert any(c.stable for c in g.crossings), "the sublimation crossing is on the grid"


def test_solid_flashes_bit_for_bit(rust_reference):
    sf = rust_reference["solid_flash"]
    dry = sf["dry_ice"]
    m = tl.Model(dry["components"])
    solid = tl.Solid.carbon_dioxide(m, 1)
    r = tl.flash_with_solids(m, dry["temperature"], dry["pressure"], dry["feed"], [solid])
    assert r.to_dict() == dry["result"]
    assert tl.frost_point_temperature(m, dry["pressure"], dry["feed"], solid) == dry["frost_point"]
    humid = sf["ice_humid"]
    m = tl.Model(humid["components"])
    ice = tl.Solid.ice_ih()
    r = tl.flash_with_solids(m, humid["temperature"], humid["pressure"], humid["feed"], ice)
    assert r.to_dict() == humid["result"]
    assert tl.frost_point_temperature(m, humid["pressure"], humid["feed"], ice) == humid["frost_point"]
    pure = sf["ice_water"]
    r = tl.flash_with_solids(tl.Model.water(), pure["temperature"], pure["pressure"], pure["feed"], [ice])
    assert r.to_dict() == pure["result"]
    assert r.fluid is None and r.solids[0].fraction == 1.0


def _sweep_point_equals_record(s, i, want, what):
    """Point ``i`` of a Sweep holds the record ``want`` (the record's JSON from the Rust
    engine) bit for bit, padding included."""
    for key, v in want.items():
        if key in ("kind", "units"):
            continue
        col = s[key][i]
        where = f"{what}, point {i}, {key}"
        if v is None:
            assert (isinstance(col, str) and col == "") or np.isnan(col), where
        elif isinstance(v, bool):
            assert bool(col) is v, where
        elif isinstance(v, (int, float, str)):
            assert col == v, where
        elif v and isinstance(v[0], list):
            rows, cols = len(v), len(v[0])
            assert col[:rows, :cols].tolist() == v, where
            assert np.isnan(col[rows:]).all() and np.isnan(col[:, cols:]).all(), where
        elif v and isinstance(v[0], str):
            assert list(col[: len(v)]) == v and all(x == "" for x in col[len(v):]), where
        else:
            assert col[: len(v)].tolist() == v and np.isnan(col[len(v):]).all(), where


def test_calculation_sweeps_equal_the_rust_driver_bit_for_bit(rust_reference):
    """tl.calculate over sweeps (a PT flash along T at three pressures, a PH flash along the
    enthalpy with a far jump) equals the core's run_points in the same layout: the default
    one (block=None, warm starts between near neighbours only) on 1 and 2 threads, and an
    explicit block=8 — every field of every point, the warm-start flags included."""
    b = rust_reference["binary"]
    m = tl.Model.from_description(b["model"])
    sweeps = b["calc_sweeps"]
    pt = sweeps["flash_pt"]
    t, p = (np.array(a) for a in pt["args"])
    runs = [
        ("flash_pt", (t, p), {}, 1, pt["results"]),
        ("flash_pt", (t, p), {}, 2, pt["results"]),
        ("flash_pt", (t, p), {"block": 8}, 2, pt["block8_results"]),
        ("flash_ph", tuple(np.array(a) for a in sweeps["flash_ph"]["args"]), {}, 2, sweeps["flash_ph"]["results"]),
    ]
    for name, args, kw, threads, want in runs:
        s = tl.calculate(name, m, *args, feed=b["feed"], threads=threads, **kw)
        assert s.shape == (len(want),) and s.ok.all()
        for i, w in enumerate(want):
            _sweep_point_equals_record(s, i, w, f"{name} {kw} on {threads} threads")
    # The default layout and blocks of 8 start different points cold.
    assert [r["warm_start"] for r in pt["results"]] != [r["warm_start"] for r in pt["block8_results"]]
