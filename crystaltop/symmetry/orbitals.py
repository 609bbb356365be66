"""Representation of point operations on real s, p and d orbitals at one site.

An operation acts on functions by ``(g f)(r) = f(R⁻¹ r)`` and its matrix is defined by
``g f_b = Σ_a D[a, b] f_a`` (PHYSICS.md §1). For the real orbitals used here:

* ``s``: ``D = [[1]]``;
* ``p = (px, py, pz)``: ``p_b(r) ∝ r_b``, hence ``D_p = R`` (improper ``R`` included: p is odd);
* ``d = (dxy, dyz, dzx, dx2-y2, dz2)``: each is a quadratic form ``d_b(r) ∝ rᵀ Q_b r`` with a traceless
  symmetric ``Q_b``; ``g d_b = rᵀ (R Q_b Rᵀ) r``, and with the ``Q_b`` orthonormal in the Frobenius
  inner product ``D_d[a, b] = tr(Q_a R Q_b Rᵀ)``. The normalisation of the ``Q_b`` is that of the
  standard real spherical harmonics, so ``D_d`` is orthogonal and even under inversion.
"""

from __future__ import annotations

from typing import Iterable, Sequence, Union

import numpy as np

from crystaltop.errors import ShapeError, SymmetryBreakingError, UnknownOrbitalError

from .axis_angle import axis_angle
from .operations import Operation, operation_label

__all__ = ["ORBITAL_SHELLS", "expand_kinds", "orbital_matrix", "orbital_block", "d_orbital_matrix"]

#: The real orbitals of each shell, in crystaltop's order.
ORBITAL_SHELLS: dict[str, tuple[str, ...]] = {
    "s": ("s",),
    "p": ("px", "py", "pz"),
    "d": ("dxy", "dyz", "dzx", "dx2-y2", "dz2"),
}

_ALIASES = {"dxz": "dzx", "dx2y2": "dx2-y2", "d(x2-y2)": "dx2-y2", "d3z2-r2": "dz2", "d(3z2-r2)": "dz2"}
_SHELL_OF = {kind: (shell, index) for shell, kinds in ORBITAL_SHELLS.items() for index, kind in enumerate(kinds)}
_KNOWN = ", ".join([*ORBITAL_SHELLS, *(k for kinds in ORBITAL_SHELLS.values() for k in kinds if len(kinds) > 1)])


def _d_forms() -> np.ndarray:
    forms = np.zeros((5, 3, 3))
    for index, (i, j) in enumerate([(0, 1), (1, 2), (2, 0)]):  # xy, yz, zx
        forms[index, i, j] = forms[index, j, i] = 1.0 / np.sqrt(2.0)
    forms[3] = np.diag([1.0, -1.0, 0.0]) / np.sqrt(2.0)
    forms[4] = np.diag([-1.0, -1.0, 2.0]) / np.sqrt(6.0)
    forms.setflags(write=False)
    return forms


#: Quadratic forms Q_b (5, 3, 3) of (dxy, dyz, dzx, dx2-y2, dz2), Frobenius-orthonormal.
D_QUADRATIC_FORMS = _d_forms()

RotationLike = Union[np.ndarray, Operation, Sequence[Sequence[float]]]


def expand_kinds(kinds: str | Iterable[str]) -> list[str]:
    """Expand shells and aliases into the list of single real orbitals.

    Parameters
    ----------
    kinds : str or iterable of str
        E.g. ``"s"``, ``"p"``, ``"px py"``, ``"s, p"``, ``["s", "px", "py"]``, ``"d"``. ``"p"`` becomes
        ``px, py, pz`` and ``"d"`` the five d orbitals; ``dxz`` is accepted for ``dzx``.

    Raises
    ------
    UnknownOrbitalError
        Naming the first kind that is not recognised.

    Examples
    --------
    >>> expand_kinds("s p")
    ['s', 'px', 'py', 'pz']
    """
    tokens = kinds.replace(",", " ").split() if isinstance(kinds, str) else list(kinds)
    expanded: list[str] = []
    for token in tokens:
        if not isinstance(token, str):
            raise UnknownOrbitalError(f"orbital kinds must be strings, got {token!r}")
        name = token.strip().lower()
        name = _ALIASES.get(name, name)
        if name in ORBITAL_SHELLS:
            expanded.extend(ORBITAL_SHELLS[name])
        elif name in _SHELL_OF:
            expanded.append(name)
        else:
            raise UnknownOrbitalError(f"unknown orbital kind {token!r}; expected one of {_KNOWN}")
    if not expanded:
        raise UnknownOrbitalError("no orbital kinds given; expected e.g. 's', 'p' or 'px py'")
    return expanded


