"""Models related to another by a change of basis or by moving basis states between cells.

These are the transformations under which every invariant must be unchanged; the conformance tests build
them with :meth:`BlochModel.with_basis` (a random unitary) and :meth:`BlochModel.rewrapped` (random integer
shifts, i.e. random k-dependent diagonal phases in the periodic gauge).

For a k-dependent unitary ``M(k)`` with ``H'(k) = M(k)^† H(k) M(k)`` the other objects follow as

    D'_g(k) = M(g k)^† D_g(k) M(k),        U_T' = M(−k)^† U_T M(k)^*,

which keeps ``D' H' D'^† = H'(g k)`` and ``U_T' H'^* U_T'^† = H'(−k)``.
"""

from __future__ import annotations

import numpy as np

from ..errors import CrystaltopError, ShapeError
from .base import BlochModel, _as_unitary

__all__ = ["TransformedModel"]


class TransformedModel(BlochModel):
    """``parent`` in a rotated basis (``rotation``) or with basis states moved between cells (``shifts``).

    Built by :meth:`BlochModel.with_basis` and :meth:`BlochModel.rewrapped`; give exactly one of the two.

    Parameters
    ----------
    parent : BlochModel
    rotation : (n, n) array_like, optional
        Constant unitary ``Q``: ``H' = Q^† H Q``, basis ``U Q``.
    shifts : (n, dim) array_like of int, optional
        Lattice vector ``n_a`` by which the site-localised state ``a`` is moved: positions ``x_a + n_a`` and
        ``M(k) = U^† diag(exp(−2πi k·n_a)) U`` with ``U`` the parent's basis.
    """

    def __init__(self, parent: BlochModel, *, rotation=None, shifts=None):
        if (rotation is None) == (shifts is None):
            raise CrystaltopError("give exactly one of rotation= or shifts=")
        self.parent = parent
        self.dim = parent.dim
        self.lattice = parent.lattice
        self.n_states = parent.n_states
        self.spinful = parent.spinful
        self.name = parent.name
        n = self.n_states
        parent_basis = None if parent.basis is None else np.asarray(parent.basis, dtype=complex)
        self._rotation = None
        self._shifts = None
        if rotation is not None:
            q = _as_unitary(rotation, n, "basis change")
            q.setflags(write=False)
            self._rotation = q
            self.positions = parent.positions
            self.basis = q.copy() if parent_basis is None else parent_basis @ q
        else:
            try:
                arr = np.array(shifts, dtype=float)
            except (TypeError, ValueError):
                raise ShapeError(f"shifts must be integers of shape ({n}, {self.dim})") from None
            if arr.shape != (n, self.dim) or not np.all(np.isfinite(arr)) or np.abs(arr - np.rint(arr)).max(initial=0) > 0:
                raise ShapeError(f"shifts must be integers of shape ({n}, {self.dim}) (one lattice vector per "
                                 f"basis state), got {np.shape(shifts)}")
            s = np.rint(arr).astype(int)
            s.setflags(write=False)
            self._shifts = s
            pos = np.asarray(parent.positions, dtype=float) + s
            pos.setflags(write=False)
            self.positions = pos
            self.basis = parent_basis
            self._check_time_reversal_local()
        self._time_reversal = self._transformed_time_reversal()

    # ------------------------------------------------------------------ the transformation M(k)
    def _site_phases(self, k: np.ndarray) -> np.ndarray:
        return np.exp(-2j * np.pi * (k @ self._shifts.T.astype(float)))  # (..., n)

    def _conjugate(self, k_left: np.ndarray, matrix: np.ndarray, k_right: np.ndarray) -> np.ndarray:
        """``M(k_left)^† matrix M(k_right)`` for the transformation of this model."""
        if self._rotation is not None:
            q = self._rotation
            return q.conj().T @ matrix @ q
        left, right = self._site_phases(k_left), self._site_phases(k_right)
        if self.basis is None:
            return np.conj(left)[..., :, None] * matrix * right[..., None, :]
        u = self.basis
        m_left = u.conj().T @ (left[..., :, None] * u)
        m_right = u.conj().T @ (right[..., :, None] * u)
        return np.conj(np.swapaxes(m_left, -1, -2)) @ matrix @ m_right

    def _check_time_reversal_local(self) -> None:
        u_t = self.parent.time_reversal_matrix()
        if u_t is None:
            return
        u_t = np.asarray(u_t, dtype=complex)
        if self.basis is not None:  # U_T on the site-localised states
            u_t = self.basis @ u_t @ self.basis.T
        linked = np.abs(u_t) > 1e-12
        differ = np.any(self._shifts[:, None, :] != self._shifts[None, :, :], axis=-1)
        bad = np.argwhere(linked & differ)
        if bad.size:
            a, b = (int(x) for x in bad[0])
            raise CrystaltopError(f"time reversal relates basis states {a} and {b}, which the shifts move into "
                                  "different cells (U_T would depend on k): shift them together")

    def _transformed_time_reversal(self) -> np.ndarray | None:
        u_t = self.parent.time_reversal_matrix()
        if u_t is None:
            return None
        u_t = np.asarray(u_t, dtype=complex)
        if self._rotation is not None:
            q = self._rotation
            return q.conj().T @ u_t @ q.conj()
        return u_t  # local in the cells (checked), so M(−k)^† U_T M(k)^* = U_T

    # ------------------------------------------------------------------ interface
    def time_reversal_matrix(self) -> np.ndarray | None:
        return None if self._time_reversal is None else self._time_reversal.copy()

    def _hamiltonian(self, k: np.ndarray) -> np.ndarray:
        return self._conjugate(k, self.parent.hamiltonian(k), k)

    def _symmetry_matrix(self, op, k: np.ndarray) -> np.ndarray:
        d = self.parent.symmetry_matrix(op, k)
        if self._rotation is not None:
            return self._conjugate(k, d, k)
        gk = np.asarray(op.acts_on_k(k, self.lattice), dtype=float)
        return self._conjugate(gk, d, k)

    def real_space_blocks(self) -> tuple[np.ndarray, np.ndarray]:
        cells, blocks = self.parent.real_space_blocks()
        if self._rotation is not None:
            q = self._rotation
            return cells, q.conj().T @ blocks @ q
        if self.basis is not None:
            raise CrystaltopError("the real-space form of a rewrapped model in a rotated basis is not available")
        # h'_{ab}(R + n_a − n_b) = h_{ab}(R): collect the shifted blocks on the new set of cells
        n = self.n_states
        shift = self._shifts[:, None, :] - self._shifts[None, :, :]  # (n, n, dim): n_a − n_b
        new_cells = (cells[:, None, None, :] + shift[None]).reshape(-1, self.dim)
        unique, index = np.unique(new_cells, axis=0, return_inverse=True)
        out = np.zeros((len(unique), n, n), dtype=complex)
        rows, cols = (np.tile(x.reshape(-1), len(cells)) for x in np.meshgrid(np.arange(n), np.arange(n), indexing="ij"))
        terms = np.repeat(np.arange(len(cells)), n * n)
        np.add.at(out, (index.reshape(-1), rows, cols), blocks[terms, rows, cols])
        keep = np.abs(out).max(axis=(1, 2)) > 0
        keep[np.all(unique == 0, axis=1)] = True
        return unique[keep], out[keep]

    def __repr__(self) -> str:
        how = "rotated basis" if self._rotation is not None else "rewrapped"
        return f"TransformedModel({how} of {self.parent!r})"
