"""Polarization from the Berry phase of Wilson loops (King-Smith and Vanderbilt).

R. D. King-Smith, D. Vanderbilt, Phys. Rev. B 47, 1651 (1993); R. Resta, Rev. Mod. Phys. 66, 899 (1994).
P_i is the sum of the occupied hybrid Wannier centres along a_i, averaged over the transverse momenta,
in units of e·a_i (electrons counted positive), relative to the origin about which the point group acts, mod 1.
It is defined only when the Chern numbers vanish. Where an operation maps P_i to −P_i (inversion, a two-fold
rotation about the normal in 2D, ...), or more generally where W P ≡ P (mod 1) for every operation W of the group
fixes P to a discrete set, the value is reported as the quantised one, with the measured deviation.
"""

from __future__ import annotations

from functools import lru_cache
from itertools import product

import numpy as np

from crystaltop.errors import CrystaltopError, NotApplicable
from crystaltop.plugin import Invariant, Outcome, Requirements, hookimpl, uniform_mesh

#: largest distance of the measured P from the quantised value accepted
QUANTISATION_TOL = 1e-3
_DENOMINATORS = 12  # allowed values are multiples of 1/12 (covers halves, thirds, quarters, sixths)


def centre_sums(determinants: np.ndarray) -> np.ndarray:
    """Sum of Wannier centres ``-arg det W / 2π`` from the Wilson-loop determinants, in [0, 1)."""
    return np.mod(-np.angle(determinants) / (2 * np.pi), 1.0)


def transverse_average(x: np.ndarray) -> float:
    """Mean of a periodic quantity (period 1) over a transverse mesh, unwrapped along every axis."""
    phase = 2 * np.pi * np.asarray(x, dtype=float)
    for ax in range(phase.ndim):
        phase = np.unwrap(phase, axis=ax)
    return float(np.mod(phase.mean() / (2 * np.pi), 1.0))


def torus_distance(a, b) -> np.ndarray:
    d = np.mod(np.asarray(a) - np.asarray(b) + 0.5, 1.0) - 0.5
    return np.abs(d)


def symmetry_constraints(group, lattice, dim: int) -> list[np.ndarray]:
    """The integer matrices W − 1 (lattice basis) whose products with P must be integer vectors."""
    out = []
    for op in group.operations:
        w = np.asarray(op.in_basis(lattice), dtype=float)[:dim, :dim]
        if not np.allclose(w, np.eye(dim)):
            out.append((w - np.eye(dim), op.label))
    return out


def quantised_values(constraints, dim: int):
    """Allowed P (if the symmetry fixes it to a discrete set) per component: list of (allowed set or None, op)."""
    if not constraints:
        return [None] * dim
    a = np.vstack([c for c, _ in constraints])
    if np.linalg.matrix_rank(a) == dim:
        cands = np.array(list(product(np.arange(_DENOMINATORS) / _DENOMINATORS, repeat=dim)))
        ok = np.all(np.abs((cands @ a.T) - np.round(cands @ a.T)) < 1e-9, axis=1)
        return [("all", cands[ok], ", ".join(sorted({lab for _, lab in constraints})))]
    per = [None] * dim
    for c, lab in constraints:
        for i in range(dim):
            row = c[i] + np.eye(dim)[i]  # row i of W
            if np.allclose(row, -np.eye(dim)[i]) and per[i] is None:
                per[i] = ("one", np.array([0.0, 0.5]), lab)
    return per


def allowed_values(group, lattice, dim: int):
    """:func:`quantised_values` of the group's constraints on this lattice, worked out once per group and lattice."""
    lattice = np.asarray(lattice, dtype=float)
    return _allowed_values(group, lattice.tobytes(), lattice.shape, dim)


@lru_cache(maxsize=256)
def _allowed_values(group, lattice_bytes: bytes, shape: tuple, dim: int):
    lattice = np.frombuffer(lattice_bytes, dtype=float).reshape(shape)
    found = quantised_values(symmetry_constraints(group, lattice, dim), dim)
    for entry in found:
        if entry is not None:
            entry[1].setflags(write=False)  # shared between reports
    return found


