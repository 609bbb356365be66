"""The unitary part of time reversal on a model's basis.

Time reversal is antiunitary, ``T = U_T K`` with ``K`` complex conjugation. On the orbital-major,
spin-minor basis (index ``2 * orbital + spin``, spin up first) of real orbitals

* spinful: ``U_T = 1_orb ⊗ iσ_y``, so ``T² = U_T U_T* = -1`` (Kramers);
* spinless: ``U_T = 1``, ``T² = +1``.

A model is time-reversal symmetric when ``U_T H(k)* U_T† = H(-k)``. Since ``iσ_y`` commutes with
every SU(2) rotation up to complex conjugation (``iσ_y U* (iσ_y)† = U``), T commutes with all the
spin images of :mod:`crystaltop.symmetry.spin`.
"""

from __future__ import annotations

import numbers

import numpy as np

from crystaltop.errors import ShapeError

__all__ = ["I_SIGMA_Y", "time_reversal_matrix"]

#: ``iσ_y = [[0, 1], [-1, 0]]`` on (up, down).
I_SIGMA_Y = np.array([[0.0, 1.0], [-1.0, 0.0]], dtype=complex)
I_SIGMA_Y.setflags(write=False)


def time_reversal_matrix(n_orbitals: int, spinful: bool) -> np.ndarray:
    """``U_T`` for ``n_orbitals`` real orbitals, with or without spin-1/2.

    Returns
    -------
    ndarray
        Complex, shape ``(2 n, 2 n)`` when ``spinful`` (``1 ⊗ iσ_y``), else ``(n, n)`` (identity).

    Examples
    --------
    >>> time_reversal_matrix(1, spinful=True).real
    array([[ 0.,  1.],
           [-1.,  0.]])
    """
    if isinstance(n_orbitals, bool) or not isinstance(n_orbitals, numbers.Integral) or n_orbitals < 1:
        raise ShapeError(f"n_orbitals must be a positive integer, got {n_orbitals!r}")
    identity = np.eye(int(n_orbitals), dtype=complex)
    return np.kron(identity, I_SIGMA_Y) if spinful else identity
