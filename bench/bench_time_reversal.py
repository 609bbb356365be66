"""Benchmark: z2 + weak_indices + the Fu–Kane parity cross-check of a 3D 4-band model against bare diagonalisation.

    python bench/bench_time_reversal.py [--repeats 21] [--mesh 24]

The model is the Fu–Kane–Mele diamond model (Phys. Rev. Lett. 98, 106803 (2007)), t = 1, λ_SO = 0.125,
δt = +0.4 (the strong phase 1;(111)), bond frame, point group -3m: 4 states, filling 2. The crystaltop cost is a
whole ``classify(..., invariants=["z2", "weak_indices", "parity_indices"])`` on the default meshes (six half planes
of the 24 x 24 plane meshes, refinement of the pumping direction where needed, the eight TRIMs served from the
cache): building H, the Hermiticity and symmetry checks, gap checks, links, Wilson loops, the flow tracking and the
parity eigenvalues. The "bare" cost is one call of numpy.linalg.eigh on as many Hamiltonians as the report says
were diagonalised (``report.band_stats["k_points"]``), already built. The two are timed alternately, run after run, and
the median of the per-run ratios is reported; the time
spent inside the three plugins (``Result.seconds``) is shown as well.
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np

import crystaltop as ct
from crystaltop.examples import fu_kane_mele

INVARIANTS = ["z2", "weak_indices", "parity_indices"]


def measure(repeats: int, mesh: int | None) -> dict:
    model = fu_kane_mele(dt=0.4, frame="bond")
    options = {} if mesh is None else {"mesh": mesh}

    def run():
        return ct.classify(model, group="-3m", filling=2, invariants=INVARIANTS, options=options)

    report = run()
    for name in INVARIANTS:
        assert report[name].status == "ok", (name, report[name].message)
    n_k = int(report.band_stats["k_points"])
    k = np.random.default_rng(0).random((n_k, 3))
    h = model.hamiltonian(k)
    # interleaved, so that a load change on the machine hits both sides alike; medians of times and of ratios
    bare, full, inside, each = [], [], [], {name: [] for name in INVARIANTS}
    for _ in range(repeats):
        t0 = time.perf_counter()
        np.linalg.eigh(h)
        t1 = time.perf_counter()
        r = run()
        t2 = time.perf_counter()
        bare.append(t1 - t0)
        full.append(t2 - t1)
        inside.append(sum(r[name].seconds for name in INVARIANTS))
        for name in INVARIANTS:
            each[name].append(r[name].seconds)
    med = statistics.median
    return {"k_points": n_k, "batches": len(report.band_stats["batches"]), "bare": med(bare), "classify": med(full),
            "plugins": med(inside), "ratio_classify": med([f / b for f, b in zip(full, bare)]),
            "ratio_plugins": med([p / b for p, b in zip(inside, bare)]),
            "each": {name: med(t) for name, t in each.items()}, "values": {n: report[n].value for n in INVARIANTS}}


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=21)
    parser.add_argument("--mesh", type=int, default=None, help="plane mesh (default: the plugins' default, 24)")
    args = parser.parse_args(argv)
    m = measure(args.repeats, args.mesh)
    print(f"Fu-Kane-Mele (4 states, filling 2), invariants {', '.join(INVARIANTS)}: values {m['values']}")
    print(f"k-points diagonalised: {m['k_points']} in {m['batches']} batches")
    print(f"bare numpy.linalg.eigh on {m['k_points']} k-points: {1e3 * m['bare']:.2f} ms (median of {args.repeats})")
    print(f"whole classify:                 {1e3 * m['classify']:.2f} ms, {m['ratio_classify']:.1f}x bare "
          "(median of the per-run ratios)")
    print(f"inside the three plugins:       {1e3 * m['plugins']:.2f} ms, {m['ratio_plugins']:.1f}x bare "
          "(" + ", ".join(f"{name} {1e3 * t:.2f} ms" for name, t in m["each"].items()) + ")")


if __name__ == "__main__":
    main()