class Polarization(Invariant):
    name = "polarization"
    title = "Polarization (Wannier-centre sum)"
    requires = Requirements(dims={1, 2, 3}, optional_uses=("chern",))

    @staticmethod
    def _mesh(context) -> int:
        """Points per axis of the mesh (the plan and the computation use the same); even, so that the half mesh
        is a sub-grid of it (the convergence figure at no cost)."""
        n = int(context.option("mesh", {1: 96, 2: 48, 3: 24}[context.dim]))
        return n + n % 2

    def planned_grids(self, context):
        # the mesh is used only where the Chern numbers vanish: planned where time reversal (or one dimension)
        # makes them vanish, not where that is known only once chern has run
        dim = context.dim
        if dim >= 2 and not context.time_reversal:
            return ()
        return [uniform_mesh((self._mesh(context),) * dim)]  # the half mesh is a sub-grid of it

    def compute(self, context):
        dim, bands = context.dim, context.bands
        if dim >= 2:
            chern = context.result("chern")
            if chern is None:
                rec = context.record("chern")
                why = f"chern {rec.status}: {rec.message}" if rec is not None else "chern is not installed"
                raise NotApplicable(f"needs a vanishing Chern number, which is not known ({why})")
            if np.any(np.asarray(chern.value) != 0):
                raise NotApplicable(f"Chern number {chern.value} is not zero: the polarization is not defined")
        n = self._mesh(context)
        full = uniform_mesh((n,) * dim)
        half = uniform_mesh((n // 2,) * dim)
        measured, change = [], 0.0
        for axis in range(dim):
            # det W as the product of the link determinants: the loops themselves are never formed
            p_full = transverse_average(centre_sums(bands.wilson_loop_determinants(full, axis)))
            p_half = transverse_average(centre_sums(bands.wilson_loop_determinants(half, axis)))
            measured.append(p_full)
            change = max(change, float(torus_distance(p_full, p_half)))
        measured = np.array(measured)
        value = tuple(float(x) for x in measured)
        notes, details = [], {"measured": value, "change_from_half_mesh": change}
        allowed = allowed_values(context.group, context.lattice, dim)
        if allowed and allowed[0] is not None and allowed[0][0] == "all":
            _, cands, labels = allowed[0]
            dist = torus_distance(cands, measured).max(axis=1)
            best = int(np.argmin(dist))
            if dist[best] > QUANTISATION_TOL:
                raise CrystaltopError(
                    f"polarization {np.round(measured, 4).tolist()} is not one of the values allowed by {labels} "
                    f"(nearest {cands[best].tolist()}, off by {dist[best]:.1e}): mesh too coarse or symmetry broken")
            value = tuple(float(x) for x in cands[best])
            details["quantised_by"] = labels
            details["quantisation_deviation"] = float(dist[best])
            notes.append(f"quantised by {labels}: P = {value} (measured within {dist[best]:.1e})")
        else:
            quant = {}
            for i, entry in enumerate(allowed):
                if entry is None:
                    continue
                _, cands, lab = entry
                d = torus_distance(cands, measured[i])
                j = int(np.argmin(d))
                if d[j] > QUANTISATION_TOL:
                    raise CrystaltopError(
                        f"P_{i + 1} = {measured[i]:.4f} should be 0 or 1/2 by {lab} (off by {d[j]:.1e}): "
                        "mesh too coarse or symmetry broken")
                quant[i] = (float(cands[j]), lab, float(d[j]))
            if quant:
                value = tuple(quant[i][0] if i in quant else float(measured[i]) for i in range(dim))
                details["quantised_components"] = {f"P{i + 1}": {"value": v, "by": lab, "deviation": dev}
                                                   for i, (v, lab, dev) in quant.items()}
                notes.append("quantised to 0 or 1/2: " + ", ".join(f"P{i + 1} by {quant[i][1]}" for i in quant))
        notes.append("Wannier-centre sum of the occupied bands per lattice vector, mod 1, about the group's origin")
        return Outcome(value=value, method="Berry phase of Wilson loops (King-Smith & Vanderbilt, PRB 47, 1651 (1993))",
                       mesh="x".join([str(n)] * dim), convergence=change,
                       convergence_label="change from the half mesh", details=details, notes=tuple(notes))


@hookimpl
def crystaltop_invariants():
    return [Polarization()]
