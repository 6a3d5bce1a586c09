"""Property-based tests (hypothesis) of the public Python API over wild inputs.

The property on every input: the call either returns finite numbers (no NaN or inf read
back as a value, except the documented markers of absent values listed in ``ABSENT``) or
raises an exception of the package's hierarchy (``tl.TielineError``) with a non-empty
message; never another exception, never a crash.

The number of examples per test is ``TIELINE_FUZZ_EXAMPLES`` (default 60, a few seconds per
test); a long run sets it high, e.g. ``TIELINE_FUZZ_EXAMPLES=1000000`` (python/README.md).
The source of every expectation is the library's own specification of bad input (README
"Errors"; no external source).
"""

from __future__ import annotations

import dataclasses
import json
import math
import os

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import tieline as tl

EXAMPLES = int(os.environ.get("TIELINE_FUZZ_EXAMPLES", "60"))
FUZZ = settings(
    max_examples=EXAMPLES,
    deadline=None,
    database=None,
    derandomize=EXAMPLES <= 1000,
    suppress_health_check=list(HealthCheck),
)

MODELS = {
    "binary": tl.Model(["methane", "propane"], kind="peng_robinson"),
    "gas": tl.Model(["nitrogen", "methane", "carbon dioxide", "n-butane"], kind="soave_redlich_kwong"),
    "wet": tl.Model(["water", "carbon dioxide", "methane"], kind="peng_robinson", kij={(0, 1): 0.2, (0, 2): 0.5}),
    "pure": tl.Model(["methane"], kind="peng_robinson"),
    "water": tl.Model.water(),
}

# Fields that hold NaN by documented convention when the value is absent (the certificate
# when it is switched off, per-phase slots of phases that are not there, failed points of a
# sweep with on_error="flag"). Only these may be non-finite in a successful result.
ABSENT = {"certificate"}

wild = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([0.0, -0.0, 5e-324, 2.2250738585072014e-308, 1e308, -1.0, float("nan"), float("inf"), -float("inf")]),
)
temperature = st.one_of(st.floats(100.0, 800.0), st.floats(1e-3, 1e5), wild)
pressure = st.one_of(st.floats(1e3, 5e7), st.floats(1e-6, 1e12), wild)
amount = st.one_of(st.floats(0.0, 1.0), st.just(0.0), st.just(5e-324), wild)


def feed_for(nc: int):
    """Feeds: nc amounts mostly, sometimes a wrong length."""
    return st.one_of(
        st.lists(st.floats(0.0, 1.0), min_size=nc, max_size=nc),
        st.lists(amount, min_size=nc, max_size=nc),
        st.lists(amount, min_size=0, max_size=nc + 2),
    )


model_and_feed = st.sampled_from(sorted(MODELS)).flatmap(
    lambda k: st.tuples(st.just(MODELS[k]), feed_for(MODELS[k].num_components))
)


def numbers(obj, path="result"):
    """Every float reachable from a result: records, dataclasses, arrays, lists, dicts."""
    if obj is None or isinstance(obj, (bool, str, int)):
        return
    if isinstance(obj, float):
        yield path, obj
    elif isinstance(obj, np.ndarray):
        if obj.dtype.kind == "f":
            for i, x in enumerate(obj.ravel()):
                yield f"{path}[{i}]", float(x)
    elif isinstance(obj, (np.floating,)):
        yield path, float(obj)
    elif dataclasses.is_dataclass(obj):
        for f in dataclasses.fields(obj):
            yield from numbers(getattr(obj, f.name), f"{path}.{f.name}")
    elif isinstance(obj, tl.Record):
        for k, v in obj.to_dict().items():
            yield from numbers(v, f"{path}.{k}")
    elif isinstance(obj, dict):
        for k, v in obj.items():
            yield from numbers(v, f"{path}.{k}")
    elif isinstance(obj, (list, tuple)):
        for i, v in enumerate(obj):
            yield from numbers(v, f"{path}[{i}]")


def assert_finite(result, absent=ABSENT):
    for path, x in numbers(result):
        if not math.isfinite(x):
            leaf = path.split(".")[-1].split("[")[0]
            assert leaf in absent, f"non-finite value {x} at {path}"


