"""Weak indices (ν₁, ν₂, ν₃) of a three-dimensional time-reversal-symmetric insulator (T² = −1).

L. Fu, C. L. Kane, E. J. Mele, Phys. Rev. Lett. 98, 106803 (2007); PHYSICS.md §4: ν_i is the Z2 index of the
time-reversal-invariant plane k_i = 1/2 (reduced coordinates, i.e. in the basis of the primitive reciprocal vectors
G_i). The weak vector is M_ν = ½ Σ ν_i G_i (Cartesian, units of inverse length of the lattice), the vector that
the dislocation rule B·M_ν = π mod 2π uses (Ran, Zhang, Vishwanath, Nat. Phys. 5, 298 (2009)).

The plane values are computed once, by the ``z2`` invariant (Wannier-centre flow), and read from its
``details["planes"]``: no plane is diagonalised twice.
"""

from __future__ import annotations

import numpy as np

from crystaltop.errors import CrystaltopError, GapClosedError
from crystaltop.plugin import Invariant, Outcome, Requirements, hookimpl, plane


def reciprocal_vectors(lattice) -> np.ndarray:
    """Rows G_i with a_i · G_j = 2π δ_ij (docs/conventions.md)."""
    return 2.0 * np.pi * np.linalg.inv(np.asarray(lattice, dtype=float)).T


def weak_vector(nu, lattice) -> np.ndarray:
    """M_ν = ½ Σ ν_i G_i, Cartesian."""
    return 0.5 * np.asarray(nu, dtype=float) @ reciprocal_vectors(lattice)


class WeakIndices(Invariant):
    name = "weak_indices"
    title = "Weak Z2 indices (ν₁ν₂ν₃)"
    requires = Requirements(dims={3}, time_reversal=True, spinful=True, optional_uses=("z2",))

    def compute(self, context):
        z2 = context.result("z2")
        if z2 is None:
            self._explain_missing(context)
        planes = z2.details["planes"]
        nu = tuple(int(planes[f"k{i}=0.5"]) for i in (1, 2, 3))
        g = reciprocal_vectors(context.lattice)
        m_nu = weak_vector(nu, context.lattice)
        label = "(" + "".join(str(v) for v in nu) + ")"
        details = {
            "weak_vector": tuple(float(v) for v in m_nu),
            "G_nu": tuple(float(v) for v in 2.0 * m_nu),
            "reciprocal_vectors": g.tolist(),
            "label": label,
            "fu_kane_label": f"{z2.value};{label}",
            "plane_z2": dict(planes),
        }
        notes = ("ν_i = Z2 of the plane k_i = 1/2, in the basis of the primitive reciprocal vectors G_i; "
                 "M_ν = ½ Σ ν_i G_i (Cartesian) in details['weak_vector']",)
        return Outcome(value=nu, method="Z2 of the planes k_i = 1/2 from the Wannier-centre flow of z2 "
                                        "(Fu, Kane, Mele, PRL 98, 106803 (2007))",
                       mesh=z2.mesh, convergence=z2.convergence, convergence_label=z2.convergence_label,
                       details=details, notes=notes)

    @staticmethod
    def _explain_missing(context):
        """z2 did not succeed: name the closed gap on a time-reversal-invariant plane if there is one."""
        n = int(context.option("mesh", 24))
        n += n % 2
        for value in (0.5, 0.0):
            for i in range(3):
                try:
                    context.bands.check_gap(plane(3, i, value, (n, n)))
                except GapClosedError as exc:
                    raise GapClosedError(f"on the time-reversal-invariant plane k{i + 1}={value:g}: {exc}") from None
        raise CrystaltopError("the Z2 indices of the planes k_i = 1/2 are not available: the z2 invariant, which "
                              "computes them, did not succeed (see its record)")


@hookimpl
def crystaltop_invariants():
    return [WeakIndices()]
