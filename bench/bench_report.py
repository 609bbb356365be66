"""Benchmark: a whole report against the bare eigendecomposition of every k-point it used.

    python bench/bench_report.py [--repeats 5] [--scaling]

For each model, `classify` runs every invariant that applies. `band_stats["k_points"]` counts the k-points whose
eigensystems it used (each distinct k-point once); with time reversal, `band_stats["time_reversed"]` of them took
their states from their partner −k instead of being diagonalised (``halve_by_time_reversal``, the default). The bare
cost is one batched numpy.linalg.eigh over all ``k_points`` Hamiltonians of the same model, already built. Each
model is measured twice: as classify runs by default, and with ``halve_by_time_reversal=False`` (every point
diagonalised, so the ratio is the cost of everything else against the eigendecomposition itself). The report also
lists the batches, to show that no k-point was diagonalised twice, and the median time of each invariant (its own
work plus the k-points it was the first to need). The bare eigh and the report are timed alternately and the ratio
is the median of the per-run ratios, so that a change of load on a shared machine hits both alike. With --scaling it
repeats the measurement for meshes 12 to 40 (options={"mesh": n}) and band counts.
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np

import crystaltop as ct
from crystaltop.examples import bernevig_hughes_zhang, fu_kane_mele, kane_mele, stacked_layers
from crystaltop.examples.constructions import multilayer_stack
from crystaltop.models import BlochFunction

def callable_stacked_bhz():
    """The stacked BHZ layers as a bare Python callable H(k) with callable representations: no real-space form, so
    H(k) is evaluated point by point and its Hermiticity is checked at every point."""
    model = stacked_layers(bernevig_hughes_zhang(m=2.0), 0.1)
    reps = {op: (lambda k, op=op: model.symmetry_matrix(op, k)) for op in model.group.operations}
    return BlochFunction(lambda k: model.hamiltonian(k), lattice=model.lattice, positions=model.positions,
                         spinful=model.spinful, representations=reps, group=model.group,
                         time_reversal=model.time_reversal_matrix(), name="stacked BHZ, callable")


CASES = {
    "Fu-Kane-Mele diamond (3D, 4 states)": (lambda: fu_kane_mele(dt=0.4, frame="bond"), "-3m", 2),
    "stacked BHZ layers (3D, 4 states)": (lambda: stacked_layers(bernevig_hughes_zhang(m=2.0), 0.1), "4/mmm", 2),
    "stacked BHZ, a callable H(k) (3D)": (callable_stacked_bhz, "4/mmm", 2),
    "Kane-Mele (2D, 4 states)": (lambda: kane_mele(), "6/mmm", 2),
}


def measure(build, group, filling, repeats, options=None, halve=True):
    """(k-points, number of invariants computed, bare s, report s, median ratio, batches, per-invariant medians s,
    k-points taken by time reversal).

    The bare eigh and the report are timed alternately, run after run, so that a change of load on the machine
    hits both alike; the ratio is the median of the per-run ratios, the times are medians.
    """
    model = build()
    report = ct.classify(model, group=group, filling=filling, options=options, halve_by_time_reversal=halve)
    n = report.band_stats["k_points"]
    ok = sum(r.status == "ok" for r in report)
    rng = np.random.default_rng(0)
    h = model.hamiltonian(rng.random((n, model.dim)))
    seconds: dict[str, list] = {}
    bare, full = [], []
    for _ in range(repeats):
        t0 = time.perf_counter()
        np.linalg.eigh(h)
        t1 = time.perf_counter()
        results = ct.classify(model, group=group, filling=filling, options=options, halve_by_time_reversal=halve)
        t2 = time.perf_counter()
        bare.append(t1 - t0)
        full.append(t2 - t1)
        for r in results:
            if r.status == "ok":
                seconds.setdefault(r.name, []).append(r.seconds)
    split = {name: statistics.median(v) for name, v in seconds.items()}
    ratio = statistics.median(f / b for f, b in zip(full, bare))
    return (n, ok, statistics.median(bare), statistics.median(full), ratio, report.band_stats["batches"], split,
            report.band_stats["time_reversed"])


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--scaling", action="store_true", help="also vary the mesh and the number of bands")
    args = ap.parse_args()
    print(f"{'model':<38} {'halved':>6} {'invariants':>10} {'k-points':>9} {'by T':>5} {'bare [s]':>9} "
          f"{'report [s]':>10} {'ratio':>6}")
    for name, (build, group, filling) in CASES.items():
        for halve in (True, False):
            n, ok, bare, full, ratio, batches, split, by_t = measure(build, group, filling, args.repeats, halve=halve)
            print(f"{name:<38} {'yes' if halve else 'no':>6} {ok:>10} {n:>9} {by_t:>5} {bare:>9.4f} {full:>10.4f} "
                  f"{ratio:>6.2f}")
            for what, count in batches:
                print(f"{'':<40}batch {what}: {count}")
            print(f"{'':<40}per invariant [ms]: " + ", ".join(f"{k} {1e3 * v:.1f}" for k, v in split.items()))
    if not args.scaling:
        return
    print()
    print(f"{'model':<46} {'mesh':>5} {'states':>6} {'k-points':>9} {'bare [s]':>9} {'report [s]':>10} {'ratio':>6}")
    fkm = CASES["Fu-Kane-Mele diamond (3D, 4 states)"][0]
    for mesh in (12, 16, 24, 32, 40):
        n, _, bare, full, ratio, _, _, _ = measure(fkm, "-3m", 2, args.repeats, options={"mesh": mesh})
        print(f"{'Fu-Kane-Mele diamond':<46} {mesh:>5} {4:>6} {n:>9} {bare:>9.4f} {full:>10.4f} {ratio:>6.2f}")
    for layers in (1, 2, 4):
        build = (lambda layers=layers: multilayer_stack(kane_mele(), layers, tz=0.1))
        n, _, bare, full, ratio, _, _, _ = measure(build, "6/mmm", 2 * layers, max(3, args.repeats // 2))
        print(f"{f'Kane-Mele, {layers} layer(s) per cell (3D)':<46} {24:>5} {4 * layers:>6} {n:>9} {bare:>9.4f} "
              f"{full:>10.4f} {ratio:>6.2f}")


if __name__ == "__main__":
    main()