def outcome(call, absent=ABSENT):
    """Runs `call`: a finite result or a typed error with a message. Returns the result or None."""
    try:
        r = call()
    except tl.TielineError as e:
        assert str(e).strip(), f"empty message for {type(e).__name__}"
        return None
    assert_finite(r, absent)
    return r


@FUZZ
@given(model_and_feed, temperature, pressure, st.booleans(), st.sampled_from([2, 3]))
def test_flash_fuzz(mf, t, p, certificate, max_phases):
    model, z = mf
    r = outcome(lambda: tl.flash(model, t, p, z, certificate=certificate, max_phases=max_phases))
    if r is not None:
        outcome(lambda: r.properties(model))


@FUZZ
@given(model_and_feed, st.lists(temperature, min_size=1, max_size=6), pressure)
def test_flash_sweep_fuzz(mf, ts, p):
    model, z = mf
    try:
        s = tl.flash(model, np.array(ts), p, z, on_error="flag")
    except tl.TielineError as e:
        assert str(e)
        return
    # Points that succeeded hold finite values in the phase slots they use.
    for i in range(len(ts)):
        if s.ok[i]:
            assert math.isfinite(s.temperature[i]) and math.isfinite(s.pressure[i])
            for e in s.failures:
                assert e[0] != (i,)
        else:
            assert any(f[0] == (i,) and isinstance(f[1], tl.TielineError) and str(f[1]) for f in s.failures)


@FUZZ
@given(model_and_feed, temperature, pressure, st.sampled_from(["stable", "liquid", "vapor"]))
def test_phase_properties_fuzz(mf, t, p, root):
    model, z = mf
    outcome(lambda: tl.phase_properties(model, t, p, z, root=root))


@FUZZ
@given(st.sampled_from(sorted(MODELS)), st.integers(-1, 4), temperature, pressure, st.integers(0, 3))
def test_saturation_fuzz(key, comp, t, p, which):
    model = MODELS[key]
    z = np.full(model.num_components, 1.0)
    calls = [
        lambda: tl.saturation_pressure(model, t, comp),
        lambda: tl.saturation_temperature(model, p, comp),
        lambda: tl.bubble_pressure(model, t, z),
        lambda: tl.dew_temperature(model, p, z),
    ]
    try:
        call = calls[which]
        outcome(call)
    except (IndexError, TypeError) as e:  # pragma: no cover - would be a bug
        raise AssertionError(f"{type(e).__name__}: {e}")


@FUZZ
@given(temperature, pressure, st.one_of(st.floats(0.1, 1500.0), wild), st.sampled_from(["stable", "liquid", "vapor"]))
def test_water_fuzz(t, p, rho, root):
    outcome(lambda: tl.water_properties(t, pressure=p, root=root))
    outcome(lambda: tl.water_properties(t, density=rho))
    outcome(lambda: tl.water_saturation(temperature=t))
    outcome(lambda: tl.water_saturation(pressure=p))


@FUZZ
@given(temperature, pressure, st.lists(amount, min_size=3, max_size=3), st.booleans())
def test_solids_fuzz(t, p, z, with_ice):
    model = MODELS["wet"]
    solids = [tl.Solid.carbon_dioxide(model, "carbon dioxide")] + ([tl.Solid.ice_ih()] if with_ice else [])
    outcome(lambda: tl.flash_with_solids(model, t, p, z, solids))
    outcome(lambda: tl.frost_point_temperature(model, p, z, solids[0], t_guess=t))


CALCS = tl.calculations()


@FUZZ
@given(
    st.one_of(st.sampled_from(CALCS), st.text(max_size=20)),
    model_and_feed,
    st.lists(st.one_of(temperature, pressure, st.floats(-3e5, 1e5), wild), min_size=0, max_size=3),
    st.dictionaries(
        st.sampled_from(["tolerance", "max_iterations", "certificate", "max_phases", "negative_flash", "bogus"]),
        st.one_of(st.booleans(), st.integers(-5, 500), wild, st.none()),
        max_size=2,
    ),
)
def test_calculate_fuzz(name, mf, args, options):
    model, z = mf
    try:
        r = tl.calculate(name, model, *args, feed=z, **options)
    except tl.TielineError as e:
        assert str(e).strip()
        return
    assert isinstance(r, tl.Record)
    assert_finite(r)


