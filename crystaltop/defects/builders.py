"""Builders of finite samples: flakes, supercells, dislocations, dislocation lines, disclinations and dipoles.

Every builder takes any model with a real-space form (a :class:`~crystaltop.models.LatticeModel`, a
:class:`~crystaltop.models.BlochFunction` built from real-space blocks, or a finite-range callable), checks the
request, and returns a :class:`~crystaltop.defects.Sample`. Sizes are in cells of the model's lattice; Burgers
vectors and line directions are integer vectors in its lattice basis; positions and distances are Cartesian.

Conventions (stated here once, used by the tests and the predictions):

* Frank angle ``Ω > 0`` removes a wedge (N_s = n − k sectors of angle 2π/n glued around the core for
  ``Ω = 2πk/n``), ``Ω < 0`` inserts one.
* Burgers vector ``b``: the sum of the lattice steps of a counter-clockwise circuit that closes in the sample
  (about the line direction for a line; a circuit around the core only). The edge dislocation with Burgers
  vector ``b`` is made by removing the half-strip ``{0 ≤ (r − c)·b̂ < |b|, (r − c)·(ẑ × b̂) > 0}`` and
  gluing its faces, i.e. an extra half-plane of atoms on the ``−ẑ × b̂`` side of the core.
* The ionic background, by default, is ``filling / n_states`` electrons on every basis state (on the sites);
  ``ions=[(reduced position, charge), ...]`` puts point charges per cell instead (e.g. at Wyckoff 1a).
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from ..errors import DefectGeometryError
from .assembly import LabelGeometry, PointIndex, assemble_hamiltonian, route_to_labels
from .geometry import (DROP, Face, FaceRouter, Rotation, SectorRouter, polygon_distance, relevant_directions,
                       rotation_centres)
from .realspace import BulkGap, RealSpaceForm, bulk_gap, real_space_form, rotation_operation
from .samples import Core, DefectSpec, Sample

__all__ = ["flake", "supercell", "edge_dislocation", "dislocation_line", "disclination", "disclination_dipole",
           "build_sample", "rotation_centre_names"]

#: Generic small offsets that keep lattice points off cut lines (a tie would need a point within 1e-7 of a cut).
_EPS = np.array([1.2345671e-7, 2.3456789e-7, 3.4567891e-7])
_TURN = 1.234567e-7
#: Smallest distance (lattice constants) kept between a core and the open boundary.
MIN_MARGIN = 3.0


# ---------------------------------------------------------------------------------------------- preparation
@dataclass(frozen=True, eq=False)
class _Prepared:
    form: RealSpaceForm
    gap: BulkGap
    filling: int
    ion_positions: np.ndarray  # (n_ions, dim) reduced
    ion_charges: np.ndarray


def _prepare(model, filling, ions, *, builder: str | None = None, dim: int | None = None,
             instead: str | None = None) -> _Prepared:
    """The real-space form, filling, bulk gap and ions of a sample to build; with ``dim``, a model of another
    dimension is refused first (naming ``builder`` and the builder to use ``instead``)."""
    form = model if isinstance(model, RealSpaceForm) else real_space_form(model)
    if dim is not None and form.dim != dim:
        hint = f"; for the {form.dim}D model {form.name!r} use {instead}" if instead else ""
        raise DefectGeometryError(f"{builder} builds {'two' if dim == 2 else 'three'}-dimensional samples{hint}")
    n = form.n_states
    if filling is None:
        if n % 2:
            raise DefectGeometryError(f"model {form.name!r} has an odd number of bands ({n}): give filling=...")
        filling = n // 2
    filling = int(filling)
    gap = bulk_gap(form, filling)
    if ions is None:
        sites = np.unique(form.site_of_state)
        pos = np.array([form.positions[np.flatnonzero(form.site_of_state == s)[0]] for s in sites])
        count = np.array([np.sum(form.site_of_state == s) for s in sites])
        charges = filling * count / n
    else:
        try:
            pos = np.array([np.asarray(p, dtype=float).reshape(form.dim) for p, _ in ions])
            charges = np.array([float(q) for _, q in ions])
        except (TypeError, ValueError):
            raise DefectGeometryError(f"ions must be ((reduced position of {form.dim} numbers, charge), ...)") from None
        if abs(charges.sum() - filling) > 1e-9:
            raise DefectGeometryError(f"the ions carry {charges.sum():g} electrons per cell but the filling is "
                                      f"{filling}: the bulk would not be neutral")
    return _Prepared(form, gap, filling, pos, charges)


def _parse_size(size, dim: int, what: str, minimum: int = 2) -> tuple[int, ...]:
    try:
        arr = np.atleast_1d(np.asarray(size, dtype=float))
    except (TypeError, ValueError):
        raise DefectGeometryError(f"{what} must be a number of cells, got {size!r}") from None
    if arr.size == 1:
        arr = np.repeat(arr, dim)
    if arr.size != dim or np.any(arr != np.rint(arr)) or np.any(arr < minimum):
        raise DefectGeometryError(f"{what} must be {dim} integers of at least {minimum} cells, got {size!r}")
    return tuple(int(x) for x in arr)


def _integer_vector(value, dim: int, what: str) -> np.ndarray:
    try:
        arr = np.asarray(value, dtype=float).reshape(-1)
    except (TypeError, ValueError):
        raise DefectGeometryError(f"{what} must be {dim} integers in the lattice basis, got {value!r}") from None
    if arr.shape != (dim,):
        raise DefectGeometryError(f"{what} must have {dim} components in the lattice basis, got {value!r}")
    if np.abs(arr - np.rint(arr)).max() > 1e-9:
        raise DefectGeometryError(f"{what} {tuple(float(x) for x in arr)} is not a lattice vector: give integer "
                                  "components in the lattice basis")
    out = np.rint(arr).astype(int)
    if not np.any(out):
        raise DefectGeometryError(f"{what} must not be zero")
    return out


def _frozen(a):
    a = np.asarray(a)
    a.setflags(write=False)
    return a


def _box(lattice: np.ndarray, centre: np.ndarray, radius: float) -> np.ndarray:
    """All cells whose points may lie within ``radius`` of the Cartesian ``centre``."""
    inv = np.linalg.inv(lattice)
    fc = centre @ inv
    span = radius * np.linalg.norm(inv, axis=0) + 2.0
    ranges = [np.arange(int(np.floor(f - s)), int(np.ceil(f + s)) + 1) for f, s in zip(fc, span)]
    return np.array(list(itertools.product(*ranges)), dtype=int)


def _grid(cells: np.ndarray, n_labels: int) -> tuple[np.ndarray, np.ndarray]:
    cell = np.repeat(cells, n_labels, axis=0)
    label = np.tile(np.arange(n_labels), len(cells))
    return cell, label


@dataclass
class _Points:
    chart: np.ndarray
    cell: np.ndarray
    label: np.ndarray
    positions: np.ndarray  # Cartesian, display
    core_distance: np.ndarray  # (n_cores, N)
    edge_distance: np.ndarray
    core: np.ndarray | None = None

    def subset(self, keep):
        return _Points(self.chart[keep], self.cell[keep], self.label[keep], self.positions[keep],
                       self.core_distance[:, keep], self.edge_distance[keep],
                       None if self.core is None else self.core[keep])


def _finish(prep: _Prepared, form: RealSpaceForm, spec: DefectSpec, states: _Points, ions: _Points, router, rot,
            d0, *, wrap, cores, periodic, sectors=None, fold=None) -> Sample:
    n_lab = form.n_states
    if len(states.label) == 0:
        raise DefectGeometryError("the sample is empty: enlarge it")
    index = PointIndex(states.chart, states.cell, states.label, n_lab)
    h, report = assemble_hamiltonian(form, index, router, rot, d0, wrap=wrap, core=states.core)
    ion_geom = LabelGeometry(prep.ion_positions, np.arange(len(prep.ion_charges)))
    ion_index = PointIndex(ions.chart, ions.cell, ions.label, len(prep.ion_charges))
    # each state is counted with the ion nearest to it, reached by a routed virtual bond (so across seams too)
    j, offset = _nearest_ion(form, ion_geom.positions)
    assigned = np.full(len(states.label), -1, dtype=np.int64)
    src = np.flatnonzero(~states.core) if states.core is not None else np.arange(len(states.label))
    assigned[src] = route_to_labels(form.lattice, form.positions, ion_geom, ion_index, states.chart[src],
                                    states.cell[src], states.label[src], offset[states.label[src]],
                                    j[states.label[src]], router, rot, wrap=wrap)
    lost = np.flatnonzero(assigned < 0)
    if lost.size and len(ions.label):
        tree = cKDTree(ions.positions)
        _, near = tree.query(states.positions[lost])
        assigned[lost] = near
    charges = prep.ion_charges[ions.label]
    return Sample(
        hamiltonian=h, positions=_frozen(states.positions), site_of_state=_frozen(_sites(states, form)),
        ion_positions=_frozen(ions.positions), ion_charges=_frozen(charges), state_ion=_frozen(assigned),
        cores=tuple(cores), core_distance=_frozen(states.core_distance), ion_core_distance=_frozen(ions.core_distance),
        edge_distance=_frozen(states.edge_distance), ion_edge_distance=_frozen(ions.edge_distance),
        filling=prep.filling, gap=prep.gap, spec=spec, model_name=form.name, periodic=tuple(periodic),
        cut_bonds=report.cut_bonds, unpaired_bonds=report.unpaired_bonds, sectors=sectors, fold=fold,
        chart=_frozen(states.chart), cell=_frozen(states.cell), label=_frozen(states.label))


def _nearest_ion(form: RealSpaceForm, ion_pos: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For each basis state: the nearest ion label and the cell offset of that ion (Cartesian distance)."""
    offsets = np.array(list(itertools.product((-1, 0, 1), repeat=form.dim)), dtype=int)
    cand = (ion_pos[None, :, :] + offsets[:, None, :])  # (o, ions, dim)
    d = np.linalg.norm(((cand[None] - form.positions[:, None, None, :]) @ form.lattice), axis=-1)  # (n, o, ions)
    flat = d.reshape(len(form.positions), -1)
    best = np.argmin(flat + 1e-9 * np.arange(flat.shape[1]), axis=1)
    o, j = np.divmod(best, len(ion_pos))
    return j.astype(np.int64), offsets[o]


