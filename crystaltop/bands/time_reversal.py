"""The states at −k from those at k by time reversal: ``V(−k) = U_T V(k)*`` for ``U_T H(k)* U_T† = H(−k)``."""

from __future__ import annotations

import numpy as np

from ..errors import ShapeError

__all__ = ["time_reversal_map"]


def time_reversal_map(u_t, n: int):
    """``(V, src) ↦ U_T V[src]*`` for a stack of eigenvector matrices ``V`` ``(m, n, n)`` and the rows ``src`` to
    take: when ``U_T`` has one non-zero entry per row (real orbitals, with or without spin), one gather of matrix
    rows and a phase per row (the arrays are large and memory-bound: few passes over them); a matrix product
    otherwise."""
    u = np.asarray(u_t, dtype=complex)
    if u.shape != (n, n):
        raise ShapeError(f"the time-reversal matrix has shape {u.shape}, expected {(n, n)}")
    nonzero = np.abs(u) > 0
    if np.all(nonzero.sum(axis=1) == 1):
        cols = np.argmax(nonzero, axis=1)
        phases = u[np.arange(n), cols]
        flip = np.flatnonzero(phases != 1)

        def reverse(v, src):
            # row i of the result is row cols[i] of the source matrix: gathered as rows of the (m n, n) stack
            rows = (np.asarray(src)[:, None] * n + cols[None, :]).reshape(-1)
            out = np.take(v.reshape(-1, n), rows, axis=0).reshape(-1, n, n)
            np.conjugate(out, out=out)
            for i in flip:  # a few rows of the basis (not k-points), each a plain slice of every matrix
                out[:, i, :] *= phases[i]
            return out
        return reverse
    return lambda v, src: u @ np.conj(v[src])
