"""Point operations: Cartesian matrix, exact form, geometry, spin image and lattice-basis form.

Label scheme
------------
Every operation carries a label built from its matrix alone, so it is unique within any point
group and the same operation has the same label in every group that contains it:

==================  ===========================  =====================================
kind                label                        examples
==================  ===========================  =====================================
identity            ``1``
inversion           ``-1``
rotation, n = 2     ``2<axis>``                  ``2z``, ``2[110]``, ``2(30°)``
rotation, n > 2     ``<n><axis><sense>``         ``4z+``, ``4z-``, ``3[111]+``, ``6z-``
mirror              ``m<normal>``                ``mx``, ``mz``, ``m[-110]``, ``m(60°)``
rotoinversion       ``-<n><axis><sense>``        ``-4z+``, ``-3[1-11]-``, ``-6z+``
==================  ===========================  =====================================

``n`` is the fold of the proper part ``P = det(R) R`` (ITA writes ``-n+`` for ``-1 · n+``), the sense
is ``+`` for a counter-clockwise rotation of ``P`` by ``2π/n`` about the canonical axis (see
:mod:`crystaltop.symmetry.axis_angle`: first non-zero component in the order z, y, x positive) and
``-`` for the clockwise one. The axis (for a mirror its normal) is written as

* ``x``, ``y``, ``z`` for the Cartesian axes;
* ``[uvw]`` for other directions proportional to small integers ``u, v, w`` (*Cartesian* components,
  minus signs written in front of the digit: ``[1-10]`` is the direction (1, -1, 0));
* ``(φ°)`` for other directions in the xy plane, ``φ`` the azimuth from +x in ``[0°, 180°)``;
* ``[0.267,-0.535,0.802]`` (three decimals) for anything else (e.g. randomly oriented groups).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import sympy

from .axis_angle import AxisAngle, axis_angle
from .lattice_basis import act_on_reduced_k, matrix_in_basis
from .spin import su2_rotation

__all__ = ["Operation", "make_operation", "operation_label"]

_KIND_OF_IMPROPER = {1: "inversion", 2: "mirror"}


@dataclass(frozen=True, eq=False)
class Operation:
    """A point operation ``r -> R r`` (an element of a crystallographic point group).

    Equality and hashing go by ``label`` (and, for equality, the matrix), so operations can be used
    as dictionary keys; operations of differently oriented groups with equal labels are equal only
    if their matrices agree.
    """

    label: str
    """Unique, human-readable name (see the module docstring for the scheme)."""
    matrix: np.ndarray
    """(3, 3) float Cartesian matrix ``R`` acting on column vectors, read-only."""
    exact: sympy.ImmutableMatrix
    """Exact form of ``R`` (entries such as ``sqrt(3)/2``; sympy Floats where no exact form is known)."""
    kind: str
    """``"identity"``, ``"rotation"``, ``"inversion"``, ``"mirror"`` or ``"rotoinversion"``."""
    fold: int
    """n of the proper part's rotation by 2π/n: 1 for ``1`` and ``-1``, 2 for ``2`` and ``m``, 3, 4, 6."""
    type_symbol: str
    """ITA symbol of the operation type: ``1, 2, 3, 4, 6, -1, m, -3, -4, -6``."""
    axis: np.ndarray
    """(3,) unit axis of the proper part with the canonical sign (for a mirror its normal); zeros for 1, -1."""
    angle: float
    """Signed rotation angle of the proper part about ``axis``, in ``(-π, π]``."""
    det: int
    """+1 for proper, -1 for improper operations."""
    is_proper: bool
    """``det == +1``."""
    spin: np.ndarray = field(repr=False)
    """(2, 2) SU(2) image ``exp(-i angle axis·σ/2)`` (see :mod:`crystaltop.symmetry.spin`), read-only."""

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Operation):
            return NotImplemented
        return self.label == other.label and bool(np.allclose(self.matrix, other.matrix, atol=1e-9))

    def __hash__(self) -> int:
        return hash(("Operation", self.label))

    def __repr__(self) -> str:
        return f"Operation({self.label!r}, {self.kind})"

    def approx_equal(self, other: "Operation | np.ndarray", tol: float = 1e-8) -> bool:
        """True if the Cartesian matrices agree to ``tol`` (labels are not compared)."""
        matrix = other.matrix if isinstance(other, Operation) else np.asarray(other, dtype=float)
        return bool(np.abs(self.matrix - matrix).max() <= tol)

    def in_basis(self, lattice: np.ndarray) -> np.ndarray:
        """Integer matrix ``W = inv(Aᵀ) R Aᵀ`` of the operation in the basis of ``lattice``.

        Parameters
        ----------
        lattice : (dim, dim) array_like
            Lattice vectors as rows, ``dim`` in 1, 2, 3 (1D along x, 2D in the xy plane).

        Returns
        -------
        (dim, dim) int ndarray
            Acting on column fractional coordinates, ``f' = W f``.

        Raises
        ------
        LatticeMismatchError
            If the operation does not map the lattice onto itself (names the operation).

        Examples
        --------
        >>> from crystaltop.symmetry import point_group
        >>> point_group("4")["4z+"].in_basis([[1.0, 0.0], [0.0, 1.0]])
        array([[ 0, -1],
               [ 1,  0]])
        """
        return matrix_in_basis(self.matrix, lattice, self.label)

    def acts_on_k(self, k: np.ndarray, lattice: np.ndarray) -> np.ndarray:
        """Image ``g k`` of reduced momenta ``k`` (..., dim): the row rule ``k' = k inv(W)``."""
        return act_on_reduced_k(self.in_basis(lattice), k)

    def fixes(self, k: np.ndarray, lattice: np.ndarray, tol: float = 1e-9) -> np.ndarray:
        """Boolean array (...): ``g k == k`` modulo reciprocal lattice vectors."""
        karr = np.asarray(k, dtype=float)
        shift = self.acts_on_k(karr, lattice) - karr
        return np.all(np.abs(shift - np.rint(shift)) <= tol, axis=-1)


