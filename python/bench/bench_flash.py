"""Benchmark: a 10^5-point vectorised flash from Python against the same batch in Rust, and
the per-call cost of a scalar flash. Not part of the tests (no timing is asserted anywhere).

Run from the repository root with the wheel installed in the current interpreter:

    python python/bench/bench_flash.py [threads]

It runs `cargo bench -p tieline-python --bench batch` for the Rust figures (release build)
and prints both sides and their ratios.
"""

from __future__ import annotations

import json
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

import tieline as tl


def best_of(runs, f):
    best = float("inf")
    for _ in range(runs):
        s = time.perf_counter()
        f()
        best = min(best, time.perf_counter() - s)
    return best


def main() -> None:
    threads = int(sys.argv[1]) if len(sys.argv) > 1 else 2
    root = Path(__file__).resolve().parents[2]
    model = tl.Model(
        ["nitrogen", "methane", "ethane", "n-butane"],
        kind="peng_robinson",
        kij={(0, 1): 0.03, (0, 2): 0.04, (1, 3): 0.02},
    )
    z = [0.05, 0.8, 0.1, 0.05]
    t = np.linspace(170.0, 320.0, 400)
    p = np.linspace(0.5e6, 8.0e6, 250)
    grid = tl.flash(model, t[None, :], p[:, None], z, threads=threads)
    assert grid.ok.all() and grid.temperature.size == 100_000
    sweep = best_of(3, lambda: tl.flash(model, t[None, :], p[:, None], z, threads=threads))
    calls = 2000
    zz = np.array(z)
    two = best_of(3, lambda: [tl.flash(model, 250.0, 3.0e6, zz) for _ in range(calls)]) / calls
    one = best_of(3, lambda: [tl.flash(model, 300.0, 3.0e6, zz) for _ in range(calls)]) / calls

    out = subprocess.run(
        ["cargo", "bench", "--quiet", "-p", "tieline-python", "--bench", "batch", "--", str(threads)],
        cwd=root, check=True, capture_output=True, text=True,
    ).stdout
    rust = json.loads(out.strip().splitlines()[-1])
    print(f"points: 100000, threads: {threads}")
    print(f"vectorised flash, Python:            {sweep:8.3f} s")
    print(f"flash_batch, Rust:                   {rust['flash_batch_s']:8.3f} s   ratio Python/Rust {sweep / rust['flash_batch_s']:.3f}")
    print(f"blocks of 64 (Python's layout), Rust:{rust['blocks64_s']:8.3f} s   ratio Python/Rust {sweep / rust['blocks64_s']:.3f}")
    print(f"scalar flash, two-phase point: Python {two * 1e6:7.1f} us, Rust {rust['scalar_two_phase_s'] * 1e6:7.1f} us, overhead {(two - rust['scalar_two_phase_s']) * 1e6:5.1f} us")
    print(f"scalar flash, one-phase point: Python {one * 1e6:7.1f} us, Rust {rust['scalar_one_phase_s'] * 1e6:7.1f} us, overhead {(one - rust['scalar_one_phase_s']) * 1e6:5.1f} us")


if __name__ == "__main__":
    main()
