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

import importlib

# Public names and the module that defines each; loaded on first use (PEP 562), so that importing one layer
# (e.g. crystaltop.symmetry) does not import them all.
_EXPORTS = {
    "point_group": "symmetry", "point_group_of": "symmetry", "space_group_of": "symmetry",
    "all_point_groups": "symmetry", "PointGroup": "symmetry", "Operation": "symmetry",
    "LatticeModel": "models", "BlochFunction": "models", "BlochModel": "models",
    "classify": "classification", "applicable_invariants": "dispatch", "applicability": "dispatch",
    "InvariantRegistry": "dispatch", "default_registry": "dispatch",
    "Report": "report", "Result": "report", "sweep": "sweep", "SweepTable": "sweep", "verify_defects": "verification",
}


def __getattr__(name):
    if name in _EXPORTS:
        value = getattr(importlib.import_module(f".{_EXPORTS[name]}", __name__), name)
        globals()[name] = value
        return value
    if name == "errors":
        return importlib.import_module(".errors", __name__)
    raise AttributeError(f"module 'crystaltop' has no attribute '{name}'")


def __dir__():
    return sorted(set(globals()) | set(_EXPORTS))


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
    "sweep",
    "SweepTable",
    "verify_defects",
    "errors",
]
