"""Benchmark: the Chern number of a 4-band model on a 200x200 mesh against the bare batched eigendecomposition.

    python bench/bench_chern.py [--mesh 200] [--repeats 7] [--scaling]

The model is two Qi–Wu–Zhang layers (m = 1 and m = 0.5, each C = -1, Phys. Rev. B 74, 085308 (2006)) coupled by a
k-independent hybridisation, written as a LatticeModel (4 states, filling 2). The "bare" cost is one call of
numpy.linalg.eigh on the 200 x 200 = 40,000 Hamiltonians, already built; the crystaltop cost is a whole
`classify(..., invariants=["chern"])` (building H, the Hermiticity and symmetry checks, the gap check, the
links and the plaquette sum). Both are medians of several runs.
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np

import crystaltop as ct
from crystaltop.kspace import uniform_mesh

SX = np.array([[0, 1], [1, 0]], dtype=complex)
SY = np.array([[0, -1j], [1j, 0]], dtype=complex)
SZ = np.diag([1.0, -1.0]).astype(complex)


def coupled_layers(n_layers: int = 2, coupling: float = 0.3) -> ct.LatticeModel:
    """n_layers spinful-s QWZ copies (2 states each) on one square lattice, neighbours hybridised on site."""
    model = ct.LatticeModel(np.eye(2), spinful=True, name=f"{n_layers} coupled QWZ layers")
    masses = [1.0, 0.5, 1.5, 0.7, 1.3, 1.2, 0.8, 0.4][:n_layers]
    sites = []
    for layer, m in enumerate(masses):
        s, = model.add_site((0.0, 0.0), "s", label=f"layer{layer}")
        model.set_onsite(s, m * SZ)
        model.add_hopping((SZ - 1j * SX) / 2, s, s, (1, 0))
        model.add_hopping((SZ - 1j * SY) / 2, s, s, (0, 1))
        sites.append(s)
    for a, b in zip(sites[:-1], sites[1:]):
        model.add_hopping(coupling * np.eye(2), a, b)
    return model


def median_time(fn, repeats: int) -> float:
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def measure(n_layers: int, mesh: int, repeats: int) -> dict:
    model = coupled_layers(n_layers)
    filling = n_layers
    h = model.hamiltonian(uniform_mesh((mesh, mesh)).points)
    bare = median_time(lambda: np.linalg.eigh(h), repeats)
    opts = {"chern": {"mesh": mesh}}
    report = ct.classify(model, group="4", filling=filling, invariants=["chern"], options=opts)
    full = median_time(lambda: ct.classify(model, group="4", filling=filling, invariants=["chern"], options=opts),
                       repeats)
    return {"states": 2 * n_layers, "mesh": mesh, "k_points": report.band_stats["k_points"],
            "chern": report["chern"].value, "converged_mesh": report["chern"].mesh, "bare_s": bare,
            "classify_s": full, "ratio": full / bare}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--mesh", type=int, default=200)
    ap.add_argument("--repeats", type=int, default=7)
    ap.add_argument("--scaling", action="store_true", help="also vary the mesh and the number of bands")
    args = ap.parse_args()
    rows = [measure(2, args.mesh, args.repeats)]
    if args.scaling:
        rows += [measure(2, n, args.repeats) for n in (50, 100, 400)]
        rows += [measure(nl, args.mesh, max(3, args.repeats // 2)) for nl in (4, 8)]
    print(f"{'states':>6} {'mesh':>9} {'k-points':>9} {'C':>4} {'bare eigh [s]':>14} {'classify [s]':>13} {'ratio':>6}")
    for r in rows:
        print(f"{r['states']:>6} {r['converged_mesh']:>9} {r['k_points']:>9} {r['chern']:>4} {r['bare_s']:>14.4f} "
              f"{r['classify_s']:>13.4f} {r['ratio']:>6.2f}")


if __name__ == "__main__":
    main()
