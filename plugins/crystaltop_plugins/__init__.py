"""The built-in invariant plugins of crystaltop.

Each module provides one invariant through the ``crystaltop_invariants`` hook and is registered through the
entry-point group ``crystaltop.invariants`` exactly like an outside plugin. They import only the public plugin
API :mod:`crystaltop.plugin` (and numpy).
"""

#: module names of the built-in plugins, in the order they are listed in pyproject.toml
BUILTIN = ("chern", "polarization", "z2", "weak_indices", "parity_indices", "inversion_indicator",
           "rotation_eigenvalues", "rotation_indices", "mirror_chern", "corner_charge", "dislocation_response",
           "disclination_charge")
