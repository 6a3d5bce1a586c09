"""Benchmark: a 10^4-point sweep of a calculation by name (`tl.calculate("flash_pt", ...)`),
ordered along T and shuffled, in the default layout against blocks of 64 points. Not part of
the tests (no timing is asserted anywhere).

Run from the repository root with the wheel installed in the current interpreter:

    python python/bench/bench_calc_sweep.py [--rounds 5] [--threads 2] [--old PYTHON]

Each round runs in a fresh process (one untimed sweep first) and times, one after the other,
the sorted and the shuffled sweep with the default layout and with `block=64`. With `--old
PYTHON` (an interpreter with another build of the package installed) the rounds alternate
between the two builds, so both see the same load, and the ratios new / old of the medians
are printed as well.
"""

from __future__ import annotations

import argparse
import json
import statistics
import subprocess
import sys
import time

import numpy as np


def points():
    """10^4 points of a natural-gas mixture through its two-phase region: T from 200 to 320 K
    (100 values, 1.2 K apart) fastest, then p from 0.5 to 8 MPa (100 values); and the same
    points in a fixed random order."""
    t = np.linspace(200.0, 320.0, 100)
    p = np.linspace(0.5e6, 8.0e6, 100)
    tt, pp = (a.ravel() for a in np.meshgrid(t, p))
    order = np.random.default_rng(1).permutation(tt.size)
    return (tt, pp), (tt[order], pp[order])


def worker(threads: int) -> dict:
    import tieline as tl

    model = tl.Model(
        ["nitrogen", "methane", "ethane", "n-butane"],
        kind="peng_robinson",
        kij={(0, 1): 0.03, (0, 2): 0.04, (1, 3): 0.02},
    )
    feed = [0.05, 0.8, 0.1, 0.05]
    (ts, ps), (th, ph) = points()
    tl.calculate("flash_pt", model, ts, ps, feed=feed, threads=threads, on_error="flag")
    out = {}
    for order, (t, p) in [("sorted", (ts, ps)), ("shuffled", (th, ph))]:
        for layout, kw in [("default", {}), ("block=64", {"block": 64})]:
            s = time.perf_counter()
            r = tl.calculate("flash_pt", model, t, p, feed=feed, threads=threads, on_error="flag", **kw)
            out[f"{order} {layout}"] = time.perf_counter() - s
            out[f"{order} {layout} warm"] = int(r.warm_start.sum())
            out[f"{order} {layout} failed"] = len(r.failures)
            out[f"{order} {layout} iterations"] = int(
                (r.stability_iterations + r.ss_iterations + r.newton_iterations).sum()
            )
    return out


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rounds", type=int, default=5)
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--old", help="an interpreter with another build of tieline installed")
    ap.add_argument("--worker", action="store_true", help=argparse.SUPPRESS)
    a = ap.parse_args()
    if a.worker:
        print(json.dumps(worker(a.threads)))
        return
    builds = [("new", sys.executable)] + ([("old", a.old)] if a.old else [])
    runs = {name: [] for name, _ in builds}
    for _ in range(a.rounds):
        for name, exe in builds:
            cmd = [exe, __file__, "--worker", "--threads", str(a.threads)]
            runs[name].append(json.loads(subprocess.run(cmd, check=True, capture_output=True, text=True).stdout))
    keys = [k for k in runs["new"][0] if not k.endswith(("warm", "failed", "iterations"))]
    med = {n: {k: statistics.median(r[k] for r in rs) for k in keys} for n, rs in runs.items()}
    print(
        f"{a.rounds} rounds, {a.threads} threads, 10^4 points: median time (s); warm starts, failed "
        "points, solver iterations (stability + successive substitution + Newton, summed)"
    )
    for name, _ in builds:
        for k in keys:
            last = runs[name][-1]
            print(
                f"  {name:4} {k:20} {med[name][k]:8.3f}   {last[k + ' warm']:6d} {last[k + ' failed']:4d}"
                f" {last[k + ' iterations']:8d}"
            )
    if a.old:
        print("ratios new / old:")
        for k in keys:
            print(f"  {k:20} {med['new'][k] / med['old'][k]:.2f}")
        for order in ("sorted", "shuffled"):
            k = f"{order} default"
            print(f"  {order}: new default / old default (always-warm blocks of 64): {med['new'][k] / med['old'][k]:.2f}")


if __name__ == "__main__":
    main()
