"""The one adapter over spglib: space group, point group and site symmetry of a crystal.

spglib 2.x either returns None (and warns) or raises ``spglib.SpglibError`` on failure, depending on
the environment variable ``SPGLIB_OLD_ERROR_HANDLING``; both are turned into
:class:`~crystaltop.errors.CrystaltopError` here, and spglib's global state is never changed.

A *cell* is ``(lattice, positions, numbers)``: lattice vectors as rows (3, 3), fractional positions
(n, 3) and integer species (n,); an object with ``get_cell()``, ``get_scaled_positions()`` and
``get_atomic_numbers()`` (an ASE ``Atoms``) is accepted too. spglib's ``rotations`` are integer
matrices ``W`` in the cell's basis; their Cartesian form is ``R = Aᵀ W inv(Aᵀ)``.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass
from typing import Any, Hashable, Sequence

import numpy as np
import spglib

from crystaltop.errors import CrystaltopError, ShapeError

from .catalogue import normalize_symbol, entry
from .groups import PointGroup
from .lattice_basis import as_lattice

__all__ = ["SpaceGroupInfo", "space_group_of", "point_group_of", "site_symmetry_group"]

# Vacuum added along the missing axes of 1D/2D structures, in units of the largest lattice vector. The
# two 1D vacuum lengths differ so that the artificial lattice is orthorhombic and adds no rotation
# about the chain beyond the two-folds.
_VACUUM = (8.0, 11.0)


@dataclass(frozen=True)
class SpaceGroupInfo:
    """Space group of a crystal as found by spglib."""

    number: int
    """ITA space-group number, 1-230."""
    international: str
    """Hermann–Mauguin short symbol, e.g. ``"Fm-3m"``."""
    point_group_symbol: str
    """Hermann–Mauguin symbol of the crystal class as spglib writes it, e.g. ``"m-3m"``."""
    rotations: np.ndarray
    """(m, 3, 3) int: rotation parts ``W`` in the basis of the input cell."""
    translations: np.ndarray
    """(m, 3) float: fractional translation parts, paired with ``rotations``."""
    hall: str
    """Hall symbol of spglib's default setting."""


def space_group_of(cell: Any, symprec: float = 1e-5) -> SpaceGroupInfo:
    """Space group of ``cell`` = (lattice rows, fractional positions, species numbers).

    Raises
    ------
    ShapeError
        If the cell arrays have the wrong shapes.
    CrystaltopError
        If spglib fails (e.g. atoms too close for ``symprec``).

    Examples
    --------
    >>> cell = ([[4.0, 0, 0], [0, 4.0, 0], [0, 0, 4.0]], [[0, 0, 0], [0.5, 0.5, 0.5]], [1, 2])
    >>> space_group_of(cell).international
    'Pm-3m'
    """
    dataset = _dataset(_as_cell(cell), symprec)
    rotations = np.array(dataset.rotations, dtype=int)
    translations = np.array(dataset.translations, dtype=float)
    rotations.setflags(write=False)
    translations.setflags(write=False)
    return SpaceGroupInfo(
        number=int(dataset.number),
        international=str(dataset.international),
        point_group_symbol=str(dataset.pointgroup),
        rotations=rotations,
        translations=translations,
        hall=str(dataset.hall),
    )


def point_group_of(cell: Any, symprec: float = 1e-5) -> PointGroup:
    """Crystal class of ``cell`` with its operations in the Cartesian frame of that cell.

    The class is identified by crystaltop's catalogue and checked against spglib's ``pointgroup``.

    Raises
    ------
    CrystaltopError
        If spglib fails or the two identifications disagree.
    """
    lattice, positions, numbers = _as_cell(cell)
    dataset = _dataset((lattice, positions, numbers), symprec)
    group = PointGroup.from_matrices(_cartesian(lattice, np.asarray(dataset.rotations)), tol=_match_tol(symprec))
    _agree_with_spglib(group, str(dataset.pointgroup))
    return group


