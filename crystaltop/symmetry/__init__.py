"""Symmetry core of crystaltop: point groups, operations and their representations.

The 32 crystallographic point groups (keyed by Hermann–Mauguin short symbol, Schoenflies accepted),
built from generators in exact arithmetic; each operation with its Cartesian matrix, geometry, spin-1/2
image and integer matrix in a lattice basis; real s, p, d orbital representations; time reversal; and
one adapter over spglib for crystals. Depends on numpy, sympy, spglib and :mod:`crystaltop.errors` only.

Examples
--------
>>> from crystaltop.symmetry import point_group
>>> group = point_group("C4v")
>>> group.symbol, [op.label for op in group.rotations(4)]
('4mm', ['4z+', '4z-'])
"""

from __future__ import annotations

from .catalogue import CLASS_SYMBOLS, normalize_symbol
from .groups import PointGroup, all_point_groups, point_group
from .operations import Operation
from .orbitals import ORBITAL_SHELLS, expand_kinds, orbital_block, orbital_matrix
from .spglib_bridge import SpaceGroupInfo, point_group_of, site_symmetry_group, space_group_of
from .spin import double_group_sign, spin_matrix
from .time_reversal import time_reversal_matrix

__all__ = [
    "CLASS_SYMBOLS",
    "ORBITAL_SHELLS",
    "Operation",
    "PointGroup",
    "SpaceGroupInfo",
    "all_point_groups",
    "double_group_sign",
    "expand_kinds",
    "normalize_symbol",
    "orbital_block",
    "orbital_matrix",
    "point_group",
    "point_group_of",
    "site_symmetry_group",
    "space_group_of",
    "spin_matrix",
    "time_reversal_matrix",
]
