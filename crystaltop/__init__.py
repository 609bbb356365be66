"""crystaltop: topological invariants of crystalline Bloch Hamiltonians, keyed by point group.

From one model and a point group, crystaltop builds the representation matrices of the group on the model's
orbitals, checks the model against them, runs every invariant plugin that the symmetry allows and writes one
report.

Examples
--------
>>> import crystaltop as ct
>>> ct.point_group("4mm").order
8
"""

from __future__ import annotations

from . import errors
from .classify import classify
from .dispatch import InvariantRegistry, applicability, applicable_invariants, default_registry
from .models import BlochFunction, BlochModel, LatticeModel
from .report import Report, Result
from .symmetry import Operation, PointGroup, all_point_groups, point_group, point_group_of, space_group_of

__version__ = "0.1.0"

__all__ = [
    "point_group",
    "point_group_of",
    "space_group_of",
    "all_point_groups",
    "PointGroup",
    "Operation",
    "LatticeModel",
    "BlochFunction",
    "BlochModel",
    "classify",
    "applicable_invariants",
    "applicability",
    "InvariantRegistry",
    "default_registry",
    "Report",
    "Result",
    "errors",
]
