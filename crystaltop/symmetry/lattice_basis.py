"""Point operations written in a lattice basis, and their action on reduced momenta.

Conventions (PHYSICS.md §1): lattice vectors are the rows of ``lattice``; a ``dim < 3`` lattice is
embedded in 3D by padding with unit vectors along the missing Cartesian axes (1D: y, z; 2D: z).
For the padded ``A`` the integer matrix of a Cartesian ``R`` is (spglib's convention)

    W = inv(Aᵀ) R Aᵀ,      f' = W f   for column fractional coordinates f,

and a reduced momentum (a row in units of the reciprocal basis) transforms as ``k' = k inv(W)``.
"""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from crystaltop.errors import LatticeMismatchError, ShapeError

__all__ = ["INTEGRALITY_TOL", "as_lattice", "embedded_lattice", "matrix_in_basis", "act_on_reduced_k"]

#: Largest deviation of ``W`` from an integer matrix accepted as "maps the lattice onto itself".
INTEGRALITY_TOL = 1e-6


def as_lattice(lattice: np.ndarray) -> np.ndarray:
    """Validate a lattice (rows are primitive vectors) of dimension 1, 2 or 3 and return it as floats."""
    arr = np.asarray(lattice, dtype=float)
    if arr.ndim == 1 and arr.size == 1:
        arr = arr.reshape(1, 1)
    if arr.ndim != 2 or arr.shape[0] != arr.shape[1] or arr.shape[0] not in (1, 2, 3):
        raise ShapeError(f"lattice must be a square (dim, dim) array with dim in 1, 2, 3, got shape {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise ShapeError("lattice has non-finite entries")
    if abs(np.linalg.det(arr)) < 1e-12 * max(1.0, float(np.abs(arr).max()) ** arr.shape[0]):
        raise ShapeError("lattice vectors are linearly dependent (det = 0)")
    return arr


def embedded_lattice(lattice: np.ndarray) -> np.ndarray:
    """Return the 3x3 padded lattice ``A`` (rows) of a 1D, 2D or 3D lattice."""
    arr = as_lattice(lattice)
    dim = arr.shape[0]
    padded = np.eye(3)
    padded[:dim, :dim] = arr
    return padded


def matrix_in_basis(rotation: np.ndarray, lattice: np.ndarray, label: str) -> np.ndarray:
    """Integer matrix ``W`` (dim x dim) of the Cartesian ``rotation`` in the basis of ``lattice``.

    Raises
    ------
    LatticeMismatchError
        If ``W`` is not integral within :data:`INTEGRALITY_TOL`, or if for a 1D/2D lattice ``R`` does
        not map the lattice's line/plane onto itself. The message names the operation ``label``.
    """
    rot = np.ascontiguousarray(rotation, dtype=float)
    lat = np.ascontiguousarray(lattice, dtype=float)
    # memoised on the exact bytes: symmetry eigenvalues and checks ask for the same few matrices many times
    return _matrix_in_basis(rot.tobytes(), rot.shape, lat.tobytes(), lat.shape, label).copy()


@lru_cache(maxsize=4096)
def _matrix_in_basis(rot_bytes: bytes, rot_shape: tuple, lat_bytes: bytes, lat_shape: tuple, label: str) -> np.ndarray:
    rotation = np.frombuffer(rot_bytes, dtype=float).reshape(rot_shape)
    arr = as_lattice(np.frombuffer(lat_bytes, dtype=float).reshape(lat_shape))
    dim = arr.shape[0]
    rot = np.asarray(rotation, dtype=float)
    if dim < 3:
        # The model's subspace is spanned by the first dim Cartesian axes; it must be mapped onto itself.
        leak = float(np.abs(rot[dim:, :dim]).max())
        if leak > INTEGRALITY_TOL:
            where = "line (x axis)" if dim == 1 else "plane (xy)"
            raise LatticeMismatchError(
                f"operation {label} does not map the {dim}D lattice's {where} onto itself "
                f"(out-of-{'line' if dim == 1 else 'plane'} component {leak:.3g})"
            )
    padded = embedded_lattice(arr)
    w_float = np.linalg.solve(padded.T, rot @ padded.T)
    w_int = np.rint(w_float)
    deviation = float(np.abs(w_float - w_int).max())
    if deviation > INTEGRALITY_TOL:
        raise LatticeMismatchError(
            f"operation {label} does not map the lattice onto itself: its matrix in the lattice basis "
            f"is not integral (largest deviation {deviation:.3g})"
        )
    return w_int[:dim, :dim].astype(int)


def act_on_reduced_k(w: np.ndarray, k: np.ndarray) -> np.ndarray:
    """Apply an integer lattice-basis matrix ``W`` to reduced momenta ``k`` of shape (..., dim)."""
    w = np.asarray(w)
    dim = w.shape[0]
    karr = np.asarray(k, dtype=float)
    if karr.ndim == 0 or karr.shape[-1] != dim:
        raise ShapeError(f"k must have shape (..., {dim}) for a {dim}D lattice, got {karr.shape}")
    return karr @ _integer_inverse(np.ascontiguousarray(w, dtype=float).tobytes(), dim)


@lru_cache(maxsize=4096)
def _integer_inverse(w_bytes: bytes, dim: int) -> np.ndarray:
    # memoised like matrix_in_basis: the same few operations act on momenta many times per report
    w_inv = np.rint(np.linalg.inv(np.frombuffer(w_bytes, dtype=float).reshape(dim, dim)))
    w_inv.setflags(write=False)
    return w_inv
