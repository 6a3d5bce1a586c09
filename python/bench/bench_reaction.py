"""Benchmark: a 10^5-point temperature sweep of a reaction equilibrium (water-gas shift, ideal
gas, 1 bar, 600–1400 K) from Python against the same sweep as a Rust batch. Not part of the
tests (no timing is asserted anywhere).

Run from the repository root with the wheel installed in the current interpreter:

    python python/bench/bench_reaction.py [threads]

It runs `cargo bench -p tieline-python --bench reaction_batch` for the Rust figures.
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
    model = tl.Model(["carbon monoxide", "water", "carbon dioxide", "hydrogen"])
    t = np.linspace(600.0, 1400.0, 100_000)
    feed = [1.0, 1.0, 0.0, 0.0]
    s = tl.reaction_tp(model, t, 1e5, feed, threads=threads)
    assert s.ok.all()
    sweep = best_of(3, lambda: tl.reaction_tp(model, t, 1e5, feed, threads=threads))
    out = subprocess.run(
        ["cargo", "bench", "--quiet", "-p", "tieline-python", "--bench", "reaction_batch", "--", str(threads)],
        cwd=root, check=True, capture_output=True, text=True,
    ).stdout
    rust = json.loads(out.strip().splitlines()[-1])
    print(f"points: 100000, threads: {threads}")
    print(f"reaction sweep, Python:                     {sweep:8.3f} s")
    print(f"Rust batch (ReactionContext, blocks of 64): {rust['rust_batch_s']:8.3f} s   ratio {sweep / rust['rust_batch_s']:.3f}")
    print(f"Rust records + columns (Python's path):     {rust['records_and_columns_s']:8.3f} s   ratio {sweep / rust['records_and_columns_s']:.3f}")


if __name__ == "__main__":
    main()
