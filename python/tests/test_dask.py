"""Scale-out: a vectorised flash mapped over partitions with Dask on a two-worker
distributed.LocalCluster (worker processes) gives exactly the serial numbers."""

from __future__ import annotations

import numpy as np
import tieline as tl

import dask.array as da
from distributed import Client, LocalCluster

BLOCK = 64


def vapor_fraction_block(model, t, p, z):
    s = tl.flash(model, t, p, z, block=BLOCK)
    return s.vapor_fraction


def test_dask_partitions_match_serial(gas):
    z = [0.05, 0.8, 0.1, 0.05]
    t = np.linspace(170.0, 330.0, 8 * BLOCK)
    serial = tl.flash(gas, t, 3.5e6, z, block=BLOCK)
    # Partitions are whole multiples of the warm-start block, so the chains are the same.
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        with Client(cluster) as client:
            arr = da.from_array(t, chunks=2 * BLOCK)
            vf = arr.map_blocks(lambda b: vapor_fraction_block(gas, b, 3.5e6, z), dtype=float)
            got = vf.compute()
            # Whole results too, shipped back by pickling.
            parts = [t[k : k + 2 * BLOCK] for k in range(0, t.size, 2 * BLOCK)]
            futures = client.map(lambda part: tl.flash(gas, part, 3.5e6, z, block=BLOCK), parts)
            sweeps = client.gather(futures)
            workers = set(client.run(lambda: 1).keys())
    assert len(workers) == 2
    assert got.tolist() == serial.vapor_fraction.tolist()
    composition = np.concatenate([s.composition for s in sweeps])
    assert np.array_equal(composition, serial.composition, equal_nan=True)
    assert np.concatenate([s.gibbs for s in sweeps]).tolist() == serial.gibbs.tolist()
