"""The shared table of hostile inputs (tests/vectors/hostile.json) through the Python API, one
row per class of failure, plus the conversions only a binding has (class 5). Source of every
row: the library's own specification of these behaviours (no external source)."""

import json
import re

import numpy as np
import pytest

import tieline as tl
from conftest import ROOT

TABLE = json.loads((ROOT / "tests" / "vectors" / "hostile.json").read_text())
CASES = TABLE["cases"]

KINDS = [
    (tl.UnknownComponentError, "unknown_component"),
    (tl.InvalidInputError, "invalid_input"),
    (tl.OutsideValidityError, "outside_validity"),
    (tl.NoSolutionError, "no_solution"),
    (tl.ConvergenceError, "not_converged"),
    (tl.DataError, "data"),
]


def number(v):
    return float(v)


def kind_of(e):
    for cls, name in KINDS:
        if isinstance(e, cls):
            return name
    return "other"


def reads_once(msg):
    for prefix in ["invalid input:", "no solution:", "data error:", "outside validity range:", "did not converge"]:
        assert msg.count(prefix) <= 1, msg
    assert not re.search(r"\d{20}", msg), msg


def run(c):
    opts = c.get("options", {})
    model = lambda: tl.Model.from_description(c["model"])  # noqa: E731
    op = c["op"]
    if op == "model":
        return model()
    if op == "bank":
        return tl.ComponentBank.from_toml(c["toml"])
    t = number(c["temperature"]) if "temperature" in c else None
    p = number(c["pressure"]) if "pressure" in c else None
    z = [number(x) for x in c.get("feed", [])]
    flash_kw = {k: (number(v) if k == "tolerance" else v) for k, v in opts.items()}
    if op == "flash":
        return tl.flash(model(), t, p, z, **flash_kw)
    if op == "flash_batch":
        return tl.flash(model(), np.array([t]), np.array([p]), z, threads=c.get("threads"), **flash_kw)
    if op == "saturation_pressure":
        return tl.saturation_pressure(model(), t, 0, **opts)
    if op == "saturation_temperature":
        return tl.saturation_temperature(model(), p, 0, **opts)
    if op == "bubble_temperature":
        return tl.bubble_temperature(model(), p, z, **opts)
    raise AssertionError(f"unknown op {op}")


@pytest.mark.parametrize("case", CASES, ids=[c["id"] for c in CASES])
def test_hostile_table(case):
    want = case["expect"]
    try:
        run(case)
    except tl.TielineError as e:
        msg = str(e)
        reads_once(msg)
        if want["kind"] == "any":
            return
        assert kind_of(e) == want["kind"], msg
        for s in want.get("contains", []):
            assert s in msg, msg
        for s in want.get("absent", []):
            assert s not in msg, msg
        return
    assert want["kind"] in ("ok", "any"), f"{case['id']}: succeeded, {want['kind']} expected"


def test_every_class_has_rows():
    assert {c["class"] for c in CASES} >= {1, 2, 3, 4, 6, 7, 8}
    assert all(c["source"] for c in CASES)


BINARY = tl.Model(["methane", "ethane"], kind="peng_robinson")

# Class 5: conversions at the binding's edge are the library's InvalidInputError naming the
# argument and the allowed range, never a TypeError or OverflowError of the conversion.
CONVERSIONS = [
    ("set-threads-10**30", lambda: tl.set_threads(10**30), "threads", "0 to 256"),
    ("set-threads-negative", lambda: tl.set_threads(-1), "threads", "0 to 256"),
    ("set-threads-bool", lambda: tl.set_threads(True), "threads", "0 to 256"),
    ("set-threads-float", lambda: tl.set_threads(2.0), "threads", "0 to 256"),
    ("threads-per-call-10**6", lambda: tl.flash(BINARY, [300.0, 310.0], 1e6, [0.5, 0.5], threads=10**6), "threads", "0 to 256"),
    ("threads-scalar-call-10**6", lambda: tl.flash(BINARY, 300.0, 1e6, [0.5, 0.5], threads=10**6), "threads", "0 to 256"),
    ("threads-str", lambda: tl.flash(BINARY, [300.0], 1e6, [0.5, 0.5], threads="4"), "threads", "0 to 256"),
    ("max-ss-negative", lambda: tl.flash(BINARY, 300.0, 1e6, [0.5, 0.5], max_ss_iterations=-1), "max_ss_iterations", "0 to 100000"),
    ("max-newton-10**30", lambda: tl.flash(BINARY, 300.0, 1e6, [0.5, 0.5], max_newton_iterations=10**30), "max_newton_iterations", "0 to 100000"),
    ("block-10**30", lambda: tl.flash(BINARY, [300.0], 1e6, [0.5, 0.5], block=10**30), "block", "1 to 10000000"),
    ("saturation-iterations-negative", lambda: tl.saturation_pressure(BINARY, 150.0, 0, max_iterations=-5), "max_iterations", "1 to 100000"),
    ("max-phases-10**30", lambda: tl.flash(BINARY, 300.0, 1e6, [0.5, 0.5], max_phases=10**30), "max_phases", "1e30; 2 or 3"),
    ("toml-bytes", lambda: tl.ComponentBank.from_toml(b"[references]"), "text", "str"),
]


@pytest.mark.parametrize("make,what,allowed", [c[1:] for c in CONVERSIONS], ids=[c[0] for c in CONVERSIONS])
def test_binding_conversions_are_invalid_input(make, what, allowed):
    with pytest.raises(tl.InvalidInputError) as info:
        make()
    assert info.value.what == what
    assert allowed in str(info.value)
    reads_once(str(info.value))
    assert tl.get_threads() <= 256


def test_a_million_threads_does_not_hang_and_the_default_is_kept():
    before = tl.get_threads()
    with pytest.raises(tl.InvalidInputError):
        tl.set_threads(10**6)
    assert tl.get_threads() == before


def test_numbers_format_as_in_the_core():
    from tieline import _core

    assert [_core.format_number(x) for x in (1e-300, 1e-11, 2.5e6, 190.564)] == ["1e-300", "1e-11", "2.5e6", "190.564"]