def _sites(states: _Points, form: RealSpaceForm) -> np.ndarray:
    """Sample site of each state: states of one model site in one cell and chart share a site."""
    key = np.column_stack([states.chart, states.cell, form.site_of_state[states.label]])
    _, inverse = np.unique(key, axis=0, return_inverse=True)
    return inverse.reshape(-1)


# ---------------------------------------------------------------------------------------------- rotation centres
def _lattice_fold(lattice: np.ndarray) -> int:
    from ..symmetry import point_group
    from ..errors import LatticeMismatchError
    for fold in (6, 4, 2):
        op = next(o for o in point_group(str(fold)).rotations(fold) if abs(o.angle - 2 * np.pi / fold) < 1e-9)
        try:
            op.in_basis(lattice)
            return fold
        except LatticeMismatchError:
            continue
    return 1


def rotation_centre_names(lattice) -> dict[str, np.ndarray]:
    """Wyckoff-style names of the rotation centres of a 2D lattice: ``{"1a": (0, 0), "1b": ..., "2c": ...}``.

    The letters follow the order of the International Tables for the lattice's own rotation group (p2, p4 or
    p6): higher site symmetry first, then the coordinates; the multiplicity is the orbit size under that group.
    Each name maps to one representative (reduced coordinates in [0, 1)).
    """
    lat = np.asarray(lattice, dtype=float)
    if lat.shape != (2, 2):
        raise DefectGeometryError("rotation centres are named for two-dimensional lattices only")
    top = _lattice_fold(lat)
    points: list[np.ndarray] = []
    folds: list[int] = []
    for fold in (6, 4, 3, 2):
        if top % fold:
            continue
        for c in rotation_centres(_step_matrix(fold, lat)):
            match = [i for i, p in enumerate(points) if _same_point(p, c)]
            if match:
                folds[match[0]] = max(folds[match[0]], fold)
            else:
                points.append(c)
                folds.append(fold)
    w_top = _step_matrix(top, lat)
    orbits: list[tuple[int, list[np.ndarray]]] = []
    done: list[np.ndarray] = []
    for c, fold in zip(points, folds):
        if any(_same_point(c, d) for d in done):
            continue
        orbit: list[np.ndarray] = []
        for m in range(top):
            image = (np.linalg.matrix_power(w_top, m) @ c) % 1.0
            image[np.abs(image - 1.0) < 1e-9] = 0.0
            if not any(_same_point(image, o) for o in orbit):
                orbit.append(image)
        done.extend(orbit)
        orbit.sort(key=lambda x: tuple(np.round(x, 6)))
        orbits.append((fold, orbit))
    orbits.sort(key=lambda o: (-o[0], len(o[1]), tuple(np.round(o[1][0], 6))))
    return {f"{len(orbit)}{chr(ord('a') + i)}": orbit[0] for i, (_, orbit) in enumerate(orbits)}


def _same_point(a: np.ndarray, b: np.ndarray) -> bool:
    """Equal modulo the lattice."""
    d = np.asarray(a) - np.asarray(b)
    return bool(np.abs(d - np.rint(d)).max() < 1e-7)


def _step_matrix(fold: int, lattice: np.ndarray) -> np.ndarray:
    c, s = np.cos(2 * np.pi / fold), np.sin(2 * np.pi / fold)
    rot = np.array([[c, -s], [s, c]])
    w = np.linalg.solve(lattice.T, rot @ lattice.T)
    return np.rint(w).astype(int)


