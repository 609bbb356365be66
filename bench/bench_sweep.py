"""Benchmark: the speed-up of a sweep on 2 worker processes against a serial run.

    python bench/bench_sweep.py [--points 64] [--mesh 240] [--repeats 3]

A Haldane-model phase diagram (Phys. Rev. Lett. 61, 2015 (1988)) over the sublattice mass M and the flux
phase φ, the Chern number at each point on a mesh×mesh grid. It runs serially, then on a
ProcessPoolExecutor with 2 workers (the pool's start-up is counted), then on a Dask LocalCluster with
2 worker processes if dask.distributed is installed. The tables must be identical.
"""

from __future__ import annotations

import argparse
import functools
import statistics
import time
from concurrent.futures import ProcessPoolExecutor

import numpy as np

import crystaltop as ct
from crystaltop.examples import haldane


def run(executor_factory, grid, mesh):
    t0 = time.perf_counter()
    if executor_factory is None:
        table = ct.sweep(functools.partial(haldane, t2=0.1), grid, invariants=["chern"], group="3", filling=1,
                         options={"chern": {"mesh": mesh}}, progress=False)
    else:
        with executor_factory() as ex:
            table = ct.sweep(functools.partial(haldane, t2=0.1), grid, invariants=["chern"], group="3",
                             filling=1, options={"chern": {"mesh": mesh}}, executor=ex, progress=False)
    return time.perf_counter() - t0, table


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--points", type=int, default=64)
    ap.add_argument("--mesh", type=int, default=240)
    ap.add_argument("--repeats", type=int, default=3)
    args = ap.parse_args()
    side = int(np.sqrt(args.points))
    grid = {"mass": list(np.linspace(-0.6, 0.6, side)), "phi": list(np.linspace(0.2, np.pi - 0.2, args.points // side))}
    n = len(grid["mass"]) * len(grid["phi"])
    factories = {"serial": None, "process pool, 2 workers": lambda: ProcessPoolExecutor(max_workers=2)}
    try:
        import distributed

        class _Dask:
            def __enter__(self):
                self.cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                                        dashboard_address=None)
                self.client = distributed.Client(self.cluster)
                return self.client.get_executor()

            def __exit__(self, *exc):
                self.client.close()
                self.cluster.close()

        factories["Dask LocalCluster, 2 workers"] = _Dask
    except ImportError:
        pass
    reference, serial_time = None, None
    print(f"{n} points, Chern number on a {args.mesh}x{args.mesh} mesh each")
    print(f"{'executor':<32} {'median [s]':>10} {'speed-up':>9} {'same table':>10}")
    for name, factory in factories.items():
        times, table = [], None
        for _ in range(args.repeats):
            t, table = run(factory, grid, args.mesh)
            times.append(t)
        med = statistics.median(times)
        if reference is None:
            reference, serial_time = table.comparable(), med
        print(f"{name:<32} {med:>10.2f} {serial_time / med:>9.2f} {str(table.comparable() == reference):>10}")


if __name__ == "__main__":
    main()
