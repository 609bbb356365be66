"""Chern number by the lattice method of Fukui, Hatsugai and Suzuki.

T. Fukui, Y. Hatsugai, H. Suzuki, J. Phys. Soc. Jpn. 74, 1674 (2005): with U_μ(k) = det⟨u(k)|u(k+μ̂)⟩/|…| over
the occupied bands, the plaquette phases F(k) = arg[U₁(k) U₂(k+1̂) U₁(k+2̂)⁻¹ U₂(k)⁻¹] sum to 2π times an integer on
any mesh; it is the Chern number as long as every |F| stays well below π. The literal sum (1/2π) Σ F equals −C in
the Berry convention A = i⟨u|∇u⟩, C = (1/2π)∫Ω that crystaltop reports (docs/conventions.md), hence the sign below.
"""

from __future__ import annotations

import numpy as np

from crystaltop.plugin import Invariant, Outcome, Requirements, hookimpl, plane, uniform_mesh
from crystaltop.errors import MeshTooCoarseError

#: largest plaquette phase accepted, in units of π (the method is exact below 1; this leaves a wide margin)
CONVERGED = 0.35


#: smallest |det| of a link accepted: below it neighbouring occupied subspaces are (nearly) orthogonal, the
#: link phase is undefined, and the mesh must be refined
SMALLEST_LINK = 1e-6


def plaquette_phases_of(u1: np.ndarray, u2: np.ndarray) -> tuple[np.ndarray, float]:
    """F(k) on a periodic 2D mesh from the link determinants ``det U_1``, ``det U_2`` along its two axes (leading
    two dimensions), and the smallest |det| of a link (the phases are meaningless where it vanishes)."""
    a1, a2 = np.abs(u1), np.abs(u2)
    smallest = float(min(a1.min(), a2.min()))
    u1 = u1 / np.maximum(a1, 1e-300)
    u2 = u2 / np.maximum(a2, 1e-300)
    return np.angle(u1 * np.roll(u2, -1, axis=0) * np.conj(np.roll(u1, -1, axis=1)) * np.conj(u2)), smallest


def _orientation(lattice: np.ndarray) -> int:
    """+1 when the reduced axes are right-handed (for 2D: b1 × b2 along +z), else −1."""
    return 1 if np.linalg.det(np.asarray(lattice, dtype=float)) > 0 else -1


class ChernNumber(Invariant):
    name = "chern"
    title = "Chern number"
    requires = Requirements(dims={2, 3})

    def _plane_chern(self, bands, grid, axes) -> tuple[int, float, float]:
        a, b = axes
        u1 = bands.link_determinants(grid, a, embed=False)
        u2 = bands.link_determinants(grid, b, embed=False)
        # bring the two loop axes to the front, in order, dropping the fixed one
        shape = (grid.shape[a], grid.shape[b])
        u1 = np.moveaxis(u1, (a, b), (0, 1)).reshape(shape)
        u2 = np.moveaxis(u2, (a, b), (0, 1)).reshape(shape)
        f, smallest = plaquette_phases_of(u1, u2)
        total = -float(f.sum()) / (2 * np.pi)
        worst = float(np.max(np.abs(f)) / np.pi)
        if smallest < SMALLEST_LINK:  # a vanishing link: not converged whatever the phases say
            worst = 1.0
        return int(round(total)), abs(total - round(total)), worst

    @staticmethod
    def _mesh(context) -> int:
        """Points per axis of the first mesh (the plan and the first pass use the same)."""
        return int(context.option("mesh", 48 if context.dim == 2 else 24))

    def planned_grids(self, context):
        n = self._mesh(context)
        if context.dim == 2:
            return [uniform_mesh((n, n))]
        return [plane(3, i, 0.0, (n, n)) for i in range(3)]

    def compute(self, context):
        bands, dim = context.bands, context.dim
        n = self._mesh(context)
        largest = int(context.option("max_mesh", 384 if dim == 2 else 96))
        sign = _orientation(context.lattice)
        while True:
            if dim == 2:
                grids = [(uniform_mesh((n, n)), (0, 1))]
            else:  # planes k_i = 0 of the three families; oriented by (k_{i+1}, k_{i+2})
                grids = []
                for i in range(3):
                    g = plane(3, i, 0.0, (n, n))
                    grids.append((g, ((i + 1) % 3, (i + 2) % 3)))
            values, worst, off = [], 0.0, 0.0
            bands.eigensystems([grid for grid, _ in grids])  # the planes' new points in one batch (gaps checked below)
            for grid, axes in grids:
                c, err, fmax = self._plane_chern(bands, grid, axes)
                values.append(sign * c)
                worst, off = max(worst, fmax), max(off, err)
            if worst < CONVERGED:
                break
            if 2 * n > largest:
                raise MeshTooCoarseError(
                    f"Chern number not converged: largest plaquette phase {worst:.2f}π on a {n}x{n} mesh "
                    f"(needs < {CONVERGED}π); the gap is probably tiny (smallest {bands.smallest_gap:.1e}); "
                    f"raise max_mesh above {largest}")
            n *= 2
        details = {"integer_deviation": off}
        if dim == 2:
            value = values[0]
            mesh = f"{n}x{n}"
        else:
            value = tuple(values)
            mesh = f"{n}x{n} on the planes k1=0, k2=0, k3=0"
            details["planes"] = "C_i is the Chern number of the planes k_i = const, oriented by (k_{i+1}, k_{i+2})"
        return Outcome(value=value, method="Fukui–Hatsugai–Suzuki lattice method (J. Phys. Soc. Jpn. 74, 1674 (2005))",
                       mesh=mesh, convergence=worst, convergence_label="largest plaquette phase/π",
                       details=details, notes=("Berry convention: A = i⟨u|∇u⟩, C = (1/2π)∫Ω",))


@hookimpl
def crystaltop_invariants():
    return [ChernNumber()]