def _resolve_centre(form: RealSpaceForm, fold: int, core) -> np.ndarray:
    """The reduced rotation centre asked for by ``core`` (a name, "site", "plaquette" or coordinates)."""
    w = _step_matrix(fold, form.lattice[:2, :2])
    centres = rotation_centres(w)
    if isinstance(core, str):
        key = core.strip().lower()
        if key in ("origin", "1a"):
            return np.zeros(2)
        names = rotation_centre_names(form.lattice)
        if key in names:
            c = names[key]
            if not _is_centre(w, c):
                raise DefectGeometryError(f"the Wyckoff position {core} is not a {fold}-fold rotation centre")
            return c
        if key in ("site", "plaquette"):
            holds = [any(np.abs(((form.positions - c) + 0.5) % 1.0 - 0.5).max(axis=1) < 1e-6) for c in centres]
            chosen = [c for c, h in zip(centres, holds) if h == (key == "site")]
            chosen = _distinct_orbits(chosen, w)
            if len(chosen) != 1:
                where = ", ".join(str(tuple(float(x) for x in np.round(c, 4))) for c in chosen) or "none"
                raise DefectGeometryError(f"core={core!r} is ambiguous or absent for the {fold}-fold centres of model "
                                          f"{form.name!r} ({where}): give a Wyckoff name ({', '.join(names)}) or "
                                          "reduced coordinates")
            return chosen[0]
        raise DefectGeometryError(f"unknown core {core!r}: expected 'site', 'plaquette', a Wyckoff name "
                                  f"({', '.join(names)}) or reduced coordinates")
    try:
        c = np.asarray(core, dtype=float).reshape(-1)[:2]
    except (TypeError, ValueError):
        raise DefectGeometryError(f"core must be a name or reduced coordinates, got {core!r}") from None
    if c.shape != (2,) or not _is_centre(w, c):
        raise DefectGeometryError(f"the point {tuple(np.round(c, 6))} is not a {fold}-fold rotation centre of the "
                                  f"lattice (c − W c must be a lattice vector); the centres are "
                                  + ", ".join(str(tuple(float(x) for x in np.round(x_, 4))) for x_ in centres))
    return c


def _is_centre(w: np.ndarray, c: np.ndarray) -> bool:
    d = c - w @ c
    return bool(np.abs(d - np.rint(d)).max() < 1e-9)


def _distinct_orbits(points, w):
    out = []
    for c in points:
        if not any(np.abs(((c - o) + 0.5) % 1.0 - 0.5).max() < 1e-9 for o in out):
            out.append(c)
    return out


def _frank(frank_angle) -> float:
    try:
        omega = float(frank_angle)
    except (TypeError, ValueError):
        raise DefectGeometryError(f"frank_angle must be an angle in radians, got {frank_angle!r}") from None
    if not np.isfinite(omega) or abs(omega) < 1e-12:
        raise DefectGeometryError("frank_angle must be a non-zero angle in radians (e.g. numpy.pi / 2)")
    return omega


def _fold_for(form: RealSpaceForm, omega: float, core, *, check: bool = True):
    """The largest rotation order n with Ω a multiple of 2π/n that the lattice, the core and the model allow."""
    candidates = []
    for fold in (6, 4, 3, 2):
        k = omega * fold / (2.0 * np.pi)
        if abs(k - round(k)) < 1e-9:
            candidates.append((fold, int(round(k))))
    if not candidates:
        raise DefectGeometryError(f"Frank angle {omega:.6g} rad is not a multiple of 2π/n for a crystallographic "
                                  "rotation (n = 2, 3, 4, 6)")
    errors = []
    for fold, k in candidates:
        try:
            op = rotation_operation(fold, form, check=check)
            centre = _resolve_centre(form, fold, core)
            return fold, k, op, centre
        except DefectGeometryError as exc:
            errors.append(exc)
    raise errors[-1]


def _rotation(form: RealSpaceForm, fold: int, op, centre2: np.ndarray) -> Rotation:
    w = np.asarray(op.in_basis(form.lattice), dtype=int)
    dim = form.dim
    centre = np.zeros(dim)
    centre[:2] = centre2
    return Rotation(fold, w, centre, np.asarray(op.matrix, dtype=float)[:dim, :dim])


def _full_turn(d0: np.ndarray, fold: int, name: str) -> complex:
    """``ε`` with ``D^n = ε·1`` (the representation of a full turn: +1, or −1 for spin ½ or a gauge flux)."""
    full = np.linalg.matrix_power(d0, fold)
    eps = complex(np.trace(full) / len(full))
    if np.abs(full - eps * np.eye(len(full))).max() > 1e-8 or abs(abs(eps) - 1.0) > 1e-8:
        raise DefectGeometryError(f"the {fold}-fold rotation of model {name!r} to the power {fold} is not a phase "
                                  "times the identity, so the sectors of a disclination cannot be glued consistently")
    return eps


def frank_angle_label(omega: float) -> str:
    """A Frank angle as a signed multiple of π: ``"+π/2"``, ``"−2π/3"`` (else the number)."""
    for n in (1, 2, 3, 4, 6):
        k = omega * n / np.pi
        if abs(k - round(k)) < 1e-9:
            k = int(round(k))
            num = "π" if abs(k) == 1 else f"{abs(k)}π"
            sign = "+" if k > 0 else "−"
            return f"{sign}{num}" + ("" if n == 1 else f"/{n}")
    return f"{omega:+.4g}"


