"""Grids of k-points in reduced coordinates.

A :class:`Grid` is a Cartesian product of one array of values per reciprocal axis. An axis is either
*periodic* (the uniform mesh ``j / N``, ``j = 0 .. N-1`` of the whole circle) or *fixed* (a single value,
for planes and lines). Grids are hashable so that band data can be cached per grid, and a grid knows when
it is a sub-grid of another one, so that a plane of a cached 3D mesh is sliced, never diagonalised again.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property
from itertools import product

import numpy as np

from ..errors import ShapeError

__all__ = ["Grid", "uniform_mesh", "plane", "line", "trims"]

_TOL = 1e-9


def _as_axis(values) -> tuple[float, ...]:
    arr = np.atleast_1d(np.asarray(values, dtype=float))
    if arr.ndim != 1 or arr.size == 0:
        raise ShapeError(f"a grid axis must be a non-empty 1D array of reduced coordinates, got shape {arr.shape}")
    return tuple(float(v) for v in np.mod(arr, 1.0))


@dataclass(frozen=True)
class Grid:
    """A product grid of reduced k-points.

    Attributes
    ----------
    axes : tuple of tuple of float
        Values of each reduced coordinate, in ``[0, 1)``; one tuple per reciprocal axis.
    periodic : tuple of bool
        Whether the axis is the full uniform mesh ``j / N`` (so that neighbours wrap around the zone).
    """

    axes: tuple[tuple[float, ...], ...]
    periodic: tuple[bool, ...]

    @cached_property
    def dim(self) -> int:
        """Number of reduced coordinates of each point."""
        return len(self.axes)

    @cached_property
    def shape(self) -> tuple[int, ...]:
        """Number of values per axis."""
        return tuple(len(a) for a in self.axes)

    @cached_property
    def size(self) -> int:
        """Number of k-points."""
        return int(np.prod(self.shape))

    @property
    def points(self) -> np.ndarray:
        """The k-points, shape ``(*shape, dim)``, reduced coordinates."""
        grids = np.meshgrid(*self._arrays, indexing="ij")
        return np.stack(grids, axis=-1)

    def values(self, axis: int) -> np.ndarray:
        """Values along one axis as an array."""
        return np.asarray(self.axes[axis])

    # the axes as (read-only) arrays and the axes ordered shortest first, formed once per grid: grids are compared
    # with each other on every band-data lookup, so these comparisons must not rebuild arrays from the tuples
    @cached_property
    def _arrays(self) -> tuple[np.ndarray, ...]:
        out = []
        for a in self.axes:
            arr = np.array(a, dtype=float)
            arr.setflags(write=False)
            out.append(arr)
        return tuple(out)

    @cached_property
    def _short_first(self) -> tuple[int, ...]:
        return tuple(sorted(range(len(self.axes)), key=lambda a: len(self.axes[a])))

    def indices_in(self, other: "Grid") -> tuple[np.ndarray, ...] | None:
        """Index arrays that pick this grid out of ``other``, or None if it is not a sub-grid."""
        if other.dim != self.dim:
            return None
        picks = [None] * self.dim
        mine_all, theirs_all = self._arrays, other._arrays
        for i in self._short_first:  # fixed coordinates first: cheap misses
            if self.periodic[i] and other.periodic[i]:  # j/N inside j/M: exactly when N divides M, every (M/N)-th
                n, m = len(self.axes[i]), len(other.axes[i])
                if m % n:
                    return None
                picks[i] = np.arange(n) * (m // n)
                continue
            mine, theirs = mine_all[i], theirs_all[i]
            if mine.shape[0] == 1:  # one value (a plane's fixed coordinate): a row of distances
                d = np.abs(((theirs - mine[0]) + 0.5) % 1.0 - 0.5)
                j = int(np.argmin(d))
                if d[j] > _TOL:
                    return None
                picks[i] = np.array([j])
                continue
            d = np.abs(((theirs[None, :] - mine[:, None]) + 0.5) % 1.0 - 0.5)
            j = np.argmin(d, axis=1)
            if d[np.arange(len(mine)), j].max() > _TOL:
                return None
            picks[i] = j
        return tuple(picks)

    def overlap(self, other: "Grid") -> tuple[tuple[np.ndarray, ...], tuple[np.ndarray, ...]] | None:
        """Index arrays (into this grid, into ``other``) of the points the two grids share, or None if none."""
        if other.dim != self.dim:
            return None
        mine_idx, theirs_idx = [None] * self.dim, [None] * self.dim
        mine_all, theirs_all = self._arrays, other._arrays
        for axis in self._short_first:  # fixed coordinates first
            a, b = mine_all[axis], theirs_all[axis]
            if self.periodic[axis] and other.periodic[axis] and a.shape[0] == b.shape[0]:  # the same uniform axis
                mine_idx[axis] = theirs_idx[axis] = np.arange(a.shape[0])
                continue
            match = np.abs(((a[:, None] - b[None, :]) + 0.5) % 1.0 - 0.5) <= _TOL
            i, j = np.nonzero(match)
            if i.size == 0:
                return None
            mine_idx[axis], theirs_idx[axis] = i, j
        return tuple(mine_idx), tuple(theirs_idx)

    def describe(self) -> str:
        """Short text such as ``'40x40'`` or ``'24x24 at k3=0.5'``."""
        free = [str(n) for n, p in zip(self.shape, self.periodic) if p or n > 1]
        fixed = [f"k{i + 1}={a[0]:g}" for i, (a, p) in enumerate(zip(self.axes, self.periodic))
                 if not p and len(a) == 1]
        text = "x".join(free) if free else "1 point"
        return text + (" at " + ", ".join(fixed) if fixed else "")


def uniform_mesh(shape) -> Grid:
    """The full uniform mesh of the zone, ``shape[i]`` points per reduced axis.

    Examples
    --------
    >>> uniform_mesh((4, 4)).shape
    (4, 4)
    """
    shape = tuple(int(n) for n in np.atleast_1d(shape))
    if any(n < 1 for n in shape):
        raise ShapeError(f"mesh sizes must be positive integers, got {shape}")
    return Grid(tuple(_as_axis(np.arange(n) / n) for n in shape), tuple(True for _ in shape))


def plane(dim: int, fixed_axis: int, value: float, shape) -> Grid:
    """A plane ``k[fixed_axis] = value`` of a ``dim``-dimensional zone with a uniform mesh on the other axes."""
    shape = tuple(int(n) for n in np.atleast_1d(shape))
    if len(shape) != dim - 1 or not 0 <= fixed_axis < dim:
        raise ShapeError(f"a plane of a {dim}D zone needs {dim - 1} mesh sizes and an axis in 0..{dim - 1}")
    axes, periodic, it = [], [], iter(shape)
    for i in range(dim):
        if i == fixed_axis:
            axes.append(_as_axis([value]))
            periodic.append(False)
        else:
            n = next(it)
            axes.append(_as_axis(np.arange(n) / n))
            periodic.append(True)
    return Grid(tuple(axes), tuple(periodic))


def line(dim: int, axis: int, n: int, fixed=None) -> Grid:
    """A closed line along ``axis`` with ``n`` points, the other coordinates fixed (default 0)."""
    fixed = np.zeros(dim) if fixed is None else np.asarray(fixed, dtype=float)
    axes = tuple(_as_axis(np.arange(n) / n) if i == axis else _as_axis([fixed[i]]) for i in range(dim))
    return Grid(axes, tuple(i == axis for i in range(dim)))


def trims(dim: int) -> np.ndarray:
    """The 2^dim time-reversal-invariant momenta in reduced coordinates (entries 0 or 1/2), shape (2^dim, dim)."""
    return np.array(list(product((0.0, 0.5), repeat=dim)), dtype=float).reshape(-1, dim)
