"""Eight Python threads share one mixture model and one IAPWS-95 water model and run a mixed
list of calls — PT flashes, saturation and bubble points, single-phase properties, the
solid-fluid flash and the frost point, water by IAPWS, calculations by name — both as scalar
calls and as vectorised calls that release the GIL. Every thread's results are compared bit
for bit with the same calls made serially."""

from __future__ import annotations

import dataclasses
import struct
import threading

import numpy as np

import tieline as tl

MIX = tl.Model(["water", "carbon dioxide", "methane"], kind="peng_robinson")
WATER = tl.Model.water()
DRY_ICE = tl.Solid.carbon_dioxide(MIX, "carbon dioxide")
ICE = tl.Solid.ice_ih()
Z = [0.1, 0.3, 0.6]
T_SWEEP = np.linspace(260.0, 420.0, 40)


def bits(obj):
    """A structure equal for two results exactly when every number is bit for bit equal."""
    if isinstance(obj, float):
        return ("f", struct.pack("<d", obj))
    if isinstance(obj, np.ndarray):
        return ("a", obj.dtype.str, obj.shape, obj.tobytes() if obj.dtype.kind != "O" else repr(obj.tolist()))
    if isinstance(obj, tl.Record):
        return ("r", bits(obj.to_dict()))
    if isinstance(obj, tl.Sweep):
        return ("s", bits(obj.to_dict()), bits(obj.ok))
    if dataclasses.is_dataclass(obj):
        return ("d", type(obj).__name__, tuple(bits(getattr(obj, f.name)) for f in dataclasses.fields(obj)))
    if isinstance(obj, dict):
        return ("m", tuple((k, bits(v)) for k, v in obj.items()))
    if isinstance(obj, (list, tuple)):
        return ("l", tuple(bits(v) for v in obj))
    if isinstance(obj, BaseException):
        return ("e", type(obj).__name__, str(obj))
    return ("o", repr(obj))


def _calls():
    return [
        lambda: tl.flash(MIX, 300.0, 5.0e6, Z),
        lambda: tl.flash(MIX, T_SWEEP, 5.0e6, Z, threads=2),  # vectorised, GIL released
        lambda: tl.saturation_pressure(MIX, 250.0, "carbon dioxide"),
        lambda: tl.saturation_pressure(MIX, np.linspace(220.0, 300.0, 9), "carbon dioxide"),
        lambda: tl.bubble_pressure(MIX, 230.0, [0.0, 0.7, 0.3]),
        lambda: tl.phase_properties(MIX, 320.0, 2.0e6, Z, root="vapor"),
        lambda: tl.phase_properties(MIX, T_SWEEP, 2.0e6, Z, root="vapor"),
        lambda: tl.flash_with_solids(MIX, 160.0, 5.0e5, [0.0, 0.02, 0.98], [DRY_ICE, ICE]),
        lambda: tl.frost_point_temperature(MIX, 1.0e6, [0.0, 0.3, 0.7], DRY_ICE, t_guess=200.0),
        lambda: tl.water_properties(300.0, pressure=1.0e5),
        lambda: tl.water_saturation(temperature=373.124),
        lambda: tl.phase_properties(WATER, 300.0, 1.0e5, [1.0], root="liquid"),
        lambda: tl.saturation_pressure(WATER, 400.0, 0),
        lambda: tl.calculate("flash_ph", MIX, 5.0e6, -1.8e5, feed=Z),
        lambda: tl.calculate("flash_pt", WATER, np.linspace(300.0, 500.0, 20), 1.0e6, feed=[1.0]),
        lambda: tl.flash(MIX, -1.0, 5.0e6, Z),  # a wrong call: the same error everywhere
    ]


def _run(call):
    try:
        return bits(call())
    except tl.TielineError as e:
        return bits(e)


def test_eight_threads_share_models_bit_for_bit():
    calls = _calls()
    serial = [_run(c) for c in calls]
    assert serial[-1][0] == "e" and serial[-1][1] == "InvalidInputError"
    assert all(s[0] != "e" for s in serial[:-1]), "every call but the wrong one succeeds"
    rounds = 3
    out = [[None] * len(calls) for _ in range(8)]
    bad = []
    barrier = threading.Barrier(8)

    def work(k):
        barrier.wait()
        for r in range(rounds):
            for j in range(len(calls)):
                i = (j + 2 * k + r) % len(calls)  # different calls overlap in time
                got = _run(calls[i])
                if r == 0:
                    out[k][i] = got
                elif got != out[k][i]:
                    bad.append((k, i))

    threads = [threading.Thread(target=work, args=(k,)) for k in range(8)]
    for th in threads:
        th.start()
    for th in threads:
        th.join()
    assert not bad, f"results changed between rounds: {bad}"
    for k in range(8):
        for i in range(len(calls)):
            assert out[k][i] == serial[i], f"thread {k}, call {i} differs from the serial call"