# ---------------------------------------------------------------------------------------------- flakes and supercells
def flake(model, shape: str = "parallelogram", size=10, *, filling: int | None = None, ions=None,
          centre=None, whole_cells: bool = True) -> Sample:
    """An open flake of whole unit cells.

    Parameters
    ----------
    model : BlochModel or RealSpaceForm
    shape : {"parallelogram", "polygon", "triangle"}
        ``"parallelogram"``: ``size`` cells along each lattice vector (a square of ``L × L`` cells on the square
        lattice). ``"polygon"``: the cells whose centre lies in the Wigner–Seitz cell scaled to inradius
        ``size / 2`` about ``centre`` (a square on the square lattice, a hexagon on the triangular one, symmetric
        under every rotation of the lattice about ``centre``). ``"triangle"`` (hexagonal lattices): the cells
        whose centre lies in the equilateral triangle of inradius ``size / 2`` about ``centre`` with faces normal
        to three of the hexagon's face normals, 120° apart (symmetric under the rotations by 2π/3 about it).
    size : int or tuple of int
        Linear size in cells.
    filling : int, optional
        Occupied bands per cell (default half of them).
    ions : sequence of (reduced position, charge), optional
        Ionic background per cell (default: ``filling / n_states`` on every state).
    centre : (dim,) reduced coordinates, optional
        Centre of a polygon (default the origin of the model, Wyckoff 1a).
    whole_cells : bool
        Polygon only: keep whole cells (default), or every site whose own position lies in the polygon (the
        region a :func:`disclination` sample is cut from).

    Returns
    -------
    Sample
        No cores; ``edge_distance`` measured to the flake's faces.

    Raises
    ------
    DefectGeometryError
        For an unknown shape, a size below 2 cells, or a metallic model at this filling.
    """
    prep = _prepare(model, filling, ions)
    form = prep.form
    dim = form.dim
    spec = DefectSpec("flake", size, shape=shape, filling=prep.filling, ions=None if ions is None else tuple(ions))
    anchor = form.positions.mean(axis=0)
    if shape == "parallelogram":
        extents = _parse_size(size, dim, "size")
        cells = np.array(list(itertools.product(*[range(e) for e in extents])), dtype=int)

        def edge(reduced):
            spacing = 1.0 / np.linalg.norm(np.linalg.inv(form.lattice), axis=0)  # distance between lattice planes
            lo = -0.5 + anchor
            hi = np.array(extents) - 0.5 + anchor
            return np.min(np.minimum(reduced - lo, hi - reduced) * spacing, axis=1)
    elif shape in ("polygon", "triangle"):
        radius = _parse_size(size, 1, "size")[0] / 2.0
        if shape == "polygon":
            dirs = relevant_directions(form.lattice)
            distance = lambda r: polygon_distance(r, dirs)  # noqa: E731
        else:
            dirs = _triangle_directions(form.lattice)
            distance = lambda r: (np.asarray(r) @ dirs.T).max(axis=-1)  # noqa: E731
        c = np.zeros(dim) if centre is None else np.asarray(centre, dtype=float).reshape(dim)
        c_cart = c @ form.lattice
        box = _box(form.lattice, c_cart, 2.0 * radius)
        inside = distance((box + anchor) @ form.lattice - c_cart) <= radius + 1e-9
        cells = box if not whole_cells else box[inside]

        def edge(reduced):
            return radius - distance(reduced @ form.lattice - c_cart) + 0.5
    else:
        raise DefectGeometryError(f"unknown flake shape {shape!r}: expected 'parallelogram', 'polygon' or 'triangle'")
    states = _plain_points(form.positions, cells, form.lattice, edge)
    ions_pts = _plain_points(prep.ion_positions, cells, form.lattice, edge)
    if shape != "parallelogram" and not whole_cells:
        states = states.subset(distance(states.positions - c_cart) <= radius + 1e-9)
        ions_pts = ions_pts.subset(distance(ions_pts.positions - c_cart) <= radius + 1e-9)
    router = FaceRouter((), None, form.lattice, np.eye(dim)[: min(dim, 2)] if dim >= 2 else np.eye(1))
    return _finish(prep, form, spec, states, ions_pts, router, None, None, wrap=None, cores=(),
                   periodic=(False,) * dim)


def _triangle_directions(lattice: np.ndarray) -> np.ndarray:
    """Outward face normals of an equilateral triangle: a Wigner–Seitz face normal and its turns by ±2π/3.

    ``max_j r·û_j ≤ R`` is the triangle of inradius R (not an absolute value: a triangle is not centrosymmetric).
    """
    dirs = relevant_directions(lattice)
    if len(dirs) != 3:
        raise DefectGeometryError("a triangular flake needs a hexagonal lattice (three Wigner–Seitz face pairs)")
    turns = np.array([0.0, 2.0 * np.pi / 3.0, 4.0 * np.pi / 3.0])
    c, s = np.cos(turns), np.sin(turns)
    d = dirs[0]
    return np.column_stack([c * d[0] - s * d[1], s * d[0] + c * d[1]])


def _plain_points(label_pos, cells, lattice, edge, n_cores: int = 0, core_images=()):
    cell, label = _grid(cells, len(label_pos))
    reduced = cell + label_pos[label]
    xyz = reduced @ lattice
    dist = np.array([np.min(np.linalg.norm(xyz[:, None, : im.shape[1]] - im[None], axis=-1), axis=1)
                     for im in core_images]).reshape(len(core_images), len(label))
    return _Points(np.zeros(len(label), dtype=np.int64), cell, label, xyz, dist,
                   edge(reduced) if edge is not None else np.full(len(label), np.inf))


def supercell(model, repeats, *, filling: int | None = None, ions=None) -> Sample:
    """A periodic supercell of ``repeats`` cells along each lattice vector (a torus), without a defect.

    Its spectrum is the bulk band structure at the momenta commensurate with the supercell.
    """
    prep = _prepare(model, filling, ions)
    form = prep.form
    extents = _parse_size(repeats, form.dim, "repeats", minimum=1)
    cells = np.array(list(itertools.product(*[range(e) for e in extents])), dtype=int)
    states = _plain_points(form.positions, cells, form.lattice, None)
    ions_pts = _plain_points(prep.ion_positions, cells, form.lattice, None)
    router = FaceRouter((), None, form.lattice, np.eye(form.dim)[: min(form.dim, 2)])
    spec = DefectSpec("supercell", extents, filling=prep.filling, ions=None if ions is None else tuple(ions))
    return _finish(prep, form, spec, states, ions_pts, router, None, None, wrap=extents, cores=(),
                   periodic=(True,) * form.dim)


# ---------------------------------------------------------------------------------------------- dislocations
def _strip_faces(core_t: np.ndarray, b_t: np.ndarray, b_red: np.ndarray, length: float) -> tuple[Face, ...]:
    """Faces of the removed strip ``{0 ≤ ξ < |b|, 0 < η < length}`` (transverse coordinates)."""
    width = float(np.linalg.norm(b_t))
    bhat = b_t / width
    uhat = np.array([-bhat[1], bhat[0]])  # ẑ × b̂
    origin = core_t + _EPS[0] * bhat + _EPS[1] * uhat
    tau = tuple(int(x) for x in b_red)
    minus = tuple(-int(x) for x in b_red)
    faces = [
        # left face: entering the strip moves along +b̂, i.e. against its left normal (−b̂): continue from q + b
        Face(origin, uhat, length, forward=DROP, backward=(0, tau)),
        # right face: entering moves along −b̂ = its left normal: continue from q − b
        Face(origin + b_t, uhat, length, forward=(0, minus), backward=DROP),
        # the cap at the core: a bond into the strip from below has no partner
        Face(origin, bhat, width, forward=DROP, backward=DROP),
    ]
    if np.isfinite(length):
        faces.append(Face(origin + length * uhat, bhat, width, forward=DROP, backward=DROP))
    return tuple(faces)


def _in_strip(xy_t, core_t, b_t, length):
    width = float(np.linalg.norm(b_t))
    bhat = b_t / width
    uhat = np.array([-bhat[1], bhat[0]])
    origin = core_t + _EPS[0] * bhat + _EPS[1] * uhat
    xi = (xy_t - origin) @ bhat
    eta = (xy_t - origin) @ uhat
    return (xi >= 0) & (xi < width) & (eta > 0) & (eta < length)


def _screw_faces(core_t: np.ndarray, direction: np.ndarray, b_red: np.ndarray, length: float) -> tuple[Face, ...]:
    c, s = np.cos(_TURN), np.sin(_TURN)
    d = np.array([c * direction[0] - s * direction[1], s * direction[0] + c * direction[1]])
    origin = core_t + _EPS[0] * d + _EPS[1] * np.array([-d[1], d[0]])
    tau = tuple(int(x) for x in b_red)
    minus = tuple(-int(x) for x in b_red)
    # counter-clockwise (forward) crossing continues from q − b, so that a counter-clockwise circuit sums to +b
    return (Face(origin, d, length, forward=(0, minus), backward=(0, tau)),)


