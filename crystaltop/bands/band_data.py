"""Band data shared by every invariant: eigensystems per grid, computed once and cached.

The dispatcher builds one :class:`BandData` per report and hands it to every plugin. A grid that is a
sub-grid of one already diagonalised (a plane of a 3D mesh, a TRIM of any even mesh) is sliced out of the
cache, never diagonalised again; :attr:`BandData.stats` records what was diagonalised.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..errors import FillingError, GapClosedError, NonHermitianError, ShapeError, SymmetryBreakingError
from ..kspace import Grid
from ..models.base import format_k
from ..progress import progress_bar
from .mesh_store import MeshStore
from .products import (diagonal_of, link_determinants, link_matrices, link_minors, minor_links, ordered_product,
                       subset_phases)
from .time_reversal import time_reversal_map

__all__ = ["BandData", "DiagonalisationStats", "format_k"]


def _axis_table(values: np.ndarray) -> tuple:
    """What :func:`_axis_match` needs of a grid axis: its size if it is the uniform mesh j/N, else its values
    sorted and their positions on the axis."""
    n = values.shape[0]
    if n > 1 and np.abs(values - np.arange(n) / n).max() <= 1e-12:
        return (n,)
    order = np.argsort(values, kind="stable")
    return values[order], order


def _axis_match(values: np.ndarray, table, tol: float = 1e-9) -> tuple[np.ndarray, np.ndarray]:
    """For each value, the index of an equal entry (mod 1) of a grid axis and whether there is one.

    On the uniform mesh j/N by rounding v·N; otherwise by binary search in the sorted axis (the nearest entry on
    the circle is the one just below or just above).
    """
    if len(table) == 1:
        n = table[0]
        x = np.mod(values, 1.0) * n
        j = np.rint(x)
        return j.astype(int) % n, np.abs(x - j) <= tol * n
    ordered, order = table
    v = np.mod(values, 1.0)
    n = ordered.shape[0]
    if n == 1:  # a fixed coordinate (plane, line)
        return np.zeros(v.shape[0], dtype=int), np.abs((v - ordered[0] + 0.5) % 1.0 - 0.5) <= tol
    pos = np.searchsorted(ordered, v)
    below, above = (pos - 1) % n, pos % n
    d_below = np.abs((v - ordered[below] + 0.5) % 1.0 - 0.5)
    d_above = np.abs((v - ordered[above] + 0.5) % 1.0 - 0.5)
    up = d_above < d_below
    return order[np.where(up, above, below)], np.where(up, d_above, d_below) <= tol


def _point_keys(points: np.ndarray) -> np.ndarray:
    """Reduced points folded into [0, 1) and rounded, so that equal points (mod 1) have equal rows."""
    return np.round(np.mod(points, 1.0), 10) % 1.0


def _unique_rows(keys: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The distinct rows in lexicographic order and the index of each row among them, like
    ``np.unique(keys, axis=0, return_inverse=True)`` but by one lexsort of the columns."""
    if keys.shape[0] == 0:
        return keys, np.zeros(0, dtype=int)
    order = np.lexsort(keys.T[::-1])
    ordered = keys[order]
    new = np.ones(ordered.shape[0], dtype=bool)
    new[1:] = np.any(ordered[1:] != ordered[:-1], axis=1)
    inverse = np.empty(ordered.shape[0], dtype=int)
    inverse[order] = np.cumsum(new) - 1
    return ordered[new], inverse


def _match_points(points: np.ndarray, stored_keys: np.ndarray):
    """For each point, the index of the equal stored point (by key) and whether there is one (sort-based)."""
    keys = _point_keys(points)
    _, inverse = _unique_rows(np.concatenate([stored_keys, keys]))
    where = np.full(inverse.max() + 1, -1)
    where[inverse[: stored_keys.shape[0]]] = np.arange(stored_keys.shape[0])
    j = where[inverse[stored_keys.shape[0]:]]
    return np.maximum(j, 0), j >= 0


@dataclass
class DiagonalisationStats:
    """Bookkeeping of the eigen-decompositions done by one :class:`BandData`."""

    #: number of k-points whose eigensystems were formed (each once), diagonalised or by time reversal
    k_points: int = 0
    #: description and size of each batch diagonalised, in order
    batches: list = field(default_factory=list)
    #: number of requests served from the cache without diagonalising
    cache_hits: int = 0
    #: of the k-points, how many took their states from their partner −k by time reversal (not diagonalised)
    time_reversed: int = 0


