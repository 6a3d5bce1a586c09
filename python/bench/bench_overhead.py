"""Benchmark: the per-call cost of the Python layer over the Rust call, for a scalar flash
(two-phase and one-phase points), a phase-properties call and a saturation call. Not part of
the tests (no timing is asserted anywhere).

Run with the wheel installed in the current interpreter:

    python python/bench/bench_overhead.py [rounds]

For each call it times, in the same process and thread and alternating round by round, the
core call looped in Rust (`tieline._core._time_rust_*`: the same arguments, no conversion to
Python objects) and the public Python function; it prints the best round of each (µs per
call), the overhead per call (µs) and the ratio Python/Rust. The best of several rounds is
the figure least disturbed by other work on the machine.
"""

from __future__ import annotations

import sys
import time
from typing import Callable, List, Tuple

import numpy as np

import tieline as tl
from tieline import _core


def python_per_call(f: Callable[[], object], calls: int) -> float:
    s = time.perf_counter()
    for _ in range(calls):
        f()
    return (time.perf_counter() - s) / calls


def main() -> None:
    rounds = int(sys.argv[1]) if len(sys.argv) > 1 else 15
    model = tl.Model(
        ["nitrogen", "methane", "ethane", "n-butane"],
        kind="peng_robinson",
        kij={(0, 1): 0.03, (0, 2): 0.04, (1, 3): 0.02},
    )
    z = np.array([0.05, 0.8, 0.1, 0.05])
    zl = z.tolist()
    opts = _core.FlashOptions()
    cases: List[Tuple[str, int, Callable[[int], float], Callable[[], object]]] = [
        (
            "flash, two-phase point (250 K, 3 MPa)",
            300,
            lambda n: _core._time_rust_flash(model, 250.0, 3.0e6, zl, opts, n),
            lambda: tl.flash(model, 250.0, 3.0e6, z),
        ),
        (
            "flash, one-phase point (300 K, 3 MPa)",
            600,
            lambda n: _core._time_rust_flash(model, 300.0, 3.0e6, zl, opts, n),
            lambda: tl.flash(model, 300.0, 3.0e6, z),
        ),
        (
            "phase_properties (300 K, 3 MPa, stable root)",
            3000,
            lambda n: _core._time_rust_properties(model, 300.0, 3.0e6, zl, "stable", n),
            lambda: tl.phase_properties(model, 300.0, 3.0e6, z),
        ),
        (
            "saturation_pressure (methane, 150 K)",
            2000,
            lambda n: _core._time_rust_saturation(model, "temperature", 150.0, 1, n),
            lambda: tl.saturation_pressure(model, 150.0, 1),
        ),
    ]
    print(f"best of {rounds} alternating rounds; µs per call")
    print(f"{'call':<46} {'Rust':>9} {'Python':>9} {'overhead':>9} {'ratio':>7}")
    for label, calls, rust, python in cases:
        rust(calls // 10)
        python_per_call(python, calls // 10)
        best_r, best_p = float("inf"), float("inf")
        for _ in range(rounds):
            best_r = min(best_r, rust(calls))
            best_p = min(best_p, python_per_call(python, calls))
        r, p = best_r * 1e6, best_p * 1e6
        print(f"{label:<46} {r:9.2f} {p:9.2f} {p - r:9.2f} {p / r:7.3f}")


if __name__ == "__main__":
    main()
