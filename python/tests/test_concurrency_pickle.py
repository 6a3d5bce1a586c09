"""Thread safety from Python threads, and pickling of models, states, results and errors."""

from __future__ import annotations

import pickle
from concurrent.futures import ThreadPoolExecutor

import numpy as np
import pytest

import tieline as tl

Z = [0.05, 0.8, 0.1, 0.05]


def test_many_python_threads_share_one_model(gas):
    t = np.linspace(170.0, 320.0, 120)
    serial_sweep = tl.flash(gas, t, 3.0e6, Z)
    serial_points = [tl.flash(gas, float(x), 3.0e6, Z) for x in t[::10]]

    def work(k):
        if k % 2:
            return tl.flash(gas, t, 3.0e6, Z, threads=1 + k % 2)
        return [tl.flash(gas, float(x), 3.0e6, Z) for x in t[::10]]

    with ThreadPoolExecutor(max_workers=8) as ex:
        outs = list(ex.map(work, range(16)))
    for k, out in enumerate(outs):
        if k % 2:
            assert out == serial_sweep
        else:
            assert out == serial_points


def test_vectorised_calls_release_the_gil(gas):
    # While one thread runs a long sweep, another thread keeps running Python code.
    import threading

    t = np.linspace(170.0, 320.0, 20000)
    ticks = []
    done = threading.Event()

    def ticker():
        while not done.is_set():
            ticks.append(1)
            done.wait(0.001)

    th = threading.Thread(target=ticker)
    th.start()
    try:
        tl.flash(gas, t, 3.0e6, Z)
    finally:
        done.set()
        th.join()
    assert len(ticks) > 5


@pytest.mark.parametrize("protocol", range(2, pickle.HIGHEST_PROTOCOL + 1))
def test_pickle_round_trips(gas, binary, tmp_path, protocol):
    def rt(x):
        return pickle.loads(pickle.dumps(x, protocol=protocol))

    assert rt(gas) == gas and rt(gas).to_json() == gas.to_json()
    bank = tl.ComponentBank.embedded()
    assert rt(bank).names == bank.names and "methane" in rt(bank)
    st = tl.PhaseState(binary, 250.0, 2.0e6, [1.0, 3.0], root="liquid")
    st2 = rt(st)
    assert st2.molar_volume == st.molar_volume and st2.properties() == st.properties()
    assert st2.ln_phi.tolist() == st.ln_phi.tolist()
    r = tl.flash(binary, 300.0, 5.0e6, [0.5, 0.5])
    assert rt(r) == r
    r2 = rt(r)
    assert r2.properties(binary) == r.properties(binary)
    s = tl.flash(gas, np.linspace(170.0, 320.0, 30), 3.0e6, Z)
    assert rt(s) == s
    assert rt(tl.stability(binary, 300.0, 5.0e6, [0.5, 0.5])) == tl.stability(binary, 300.0, 5.0e6, [0.5, 0.5])
    c = tl.saturation_pressure(binary, [150.0, 200.0], "methane", on_error="flag")
    c2 = rt(c)
    assert c2 == c and isinstance(c2.failures[0][1], tl.NoSolutionError)
    assert c2.failures[0][1].index == 1
    b = tl.bubble_pressure(binary, 250.0, [0.3, 0.7])
    assert rt(b) == b
    assert rt(st.properties()) == st.properties()
    with pytest.raises(tl.ConvergenceError) as info:
        tl.saturation_pressure(binary, 300.0, "n-butane", max_iterations=1)
    e2 = rt(info.value)
    assert type(e2) is tl.ConvergenceError and str(e2) == str(info.value)
    assert e2.iterations == info.value.iterations and e2.residual == info.value.residual


def test_results_are_immutable(binary):
    r = tl.flash(binary, 300.0, 5.0e6, [0.5, 0.5])
    with pytest.raises(AttributeError):
        r.temperature = 1.0  # type: ignore[misc]
    with pytest.raises(AttributeError):
        binary.kind = "srk"  # type: ignore[misc]
