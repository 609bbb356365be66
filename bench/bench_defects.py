"""Benchmarks of the defect samples: states near the gap centre, and the charge bound to a disclination.

    python bench/bench_defects.py states  [--size 116] [--repeats 3] [--scaling]
    python bench/bench_defects.py charge  [--size 230] [--repeats 3] [--scaling]

``states``: the BHZ model (Bernevig, Hughes, Zhang, Science 314, 1757 (2006); M/B = 6, 4 states per cell) on a
flake with a +π/2 disclination at a plaquette centre (1b). Size 116 cuts three quarters of a 116 × 116 square:
40,368 orbitals. Timed: building the sample, and ``states_near(sample, count=20)`` (sparse LU of H − σ in
nested-dissection order, shift-invert Arnoldi).

``charge``: the C4 SSH obstructed atomic limit (Benalcazar, Li, Hughes, Phys. Rev. B 99, 245151 (2019); γ = 0.3,
λ = 1, 1/4 filling, ions at 1a) with a +π/2 disclination at 1b. Size 230: 158,700 orbitals (three quarters of a
230 × 230 square). Timed: building the sample, and ``bound_charge(sample, method="chebyshev")`` on discs up to
radius 8.5 (the Chebyshev expansion of the Fermi step on the ~800 local vectors of the largest disc). Printed: the
charge, its error bound, and its difference from the same measurement on a 40-cell sample, which equals the
value of the dense diagonalisation there to the error bound.

Both report medians of ``--repeats`` runs; ``--scaling`` adds a table against the sample size.
"""

from __future__ import annotations

import argparse
import statistics
import time

import numpy as np

from crystaltop.defects import bound_charge, disclination, states_near
from crystaltop.examples import bernevig_hughes_zhang, c4_breathing_square

RADII = np.arange(2.5, 9.0, 1.0)
IONS = [((0.0, 0.0), 1.0)]


def timed(fn, repeats: int):
    times, out = [], None
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), out


def states_case(size: int, repeats: int) -> dict:
    model = bernevig_hughes_zhang(m=6.0)
    build, sample = timed(lambda: disclination(model, np.pi / 2, size, core="1b"), repeats)
    solve, near = timed(lambda: states_near(sample, count=20), repeats)
    return {"size": size, "orbitals": sample.n_states, "build": build, "solve": solve,
            "lowest": float(np.abs(near.energies).min())}


def charge_case(size: int, repeats: int) -> dict:
    model = c4_breathing_square(gamma=0.3)
    build, sample = timed(lambda: disclination(model, np.pi / 2, size, core="1b", filling=1, ions=IONS), repeats)
    solve, charge = timed(lambda: bound_charge(sample, radii=RADII, method="chebyshev"), repeats)
    return {"size": size, "orbitals": sample.n_states, "build": build, "solve": solve, "charge": charge.value,
            "outer": float(charge.charge[-1]), "error": float(charge.error[-1]), "method": charge.method}


def scaling_table(sizes, case, solve_label, extra=None):
    """A Markdown table of sample size, orbitals, build and solve times (and one more column ``(label, key)``)."""
    columns = ["size", "orbitals", "build [s]", solve_label] + ([extra[0]] if extra else [])
    print("| " + " | ".join(columns) + " |")
    print("|" + "---:|" * len(columns))
    for s in sizes:
        r = case(s)
        cells = [str(s), f"{r['orbitals']:,}", f"{r['build']:.2f}", f"{r['solve']:.2f}"]
        cells += [f"{r[extra[1]]:.6f}"] if extra else []
        print("| " + " | ".join(cells) + " |")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("case", choices=["states", "charge"])
    parser.add_argument("--size", type=int, default=None)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--scaling", action="store_true")
    args = parser.parse_args()
    if args.case == "states":
        size = args.size or 116
        row = states_case(size, args.repeats)
        print(f"BHZ, +π/2 disclination at 1b, size {size}: {row['orbitals']} orbitals")
        print(f"  build {row['build']:.2f} s, 20 states nearest the gap centre {row['solve']:.2f} s "
              f"(total {row['build'] + row['solve']:.2f} s; smallest |E| = {row['lowest']:.4f})")
        if args.scaling:
            scaling_table((30, 60, 90, 116, 140), lambda s: states_case(s, args.repeats), "20 states [s]")
    else:
        size = args.size or 230
        row = charge_case(size, args.repeats)
        ref = charge_case(40, 1)
        print(f"C4 SSH limit, +π/2 disclination at 1b, size {size}: {row['orbitals']} orbitals")
        print(f"  build {row['build']:.2f} s, Chebyshev bound charge {row['solve']:.2f} s "
              f"(total {row['build'] + row['solve']:.2f} s)")
        print(f"  Q = {row['charge']:.6f} (outer disc {row['outer']:.6f}, error bound {row['error']:.1e}); "
              f"40-cell sample: {ref['outer']:.6f}, difference {abs(row['outer'] - ref['outer']):.1e}")
        print(f"  method: {row['method']}")
        if args.scaling:
            scaling_table((40, 80, 120, 160, 230, 300), lambda s: charge_case(s, args.repeats),
                          "Chebyshev charge [s]", ("Q(r = 8.5)", "outer"))


if __name__ == "__main__":
    main()
