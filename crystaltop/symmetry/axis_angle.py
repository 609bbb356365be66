"""Axis, angle and fold of a Cartesian point operation, with the canonical axis sign.

Every orthogonal 3x3 matrix ``R`` is written as ``R = det(R) * P`` with ``P`` a proper rotation by
``angle`` about the unit ``axis``. A rotation by ``θ`` about ``n`` equals the rotation by ``-θ``
about ``-n``, so one of the two descriptions is chosen once and used everywhere (labels, spin
images, the ``axis``/``angle`` fields of an operation):

**Canonical axis sign.** The first component of ``axis`` that is non-zero in the order ``z, y, x``
is positive. The angle follows from that choice and lies in ``(-π, π]``; a two-fold rotation
always has ``angle = +π``. Examples: ``2z`` has axis ``+z``; an in-plane axis has its azimuth in
``[0°, 180°)``; the cube diagonal of a three-fold axis is one of ``[111], [-1-11], [1-11], [-111]``.

The identity and the inversion have ``axis = (0, 0, 0)`` and ``angle = 0``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from crystaltop.errors import ShapeError, UnknownGroupError

__all__ = ["AxisAngle", "axis_angle", "canonical_axis", "CRYSTALLOGRAPHIC_FOLDS"]

#: Orders of the proper parts allowed by the crystallographic restriction.
CRYSTALLOGRAPHIC_FOLDS = (1, 2, 3, 4, 6)

_ORTHO_TOL = 1e-6
_ZERO = 1e-9


@dataclass(frozen=True)
class AxisAngle:
    """Geometric description of an orthogonal matrix ``R = det * P``."""

    det: int
    """+1 for a proper rotation, -1 for an improper operation."""
    axis: np.ndarray
    """(3,) unit axis of the proper part ``P`` with the canonical sign, zeros for ``P = 1``."""
    angle: float
    """Signed rotation angle of ``P`` about ``axis``, in ``(-π, π]``."""
    fold: int
    """n with ``|angle| = 2π/n`` (1 for ``P = 1``)."""


def canonical_axis(axis: np.ndarray, tol: float = _ZERO) -> tuple[np.ndarray, int]:
    """Return ``(±axis, sign)`` with the first non-zero component in the order z, y, x positive."""
    for component in (2, 1, 0):
        if abs(axis[component]) > tol:
            sign = 1 if axis[component] > 0 else -1
            return sign * axis, sign
    return axis, 1


def check_orthogonal(matrix: np.ndarray, *, what: str = "matrix", tol: float = _ORTHO_TOL) -> np.ndarray:
    """Return ``matrix`` as a float (3, 3) array after checking that it is orthogonal."""
    arr = np.asarray(matrix, dtype=float)
    if arr.shape != (3, 3):
        raise ShapeError(f"{what} must have shape (3, 3), got {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise ShapeError(f"{what} has non-finite entries")
    deviation = np.abs(arr @ arr.T - np.eye(3)).max()
    if deviation > tol:
        raise ShapeError(f"{what} is not orthogonal: |R Rᵀ - 1| = {deviation:.2g}")
    return arr


def axis_angle(matrix: np.ndarray) -> AxisAngle:
    """Describe an orthogonal 3x3 matrix by determinant, canonical axis, signed angle and fold.

    Raises
    ------
    ShapeError
        If the matrix is not a (3, 3) orthogonal matrix.
    UnknownGroupError
        If the rotation angle of the proper part is not 2π/n for a crystallographic n.
    """
    rot = check_orthogonal(matrix)
    det = 1 if np.linalg.det(rot) > 0 else -1
    proper = det * rot
    cos_theta = float(np.clip((np.trace(proper) - 1.0) / 2.0, -1.0, 1.0))
    theta = float(np.arccos(cos_theta))
    if theta < 1e-7:
        return AxisAngle(det=det, axis=_frozen(np.zeros(3)), angle=0.0, fold=1)
    if np.pi - theta < 1e-6:
        # P = 2 n nᵀ - 1 for a half turn: read n off the largest column of (P + 1) / 2.
        outer = (proper + np.eye(3)) / 2.0
        column = int(np.argmax(np.diag(outer)))
        axis = outer[:, column] / np.sqrt(outer[column, column])
        axis, _ = canonical_axis(axis / np.linalg.norm(axis))
        theta = np.pi
    else:
        axis = np.array(
            [proper[2, 1] - proper[1, 2], proper[0, 2] - proper[2, 0], proper[1, 0] - proper[0, 1]]
        )
        axis = axis / np.linalg.norm(axis)
        axis, sign = canonical_axis(axis)
        theta = sign * theta
    fold = int(round(2.0 * np.pi / abs(theta)))
    if fold not in CRYSTALLOGRAPHIC_FOLDS or abs(abs(theta) - 2.0 * np.pi / fold) > 1e-5:
        raise UnknownGroupError(
            f"rotation by {np.degrees(theta):.4g}° is not a crystallographic operation "
            f"(allowed: 2π/n with n in {CRYSTALLOGRAPHIC_FOLDS})"
        )
    return AxisAngle(det=det, axis=_frozen(axis), angle=float(theta), fold=fold)


def _frozen(arr: np.ndarray) -> np.ndarray:
    out = np.array(arr, dtype=float)
    out[np.abs(out) < 1e-15] = 0.0  # no negative zeros in printed axes
    out.setflags(write=False)
    return out