def _transverse_frame(form: RealSpaceForm, line: np.ndarray | None):
    """Orthonormal rows (e1, e2) of the plane of the cuts, right-handed with the line direction (or ẑ)."""
    if form.dim == 2:
        return np.eye(2), None
    lhat = line / np.linalg.norm(line)
    first = form.lattice[0] - (form.lattice[0] @ lhat) * lhat
    e1 = first / np.linalg.norm(first)
    e2 = np.cross(lhat, e1)
    return np.array([e1, e2]), lhat


def edge_dislocation(model, burgers, size=20, *, separation: float | None = None, core=None,
                     filling: int | None = None, ions=None) -> Sample:
    """A two-dimensional sample with an edge dislocation of Burgers vector ``burgers`` (lattice basis).

    Parameters
    ----------
    burgers : (2,) integer lattice vector
    size : int
        ``separation=None``: an open flake, the Wigner–Seitz polygon of inradius ``size / 2`` about the core.
        Otherwise a periodic ``size × size`` supercell.
    separation : float, optional
        If given, a dislocation dipole in a periodic supercell: the core at ``core`` carries ``+b``, the one at
        ``core + separation · (ẑ × b̂)`` carries ``−b`` (a finite strip removed between them).
    core : (2,) reduced coordinates, optional
        Core point; default the centre of a plaquette (``(½, ½)`` from the sample's centre cell), moved by
        1e-7 so that no lattice point lies on a cut.

    Raises
    ------
    DefectGeometryError
        Burgers vector not a lattice vector; sample too small for the core (``MIN_MARGIN`` cells from the
        boundary) or the dipole; metallic model.
    """
    prep = _prepare(model, filling, ions, builder="edge_dislocation", dim=2, instead="dislocation_line")
    form = prep.form
    b = _integer_vector(burgers, 2, "Burgers vector")
    spec = DefectSpec("edge_dislocation", size, burgers=tuple(int(x) for x in b), core=None if core is None else
                      tuple(np.asarray(core, dtype=float)), separation=separation, filling=prep.filling,
                      ions=None if ions is None else tuple(ions))
    return _dislocation(prep, form, spec, b, size, separation, core, line=None, kind="edge", length=None)


def dislocation_line(model, burgers, line_direction, size=12, kind: str = "edge", *, length: int = 4,
                     separation: float | None = None, core=None, filling: int | None = None, ions=None) -> Sample:
    """A three-dimensional sample with a straight dislocation line, periodic along the line.

    Parameters
    ----------
    burgers : (3,) integer lattice vector
    line_direction : (3,) integer lattice vector
        A primitive lattice vector (components without a common factor).
    size : int
        Transverse size in cells (an open prism of the transverse Wigner–Seitz shape with inradius ``size / 2``,
        or a periodic ``size × size`` cross-section when ``separation`` is given).
    kind : {"edge", "screw"}
        ``"edge"`` needs ``b ⟂ line`` (a removed slab, as in :func:`edge_dislocation`), ``"screw"`` needs
        ``b ∥ line`` (a half-plane cut through the line across which the lattice is shifted by ``b``).
    length : int
        Cells along the line (periodic); for a screw line a multiple of the Burgers vector's length.
    separation : float, optional
        A dipole of lines ``+b`` and ``−b`` in a transverse periodic supercell, this far apart.

    Raises
    ------
    DefectGeometryError
        Non-lattice Burgers vector or line direction, a mixed dislocation for the kind asked, sample too small.
    """
    prep = _prepare(model, filling, ions, builder="dislocation_line", dim=3, instead="edge_dislocation")
    form = prep.form
    b = _integer_vector(burgers, 3, "Burgers vector")
    line = _integer_vector(line_direction, 3, "line direction")
    if np.gcd.reduce(np.abs(line)) != 1:
        raise DefectGeometryError(f"line direction {tuple(line)} is not a primitive lattice vector")
    if kind not in ("edge", "screw"):
        raise DefectGeometryError(f"unknown dislocation kind {kind!r}: expected 'edge' or 'screw'")
    b_cart, l_cart = b @ form.lattice, line @ form.lattice
    lhat = l_cart / np.linalg.norm(l_cart)
    along = float(b_cart @ lhat)
    across = b_cart - along * lhat
    if kind == "edge" and abs(along) > 1e-9 * np.linalg.norm(b_cart):
        raise DefectGeometryError(f"an edge dislocation needs a Burgers vector perpendicular to the line; {tuple(b)} "
                                  f"has a component {along:.4g} along {tuple(line)} (a mixed dislocation)")
    if kind == "screw" and np.linalg.norm(across) > 1e-9 * np.linalg.norm(b_cart):
        raise DefectGeometryError(f"a screw dislocation needs a Burgers vector along the line; {tuple(b)} is not "
                                  f"parallel to {tuple(line)}")
    if int(length) != length or length < 1:
        raise DefectGeometryError(f"length must be a positive number of cells along the line, got {length!r}")
    spec = DefectSpec("dislocation_line", size, burgers=tuple(int(x) for x in b), line_direction=tuple(int(x) for x in line),
                      line_kind=kind, length=int(length), separation=separation, filling=prep.filling,
                      core=None if core is None else tuple(np.asarray(core, dtype=float)),
                      ions=None if ions is None else tuple(ions))
    return _dislocation(prep, form, spec, b, size, separation, core, line=line, kind=kind, length=int(length))


def _unimodular_with_last(line: np.ndarray, lattice: np.ndarray) -> np.ndarray:
    """An integer matrix of determinant +1 whose last row is the primitive vector ``line``; the other two rows
    are the shortest such lattice vectors (so that a line along a lattice vector keeps the other two)."""
    cand = np.array([v for v in itertools.product(range(-2, 3), repeat=3) if any(v)], dtype=int)
    cand = cand[np.argsort(np.linalg.norm(cand @ lattice, axis=1), kind="stable")]
    for u in cand:
        for v in cand:
            m = np.array([u, v, line])
            if round(np.linalg.det(m)) == 1:
                return m
    raise DefectGeometryError(f"no lattice basis found containing the line direction {tuple(line)}")  # pragma: no cover


