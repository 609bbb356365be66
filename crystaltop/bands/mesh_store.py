"""The mesh store: the eigensystems of the points of one uniform mesh, kept by flat index as they become known."""

from __future__ import annotations

from functools import lru_cache

import numpy as np

from ..kspace import Grid

__all__ = ["MeshStore"]


class MeshStore:
    """The eigensystems of the points of one uniform mesh ``j_i / N_i``, as they become known.

    Most grids of a report (planes, half planes, the full mesh, its half mesh) and most single momenta (TRIMs,
    high-symmetry momenta, the points of oblique mirror planes) lie on the mesh of the first grid asked for. Their
    points are then found by rounding ``k·N`` and read from one array, instead of being matched against every
    grid cached so far. The arrays are allocated once and filled where points are diagonalised (untouched pages
    cost no memory); the full mesh, once asked for, is served as the arrays themselves.
    """

    TOL = 1e-9  # as in band_data._axis_match

    def __init__(self, shape: tuple[int, ...], n: int):
        self.shape = shape
        self.energies = np.empty(shape + (n,))
        self.vectors = np.empty(shape + (n, n), dtype=complex)
        self.known = np.zeros(shape, dtype=bool)
        # the same arrays with the mesh flattened (points by their flat index)
        self._e = self.energies.reshape(-1, n)
        self._v = self.vectors.reshape(-1, n, n)
        self._known = self.known.reshape(-1)
        self._scale = np.asarray(shape, dtype=float)
        self._strides = np.array([int(np.prod(shape[i + 1:])) for i in range(len(shape))])
        self._indices: dict[Grid, np.ndarray | None] = {}
        self._complete = False  # every point known (points are never forgotten, so it stays true)

    def grid_index(self, grid: Grid) -> np.ndarray | None:
        """The flat index in the mesh of every point of ``grid`` (shape ``grid.shape``), or None if some point is
        off the mesh."""
        if grid in self._indices:
            return self._indices[grid]
        flat = np.zeros((1,) * grid.dim, dtype=int)
        for i, n in enumerate(self.shape):
            m = grid.shape[i]
            if grid.periodic[i] and n % m == 0:  # j/M inside j/N, every (N/M)-th
                j = np.arange(m) * (n // m)
            else:
                x = np.mod(grid._arrays[i], 1.0) * n
                j = np.rint(x)
                if np.any(np.abs(x - j) > self.TOL * n):
                    flat = None
                    break
                j = j.astype(int) % n
            flat = flat + (j * self._strides[i]).reshape((1,) * i + (m,) + (1,) * (grid.dim - i - 1))
        self._indices[grid] = flat
        return flat

    def is_whole(self, grid: Grid, flat: np.ndarray) -> bool:
        """Whether ``grid`` is the mesh itself, in its order."""
        return grid.shape == self.shape and self.in_order(flat)

    def in_order(self, flat: np.ndarray) -> bool:
        """Whether the flat indices ``flat`` are every point of the mesh, in the mesh's order."""
        return flat.size == self._known.size and np.array_equal(flat.reshape(-1), np.arange(flat.size))

    @property
    def complete(self) -> bool:
        """Whether every point of the mesh is known."""
        if not self._complete:
            self._complete = bool(self._known.all())
        return self._complete

    def read(self, flat: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Energies and eigenvectors of known points by flat index (any shape of ``flat``)."""
        n = self._e.shape[1]
        e = np.take(self._e, flat.reshape(-1), axis=0).reshape(flat.shape + (n,))
        v = np.take(self._v, flat.reshape(-1), axis=0).reshape(flat.shape + (n, n))
        return e, v

    def point_index(self, k: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The rows of ``k`` ``(m, dim)`` that lie on the mesh and their flat indices in it."""
        x = np.mod(k, 1.0) * self._scale
        j = np.rint(x)
        on = np.all(np.abs(x - j) <= self.TOL * self._scale, axis=1)
        rows = np.flatnonzero(on)
        j = j[rows].astype(int) % self._scale.astype(int)
        return rows, j @ self._strides

    def record(self, k: np.ndarray, energies: np.ndarray, vectors: np.ndarray, flat=None) -> None:
        """Keep the eigensystems of the points ``k`` ``(m, dim)`` that lie on the mesh (``flat``: their flat
        indices, when the caller knows that every point is on it) and are not known yet: what was handed out
        never changes."""
        if flat is None:
            rows, flat = self.point_index(k)
        else:
            rows = None
            if energies.shape[0] == flat.size and self.adopt(energies, vectors, flat):
                return
        new = ~self._known[flat]
        if not new.all():
            rows = np.flatnonzero(new) if rows is None else rows[new]
            flat = flat[new]
        if flat.size:
            self._e[flat] = energies if rows is None else energies[rows]
            self._v[flat] = vectors if rows is None else vectors[rows]
            self._known[flat] = True

    def adopt(self, energies: np.ndarray, vectors: np.ndarray, flat: np.ndarray) -> bool:
        """Take the eigensystems of the whole mesh, in flat order, as the store's own arrays (no copy), when no
        point is known yet; False (nothing done) otherwise."""
        n = self._e.shape[1]
        if self._known.any() or not self.in_order(flat) \
                or not (energies.flags.c_contiguous and vectors.flags.c_contiguous):
            return False
        self._e, self._v = energies.reshape(-1, n), vectors.reshape(-1, n, n)
        self.energies, self.vectors = self._e.reshape(self.shape + (n,)), self._v.reshape(self.shape + (n, n))
        self._known[:] = True
        self._complete = True
        return True

    def partner(self, flat: np.ndarray) -> np.ndarray:
        """The flat index of ``−k`` for each point ``k`` of ``flat`` (the mesh is closed under k -> −k)."""
        return _partners(self.shape)[flat]

    def coordinates(self, flat: np.ndarray) -> np.ndarray:
        """The reduced momenta ``j / N`` of the mesh points with the given flat indices, ``(m, dim)``."""
        j = np.stack(np.unravel_index(flat, self.shape), axis=-1)
        return j / self._scale

    def holds(self, k: np.ndarray) -> np.ndarray:
        """Whether each of the points ``k`` ``(m, dim)`` lies on the mesh."""
        on = np.zeros(k.shape[0], dtype=bool)
        on[self.point_index(k)[0]] = True
        return on


@lru_cache(maxsize=16)
def _partners(shape: tuple[int, ...]) -> np.ndarray:
    """The flat index of ``−k`` for every flat index ``k`` of the mesh ``shape`` (read-only, shared by reports)."""
    j = np.indices(shape).reshape(len(shape), -1)
    out = np.ravel_multi_index(tuple((-j) % np.array(shape)[:, None]), shape)
    out.setflags(write=False)
    return out
