"""Assembly of a sample's sparse Hamiltonian from routed bonds, vectorised over the points of the sample.

For every hopping block ``h(R)`` (a loop over the handful of lattice vectors) and every non-zero ``(a, b)``
entry, all source points with label ``a`` hop at once to ``cell + R`` with label ``b``. The router of the
defect (:mod:`crystaltop.defects.geometry`) says which chart holds the target and by which isometry ``g`` it is
carried there. The target state ``|q, b⟩`` is identified with ``Ĝ|q, b⟩ = Σ_{b''} D_g[b'', b] |g q, b''⟩``, so
the bond ``h_ab c†_{p a} c_{q b}`` becomes ``Σ_{b''} h_ab conj(D_g[b'', b]) c†_{p a} c_{g q, b''}``: the seam bonds
carry the representation of the rotation on orbitals and spin (``D_g = D_{C_n}(0)^m``, actual powers, so that a
spin-½ rotation by 2π is −1).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from ..errors import DefectGeometryError
from .geometry import Rotation

__all__ = ["PointIndex", "LabelGeometry", "assemble_hamiltonian", "route_to_labels"]


class PointIndex:
    """Lookup of sample points by ``(chart, cell, label)``, vectorised (sorted integer keys)."""

    def __init__(self, chart: np.ndarray, cell: np.ndarray, label: np.ndarray, n_labels: int):
        self.chart = np.asarray(chart, dtype=np.int64)
        self.cell = np.asarray(cell, dtype=np.int64).reshape(len(self.chart), -1)
        self.label = np.asarray(label, dtype=np.int64)
        self.n_labels = int(n_labels)
        if len(self.chart):
            self.low = self.cell.min(axis=0)
            self.high = self.cell.max(axis=0)
            self.n_charts = int(self.chart.max()) + 1
        else:
            self.low = self.high = np.zeros(self.cell.shape[1], dtype=np.int64)
            self.n_charts = 1
        self.span = self.high - self.low + 1
        keys = self._keys(self.chart, self.cell, self.label)
        self.order = np.argsort(keys, kind="stable")
        self.sorted = keys[self.order]
        if np.any(np.diff(self.sorted) == 0):
            raise DefectGeometryError("two sample points coincide (a bug in the defect geometry)")

    def _keys(self, chart, cell, label) -> np.ndarray:
        key = np.asarray(chart, dtype=np.int64)
        for axis in range(self.cell.shape[1]):
            key = key * self.span[axis] + (cell[:, axis] - self.low[axis])
        return key * self.n_labels + label

    def lookup(self, chart: np.ndarray, cell: np.ndarray, label: np.ndarray) -> np.ndarray:
        """Index of each point, −1 where there is none."""
        cell = np.asarray(cell, dtype=np.int64)
        inside = np.all((cell >= self.low) & (cell <= self.high), axis=1) & (chart >= 0) & (chart < self.n_charts)
        out = np.full(len(cell), -1, dtype=np.int64)
        if not np.any(inside) or not len(self.sorted):
            return out
        keys = self._keys(np.asarray(chart)[inside], cell[inside], np.asarray(label)[inside])
        pos = np.clip(np.searchsorted(self.sorted, keys), 0, len(self.sorted) - 1)
        hit = self.sorted[pos] == keys
        found = np.full(keys.shape, -1, dtype=np.int64)
        found[hit] = self.order[pos[hit]]
        out[inside] = found
        return out


@dataclass(frozen=True, eq=False)
class LabelGeometry:
    """Positions of the labels of a cell (states or ions), grouped into sites, and how rotations permute them."""

    positions: np.ndarray
    """(n_labels, dim) reduced positions."""
    site: np.ndarray
    """(n_labels,) site of each label."""

    def site_map(self, rot: Rotation, m: int) -> tuple[np.ndarray, np.ndarray]:
        """For rotation power ``m`` about the centre: image site of each site and the integer cell offset.

        ``W^m (n + y_s − c) + c = W^m n + offset_s + y_{σ(s)}``.
        """
        sites = np.unique(self.site)
        y = np.array([self.positions[np.flatnonzero(self.site == s)[0]] for s in sites])
        image = (y - rot.centre) @ rot.power(m).T.astype(float) + rot.centre
        diff = image[:, None, :] - y[None, :, :]
        match = np.all(np.abs(diff - np.rint(diff)) < 1e-6, axis=-1)
        if not np.all(match.any(axis=1)):
            lost = int(np.flatnonzero(~match.any(axis=1))[0])
            raise DefectGeometryError(f"the rotation by {m}·2π/{rot.fold} about {tuple(np.round(rot.centre, 6))} "
                                      f"moves the point at reduced {tuple(np.round(y[lost], 6))} to a position with "
                                      "no equivalent point: the model (or the ions) lack that rotation about the core")
        target = np.argmax(match, axis=1)
        offset = np.rint(diff[np.arange(len(sites)), target]).astype(np.int64)
        return target, offset


def _state_table(geom: LabelGeometry, rot: Rotation, d0_power: np.ndarray, m: int):
    """For power ``m``: per source label ``b``, the candidate labels ``b''``, coefficients ``conj(D^m[b'', b])``."""
    target_site, offset = geom.site_map(rot, m)
    n = len(geom.site)
    members = [np.flatnonzero(geom.site == s) for s in range(int(geom.site.max()) + 1)]
    width = max(len(x) for x in members)
    cand = np.full((n, width), -1, dtype=np.int64)
    coef = np.zeros((n, width), dtype=complex)
    for b in range(n):  # a handful of states per cell
        dest = members[target_site[geom.site[b]]]
        cand[b, :len(dest)] = dest
        coef[b, :len(dest)] = np.conj(d0_power[dest, b])
    leak = np.abs(d0_power).sum() - sum(np.abs(d0_power[members[target_site[geom.site[b]]], b]).sum() for b in range(n))
    if leak > 1e-9:
        raise DefectGeometryError("the rotation's representation mixes states of sites the rotation does not relate")
    return cand, coef, offset[geom.site]


class _Powers:
    """``D^m`` for integer ``m`` (actual powers, negative ones through ``D†``), cached."""

    def __init__(self, d0: np.ndarray | None):
        self.d0 = d0
        self.cache: dict[int, np.ndarray] = {}

    def __call__(self, m: int) -> np.ndarray:
        m = int(m)
        if m not in self.cache:
            base = self.d0 if m >= 0 else self.d0.conj().T
            self.cache[m] = np.linalg.matrix_power(base, abs(m))
        return self.cache[m]


def _map_targets(rot, geom, powers, power, shift, cell, label, *, expand: bool):
    """Apply isometries to perfect targets ``(cell, label)``; with ``expand`` spread states over ``D^m``.

    Returns (entry row, new cell, new label, coefficient) with one row per non-zero coefficient.
    """
    rows_out, cells_out, labels_out, coef_out = [], [], [], []
    plain = power == 0
    if np.any(plain):
        idx = np.flatnonzero(plain)
        rows_out.append(idx)
        cells_out.append(cell[idx] + shift[idx])
        labels_out.append(label[idx])
        coef_out.append(np.ones(idx.size, dtype=complex))
    for m in np.unique(power[~plain]):
        idx = np.flatnonzero(power == m)
        w = rot.power(m).astype(np.int64)
        base = cell[idx] @ w.T + shift[idx]
        if expand:
            cand, coef, offset = _state_table(geom, rot, powers(m), int(m))
            c = cand[label[idx]]  # (k, width)
            k = coef[label[idx]]
            ok = (c >= 0) & (np.abs(k) > 1e-14)
            r, j = np.nonzero(ok)
            rows_out.append(idx[r])
            cells_out.append(base[r] + offset[label[idx]][r])
            labels_out.append(c[r, j])
            coef_out.append(k[r, j])
        else:
            target_site, offset = geom.site_map(rot, int(m))
            site = geom.site[label[idx]]
            sites, first_label = np.unique(geom.site, return_index=True)
            first = np.zeros(int(sites.max()) + 1, dtype=np.int64)
            first[sites] = first_label  # the first label of each site
            # labels of one site are distinct points only for states; ions are one label per site
            new = first[np.asarray(target_site)[site]]
            rows_out.append(idx)
            cells_out.append(base + offset[site])
            labels_out.append(new)
            coef_out.append(np.ones(idx.size, dtype=complex))
    if not rows_out:
        empty = np.zeros(0, dtype=np.int64)
        return empty, np.zeros((0, cell.shape[1]), dtype=np.int64), empty, np.zeros(0, dtype=complex)
    return (np.concatenate(rows_out), np.concatenate(cells_out), np.concatenate(labels_out),
            np.concatenate(coef_out))


def _wrap(cells: np.ndarray, wrap) -> np.ndarray:
    if wrap is None:
        return cells
    out = cells.copy()
    for axis, extent in enumerate(wrap):
        if extent:
            out[:, axis] %= extent
    return out


@dataclass(frozen=True)
class AssemblyReport:
    """Bookkeeping of one assembly."""

    missing_sources: np.ndarray
    """(N,) bool: points that lost a bond to a target outside the sample (the open boundary)."""
    cut_bonds: int
    """Bonds dropped by the router (a cut face with no partner, or a bond through a core)."""
    unpaired_bonds: int
    """Bonds dropped because the reverse bond was routed differently (only at a core)."""


def assemble_hamiltonian(form, index: PointIndex, router, rot: Rotation | None, d0: np.ndarray | None, *,
                         wrap=None, core: np.ndarray | None = None) -> tuple[sp.csr_matrix, AssemblyReport]:
    """The sparse Hamiltonian of the sample points ``index`` (labels are basis states of ``form``).

    Parameters
    ----------
    form : RealSpaceForm
    index : PointIndex
        Sample points; their order is the basis order of the result.
    router : SectorRouter or FaceRouter
    rot, d0 : Rotation and ``D_{C_n}(0)`` of the sample's rotation, or None for translations only.
    wrap : sequence of int, optional
        Periodic extents of a supercell (0 for an open axis).
    core : (N,) bool, optional
        Points at the rotation centre of a :class:`SectorRouter` sample: their bonds are taken from the other
        side (and conjugated), their onsite block from ``h(0)``.
    """
    lattice = form.lattice
    x = form.positions
    geom = LabelGeometry(x, form.site_of_state)
    powers = _Powers(d0)
    n_points = len(index.label)
    core = np.zeros(n_points, dtype=bool) if core is None else np.asarray(core, dtype=bool)
    sources = np.flatnonzero(~core)
    missing = np.zeros(n_points, dtype=bool)
    rows, cols, vals = [], [], []
    core_rows, core_cols, core_vals = [], [], []
    cut = 0
    labels = index.label[sources]
    for cell_r, block in zip(form.cells, form.blocks):  # the handful of hopping vectors
        nz = np.abs(block) > 0
        r, b = np.nonzero(nz[labels])
        if r.size == 0:
            continue
        src = sources[r]
        a = index.label[src]
        src_cell = index.cell[src]
        tgt_cell = src_cell + cell_r
        p = (src_cell + x[a]) @ lattice
        q = (tgt_cell + x[b]) @ lattice
        chart, power, shift, drop, factor = router.route(index.chart[src], p, q)
        cut += int(drop.sum())
        keep = ~drop
        e, new_cell, new_label, coef = _map_targets(rot, geom, powers, power[keep], shift[keep], tgt_cell[keep],
                                                    b[keep], expand=True)
        entry = np.flatnonzero(keep)[e]
        found = index.lookup(chart[entry], _wrap(new_cell, wrap), new_label)
        lost = found < 0
        missing[src[entry[lost]]] = True
        ok = ~lost
        value = block[a[entry[ok]], b[entry[ok]]] * coef[ok]
        if factor is not None:
            value = value * factor[entry[ok]]
        to_core = core[found[ok]]
        rows.append(src[entry[ok]][~to_core])
        cols.append(found[ok][~to_core])
        vals.append(value[~to_core])
        core_rows.append(src[entry[ok]][to_core])
        core_cols.append(found[ok][to_core])
        core_vals.append(value[to_core])
    shape = (n_points, n_points)
    a_mat = sp.coo_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))), shape=shape).tocsr()
    a_mat.sum_duplicates()
    # a bond whose reverse was routed differently (through a core) is dropped in both directions
    diff = (a_mat - a_mat.conj().T).tocoo()
    scale = max(1.0, float(np.abs(a_mat.data).max()) if a_mat.nnz else 1.0)
    bad = np.abs(diff.data) > 1e-9 * scale
    unpaired = int(bad.sum())
    if unpaired:
        mask = sp.coo_matrix((np.ones(unpaired), (diff.row[bad], diff.col[bad])), shape=shape).tocsr()
        mask = (mask + mask.T).astype(bool)
        a_mat = a_mat - a_mat.multiply(mask)
        a_mat.eliminate_zeros()
    h = a_mat
    if np.any(core):
        c_mat = sp.coo_matrix((np.concatenate(core_vals), (np.concatenate(core_rows), np.concatenate(core_cols))),
                              shape=shape).tocsr()
        h = h + c_mat + c_mat.conj().T
        home = form.blocks[0]
        idx = np.flatnonzero(core)
        la = index.label[idx]
        onsite = home[np.ix_(la, la)]
        ii, jj = np.nonzero(np.abs(onsite) > 0)
        h = h + sp.coo_matrix((onsite[ii, jj], (idx[ii], idx[jj])), shape=shape).tocsr()
    h = ((h + h.conj().T) * 0.5).tocsr()
    h.sum_duplicates()
    h.eliminate_zeros()
    if h.nnz and np.abs(h.data.imag).max() == 0.0:
        h = h.real.tocsr()  # a real sample stays real: every solver is several times faster on it
    return h, AssemblyReport(missing, cut, unpaired // 2)


def route_to_labels(form_lattice, state_positions, target_geom: LabelGeometry, target_index: PointIndex,
                    src_chart, src_cell, src_label, offsets, target_labels, router, rot, *, wrap=None,
                    core_chart: int | None = None) -> np.ndarray:
    """Route virtual bonds from points (e.g. states) to points of another kind (e.g. their ions).

    The bond from ``(src_cell, src_label)`` goes to ``(src_cell + offsets, target_labels)`` of the target kind;
    returns the index of the target point, −1 where it is not in the sample or the route was dropped.
    """
    p = (src_cell + state_positions[src_label]) @ form_lattice
    tgt_cell = src_cell + offsets
    q = (tgt_cell + target_geom.positions[target_labels]) @ form_lattice
    chart, power, shift, drop, _ = router.route(src_chart, p, q)
    out = np.full(len(src_label), -1, dtype=np.int64)
    keep = np.flatnonzero(~drop)
    if keep.size == 0:
        return out
    e, new_cell, new_label, _ = _map_targets(rot, target_geom, None, power[keep], shift[keep], tgt_cell[keep],
                                             target_labels[keep], expand=False)
    out[keep[e]] = target_index.lookup(chart[keep[e]], _wrap(new_cell, wrap), new_label)
    return out
