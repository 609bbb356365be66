"""Benchmark: a whole report against the bare eigendecomposition of every k-point it used.

    python bench/bench_report.py [--repeats 5]

For each model, `classify` runs every invariant that applies. `band_stats["k_points"]` counts the k-points it
diagonalised. The bare cost is one batched numpy.linalg.eigh over that many Hamiltonians of the same model,
already built. The report also lists the batches, to show that no k-point was diagonalised twice.
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np

import crystaltop as ct
from crystaltop.examples import bernevig_hughes_zhang, fu_kane_mele, kane_mele, stacked_layers

CASES = {
    "Fu-Kane-Mele diamond (3D, 4 states)": (lambda: fu_kane_mele(dt=0.4, frame="bond"), "-3m", 2),
    "stacked BHZ layers (3D, 4 states)": (lambda: stacked_layers(bernevig_hughes_zhang(m=2.0), 0.1), "4/mmm", 2),
    "Kane-Mele (2D, 4 states)": (lambda: kane_mele(), "6/mmm", 2),
}


def median_time(fn, repeats):
    out = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        out.append(time.perf_counter() - t0)
    return statistics.median(out)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeats", type=int, default=5)
    args = ap.parse_args()
    print(f"{'model':<38} {'invariants':>10} {'k-points':>9} {'bare [s]':>9} {'report [s]':>10} {'ratio':>6}")
    for name, (build, group, filling) in CASES.items():
        model = build()
        report = ct.classify(model, group=group, filling=filling)
        n = report.band_stats["k_points"]
        ok = sum(r.status == "ok" for r in report)
        rng = np.random.default_rng(0)
        h = model.hamiltonian(rng.random((n, model.dim)))
        bare = median_time(lambda: np.linalg.eigh(h), args.repeats)
        full = median_time(lambda: ct.classify(model, group=group, filling=filling), args.repeats)
        print(f"{name:<38} {ok:>10} {n:>9} {bare:>9.4f} {full:>10.4f} {full / bare:>6.2f}")
        for what, count in report.band_stats["batches"]:
            print(f"{'':<40}batch {what}: {count}")


if __name__ == "__main__":
    main()
