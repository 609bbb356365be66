"""Spin-1/2 images of point operations (the double group).

A proper rotation by ``θ`` about the unit axis ``n̂`` acts on a spin-1/2 as

    U(R) = exp(-i θ n̂·σ / 2) = cos(θ/2) 1 - i sin(θ/2) n̂·σ,

so that a rotation by 2π is ``-1``. Inversion commutes with every rotation and acts trivially on
spin, hence an improper ``R = -P`` has ``U(R) = U(P)``; in particular a mirror with unit normal
``n̂`` (``R = -C2(n̂)``) is represented by ``U = -i n̂·σ``, with ``U² = -1``.

**Sign rule.** ``U`` is fixed up to the sign of the pair ``(n̂, θ)``; crystaltop uses the canonical
axis of :mod:`crystaltop.symmetry.axis_angle` (first non-zero component in the order z, y, x
positive, ``θ`` in ``(-π, π]``, half turns with ``θ = +π``). For example ``U(2z) = -iσ_z``,
``U(mx) = -iσ_x``, ``U(4z+) = (1 - iσ_z)/√2``. Products then close only up to a sign,
``U(a) U(b) = s(a, b) U(ab)`` with ``s = ±1`` given by :func:`double_group_sign`.

The basis is (spin up, spin down) along z, Pauli matrices in their standard form.
"""

from __future__ import annotations

import numpy as np

from .axis_angle import axis_angle

__all__ = ["PAULI", "spin_matrix", "su2_rotation", "double_group_sign", "product_sign"]

#: Pauli matrices σ_x, σ_y, σ_z, shape (3, 2, 2).
PAULI = np.array(
    [[[0, 1], [1, 0]], [[0, -1j], [1j, 0]], [[1, 0], [0, -1]]],
    dtype=complex,
)
PAULI.setflags(write=False)


def su2_rotation(axis: np.ndarray, angle: float) -> np.ndarray:
    """Return ``exp(-i angle axis·σ / 2)`` for a unit ``axis`` (no canonicalisation)."""
    n_sigma = np.tensordot(np.asarray(axis, dtype=float), PAULI, axes=1)
    return np.cos(angle / 2.0) * np.eye(2) - 1j * np.sin(angle / 2.0) * n_sigma


def spin_matrix(rotation: np.ndarray) -> np.ndarray:
    """SU(2) image of a Cartesian (possibly improper) orthogonal 3x3 matrix.

    Parameters
    ----------
    rotation : (3, 3) array_like
        Orthogonal matrix ``R``; only its proper part ``det(R) R`` matters.

    Returns
    -------
    (2, 2) complex ndarray
        ``exp(-i θ n̂·σ/2)`` for the proper part's canonical axis ``n̂`` and angle ``θ``.

    Examples
    --------
    >>> import numpy as np
    >>> np.round(spin_matrix(np.diag([-1.0, 1.0, 1.0])), 12)  # mirror x -> -i σ_x
    array([[0.+0.j, 0.-1.j],
           [0.-1.j, 0.+0.j]])
    """
    geometry = axis_angle(rotation)
    return su2_rotation(geometry.axis, geometry.angle)


def double_group_sign(rotation_a: np.ndarray, rotation_b: np.ndarray) -> int:
    """Sign ``s`` in ``U(a) U(b) = s U(ab)`` for Cartesian matrices ``a`` and ``b``."""
    a = np.asarray(rotation_a, dtype=float)
    b = np.asarray(rotation_b, dtype=float)
    return product_sign(spin_matrix(a) @ spin_matrix(b), spin_matrix(a @ b))


def product_sign(product: np.ndarray, image: np.ndarray) -> int:
    """Sign s = ±1 with product == s * image, for SU(2) matrices known to agree up to sign."""
    overlap = np.trace(image.conj().T @ product).real / 2.0
    sign = 1 if overlap > 0 else -1
    if not np.allclose(product, sign * image, atol=1e-8):  # pragma: no cover - SU(2) guarantees this
        raise ArithmeticError("spin images do not multiply up to a sign")
    return sign
