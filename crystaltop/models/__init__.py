"""Models: what a Bloch Hamiltonian gives the rest of crystaltop, a tight-binding builder, a callable wrapper.

* :class:`BlochModel` -- the interface: ``hamiltonian(k)``, ``symmetry_matrix(op, k)``, ``time_reversal_matrix()``,
  ``position_phase(dk)``, ``with_basis(U)``, ``rewrapped(shifts)``, for whole batches of reduced momenta.
* :class:`LatticeModel` -- sites with real s/p/d orbitals, onsite terms and bonds (Hermitian conjugates implied),
  spin; its symmetry matrices follow from the sites.
* :class:`BlochFunction` -- any callable ``H(k)`` with explicit representations of (a generating set of) a group.
* checks -- :func:`check_hermitian`, :func:`symmetry_violations`, :func:`check_symmetric`,
  :func:`detect_point_group`; and :func:`symmetrized`, the group average.

Conventions: docs/conventions.md (PHYSICS.md §1).
"""

from __future__ import annotations

from .base import BlochModel
from .bloch_function import BlochFunction
from .checks import check_hermitian, check_symmetric, symmetry_violations
from .detect import detect_point_group
from .lattice_model import Bond, LatticeModel, Site
from .symmetrize import symmetrized
from .transformed import TransformedModel

__all__ = [
    "BlochModel",
    "LatticeModel",
    "BlochFunction",
    "TransformedModel",
    "Site",
    "Bond",
    "check_hermitian",
    "symmetry_violations",
    "check_symmetric",
    "detect_point_group",
    "symmetrized",
]