def site_symmetry_group(
    lattice: np.ndarray,
    positions: np.ndarray,
    labels: Sequence[Hashable],
    symprec: float = 1e-5,
    *,
    origin: Sequence[float] | None = None,
) -> PointGroup:
    """Point operations about ``origin`` that map a decorated lattice onto itself.

    Those space-group operations of the structure whose translation part is a lattice vector (after moving
    ``origin`` to 0), i.e. the symmetries ``r -> R r`` fixing the origin up to lattice translations. A 1D/2D
    lattice is embedded in 3D with a large vacuum along the missing axes, and only operations that map the
    model's line (x) / plane (xy) onto itself are kept. In 1D the vacuum is orthorhombic, so rotations
    about the chain are limited to two-folds.

    Parameters
    ----------
    lattice : (dim, dim) array_like
        Lattice vectors as rows, dim in 1, 2, 3 (1D along x, 2D in the xy plane).
    positions : (n, dim) array_like
        Reduced positions of the sites.
    labels : sequence of n hashables
        Site species; sites with equal labels are interchangeable (encode orbital content in the label).
    symprec : float
        spglib's distance tolerance.
    origin : (dim,) array_like, optional
        Reduced coordinates of the fixed point; default the lattice origin.

    Raises
    ------
    ShapeError
        If the shapes of ``positions`` or ``labels`` do not match the lattice.
    CrystaltopError
        If spglib fails.
    """
    lat = as_lattice(lattice)
    dim = lat.shape[0]
    pos = np.asarray(positions, dtype=float)
    if pos.ndim == 1 and dim == 1:
        pos = pos[:, None]
    if pos.ndim != 2 or pos.shape[1] != dim or pos.shape[0] == 0:
        raise ShapeError(f"positions must have shape (n, {dim}) with n >= 1, got {pos.shape}")
    labels = list(labels)
    if len(labels) != pos.shape[0]:
        raise ShapeError(f"got {len(labels)} labels for {pos.shape[0]} positions")
    if origin is not None:
        shift = np.asarray(origin, dtype=float).reshape(-1)
        if shift.shape != (dim,):
            raise ShapeError(f"origin must have shape ({dim},), got {shift.shape}")
        pos = pos - shift
    species = {label: number for number, label in enumerate(dict.fromkeys(labels), start=1)}
    numbers = np.array([species[label] for label in labels], dtype=int)

    big = float(np.linalg.norm(lat, axis=1).max())
    embedded = np.zeros((3, 3))
    embedded[:dim, :dim] = lat
    for missing, factor in zip(range(dim, 3), _VACUUM):
        embedded[missing, missing] = factor * big + 10.0
    frac = np.zeros((pos.shape[0], 3))
    frac[:, :dim] = np.mod(pos, 1.0)

    dataset = _dataset((embedded, frac, numbers), symprec)
    rotations = np.asarray(dataset.rotations)
    translations = np.asarray(dataset.translations, dtype=float)
    offset = (translations - np.rint(translations)) @ embedded  # Cartesian size of the translation part
    about_origin = np.linalg.norm(offset, axis=1) <= 3.0 * symprec
    cartesian = _cartesian(embedded, rotations[about_origin])
    if dim < 3:
        keeps = np.abs(cartesian[:, dim:, :dim]).max(axis=(1, 2)) < 1e-6
        cartesian = cartesian[keeps]
    return PointGroup.from_matrices(cartesian, tol=_match_tol(symprec))


# ---------------------------------------------------------------------------------------------


def _dataset(cell: tuple[np.ndarray, np.ndarray, np.ndarray], symprec: float) -> Any:
    if not (isinstance(symprec, (int, float)) and symprec > 0):
        raise ShapeError(f"symprec must be a positive number, got {symprec!r}")
    try:
        with warnings.catch_warnings():
            # In its old error mode spglib warns on every call that the mode is deprecated; both modes
            # are handled here, so the warning says nothing to our callers.
            warnings.filterwarnings("ignore", category=DeprecationWarning, module=r"spglib(\.|$)")
            dataset = spglib.get_symmetry_dataset(cell, symprec=symprec)
    except spglib.SpglibError as exc:
        raise CrystaltopError(f"spglib could not find the symmetry of the cell: {exc}") from None
    if dataset is None:
        raise CrystaltopError(f"spglib could not find the symmetry of the cell: {_spglib_message()}")
    return dataset


def _spglib_message() -> str:
    getter = getattr(spglib, "get_error_message", None)
    if getter is None:  # pragma: no cover - future spglib without the old interface
        return "no reason given"
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            return str(getter())
    except Exception:  # pragma: no cover
        return "no reason given"


def _as_cell(cell: Any) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    if all(hasattr(cell, name) for name in ("get_cell", "get_scaled_positions", "get_atomic_numbers")):
        cell = (np.asarray(cell.get_cell()), cell.get_scaled_positions(), cell.get_atomic_numbers())
    try:
        lattice, positions, numbers = cell
    except (TypeError, ValueError):
        raise ShapeError("cell must be (lattice, positions, numbers) or an object like ase.Atoms") from None
    lat = np.asarray(lattice, dtype=float)
    if lat.shape != (3, 3):
        raise ShapeError(f"cell lattice must have shape (3, 3), got {lat.shape}")
    as_lattice(lat)
    pos = np.asarray(positions, dtype=float)
    if pos.ndim != 2 or pos.shape[1] != 3 or pos.shape[0] == 0:
        raise ShapeError(f"cell positions must have shape (n, 3) with n >= 1, got {pos.shape}")
    num = np.asarray(numbers)
    if num.shape != (pos.shape[0],) or not np.issubdtype(num.dtype, np.integer):
        raise ShapeError(f"cell numbers must be {pos.shape[0]} integers, got shape {num.shape} of {num.dtype}")
    return lat, pos, num.astype(np.intc)


def _cartesian(lattice: np.ndarray, rotations: np.ndarray) -> np.ndarray:
    """R = Aᵀ W inv(Aᵀ), made exactly orthogonal (nearest orthogonal matrix) against rounding."""
    a_t = np.asarray(lattice, dtype=float).T
    raw = np.einsum("ij,njk,kl->nil", a_t, np.asarray(rotations, dtype=float), np.linalg.inv(a_t))
    u, _, vt = np.linalg.svd(raw)
    return u @ vt


def _match_tol(symprec: float) -> float:
    return float(min(max(10.0 * symprec, 1e-6), 1e-2))


def _agree_with_spglib(group: PointGroup, spglib_symbol: str) -> None:
    try:
        theirs = entry(normalize_symbol(spglib_symbol)).symbol
    except Exception:
        raise CrystaltopError(f"spglib reported an unrecognised point group {spglib_symbol!r}") from None
    if theirs != group.symbol:
        raise CrystaltopError(
            f"point group mismatch: crystaltop identifies {group.symbol}, spglib reports {spglib_symbol}"
        )
