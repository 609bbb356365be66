"""Exception types of crystaltop.

Every error the library raises on bad input derives from :class:`CrystaltopError`
and carries a one-line message that names the cause (the k-point, the operation,
the group symbol...) and, where possible, what to change.
"""

from __future__ import annotations

__all__ = [
    "CrystaltopError",
    "UnknownGroupError",
    "LatticeMismatchError",
    "ShapeError",
    "NonHermitianError",
    "SymmetryBreakingError",
    "FillingError",
    "GapClosedError",
    "MeshTooCoarseError",
    "NotApplicable",
    "PluginError",
    "CrossCheckMismatch",
    "DefectGeometryError",
    "UnknownOperationError",
    "UnknownOrbitalError",
]


class CrystaltopError(Exception):
    """Base class of every error raised by crystaltop."""


class UnknownGroupError(CrystaltopError, KeyError):
    """A point-group symbol that is not one of the 32 crystallographic classes."""

    def __str__(self) -> str:  # KeyError would quote the message
        return str(self.args[0]) if self.args else ""


class LatticeMismatchError(CrystaltopError):
    """The lattice does not admit the operation (in the orientation given)."""


class ShapeError(CrystaltopError, ValueError):
    """An array argument has the wrong shape or dtype."""


class NonHermitianError(CrystaltopError):
    """H(k) is not Hermitian at some k-point."""


class SymmetryBreakingError(CrystaltopError):
    """The model does not respect an operation it was declared to have."""


class FillingError(CrystaltopError, ValueError):
    """The filling is out of range or incompatible with the symmetry (e.g. odd with T^2 = -1)."""


class GapClosedError(CrystaltopError):
    """The direct gap above the occupied bands closes (or falls below tolerance) at a k-point."""


class MeshTooCoarseError(CrystaltopError):
    """A lattice method did not converge within the largest mesh allowed."""


class NotApplicable(CrystaltopError):
    """Raised by an invariant's compute step when, on closer look, it does not apply.

    The dispatcher records the invariant as *skipped* with this message as the reason.
    """


class PluginError(CrystaltopError):
    """A plugin is malformed (bad declaration, unknown dependency, dependency cycle)."""


class CrossCheckMismatch(CrystaltopError):
    """Two independent methods gave different values for the same invariant."""


class DefectGeometryError(CrystaltopError, ValueError):
    """A defect cannot be built as asked (Burgers vector, Frank angle, sample size)."""


class UnknownOperationError(CrystaltopError, KeyError):
    """An operation label (or matrix) that is not an element of the point group at hand."""

    def __str__(self) -> str:  # KeyError would quote the message
        return str(self.args[0]) if self.args else ""


class UnknownOrbitalError(CrystaltopError, ValueError):
    """An orbital kind that is not one of the real s, p, d functions crystaltop knows."""