@FUZZ
@given(
    st.sampled_from([c for c in CALCS if len(tl.describe(c)["arguments"]) == 2 and not tl.describe(c).get("feed_extension")]),
    st.lists(st.tuples(temperature, pressure), min_size=1, max_size=4),
)
def test_calculate_sweep_fuzz(name, points):
    # A sweep's successful points equal the same calculation point by point.
    model = MODELS["binary"]
    a = np.array([x[0] for x in points])
    b = np.array([x[1] for x in points])
    try:
        s = tl.calculate(name, model, a, b, feed=[0.5, 0.5], on_error="flag")
    except tl.TielineError as e:
        assert str(e).strip()
        return
    for i in range(len(points)):
        if not s.ok[i]:
            continue
        rec = outcome(lambda: tl.calculate(name, model, float(a[i]), float(b[i]), feed=[0.5, 0.5]))
        if rec is None:
            continue
        for f in rec.fields:
            v = rec[f]
            if isinstance(v, float):
                assert math.isfinite(v) or f in ABSENT


component = st.sampled_from(["methane", "ethane", "propane", "nitrogen", "water", "carbon dioxide", "n-decane", "unobtainium", ""])
number_text = st.one_of(
    st.floats(-2.0, 2.0).map(repr),
    st.sampled_from(["1e999", "-1e999", "NaN", "0", "-1", '"x"', "null", "1e308", "5e-324"]),
)


@st.composite
def description(draw):
    comps = draw(st.lists(component, min_size=0, max_size=4))
    items = []
    for c in comps:
        if draw(st.booleans()):
            keys = draw(st.lists(st.sampled_from(["tc", "pc", "acentric"]), unique=True, max_size=3))
            items.append("{" + ", ".join([json.dumps("name") + ": " + json.dumps(c)] + [f'"{k}": {draw(number_text)}' for k in keys]) + "}")
        else:
            items.append(json.dumps(c))
    kind = draw(st.sampled_from(["peng_robinson", "soave_redlich_kwong", "peng_robinson78", "other"]))
    text = f'{{"model": "cubic", "kind": "{kind}", "components": [{", ".join(items)}]'
    if draw(st.booleans()):
        rows = draw(st.lists(st.lists(number_text, min_size=0, max_size=5), max_size=3))
        text += ', "kij": [' + ", ".join("[" + ", ".join(r) + "]" for r in rows) + "]"
    if draw(st.booleans()):
        text += ', "volume_shift": ' + draw(st.sampled_from(['"peneloux"', '"other"', "[0.0]", "[1e-6, -1e-6]", "[NaN]"]))
    text += "}"
    if draw(st.integers(0, 9)) == 0:
        cut = draw(st.integers(0, len(text)))
        text = text[:cut] + draw(st.sampled_from(["", "}", "\\", "\x00", "\u00e9", "]]"])) + text[cut:]
    return text


@FUZZ
@given(description(), temperature, pressure)
def test_model_from_json_fuzz(text, t, p):
    try:
        m = tl.Model.from_json(text)
    except tl.TielineError as e:
        assert str(e).strip()
        return
    # An accepted model round-trips and gives finite answers or typed errors.
    assert tl.Model.from_json(m.to_json()) == m
    z = np.full(m.num_components, 1.0 / m.num_components)
    outcome(lambda: tl.flash(m, t, p, z))
    outcome(lambda: tl.phase_properties(m, t, p, z))
    outcome(lambda: tl.saturation_pressure(m, t, 0))


def test_fuzz_regressions_found_by_the_c_abi_fuzzer():
    # A subnormal amount gave an infinite ideal-mixing entropy (S, G, A = ±inf).
    m = MODELS["binary"]
    props = tl.phase_properties(m, 760.31492504009373, 41874.255186636576, [9.0, 5e-324])
    assert math.isfinite(props.entropy) and math.isfinite(props.gibbs) and math.isfinite(props.helmholtz)
    # A result that overflows the floating-point range is a typed error, not inf.
    with pytest.raises(tl.NoSolutionError, match="floating-point range"):
        tl.calculate("reaction_sp", MODELS["pure"], 12093.8, 495.233, feed=[1e300])