def _dislocation(prep, form0, spec, b, size, separation, core, *, line, kind, length):
    dim = form0.dim
    if line is not None:
        m = _unimodular_with_last(line, form0.lattice)
        form = form0.in_basis(m)
        b_red = np.rint(b @ np.linalg.inv(m)).astype(int)
    else:
        m = np.eye(dim, dtype=int)
        form = form0
        b_red = b
    ion_red = prep.ion_positions @ np.linalg.inv(m)  # f = f' M
    frame, lhat = _transverse_frame(form, None if line is None else line @ form0.lattice)
    b_t = (b_red @ form.lattice) @ frame.T
    periodic = separation is not None
    lat_t = (form.lattice @ frame.T)[:2] if dim == 3 else form.lattice  # transverse lattice (first two vectors)
    dirs = relevant_directions(lat_t)
    if kind == "edge":
        bhat = b_t / np.linalg.norm(b_t)
        uhat = np.array([-bhat[1], bhat[0]])
    else:
        e = lat_t[0] / np.linalg.norm(lat_t[0])
        uhat = e
    if periodic:
        extent = _parse_size(size, 1, "size")[0]
        try:
            sep = float(separation)
        except (TypeError, ValueError):
            raise DefectGeometryError(f"separation must be a distance, got {separation!r}") from None
        if sep <= 0:
            raise DefectGeometryError("separation must be positive")
        cells_t = np.array(list(itertools.product(range(extent), range(extent))), dtype=int)
        mid = 0.5 * extent * (lat_t[0] + lat_t[1])
        c1 = mid - 0.5 * sep * uhat if core is None else np.asarray(core, dtype=float)[:2] @ lat_t
        if core is None:  # a plaquette centre near the middle
            c1 = (np.floor(c1 @ np.linalg.inv(lat_t)) + 0.5) @ lat_t
        c2 = c1 + sep * uhat
        # the cut must stay inside the supercell's home cell (bonds are routed in the source's unwrapped frame),
        # and each core this far from its partner and from the partner's periodic image
        corners = np.array([c1, c2, c1 + (b_t if kind == "edge" else 0), c2 + (b_t if kind == "edge" else 0)])
        red = corners @ np.linalg.inv(lat_t)
        reach = 1.5 + float(np.abs(form.cells).max())
        shifts = np.array([(i, j) for i in (-1, 0, 1) for j in (-1, 0, 1) if i or j]) @ (extent * lat_t)
        image_gap = float(np.min(np.linalg.norm(c2 + shifts - c1, axis=1)))
        if np.any(red < reach) or np.any(red > extent - reach) or min(sep, image_gap) < MIN_MARGIN:
            raise DefectGeometryError(f"a {extent} × {extent} supercell is too small for a dislocation dipole "
                                      f"{sep:g} apart (the cut must stay {reach:g} cells inside the supercell and the "
                                      f"cores {MIN_MARGIN:g} apart, also across the periodic boundary): enlarge size "
                                      "or change separation")
        cut_length = sep
        wrap = (extent, extent) + ((length,) if dim == 3 else ())
    else:
        radius = _parse_size(size, 1, "size")[0] / 2.0
        if core is None:
            c1 = 0.5 * (lat_t[0] + lat_t[1])
        else:
            c1 = np.asarray(core, dtype=float)[:2] @ lat_t
        if radius < MIN_MARGIN + float(np.linalg.norm(b_t)):
            raise DefectGeometryError(f"a sample of size {size} is too small for a dislocation with |b| = "
                                      f"{np.linalg.norm(b_t):.3g} (the core needs {MIN_MARGIN:g} cells to the edge)")
        c2 = None
        cut_length = np.inf
        wrap = (0, 0, length) if dim == 3 else None
    if kind == "edge":
        faces = _strip_faces(c1, b_t, b_red, cut_length)

        def removed(xy):
            return _in_strip(xy, c1, b_t, cut_length)
    else:
        faces = _screw_faces(c1, uhat, b_red, cut_length)

        def removed(xy):
            return np.zeros(len(xy), dtype=bool)
    router = FaceRouter(faces, None, form.lattice, frame)
    images1 = np.array([c1, c1 + b_t]) if kind == "edge" else np.array([c1])
    image_sets = [images1]
    if c2 is not None:
        image_sets.append(np.array([c2, c2 + b_t]) if kind == "edge" else np.array([c2]))

    def points(label_pos):
        if periodic:
            cells2 = cells_t
        else:
            box = _box(lat_t, c1, 2.0 * radius)
            cells2 = box
        if dim == 3:
            cells = np.array([(i, j, k) for i, j in cells2 for k in range(length)], dtype=int)
        else:
            cells = cells2
        cell, label = _grid(cells, len(label_pos))
        xyz = (cell + label_pos[label]) @ form.lattice
        xy = xyz @ frame.T
        keep = ~removed(xy)
        if not periodic:
            keep &= polygon_distance(xy - c1, dirs) <= radius + 1e-9
        cell, label, xyz, xy = cell[keep], label[keep], xyz[keep], xy[keep]
        dist = np.array([np.min(np.linalg.norm(xy[:, None, :] - im[None], axis=-1), axis=1) for im in image_sets])
        edge = np.full(len(label), np.inf) if periodic else radius - polygon_distance(xy - c1, dirs) + 0.5
        return _Points(np.zeros(len(label), dtype=np.int64), cell, label, xyz, dist, edge)

    states = points(form.positions)
    ions_pts = points(ion_red)
    cores = []
    sign_sets = [1] if c2 is None else [1, -1]
    for sign, images in zip(sign_sets, image_sets):
        point_t = images[0]
        position = point_t @ frame if dim == 3 else point_t
        reduced = position @ np.linalg.inv(form0.lattice) if dim == 3 else point_t @ np.linalg.inv(form.lattice)
        cores.append(Core(
            label=f"{'screw' if kind == 'screw' else 'edge'} dislocation b = {tuple(int(sign * x) for x in b)}",
            kind="dislocation line" if dim == 3 else "dislocation", position=position,
            images=images @ frame if dim == 3 else images, frank_angle=0.0, burgers=sign * b, reduced=reduced,
            line_direction=lhat))
    prep_form = _Prepared(form, prep.gap, prep.filling, ion_red, prep.ion_charges)
    periodic_axes = (periodic, periodic) + ((True,) if dim == 3 else ())
    return _finish(prep_form, form, spec, states, ions_pts, router, None, None, wrap=wrap, cores=cores,
                   periodic=periodic_axes)


# ---------------------------------------------------------------------------------------------- disclinations
def disclination(model, frank_angle: float, size=20, *, core="1a", filling: int | None = None, ions=None) -> Sample:
    """A two-dimensional flake with a disclination of Frank angle ``frank_angle`` at its centre.

    Volterra cut and glue in sectors (:class:`~crystaltop.defects.geometry.SectorRouter`): the flake is the
    Wigner–Seitz polygon of inradius ``size / 2`` about the rotation centre ``core``, cut into the ``n`` sectors of
    the largest rotation order ``n`` that the lattice, the core and the model allow with ``Ω = 2πk/n``;
    ``N_s = n − k`` copies of one sector are glued edge to edge. A bond crossing a seam carries the rotation's
    representation on the orbitals and spin, ``D_{C_n}(0)``.

    Parameters
    ----------
    frank_angle : float
        Ω in radians: ``+2π/n`` (a wedge removed), ``−2π/n`` (one inserted) and their multiples.
    core : str or (2,) reduced coordinates
        The rotation centre: a Wyckoff-style name (:func:`rotation_centre_names`, e.g. ``"1a"``, ``"1b"``,
        ``"2b"``), ``"site"`` (the n-fold centre that holds a site) or ``"plaquette"`` (the one that does not),
        or coordinates. The two core types of a C4 model on the square lattice are 1a and 1b.

    Raises
    ------
    DefectGeometryError
        A Frank angle the lattice lacks (2π/3 on a square lattice) or the model breaks (2π/4 for a C4-breaking
        model), a core that is not such a rotation centre, a sample too small, a metallic model.
    """
    prep = _prepare(model, filling, ions, builder="disclination", dim=2)
    form = prep.form
    omega = _frank(frank_angle)
    fold, k, op, centre = _fold_for(form, omega, core)
    spec = DefectSpec("disclination", size, frank_angle=omega, core=core if isinstance(core, str) else tuple(centre),
                      filling=prep.filling, ions=None if ions is None else tuple(ions))
    return _sector_sample(prep, spec, fold, k, op, centre, size)