def make_operation(exact: sympy.MatrixBase, matrix: np.ndarray | None = None) -> Operation:
    """Build an :class:`Operation` from its exact matrix (and, optionally, a more accurate float form)."""
    exact = sympy.ImmutableMatrix(exact)
    if matrix is None:
        matrix = np.array(exact.evalf(20).tolist(), dtype=float)
    matrix = np.array(matrix, dtype=float)
    matrix[np.abs(matrix) < 1e-15] = 0.0
    matrix.setflags(write=False)
    geometry = axis_angle(matrix)
    kind, type_symbol = _kind_and_type(geometry)
    spin = su2_rotation(geometry.axis, geometry.angle)
    spin.setflags(write=False)
    return Operation(
        label=operation_label(geometry),
        matrix=matrix,
        exact=exact,
        kind=kind,
        fold=geometry.fold,
        type_symbol=type_symbol,
        axis=geometry.axis,
        angle=geometry.angle,
        det=geometry.det,
        is_proper=geometry.det == 1,
        spin=spin,
    )


def _kind_and_type(geometry: AxisAngle) -> tuple[str, str]:
    if geometry.det == 1:
        return ("identity", "1") if geometry.fold == 1 else ("rotation", str(geometry.fold))
    if geometry.fold in _KIND_OF_IMPROPER:
        kind = _KIND_OF_IMPROPER[geometry.fold]
        return kind, ("-1" if kind == "inversion" else "m")
    return "rotoinversion", f"-{geometry.fold}"


def operation_label(geometry: AxisAngle) -> str:
    """Label of an operation from its geometry (see the module docstring)."""
    kind, _ = _kind_and_type(geometry)
    if kind == "identity":
        return "1"
    if kind == "inversion":
        return "-1"
    name = axis_name(geometry.axis)
    if kind == "mirror":
        return f"m{name}"
    sense = "" if geometry.fold == 2 else ("+" if geometry.angle > 0 else "-")
    prefix = "-" if kind == "rotoinversion" else ""
    return f"{prefix}{geometry.fold}{name}{sense}"


def axis_name(axis: np.ndarray) -> str:
    """Short name of a unit direction: ``x``, ``[1-10]``, ``(30°)`` or ``[0.267,-0.535,0.802]``."""
    for name, unit in (("x", (1, 0, 0)), ("y", (0, 1, 0)), ("z", (0, 0, 1))):
        if np.abs(axis - np.array(unit)).max() < 1e-8:
            return name
    nonzero = np.abs(axis)[np.abs(axis) > 1e-8]
    scaled = axis / nonzero.min()
    digits = np.rint(scaled)
    if np.abs(scaled - digits).max() < 1e-6 and np.abs(digits).max() <= 3:
        return "[" + "".join(str(int(d)) for d in digits) + "]"
    if abs(axis[2]) < 1e-8:
        azimuth = float(np.degrees(np.arctan2(axis[1], axis[0]))) % 180.0
        if abs(azimuth - round(azimuth)) < 1e-6:
            return f"({int(round(azimuth)) % 180}°)"
        return f"({azimuth:.2f}°)"
    return "[" + ",".join(f"{c:.3f}" for c in axis) + "]"