class BandData:
    """Lazily filled band data of one model at one filling.

    Parameters
    ----------
    model : BlochModel
        Anything with ``dim``, ``n_states``, ``lattice``, ``hamiltonian(k)``, ``symmetry_matrix(op, k)``
        and ``position_phase(dk)``.
    filling : int
        Number of occupied bands (counting both spin states of a spinful model).
    gap_tol : float
        Smallest direct gap (energy units of the model) accepted between band ``filling`` and ``filling + 1``.
    herm_tol : float
        Largest ``|H - H^†|`` accepted (relative to ``|H|``).
    gauge_seed : int, optional
        For testing: multiply every eigenvector by a random phase (seeded), so that a plugin relying on the
        eigensolver's gauge is caught; every invariant must give the same value with any seed.
    progress : bool, optional
        Show a progress bar (tqdm) while diagonalising a large grid; default only when standard error is a
        terminal. False turns it off.
    time_reversal : (n, n) array, optional
        The unitary ``U_T`` of a time reversal the model respects (``U_T H(k)* U_T† = H(−k)``, checked by the
        caller). Given, a point of the mesh store whose partner ``−k`` is known is not diagonalised: its states are
        ``U_T V(−k)*`` (about half the diagonalisations of a whole mesh). ``stats.time_reversed`` counts them.
    """

    #: size of H(k) built and diagonalised at once (bytes)
    CHUNK_BYTES = 1 << 23
    #: grids of at least this many chunks get a progress bar (when progress is on)
    PROGRESS_MIN_CHUNKS = 4

    def __init__(self, model, filling: int, *, gap_tol: float = 1e-6, herm_tol: float = 1e-9,
                 gauge_seed: int | None = None, progress: bool | None = None, time_reversal=None):
        n = int(model.n_states)
        filling = int(filling)
        if not 0 < filling < n:
            raise FillingError(f"filling {filling} is out of range: the model has {n} bands, so 1 <= filling <= {n - 1}")
        self.model = model
        self.filling = filling
        self.gap_tol = float(gap_tol)
        self.herm_tol = float(herm_tol)
        self._gauge_rng = None if gauge_seed is None else np.random.default_rng(gauge_seed)
        self.progress = progress
        # V ↦ U_T V* (the states at −k from those at k), when the model's time reversal may be used
        self._reverse = None if time_reversal is None else time_reversal_map(time_reversal, n)
        self.stats = DiagonalisationStats()
        self._grids: dict[Grid, tuple[np.ndarray, np.ndarray]] = {}
        # the cached grids that brought new points and are contained in no other such grid: every cached point
        # is on one of them or among the scattered points, so lookups search only these (often one, the full
        # mesh, once it is cached)
        self._maximal: list[Grid] = []
        self._tables: dict[Grid, list] = {}
        # the points of the uniform mesh of the first grid with a closed axis (see MeshStore), or None
        self._store: MeshStore | None = None
        self._store_tried = False
        # points diagonalised one by one, not on a grid nor on the mesh store: reduced k, energies, eigenvectors
        n = int(model.n_states)
        self._scattered_k = np.zeros((0, int(model.dim)))
        self._scattered_e = np.zeros((0, n))
        self._scattered_v = np.zeros((0, n, n), dtype=complex)
        self._gaps: dict[Grid, tuple[float, np.ndarray]] = {}
        # single points asked for again (high-symmetry momenta, by several invariants): by their exact bytes
        self._single: dict[bytes, tuple[np.ndarray, np.ndarray]] = {}
        # Plücker coordinates of the occupied states per grid (shared by the link determinants of every axis),
        # and of the whole mesh store once it is complete (grids on it take theirs from it): (μ, conj μ) or None
        self._minors: dict[Grid, tuple] = {}
        self._mesh_minors: tuple | None = None
        # the direct gap above the filling at every point of the complete mesh store (grids on it read theirs)
        self._mesh_gaps: np.ndarray | None = None
        # position phases exp(-2πi dk·X) of one step j/N along an axis, by (axis, N)
        self._steps: dict[tuple[int, int], np.ndarray] = {}
        # occupied-subspace representations already formed: (operation, k) -> (matrix, gap at k)
        self._representations: dict[tuple, tuple[np.ndarray, float]] = {}
        #: every gap checked, in order (the dispatcher reads the part each invariant added)
        self.gap_log: list[float] = []

    # ------------------------------------------------------------------ diagonalisation
    def _diagonalise(self, k: np.ndarray, what: str, *, on_store=None) -> tuple[np.ndarray, np.ndarray]:
        """Eigensystems of the momenta ``k`` ``(..., dim)``, counted in the statistics and kept in the mesh store
        (``on_store``: the flat index in it of every point, when the caller knows that all lie on it).

        With the model's time reversal (``time_reversal`` of the constructor), a point of the mesh store whose
        partner ``−k`` is known, or comes earlier in the batch, is not diagonalised: its states are ``U_T V(−k)*``
        with the energies of ``−k`` (``U_T H(k)* U_T† = H(−k)``). Its H(k) is still built and checked.
        """
        n = self.model.n_states
        shape = k.shape[:-1]
        flat_k = k.reshape(-1, k.shape[-1])
        total = flat_k.shape[0]
        store = self._store
        whole = store is not None and on_store is not None and store.in_order(on_store)
        sources = self._time_reversed_sources(on_store) if self._reverse is not None and on_store is not None \
            and store is not None else None
        rows = None if sources is None else np.flatnonzero((sources[0] < 0) & (sources[1] < 0))
        # in chunks of about CHUNK_BYTES of H, so that H(k) is built, checked and diagonalised while in cache; the
        # whole mesh in slabs of its first axis, each built by the model's sum per axis (BlochModel.mesh_slabs)
        step = max(1, min(total, self.CHUNK_BYTES // (16 * n * n)))
        bounds, build = [(start, min(start + step, total)) for start in range(0, total, step)], None
        if whole and hasattr(self.model, "mesh_slabs"):
            bounds, build = self._mesh_chunks(store.shape, step)
        if len(bounds) == 1:  # one chunk: eigh's own arrays are the result (no copy)
            energies, vectors = self._eigh(flat_k, rows=rows, h=None if build is None else build(0, total))
        else:
            energies, vectors = self._eigh_in_chunks(flat_k, bounds, what, rows, build)
        if rows is not None:
            energies, vectors = self._with_time_reversed(energies, vectors, rows, sources, total)
            self.stats.time_reversed += total - rows.size
        if self._gauge_rng is not None:
            vectors *= np.exp(2j * np.pi * self._gauge_rng.random(energies.shape))[:, None, :]
        self.stats.k_points += total
        self.stats.batches.append((what, total))
        if store is not None:  # every point diagonalised on the mesh is found there from now on
            store.record(flat_k, energies, vectors, on_store)
        return energies.reshape(shape + (n,)), vectors.reshape(shape + (n, n))

    def _time_reversed_sources(self, flat: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
        """For each point ``flat`` of a new batch on the mesh store, where its partner ``−k`` is: (its row in the
        batch if it comes earlier there, else −1; its flat index in the store if the store knows it, else −1).
        A point with neither is diagonalised. None if every point is."""
        store = self._store
        partner = store.partner(flat)
        in_store = np.where(store._known[partner], partner, -1)
        position = np.full(store._known.size, -1)
        position[flat] = np.arange(flat.size)
        earlier = position[partner]
        in_batch = np.where((in_store < 0) & (earlier >= 0) & (earlier < np.arange(flat.size)), earlier, -1)
        if (in_store < 0).all() and (in_batch < 0).all():
            return None
        return in_batch, in_store

    def _with_time_reversed(self, energies, vectors, rows, sources, total):
        """The eigensystems of a whole batch from those of its ``rows``, the others by time reversal."""
        n = self.model.n_states
        in_batch, in_store = sources
        e = np.empty((total, n))
        v = np.empty((total, n, n), dtype=complex)
        e[rows], v[rows] = energies, vectors
        b = np.flatnonzero(in_batch >= 0)  # the partner is a row diagonalised before it in this batch
        if b.size:
            where = np.empty(total, dtype=int)
            where[rows] = np.arange(rows.size)
            src = where[in_batch[b]]  # read from the compact arrays just diagonalised
            e[b] = energies[src]
            v[b] = self._reverse(vectors, src)
        s = np.flatnonzero(in_store >= 0)
        if s.size:
            e[s] = self._store._e[in_store[s]]
            v[s] = self._reverse(self._store._v, in_store[s])
        return e, v

    def _mesh_chunks(self, shape: tuple[int, ...], step: int):
        """Chunk bounds (flat indices) of whole slabs of the mesh's first axis, about ``step`` points each, and
        ``build(start, stop)``: H of the points ``start .. stop - 1`` (whole slabs) from the model's mesh sum."""
        n = self.model.n_states
        slab = int(np.prod(shape[1:]))
        per = max(1, step // slab)  # slabs per chunk
        slabs = self.model.mesh_slabs(shape)
        bounds = [(a * slab, min(a + per, shape[0]) * slab) for a in range(0, shape[0], per)]

        def build(start: int, stop: int) -> np.ndarray:
            expected = ((stop - start) // slab,) + tuple(shape[1:]) + (n, n)
            h = np.asarray(slabs(start // slab, stop // slab))
            if h.shape != expected:
                raise ShapeError(f"H on the mesh {'x'.join(map(str, shape))} has shape {h.shape} for the slabs "
                                 f"{start // slab}..{stop // slab - 1}, expected {expected}")
            return h.reshape(-1, n, n)
        return bounds, build

    def _eigh(self, kc: np.ndarray, rows: np.ndarray | None = None, h: np.ndarray | None = None
              ) -> tuple[np.ndarray, np.ndarray]:
        """H(k) built (unless given as ``h``, for every point of ``kc``), checked and diagonalised for one chunk of
        momenta ``(m, dim)``: only its ``rows``, if given."""
        n = self.model.n_states
        checked = not getattr(self.model, "hermitian_by_construction", False)
        points = kc if rows is None or checked or h is not None else kc[rows]  # every H(k) is checked if need be
        if h is None:
            h = np.asarray(self.model.hamiltonian(points))
        if h.shape != (points.shape[0], n, n):
            raise ShapeError(f"H(k) returned shape {h.shape}, expected {(points.shape[0], n, n)}")
        if checked:
            self._check_hermitian(h, points)
        if rows is not None and points is kc:
            h = h[rows]
        return np.linalg.eigh(h)

    def _eigh_in_chunks(self, flat_k: np.ndarray, bounds, what: str, rows: np.ndarray | None = None, build=None
                        ) -> tuple[np.ndarray, np.ndarray]:
        n = self.model.n_states
        total = flat_k.shape[0] if rows is None else rows.size
        energies = np.empty((total, n))
        vectors = np.empty((total, n, n), dtype=complex)
        bar = progress_bar(len(bounds), f"diagonalising {what}", "chunk",
                           self.progress if len(bounds) >= self.PROGRESS_MIN_CHUNKS else False)
        done = 0
        for start, stop in bounds:  # a handful of large batches, not a loop over k-points
            chunk = flat_k[start:stop]
            h = None if build is None else build(start, stop)
            if rows is None:
                energies[start:stop], vectors[start:stop] = self._eigh(chunk, h=h)
            else:
                mine = rows[(rows >= start) & (rows < stop)] - start
                part = slice(done, done + mine.size)
                energies[part], vectors[part] = self._eigh(chunk, rows=mine, h=h)
                done += mine.size
            bar.update(1)
        bar.close()
        return energies, vectors

    def _check_hermitian(self, h: np.ndarray, k: np.ndarray) -> None:
        """NonHermitianError naming the worst k-point if |H − H†| exceeds the tolerance anywhere."""
        n = self.model.n_states
        flat = h.reshape(-1, n, n)
        # one pass over the batch; the worst k-point is named
        dev_all = np.abs(flat - np.conj(np.swapaxes(flat, -1, -2))).max(axis=(-1, -2))
        if dev_all.max(initial=0.0) <= self.herm_tol:  # the scale is at least 1: every point passes
            return
        scale = np.maximum(np.abs(flat).max(axis=(-1, -2)), 1.0)
        rel = dev_all / scale
        bad = int(np.argmax(rel))
        if rel[bad] > self.herm_tol:
            kk = k.reshape(-1, k.shape[-1])[bad]
            raise NonHermitianError(f"H(k) is not Hermitian at k={format_k(kk)}: |H - H†| = {dev_all[bad]:.2e}")

    #: largest mesh store allocated (bytes of eigenvectors; the pages are touched only where points are known);
    #: beyond it, or if the allocation is refused, grids and points are matched against each other as before
    STORE_BYTES = 1 << 28

    def _store_for(self, grid: Grid) -> MeshStore | None:
        """The mesh store, made on the first grid with a closed axis: the mesh of its longest closed axis."""
        if self._store is None and not self._store_tried and any(grid.periodic):
            self._store_tried = True
            n = max(m for m, p in zip(grid.shape, grid.periodic) if p)
            states = int(self.model.n_states)
            if n ** grid.dim * states * states * 16 <= self.STORE_BYTES:
                try:
                    store = MeshStore((n,) * grid.dim, states)
                except MemoryError:  # the store is an accelerator, never a requirement
                    return None
                for cached in self._maximal:  # what is known already (grids and points asked for before)
                    e, v = self._grids[cached]
                    store.record(cached.points.reshape(-1, grid.dim), e.reshape(-1, states),
                                 v.reshape(-1, states, states))
                if self._scattered_k.shape[0]:
                    store.record(self._scattered_k, self._scattered_e, self._scattered_v)
                self._store = store
        return self._store

    def eigensystem(self, grid: Grid) -> tuple[np.ndarray, np.ndarray]:
        """Energies ``(*shape, n)`` (ascending) and eigenvectors ``(*shape, n, n)`` (columns) on a grid."""
        if grid.dim != self.model.dim:
            raise ShapeError(f"a {grid.dim}D grid was asked of a {self.model.dim}D model")
        found = self._grids.get(grid)
        if found is not None:
            self.stats.cache_hits += 1
            return found
        store = self._store_for(grid)
        idx = None if store is None else store.grid_index(grid)
        if idx is not None:
            return self._from_store(grid, idx)
        out = self._cached(grid)
        if out is not None:
            return out
        before = self.stats.k_points
        out = self._fill(grid)
        self._grids[grid] = out
        if self.stats.k_points > before:  # a grid assembled only from known points adds nothing to search
            self._maximal = [g for g in self._maximal if g.indices_in(grid) is None] + [grid]
        return out

    def _from_store(self, grid: Grid, flat: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """A grid on the mesh store: its unknown points diagonalised (at the grid's own coordinates), then read."""
        store = self._store
        known = store._known[flat]
        if known.all():
            self.stats.cache_hits += 1
        elif not known.any():
            self._diagonalise(grid.points, grid.describe(), on_store=flat.reshape(-1))
        else:
            missing = ~known
            self._diagonalise(grid.points[missing], f"{grid.describe()} ({int(missing.sum())} new points)",
                              on_store=flat[missing])
            self.stats.cache_hits += 1
        out = (store.energies, store.vectors) if store.is_whole(grid, flat) else store.read(flat)
        self._grids[grid] = out
        return out

    def eigensystems(self, grids) -> list[tuple[np.ndarray, np.ndarray]]:
        """:meth:`eigensystem` of several grids, with every point that none of them can take from the cache
        diagonalised in one batch (each distinct point once, also where the grids share lines)."""
        grids = list(grids)
        for g in grids:
            if g.dim != self.model.dim:
                raise ShapeError(f"a {g.dim}D grid was asked of a {self.model.dim}D model")
        store = self._store_for(grids[0]) if grids else None
        idx = [None if store is None else store.grid_index(g) for g in grids]
        if store is None or any(i is None for i in idx):
            return self._eigensystems_apart(grids)
        # the points no grid can take from the store, each once, in the order they are first asked for
        todo = [(g, i) for g, i in zip(grids, idx) if g not in self._grids and not store._known[i].all()]
        if len(todo) > 1:
            flat, points, what = [], [], []
            for g, i in todo:
                missing = ~store._known[i]
                flat.append(i[missing])
                points.append(g.points[missing])
                what.append(g.describe())
            flat, points = np.concatenate(flat), np.concatenate(points)
            _, first = np.unique(flat, return_index=True)
            first.sort()
            self._diagonalise(points[first], f"{', '.join(what)} ({first.size} new points)", on_store=flat[first])
        return [self.eigensystem(g) for g in grids]

    def prefetch(self, wanted, what: str = "planned") -> int:
        """Diagonalise in one batch every point of ``wanted`` that is not known yet, and return how many.

        ``wanted`` holds grids and arrays of reduced momenta ``(m, dim)``: what the invariants of a report said,
        before running, they will ask for (``Invariant.planned_grids``). Nothing is checked here but H(k) itself:
        the gap of a grid is checked when an invariant asks for it, as without a plan. Points on the mesh store
        are diagonalised at the mesh's coordinates ``j / N``, in the order of the mesh; the whole mesh, when it is
        all new, becomes the store's arrays. Grids and points off the mesh store are diagonalised as
        :meth:`eigensystems` and :meth:`at` would.
        """
        dim = int(self.model.dim)
        grids = [w for w in wanted if isinstance(w, Grid)]
        points = [np.asarray(w, dtype=float).reshape(-1, dim) for w in wanted if not isinstance(w, Grid)]
        for g in grids:
            if g.dim != dim:
                raise ShapeError(f"a {g.dim}D grid was asked of a {dim}D model")
        before = self.stats.k_points
        store = self._store
        for g in grids:
            if store is not None:
                break
            store = self._store_for(g)
        off_grids, off_points, flats = [], [], []
        if store is None:
            off_grids, off_points = grids, points
        else:
            for g in grids:
                idx = store.grid_index(g)
                if idx is None:
                    off_grids.append(g)
                else:
                    flats.append(idx.reshape(-1))
            for p in points:
                rows, flat = store.point_index(p)
                flats.append(flat)
                if rows.size < p.shape[0]:
                    off = np.ones(p.shape[0], dtype=bool)
                    off[rows] = False
                    off_points.append(p[off])
        if flats:
            wanted_mask = np.zeros(store._known.size, dtype=bool)  # the union, in the mesh's order
            for f in flats:
                wanted_mask[f] = True
            flat = np.flatnonzero(wanted_mask & ~store._known)
            if flat.size:
                self._diagonalise(store.coordinates(flat), f"{what} ({flat.size} points)", on_store=flat)
        if off_grids:
            self.eigensystems(off_grids)
        if off_points:
            self.at(np.concatenate(off_points))
        return self.stats.k_points - before

    def _eigensystems_apart(self, grids) -> list[tuple[np.ndarray, np.ndarray]]:
        """:meth:`eigensystems` for grids off the mesh store (matched against the cached grids)."""
        out = [self._cached(g) for g in grids]
        todo = [i for i, o in enumerate(out) if o is None]
        if len(todo) <= 1:
            return [o if o is not None else self.eigensystem(g) for o, g in zip(out, grids)]
        parts = [self._known_part(grids[i]) for i in todo]
        wanted = [g.points[~known] for g, (_, _, known) in zip((grids[i] for i in todo), parts)]
        flat = np.concatenate(wanted) if wanted else np.zeros((0, self.model.dim))
        if flat.shape[0]:
            # distinct points in the order they are first asked for, diagonalised at their own coordinates
            _, inverse = _unique_rows(_point_keys(flat))
            first = np.full(inverse.max() + 1, flat.shape[0])
            np.minimum.at(first, inverse, np.arange(flat.shape[0]))
            order = np.argsort(first, kind="stable")
            rank = np.empty_like(order)
            rank[order] = np.arange(order.shape[0])
            what = ", ".join(grids[i].describe() for i, w in zip(todo, wanted) if w.shape[0])
            e, v = self._diagonalise(flat[first[order]], f"{what} ({order.shape[0]} new points)")
            where = rank[inverse]
        start = 0
        for i, (energies, vectors, known), w in zip(todo, parts, wanted):
            grid = grids[i]
            if w.shape[0]:
                rows = where[start:start + w.shape[0]]
                start += w.shape[0]
                missing = ~known
                energies[missing], vectors[missing] = e[rows], v[rows]
            self.stats.cache_hits += 1 if known.any() else 0
            out[i] = self._grids[grid] = (energies, vectors)
            contained = any(grid.indices_in(g) is not None for g in self._maximal)
            if w.shape[0] and not contained:
                self._maximal = [g for g in self._maximal if g.indices_in(grid) is None] + [grid]
        return out

    def _cached(self, grid: Grid) -> tuple[np.ndarray, np.ndarray] | None:
        """The eigensystem of a grid that is cached or a sub-grid of a cached one, else None."""
        if grid.dim != self.model.dim:
            raise ShapeError(f"a {grid.dim}D grid was asked of a {self.model.dim}D model")
        if grid in self._grids:
            self.stats.cache_hits += 1
            return self._grids[grid]
        for cached in self._maximal:
            idx = grid.indices_in(cached)
            if idx is not None:
                self.stats.cache_hits += 1
                e, v = self._grids[cached]
                sel = np.ix_(*idx)
                out = (e[sel], v[sel])
                self._grids[grid] = out
                return out
        return None

    def _locate(self, points: np.ndarray, grid: Grid) -> tuple[np.ndarray, tuple[np.ndarray, ...]]:
        """The rows of ``points`` that lie on the grid, and their index tuple in it."""
        tables = self._tables.get(grid)
        if tables is None:
            tables = self._tables[grid] = [_axis_table(grid.values(i)) for i in range(grid.dim)]
        rows = np.arange(points.shape[0])
        idx: list = [np.zeros(0, dtype=int)] * grid.dim
        # the shortest axes first (a plane's fixed coordinate): most points that are off the grid drop out there
        for i in sorted(range(grid.dim), key=lambda a: grid.shape[a]):
            j, ok = _axis_match(points[rows, i], tables[i])
            rows = rows[ok]
            idx = [a[ok] if a.shape[0] == ok.shape[0] else a for a in idx]
            idx[i] = j[ok]
            if rows.size == 0:
                return rows, tuple(np.zeros(0, dtype=int) for _ in range(grid.dim))
        return rows, tuple(idx)

    def _known_part(self, grid: Grid) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Arrays for a new grid (off the mesh store) holding the points that cached grids (planes, lines,
        meshes), the mesh store and earlier scattered points already have, and the mask of those points."""
        n = self.model.n_states
        energies = np.empty(grid.shape + (n,))
        vectors = np.empty(grid.shape + (n, n), dtype=complex)
        known = np.zeros(grid.shape, dtype=bool)
        for cached in self._maximal:
            shared = grid.overlap(cached)
            if shared is not None:
                e, v = self._grids[cached]
                mine, theirs = np.ix_(*shared[0]), np.ix_(*shared[1])
                energies[mine], vectors[mine] = e[theirs], v[theirs]
                known[mine] = True
        if self._store is not None:
            rows, flat = self._store.point_index(grid.points.reshape(-1, grid.dim))
            hit = self._store._known[flat]
            rows = rows[hit]
            energies.reshape(-1, n)[rows], vectors.reshape(-1, n, n)[rows] = self._store.read(flat[hit])
            known.reshape(-1)[rows] = True
        if self._scattered_k.shape[0]:
            rows, mine = self._locate(self._scattered_k, grid)
            if rows.size:
                energies[mine], vectors[mine] = self._scattered_e[rows], self._scattered_v[rows]
                known[mine] = True
        return energies, vectors, known

    def _fill(self, grid: Grid) -> tuple[np.ndarray, np.ndarray]:
        """Diagonalise a new grid, copying the points that the cache already holds."""
        energies, vectors, known = self._known_part(grid)
        if known.all():
            self.stats.cache_hits += 1
            return energies, vectors
        if not known.any():
            return self._diagonalise(grid.points, grid.describe())
        missing = ~known
        e, v = self._diagonalise(grid.points[missing], f"{grid.describe()} ({int(missing.sum())} new points)")
        energies[missing], vectors[missing] = e, v
        self.stats.cache_hits += 1
        return energies, vectors

    def at(self, k) -> tuple[np.ndarray, np.ndarray]:
        """Energies ``(m, n)`` and eigenvectors ``(m, n, n)`` at arbitrary reduced points ``k`` of shape ``(m, dim)``.

        Points that lie on a cached grid, or were asked before, are not diagonalised again (matched in
        batches, without a loop over the points).
        """
        k = np.atleast_2d(np.asarray(k, dtype=float))
        if k.ndim != 2 or k.shape[-1] != self.model.dim:
            raise ShapeError(f"k-points must have shape (m, {self.model.dim}), got {k.shape}")
        m = k.shape[0]
        if m == 1:
            key = k.tobytes()
            hit = self._single.get(key)
            if hit is None:
                hit = self._single[key] = self._at(k)
            else:
                self.stats.cache_hits += 1
            return hit[0].copy(), hit[1].copy()
        return self._at(k)

    def _at(self, k: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        n = self.model.n_states
        m = k.shape[0]
        energies = np.empty((m, n))
        vectors = np.empty((m, n, n), dtype=complex)
        todo = np.arange(m)
        unknown = np.zeros(0, dtype=int)  # points on the mesh store that nothing holds yet
        if self._store is not None:
            store = self._store
            rows, flat = store.point_index(k)
            hit = store._known[flat]
            energies[rows[hit]], vectors[rows[hit]] = store.read(flat[hit])
            unknown = rows[~hit]
            off = np.ones(m, dtype=bool)
            off[rows] = False
            todo = np.flatnonzero(off)
        for cached in self._maximal if todo.size else ():
            rows, sel = self._locate(k[todo], cached)
            if rows.size:
                e, v = self._grids[cached]
                energies[todo[rows]], vectors[todo[rows]] = e[sel], v[sel]
                left = np.ones(todo.size, dtype=bool)
                left[rows] = False
                todo = todo[left]
                if todo.size == 0:
                    break
        if todo.size and self._scattered_k.shape[0]:
            j, hit = _match_points(k[todo], self._scattered_k)
            rows = todo[hit]
            energies[rows], vectors[rows] = self._scattered_e[j[hit]], self._scattered_v[j[hit]]
            todo = todo[~hit]
        if unknown.size and not todo.size:  # every new point lies on the mesh store: distinct ones by their index
            flat_new, first, inverse = np.unique(flat[~hit], return_index=True, return_inverse=True)
            # in the order of their (rounded) coordinates and diagonalised there, as the matching below would do
            e, v = self._diagonalise(_point_keys(k[unknown[first]]), f"{flat_new.size} points", on_store=flat_new)
            energies[unknown], vectors[unknown] = e[inverse], v[inverse]
            return energies, vectors
        if unknown.size:
            todo = np.sort(np.concatenate([todo, unknown]))
        if todo.size:
            uniq, inverse = _unique_rows(_point_keys(k[todo]))
            e, v = self._diagonalise(uniq, f"{len(uniq)} points")
            energies[todo], vectors[todo] = e[inverse], v[inverse]
            # the points on the mesh store are found there from now on; the others are kept as scattered points
            off = np.ones(uniq.shape[0], dtype=bool) if self._store is None else ~self._store.holds(uniq)
            if off.any():
                self._scattered_k = np.concatenate([self._scattered_k, uniq[off]])
                self._scattered_e = np.concatenate([self._scattered_e, e[off]])
                self._scattered_v = np.concatenate([self._scattered_v, v[off]])
        else:
            self.stats.cache_hits += 1
        return energies, vectors

    # ------------------------------------------------------------------ occupied subspace and gap
    def occupied(self, grid: Grid) -> np.ndarray:
        """Occupied eigenvectors ``(*shape, n, filling)`` after checking the gap on the grid."""
        self.check_gap(grid)
        return self.eigensystem(grid)[1][..., : self.filling]

    def occupied_at(self, k) -> np.ndarray:
        """Occupied eigenvectors ``(m, n, filling)`` at arbitrary points after checking the gap there
        (:meth:`check_gap_at` and :meth:`at` in one lookup)."""
        e, v = self.at(k)
        self._check_gap_of(e, k)
        return v[..., : self.filling]

    def gap(self, grid: Grid) -> tuple[float, np.ndarray]:
        """Smallest direct gap above the occupied bands on the grid and the k-point where it occurs."""
        if grid not in self._gaps:
            flat = self._on_complete_store(grid)
            if flat is not None:  # the store's energies, without gathering the eigensystem
                if self._mesh_gaps is None:
                    e = self._store._e
                    self._mesh_gaps = e[:, self.filling] - e[:, self.filling - 1]
                g = self._mesh_gaps[flat]
            else:
                e, _ = self.eigensystem(grid)
                g = e[..., self.filling] - e[..., self.filling - 1]
            j = np.unravel_index(int(np.argmin(g)), g.shape)
            where = np.array([grid.axes[i][j[i]] for i in range(grid.dim)])  # that point of grid.points
            self._gaps[grid] = (float(g[j]), where)
        return self._gaps[grid]

    def check_gap(self, grid: Grid) -> float:
        """The smallest direct gap on the grid; :class:`GapClosedError` naming the k-point if below tolerance."""
        g, k = self.gap(grid)
        self.gap_log.append(g)
        if g < self.gap_tol:
            raise GapClosedError(
                f"the gap between bands {self.filling} and {self.filling + 1} closes at k={format_k(k)} "
                f"(gap {g:.2e} < tolerance {self.gap_tol:.0e}) on the {grid.describe()} mesh")
        return g

    def check_gap_at(self, k) -> float:
        """The smallest direct gap at the given points; :class:`GapClosedError` naming the point if too small."""
        return self._check_gap_of(self.at(k)[0], k)

    def _check_gap_of(self, e: np.ndarray, k) -> float:
        g = e[:, self.filling] - e[:, self.filling - 1]
        j = int(np.argmin(g))
        self.gap_log.append(float(g[j]))
        if g[j] < self.gap_tol:
            raise GapClosedError(
                f"the gap between bands {self.filling} and {self.filling + 1} closes at k={format_k(np.atleast_2d(k)[j])} "
                f"(gap {g[j]:.2e} < tolerance {self.gap_tol:.0e})")
        return float(g[j])

    @property
    def smallest_gap(self) -> float | None:
        """Smallest direct gap over every grid checked so far (None before any)."""
        return min((g for g, _ in self._gaps.values()), default=None)

    # ------------------------------------------------------------------ links and Wilson loops
    def _loop_states(self, grid: Grid, axis: int, embed: bool) -> tuple[np.ndarray, np.ndarray | None]:
        """The occupied states of a grid (gap checked) and, with ``embed``, the position phase of one step along
        ``axis``, which must be a closed loop."""
        if not grid.periodic[axis]:
            raise ShapeError(f"axis {axis} of the {grid.describe()} grid is not a closed loop")
        occ = self.occupied(grid)
        return occ, (self._step_phase(grid, axis) if embed else None)

    def links(self, grid: Grid, axis: int, *, embed: bool = True) -> np.ndarray:
        """Link matrices ``<u(k)| e^{-2πi dk·X} |u(k + dk)>`` along a periodic axis, shape ``(*shape, m, m)``.

        With ``embed=False`` the position phase is left out (periodic-gauge links, enough for Chern numbers).
        """
        occ, phase = self._loop_states(grid, axis, embed)
        return link_matrices(occ, axis, phase)

    def link_determinants(self, grid: Grid, axis: int, *, embed: bool = True) -> np.ndarray:
        """``det`` of the link matrices of :meth:`links`, shape ``(*shape,)`` (from Plücker coordinates of the
        occupied states where that is cheaper, see :func:`crystaltop.bands.products.link_determinants`)."""
        if not grid.periodic[axis]:
            raise ShapeError(f"axis {axis} of the {grid.describe()} grid is not a closed loop")
        minors = self._minors.get(grid)
        if minors is None:
            minors = self._minors[grid] = self._grid_minors(grid)
        else:
            self.check_gap(grid)
        phase = self._step_phase(grid, axis) if embed else None
        diagonal = None if phase is None else diagonal_of(phase)
        if minors[0] is None or (phase is not None and diagonal is None):  # the link matrices themselves
            return link_determinants(self.eigensystem(grid)[1][..., : self.filling], axis, phase)
        phases = None if diagonal is None else subset_phases(diagonal, self.filling)
        return minor_links(minors[0], axis, phases, conj_minors=minors[1])

    def _grid_minors(self, grid: Grid) -> tuple:
        """(μ, conj μ) of the occupied states of a grid (gap checked), or (None, None) where the link
        determinants are better formed from the link matrices; a grid on the complete mesh store takes its part of
        the store's, which are formed once."""
        self.check_gap(grid)
        flat = self._on_complete_store(grid)
        if flat is None:  # minors of the store only once it is complete
            mu = link_minors(self.eigensystem(grid)[1][..., : self.filling])
            return (mu, None if mu is None else np.conj(mu))
        if self._mesh_minors is None:
            mu = link_minors(self._store._v[..., : self.filling])
            self._mesh_minors = (mu, None if mu is None else np.conj(mu))
        mu, conj_mu = self._mesh_minors
        if mu is None:
            return (None, None)
        if self._store.is_whole(grid, flat):
            shape = grid.shape + mu.shape[-1:]
            return (mu.reshape(shape), conj_mu.reshape(shape))
        return (np.take(mu, flat, axis=0), np.take(conj_mu, flat, axis=0))

    def _on_complete_store(self, grid: Grid) -> np.ndarray | None:
        """The flat index of every point of ``grid`` in the mesh store once the store knows every point of the
        mesh (its energies and Plücker coordinates then serve every grid on it); else None."""
        store = self._store
        return store.grid_index(grid) if store is not None and store.complete else None

    def _step_phase(self, grid: Grid, axis: int) -> np.ndarray:
        """The position phase ``exp(-2πi dk·X)`` of one step of ``grid`` along ``axis``."""
        phase = self._steps.get((axis, grid.shape[axis]))
        if phase is None:
            dk = np.zeros(self.model.dim)
            dk[axis] = 1.0 / grid.shape[axis]
            phase = self._steps[(axis, grid.shape[axis])] = np.asarray(self.model.position_phase(dk))
        return phase

    def wilson_loops(self, grid: Grid, axis: int) -> np.ndarray:
        """Wilson loops along ``axis`` for every point of the other axes, shape ``(*other_shape, m, m)``."""
        return ordered_product(self.links(grid, axis, embed=True), axis)

    def wilson_loops_on(self, grids, axes) -> list[np.ndarray]:
        """:meth:`wilson_loops` of several grids, each along its own axis, in one pass.

        The points that none of the grids can take from the cache are diagonalised in one batch
        (:meth:`eigensystems`); the gap is checked grid by grid, in order; grids whose loops have the same shape
        share one stacked product of link matrices. Returns one array per grid, as :meth:`wilson_loops` does.
        """
        grids, axes = list(grids), [int(a) for a in axes]
        self.eigensystems(grids)
        states = [self._loop_states(g, a, True) for g, a in zip(grids, axes)]
        groups: dict[tuple, list[int]] = {}
        for i, (g, a) in enumerate(zip(grids, axes)):  # by the number of loops and their length
            groups.setdefault((g.size // g.shape[a], g.shape[a]), []).append(i)
        out: list = [None] * len(grids)
        n = self.model.n_states
        for (count, length), members in groups.items():
            # each grid as (loops, loop points, n, m): the loop axis after the others, in the grid's order
            occ = np.stack([np.moveaxis(states[i][0], axes[i], grids[i].dim - 1).reshape(count, length, n, -1)
                            for i in members])
            phase = np.stack([states[i][1] for i in members]).reshape(len(members), 1, 1, n, n)
            w = ordered_product(link_matrices(occ, 2, phase), 2)
            for j, i in enumerate(members):
                g, a = grids[i], axes[i]
                out[i] = w[j].reshape(g.shape[:a] + g.shape[a + 1:] + w.shape[-2:])
        return out

    def wilson_loop_determinants(self, grid: Grid, axis: int) -> np.ndarray:
        """``det W`` of the Wilson loop along ``axis`` for every point of the other axes, ``(*other_shape,)``.

        The determinant is multiplicative, so it is the product of the link determinants along the loop: the
        sum of the Wannier centres (Berry phase) without forming the loops themselves.
        """
        return np.prod(self.link_determinants(grid, axis, embed=True), axis=axis)

    def wannier_centres(self, grid: Grid, axis: int) -> np.ndarray:
        """Hybrid Wannier centres along ``axis`` in ``[0, 1)`` (reduced units), sorted, ``(*other_shape, m)``.

        Centre = ``-arg(λ) / 2π`` for each eigenvalue λ of the Wilson loop (Berry convention of docs/conventions.md).
        """
        lam = np.linalg.eigvals(self.wilson_loops(grid, axis))
        return np.sort(np.mod(-np.angle(lam) / (2 * np.pi), 1.0), axis=-1)

    # ------------------------------------------------------------------ symmetry eigenvalues
    def symmetry_representation(self, op, k, *, tol: float = 1e-6) -> np.ndarray:
        """The matrix ``V(k)^† D_g(k) V(k)`` of an operation on the occupied subspace at a momentum it fixes.

        Correct when occupied bands are degenerate (the whole occupied subspace is used). Raises
        :class:`SymmetryBreakingError` if ``g`` does not fix ``k`` or the occupied subspace is not invariant.
        """
        k = np.asarray(k, dtype=float).reshape(self.model.dim)
        key = (op.label, np.asarray(op.matrix, dtype=float).tobytes(), k.tobytes(), float(tol))
        done = self._representations.get(key)
        if done is not None:  # the same check and matrix as the first time; its gap counts for this caller too
            self.gap_log.append(done[1])
            return done[0].copy()
        lattice = self.model.lattice
        gk = np.asarray(op.acts_on_k(k, lattice), dtype=float)
        shift = gk - k
        if np.max(np.abs(shift - np.round(shift))) > 1e-8:
            raise SymmetryBreakingError(f"operation {op.label} does not fix k={format_k(k)} (it maps it to {format_k(gk)})")
        e, v = self.at(k[None])  # one lookup for the gap check and the states
        gap = self._check_gap_of(e, k[None])
        v = v[0][:, : self.filling]
        d = np.asarray(self.model.symmetry_matrix(op, k))
        s = np.conj(v.T) @ d @ v
        dev = np.linalg.norm(np.conj(s.T) @ s - np.eye(self.filling))
        if dev > tol:
            raise SymmetryBreakingError(
                f"operation {op.label} does not map the occupied states at k={format_k(k)} onto themselves "
                f"(deviation from unitarity {dev:.1e}): the model breaks it or bands are degenerate across the filling")
        self._representations[key] = (s, gap)
        return s.copy()

    def symmetry_eigenvalues(self, op, k) -> np.ndarray:
        """Eigenvalues of :meth:`symmetry_representation`, sorted by phase angle."""
        lam = np.linalg.eigvals(self.symmetry_representation(op, k))
        return lam[np.argsort(np.angle(lam), kind="stable")]

    def symmetry_representations(self, op, ks, *, tol: float = 1e-6) -> np.ndarray:
        """:meth:`symmetry_representation` at every row of ``ks`` ``(m, dim)``, formed in one batch: ``(m, f, f)``.

        If a check fails at some momentum, the momenta are taken one by one from the first, so the error
        (and what was recorded before it) is exactly that of :meth:`symmetry_representation` in a loop.
        """
        ks = np.asarray(ks, dtype=float).reshape(-1, self.model.dim)
        keys = [(op.label, np.asarray(op.matrix, dtype=float).tobytes(), k.tobytes(), float(tol)) for k in ks]
        todo = [i for i, key in enumerate(keys) if key not in self._representations]
        if todo:
            sub = ks[todo]
            gk = np.asarray(op.acts_on_k(sub, self.model.lattice), dtype=float)
            shift = gk - sub
            e, v = self.at(sub)
            g = e[:, self.filling] - e[:, self.filling - 1]
            fine = np.max(np.abs(shift - np.round(shift))) <= 1e-8 and g.min() >= self.gap_tol
            if fine:
                v = v[..., : self.filling]
                d = np.asarray(self.model.symmetry_matrix(op, sub))
                mats = np.conj(np.swapaxes(v, -1, -2)) @ d @ v
                dev = np.linalg.norm(np.conj(np.swapaxes(mats, -1, -2)) @ mats - np.eye(self.filling), axis=(-1, -2))
                fine = dev.max() <= tol
            if not fine:
                return np.array([self.symmetry_representation(op, k, tol=tol) for k in ks])
            for i, mat, gap in zip(todo, mats, g):
                self._representations[keys[i]] = (mat, float(gap))
        out = []
        for key in keys:  # each momentum's gap counts for the caller, as in the loop
            mat, gap = self._representations[key]
            self.gap_log.append(gap)
            out.append(mat)
        return np.array(out)

    def symmetry_eigenvalues_at(self, op, ks) -> list[np.ndarray]:
        """:meth:`symmetry_eigenvalues` at every row of ``ks`` (one batch; errors as in a loop)."""
        lam = np.linalg.eigvals(self.symmetry_representations(op, ks))
        return [row[np.argsort(np.angle(row), kind="stable")] for row in lam]