def d_orbital_matrix(rotation: np.ndarray) -> np.ndarray:
    """``D_d[a, b] = tr(Q_a R Q_b Rᵀ)`` on (dxy, dyz, dzx, dx2-y2, dz2), batched over (..., 3, 3)."""
    rot = np.asarray(rotation, dtype=float)
    return np.einsum("aij,...ik,bkl,...jl->...ab", D_QUADRATIC_FORMS, rot, D_QUADRATIC_FORMS, rot)


def _shell_matrices(rot: np.ndarray) -> dict[str, np.ndarray]:
    batch = rot.shape[:-2]
    return {"s": np.ones(batch + (1, 1)), "p": rot, "d": d_orbital_matrix(rot)}


def orbital_block(kinds: str | Sequence[str], rotation: RotationLike, *, tol: float = 1e-8) -> np.ndarray:
    """Matrix of an operation on the span of the given real orbitals of one site.

    Parameters
    ----------
    kinds : str or sequence of str
        Orbitals at the site, e.g. ``["px", "py"]``, ``"s p"``, ``["d"]`` (see :func:`expand_kinds`). A kind
        listed twice is a second, independent copy (e.g. two s orbitals); the i-th copy of ``px`` pairs with
        the i-th copies of ``py`` and ``pz``.
    rotation : (..., 3, 3) array_like or Operation
        Cartesian orthogonal matrix (possibly improper), or a batch of them.
    tol : float
        Largest weight an orbital may send outside the span.

    Returns
    -------
    (..., n, n) ndarray
        ``D`` with ``g f_b = Σ_a D[a, b] f_a``, ``n = len(expand_kinds(kinds))``; orthogonal.

    Raises
    ------
    SymmetryBreakingError
        If the span is not invariant (e.g. ``["px"]`` under a four-fold rotation about z), naming the
        orbitals and the operation.

    Examples
    --------
    >>> import numpy as np
    >>> c4 = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
    >>> orbital_block(["px", "py"], c4)
    array([[ 0., -1.],
           [ 1.,  0.]])
    """
    names = expand_kinds(kinds)
    rot = _as_rotation(rotation)
    shells = _shell_matrices(rot)
    count: dict[str, int] = {}
    slots = []  # (shell, index within shell, copy number)
    for name in names:
        shell, index = _SHELL_OF[name]
        copy = count.get(name, 0)
        count[name] = copy + 1
        slots.append((shell, index, copy))
    n = len(slots)
    block = np.zeros(rot.shape[:-2] + (n, n))
    for col, (shell, index_b, copy_b) in enumerate(slots):
        for row, (shell_a, index_a, copy_a) in enumerate(slots):
            if shell_a == shell and copy_a == copy_b:
                block[..., row, col] = shells[shell][..., index_a, index_b]
    kept = np.sum(block**2, axis=-2)  # weight of each image inside the span (1 if invariant)
    leak = 1.0 - kept
    if np.any(leak > tol):
        column = int(np.argmax(leak.reshape(-1, n).max(axis=0)))
        raise SymmetryBreakingError(
            f"the orbitals {names} are not mapped onto their own span by operation {_label_of(rotation, rot)}: "
            f"{names[column]} sends weight {float(leak.max()):.3g} outside it; add its partner orbitals"
        )
    return block


def orbital_matrix(kind: str, rotation: RotationLike) -> np.ndarray:
    """Matrix of an operation on one shell (``"s"``, ``"p"``, ``"d"``) or one invariant single orbital.

    Same as ``orbital_block([kind], rotation)``; a single orbital that is not invariant (``"px"`` under
    ``4z+``) raises :class:`~crystaltop.errors.SymmetryBreakingError`.
    """
    return orbital_block([kind], rotation)


def _as_rotation(rotation: RotationLike) -> np.ndarray:
    rot = rotation.matrix if isinstance(rotation, Operation) else np.asarray(rotation, dtype=float)
    if rot.ndim < 2 or rot.shape[-2:] != (3, 3):
        raise ShapeError(f"rotation must have shape (..., 3, 3), got {rot.shape}")
    deviation = np.abs(np.swapaxes(rot, -1, -2) @ rot - np.eye(3)).max()
    if deviation > 1e-6:
        raise ShapeError(f"rotation is not orthogonal: |RᵀR - 1| = {deviation:.2g}")
    return rot


def _label_of(rotation: RotationLike, rot: np.ndarray) -> str:
    if isinstance(rotation, Operation):
        return rotation.label
    if rot.ndim == 2:
        try:
            return operation_label(axis_angle(rot))
        except Exception:  # a non-crystallographic matrix: no label of our scheme
            pass
    return "(given matrix)"