def _sector_sample(prep: _Prepared, spec: DefectSpec, fold: int, k: int, op, centre: np.ndarray, size) -> Sample:
    """``fold − k`` sectors of angle 2π/fold about ``centre`` glued edge to edge (``k = 0``: the perfect flake)."""
    form = prep.form
    omega = 2.0 * np.pi * k / fold
    sectors = fold - k
    if sectors < 1:
        raise DefectGeometryError(f"Frank angle {frank_angle_label(omega) if k else 0} removes the whole plane (n = {fold})")
    radius = _parse_size(size, 1, "size")[0] / 2.0
    if radius < MIN_MARGIN + 1.0:
        raise DefectGeometryError(f"a sample of size {size} is too small for a disclination (the core needs "
                                  f"{MIN_MARGIN:g} cells to the edge)")
    rot = _rotation(form, fold, op, centre)
    d0 = form.rotation_block(op)
    router = SectorRouter(rot, form.lattice, sectors, closing_phase=_full_turn(d0, fold, form.name))
    dirs = relevant_directions(form.lattice)
    c_cart = centre @ form.lattice
    alpha = 2.0 * np.pi / fold
    spread = fold / sectors  # display: the sectors fill 2π

    def points(label_pos):
        cells = _box(form.lattice, c_cart, 2.0 * radius)
        cell, label = _grid(cells, len(label_pos))
        xy = (cell + label_pos[label]) @ form.lattice
        rel = xy - c_cart
        inside = polygon_distance(rel, dirs) <= radius + 1e-9
        at_core = router.is_core(xy)
        fundamental = inside & ~at_core & (router.sector_angle(xy) < alpha)
        core_pts = inside & at_core
        pick = np.concatenate([np.flatnonzero(fundamental), np.flatnonzero(core_pts)])
        nf = int(fundamental.sum())
        charts = np.concatenate([np.repeat(np.arange(sectors), nf), np.full(len(pick) - nf, sectors)])
        base = np.concatenate([np.tile(np.flatnonzero(fundamental), sectors), np.flatnonzero(core_pts)])
        r = np.linalg.norm(rel[base], axis=1)
        theta = router.sector_angle(xy[base]) + router.offset + charts * alpha
        theta = np.where(charts == sectors, 0.0, theta * spread)
        shown = c_cart + r[:, None] * np.column_stack([np.cos(theta), np.sin(theta)])
        edge = radius - polygon_distance(rel[base], dirs) + 0.5
        return _Points(charts.astype(np.int64), cell[base], label[base], shown, r[None, :], edge,
                       core=charts == sectors)

    states = points(form.positions)
    ions_pts = points(prep.ion_positions)
    cores = (Core(label=f"disclination Ω = {frank_angle_label(omega) if k else '0'} at {tuple(float(x) for x in np.round(centre, 4))}",
                  kind="disclination", position=c_cart, images=c_cart[None, :], frank_angle=omega,
                  burgers=np.zeros(2, dtype=int), reduced=centre),)
    return _finish(prep, form, spec, states, ions_pts, router, rot, d0, wrap=None, cores=cores,
                   periodic=(False, False), sectors=sectors, fold=fold)


def disclination_dipole(model, frank_angle: float, separation, size=24, *, core="1a", filling: int | None = None,
                        ions=None) -> Sample:
    """A flake with a disclination ``+Ω`` at ``core`` and ``−Ω`` at ``core + separation``: a split dislocation.

    Cut and glue by faces (:class:`~crystaltop.defects.geometry.FaceRouter`): with the wedge ``K`` of angle Ω
    below the ray from the first core through the second, the region ``(c₁ + K) ∖ (c₂ + K)`` is removed; its cap
    ``[c₁, c₂]`` is glued to the first ``|s|`` of its lower ray by the rotation by −Ω about ``c₁``, the rest of that
    ray to the ray from ``c₂`` by the translation ``s − R_{−Ω} s``. The pair's net Burgers vector (a
    counter-clockwise circuit around both) is ``R_{−Ω} s − s``, recorded in :attr:`Sample.spec` via the cores.

    Parameters
    ----------
    frank_angle : float
        Ω of the first core, ``0 < Ω < π`` (2π/6, 2π/4, 2π/3 and multiples below π).
    separation : (2,) reduced vector
        From the first core to the second; both must be rotation centres of the order used.
    size : int
        The flake is the Wigner–Seitz polygon of inradius ``size / 2`` about the midpoint.
    core : str or (2,) reduced coordinates
        The first core (as for :func:`disclination`).
    """
    prep = _prepare(model, filling, ions, builder="disclination_dipole", dim=2)
    form = prep.form
    omega = _frank(frank_angle)
    if not 0 < omega < np.pi - 1e-9:
        raise DefectGeometryError(f"disclination_dipole needs 0 < Ω < π for its first core, got {omega:.4g}; the "
                                  "second core carries −Ω")
    fold, k, op, c1 = _fold_for(form, omega, core)
    try:
        s = np.asarray(separation, dtype=float).reshape(2)
    except (TypeError, ValueError):
        raise DefectGeometryError(f"separation must be a reduced vector of 2 numbers, got {separation!r}") from None
    w = _step_matrix(fold, form.lattice)
    c2 = c1 + s
    if not _is_centre(w, c2) or not np.any(s):
        raise DefectGeometryError(f"the second core {tuple(np.round(c2, 6))} is not a {fold}-fold rotation centre "
                                  "(or coincides with the first)")
    radius = _parse_size(size, 1, "size")[0] / 2.0
    rot = _rotation(form, fold, op, c1)
    d0 = form.rotation_block(op)
    lat = form.lattice
    c1c, s_c = c1 @ lat, s @ lat
    dist = float(np.linalg.norm(s_c))
    mid = c1c + 0.5 * s_c
    if radius < 0.5 * dist + MIN_MARGIN + 1.0:
        raise DefectGeometryError(f"a flake of size {size} is too small for a disclination dipole {dist:.3g} apart "
                                  f"(each core needs {MIN_MARGIN:g} cells to the edge)")
    turn = np.array([[np.cos(_TURN), -np.sin(_TURN)], [np.sin(_TURN), np.cos(_TURN)]])
    e_a = turn @ (s_c / dist)
    r_minus = np.array([[np.cos(omega), np.sin(omega)], [-np.sin(omega), np.cos(omega)]])  # rotation by −Ω
    e_b = r_minus @ e_a
    w_minus = np.linalg.matrix_power(w, (-k) % fold)
    tau = np.rint(s - w_minus @ s).astype(int)  # maps the lower ray beyond |s| onto the ray from c2
    tau_c = tau @ lat
    b_origin = c1c + dist * e_b + tau_c
    faces = (
        Face(c1c, e_a, dist, forward=DROP, backward=(-k, (0, 0))),  # the cap: into D going clockwise
        Face(c1c, e_b, dist, forward=(k, (0, 0)), backward=DROP),  # lower ray, first |s|
        Face(c1c + dist * e_b, e_b, np.inf, forward=(0, tuple(int(x) for x in tau)), backward=DROP),
        Face(b_origin, e_b, np.inf, forward=DROP, backward=(0, tuple(-int(x) for x in tau))),
    )
    n_cap, n_b = np.array([-e_a[1], e_a[0]]), np.array([-e_b[1], e_b[0]])
    router = FaceRouter(faces, rot, lat, np.eye(2))
    dirs = relevant_directions(lat)
    p_image = c1c + dist * e_b  # the point of the lower ray glued to c2
    image_sets = [c1c[None, :], np.array([c2 @ lat, p_image])]

    def points(label_pos):
        cells = _box(lat, mid, 2.0 * radius)
        cell, label = _grid(cells, len(label_pos))
        xy = (cell + label_pos[label]) @ lat
        in_d = ((xy - c1c) @ n_cap < 0) & ((xy - c1c) @ n_b > 0) & ((xy - b_origin) @ n_b < 0)
        keep = (polygon_distance(xy - mid, dirs) <= radius + 1e-9) & ~in_d
        cell, label, xy = cell[keep], label[keep], xy[keep]
        dist_c = np.array([np.min(np.linalg.norm(xy[:, None, :] - im[None], axis=-1), axis=1) for im in image_sets])
        edge = radius - polygon_distance(xy - mid, dirs) + 0.5
        return _Points(np.zeros(len(label), dtype=np.int64), cell, label, xy, dist_c, edge)

    states = points(form.positions)
    ions_pts = points(prep.ion_positions)
    net = -tau
    spec = DefectSpec("disclination_dipole", size, frank_angle=omega, separation=tuple(float(x) for x in s),
                      core=core if isinstance(core, str) else tuple(c1), burgers=tuple(int(x) for x in net),
                      filling=prep.filling, ions=None if ions is None else tuple(ions))
    cores = (
        Core(f"disclination Ω = {frank_angle_label(omega)} at {tuple(float(x) for x in np.round(c1, 4))}", "disclination",
             c1c, image_sets[0], omega, np.zeros(2, dtype=int), c1),
        Core(f"disclination Ω = {frank_angle_label(-omega)} at {tuple(float(x) for x in np.round(c2, 4))}", "disclination",
             c2 @ lat, image_sets[1], -omega, np.zeros(2, dtype=int), c2),
    )
    return _finish(prep, form, spec, states, ions_pts, router, rot, d0, wrap=None, cores=cores,
                   periodic=(False, False), fold=fold)


def _disclination_by_faces(model, frank_angle: float, size=20, *, core="1a", filling=None, ions=None) -> Sample:
    """A ``+Ω`` disclination built by removing a wedge and gluing its two rays (for cross-checks of the sector
    construction; ``0 < Ω < π``)."""
    prep = _prepare(model, filling, ions)
    form = prep.form
    omega = _frank(frank_angle)
    fold, k, op, centre = _fold_for(form, omega, core)
    if not 0 < omega < np.pi - 1e-9:
        raise DefectGeometryError("the face construction of a single disclination needs 0 < Ω < π")
    radius = _parse_size(size, 1, "size")[0] / 2.0
    rot = _rotation(form, fold, op, centre)
    d0 = form.rotation_block(op)
    lat = form.lattice
    c = centre @ lat
    e_a = np.array([np.cos(_TURN), np.sin(_TURN)])
    e_b = np.array([[np.cos(omega), np.sin(omega)], [-np.sin(omega), np.cos(omega)]]) @ e_a
    faces = (Face(c, e_a, np.inf, forward=DROP, backward=(-k, (0, 0))),
             Face(c, e_b, np.inf, forward=(k, (0, 0)), backward=DROP))
    n_a, n_b = np.array([-e_a[1], e_a[0]]), np.array([-e_b[1], e_b[0]])
    router = FaceRouter(faces, rot, lat, np.eye(2))
    dirs = relevant_directions(lat)

    def points(label_pos):
        cells = _box(lat, c, 2.0 * radius)
        cell, label = _grid(cells, len(label_pos))
        xy = (cell + label_pos[label]) @ lat
        at_core = np.linalg.norm(xy - c, axis=1) < 1e-9
        in_d = ((xy - c) @ n_a < 0) & ((xy - c) @ n_b > 0) & ~at_core
        keep = (polygon_distance(xy - c, dirs) <= radius + 1e-9) & ~in_d
        cell, label, xy = cell[keep], label[keep], xy[keep]
        return _Points(np.zeros(len(label), dtype=np.int64), cell, label, xy,
                       np.linalg.norm(xy - c, axis=1)[None, :], radius - polygon_distance(xy - c, dirs) + 0.5)

    states = points(form.positions)
    ions_pts = points(prep.ion_positions)
    spec = DefectSpec("disclination", size, frank_angle=omega, core=core, filling=prep.filling)
    cores = (Core("disclination (faces)", "disclination", c, c[None, :], omega, np.zeros(2, dtype=int), centre),)
    return _finish(prep, form, spec, states, ions_pts, router, rot, d0, wrap=None, cores=cores,
                   periodic=(False, False), fold=fold)


# ---------------------------------------------------------------------------------------------- from a spec
def build_sample(model, spec: DefectSpec) -> Sample:
    """Build the sample a :class:`DefectSpec` describes (the entry point for predictions and verification)."""
    common = {"filling": spec.filling, "ions": spec.ions}
    if spec.kind == "flake":
        return flake(model, spec.shape or "parallelogram", spec.size, **common)
    if spec.kind == "supercell":
        return supercell(model, spec.size, **common)
    if spec.kind == "edge_dislocation":
        return edge_dislocation(model, spec.burgers, spec.size, separation=spec.separation, core=spec.core, **common)
    if spec.kind == "dislocation_line":
        return dislocation_line(model, spec.burgers, spec.line_direction, spec.size, spec.line_kind or "edge",
                                length=spec.length or 4, separation=spec.separation, core=spec.core, **common)
    if spec.kind == "disclination":
        return disclination(model, spec.frank_angle, spec.size, core=spec.core or "1a", **common)
    if spec.kind == "disclination_dipole":
        return disclination_dipole(model, spec.frank_angle, spec.separation, spec.size, core=spec.core or "1a",
                                   **common)
    raise DefectGeometryError(f"unknown defect kind {spec.kind!r}")
