"""Geometry of cut-and-glue defects: rotation centres, sample shapes, lattice isometries and bond routing.

A sample is a set of points of the perfect lattice, each tagged with a *chart* (a copy of a region of the
perfect lattice), a cell and a label (a basis state, or an ion). A bond of the perfect lattice from a point
``p`` to ``q = p + d`` is *routed*: the router tells in which chart the target is stored and by which lattice
isometry ``g`` its perfect position is carried to the stored one (``q`` is identified with ``g q``). Two routers
cover every defect built here:

* :class:`SectorRouter` -- a disclination by the Volterra construction in sectors: ``N_s`` copies of one
  fundamental sector of angle ``2π/n`` about the rotation centre, glued edge to edge; ``N_s = n − k`` for a Frank
  angle ``Ω = 2πk/n`` (``k < 0`` inserts sectors). ``N_s = n`` is the perfect lattice.
* :class:`FaceRouter` -- a region removed from one chart whose boundary faces are glued pairwise by lattice
  isometries: a strip of width ``|b|`` for an edge dislocation, a half-plane cut for a screw dislocation, a wedge
  for a disclination, a wedge minus its translate for a disclination dipole. A bond that crosses a face continues
  from the partner face (the geodesic of the glued space); a face with no partner drops it.

Both are genuine identifications of flat space away from the cores, so a bond and its reverse are routed
consistently; bonds through a core, where the glued space is singular, may not be, and the assembly drops a
bond whose reverse disagrees (:func:`crystaltop.defects.assembly.assemble_hamiltonian`).

Isometries are pairs ``(m, τ)``: ``f ↦ W^m (f − c) + c + τ`` in reduced coordinates, ``W`` the integer matrix
of the rotation by ``2π/n`` about z and ``c`` the sample's rotation centre; ``τ`` is a lattice vector.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np


__all__ = ["Face", "FaceRouter", "SectorRouter", "Rotation", "relevant_directions", "polygon_distance",
           "rotation_centres", "DROP"]

#: Marker of a face crossing that drops the bond (a face with no partner).
DROP = None
_TINY = 1e-12


# ---------------------------------------------------------------------------------------------- lattice helpers
def relevant_directions(lattice: np.ndarray) -> np.ndarray:
    """Unit vectors along the Voronoi-relevant lattice vectors (one of each ± pair).

    ``max_v |r·v̂| ≤ R`` is the Wigner–Seitz cell scaled to inradius ``R``: a square for the square lattice, a
    hexagon for the triangular one, invariant under every rotation of the lattice.
    """
    lat = np.asarray(lattice, dtype=float)
    dim = lat.shape[0]
    cand = np.array([v for v in itertools.product(range(-2, 3), repeat=dim) if any(v)], dtype=float) @ lat
    out = []
    for v in cand:
        half = 0.5 * v
        # v is (strictly) Voronoi-relevant if its midpoint is closer to the origin than to any other lattice point
        others = cand[np.any(np.abs(cand - v) > 1e-9, axis=1)]
        if np.all(np.linalg.norm(half - others, axis=1) > np.linalg.norm(half) + 1e-9):
            unit = v / np.linalg.norm(v)
            if not any(abs(abs(unit @ u) - 1.0) < 1e-9 for u in out):
                out.append(unit)
    return np.array(out)


def polygon_distance(points: np.ndarray, directions: np.ndarray) -> np.ndarray:
    """``max_v |r·v̂|``: the 'radius' of each point in the shape of the Wigner–Seitz cell."""
    return np.abs(np.asarray(points) @ directions.T).max(axis=-1)


def rotation_centres(w: np.ndarray) -> np.ndarray:
    """Points ``c`` of the unit cell ``[0, 1)^2`` with ``c − W c`` a lattice vector (the rotation centres of ``W``)."""
    w = np.asarray(w, dtype=float)
    a = np.eye(len(w)) - w
    found = []
    for m in itertools.product(range(-3, 4), repeat=len(w)):
        c = np.linalg.solve(a, np.array(m, dtype=float)) % 1.0
        c[np.abs(c - 1.0) < 1e-9] = 0.0
        if not any(np.abs(c - f).max() < 1e-9 for f in found):
            found.append(c)
    found.sort(key=lambda c: (round(float(c.sum()), 9), tuple(np.round(c, 9))))
    return np.array(found)


@dataclass(frozen=True)
class Rotation:
    """The sample's rotation: ``W`` (integer, one step of 2π/n about z in the lattice basis) about centre ``c``."""

    fold: int
    w: np.ndarray
    """(dim, dim) int matrix of one step."""
    centre: np.ndarray
    """(dim,) reduced rotation centre (for a 3D lattice the third coordinate is irrelevant)."""
    cartesian: np.ndarray
    """(dim, dim) Cartesian matrix of one step (acting on column vectors)."""

    def power(self, m: int) -> np.ndarray:
        m = int(m) % self.fold
        return np.linalg.matrix_power(self.w, m)


def apply_isometry(rot: Rotation | None, power: np.ndarray, shift: np.ndarray, reduced: np.ndarray) -> np.ndarray:
    """``W^m (f − c) + c + τ`` for rows ``f`` (vectorised over entries with their own ``m`` and ``τ``)."""
    out = np.array(reduced, dtype=float) + shift
    if rot is None:
        return out
    power = np.asarray(power) % rot.fold
    for m in np.unique(power):
        if m == 0:
            continue
        sel = power == m
        w = rot.power(m).astype(float)
        out[sel] = (reduced[sel] - rot.centre) @ w.T + rot.centre + shift[sel]
    return out


def compose(rot: Rotation | None, first: tuple[np.ndarray, np.ndarray], second: tuple[np.ndarray, np.ndarray]):
    """``second ∘ first`` for isometries ``(m, τ)`` (arrays over entries)."""
    m1, t1 = first
    m2, t2 = second
    if rot is None:
        return m1 + m2, t1 + t2
    t = np.array(t1, dtype=int)
    for m in np.unique(np.asarray(m2) % rot.fold):
        sel = (np.asarray(m2) % rot.fold) == m
        t[sel] = t1[sel] @ rot.power(m).T
    return m1 + m2, t + t2


# ---------------------------------------------------------------------------------------------- the routers
class SectorRouter:
    """Route bonds of a sample made of ``charts`` copies of the fundamental sector ``θ ∈ [0, 2π/n)`` about ``c``.

    The angle is measured from a ray turned by a tiny ``offset`` so that no lattice point lies on a sector edge;
    the rotation maps the fundamental sector onto the next one exactly, so every orbit has one representative.
    A point at the centre itself is the *core* (chart ``core_chart``); the identification of the core state seen
    from chart ``s`` with the stored one is ``g^s``.

    Chart ``s`` holds the states ``Ĝ^s|p⟩``. Going once around the core crosses ``N_s`` seams; for ``N_s = n`` the
    product ``D^n`` of the seam matrices is the scalar ``ε`` (−1 for spin ½, where a 2π rotation is −1; −1 for a
    model whose C_n carries a gauge flux), while the perfect lattice needs 1. The seam that closes the circle
    (chart ``N_s − 1`` to chart 0) therefore carries ``ε^{−1}``: the holonomy around the core is then ``D^{−k}``, the
    rotation by −Ω, continuous in Ω, and ``N_s = n`` is exactly the perfect lattice.
    """

    def __init__(self, rot: Rotation, lattice: np.ndarray, charts: int, *, offset: float = 1.234567e-7,
                 closing_phase: complex = 1.0):
        self.rot = rot
        self.lattice = np.asarray(lattice, dtype=float)
        self.charts = int(charts)
        self.core_chart = self.charts
        self.alpha = 2.0 * np.pi / rot.fold
        self.offset = float(offset)
        self.centre_xy = (rot.centre @ self.lattice)[:2]
        self.closing_phase = complex(closing_phase)

    def sector_angle(self, xy: np.ndarray) -> np.ndarray:
        """Angle from the (turned) first sector edge, in ``[0, 2π)``."""
        rel = xy[..., :2] - self.centre_xy
        return (np.arctan2(rel[..., 1], rel[..., 0]) - self.offset) % (2.0 * np.pi)

    def is_core(self, xy: np.ndarray) -> np.ndarray:
        return np.linalg.norm(xy[..., :2] - self.centre_xy, axis=-1) < 1e-9

    def route(self, chart: np.ndarray, p: np.ndarray, q: np.ndarray):
        """Target chart, isometry ``(m, τ)``, a drop mask and a phase factor for bonds ``p → q`` (Cartesian rows)."""
        theta_p = self.sector_angle(p)
        rel_p, rel_q = p[:, :2] - self.centre_xy, q[:, :2] - self.centre_xy
        turn = np.arctan2(rel_p[:, 0] * rel_q[:, 1] - rel_p[:, 1] * rel_q[:, 0],
                          (rel_p * rel_q).sum(axis=1))  # signed angle from p to q about the centre
        t = np.floor((theta_p + turn) / self.alpha).astype(int)
        core = self.is_core(q)
        target = np.where(core, self.core_chart, (chart + t) % self.charts)
        power = np.where(core, chart, -t)
        drop = (np.abs(np.abs(turn) - np.pi) < 1e-9) & ~core  # through the centre: no continuous angle
        closings = np.where(core, 0, np.floor_divide(chart + t, self.charts))
        # the identification of the stored state carries ε^{-closings}; c_q picks up its conjugate
        factor = np.conj(self.closing_phase ** (-closings.astype(float))) if self.closing_phase != 1 else None
        return target, power, np.zeros((len(p), self.lattice.shape[0]), dtype=int), drop, factor


@dataclass(frozen=True)
class Face:
    """An oriented straight piece of a cut in the transverse plane.

    Crossing it towards its left normal (``ẑ × direction``) is *forward*, the other way *backward*; each way
    carries the isometry ``(m, τ)`` that continues the bond from the partner face, or :data:`DROP`.
    """

    origin: np.ndarray
    """(2,) transverse Cartesian start."""
    direction: np.ndarray
    """(2,) unit vector along the face."""
    length: float
    """Length (``inf`` for a ray)."""
    forward: tuple[int, tuple[int, ...]] | None
    backward: tuple[int, tuple[int, ...]] | None

    @property
    def normal(self) -> np.ndarray:
        return np.array([-self.direction[1], self.direction[0]])


class FaceRouter:
    """Route bonds of one chart through glued faces (see the module docstring).

    Parameters
    ----------
    faces : sequence of Face
    rot : Rotation or None
        The rotation the isometries refer to (None: translations only).
    lattice : (dim, dim) array
    transverse : (2, dim) array
        Orthonormal rows spanning the plane of the faces (for a 2D model the xy plane).
    """

    def __init__(self, faces, rot: Rotation | None, lattice: np.ndarray, transverse: np.ndarray, *, passes: int = 4):
        self.faces = tuple(faces)
        self.rot = rot
        self.lattice = np.asarray(lattice, dtype=float)
        self.transverse = np.asarray(transverse, dtype=float)
        self.passes = passes
        self.dim = self.lattice.shape[0]

    def _cartesian(self, power: np.ndarray, shift: np.ndarray, xyz: np.ndarray) -> np.ndarray:
        reduced = xyz @ np.linalg.inv(self.lattice)
        return apply_isometry(self.rot, power, shift, reduced) @ self.lattice

    def route(self, chart: np.ndarray, p: np.ndarray, q: np.ndarray):
        count = len(p)
        power = np.zeros(count, dtype=int)
        shift = np.zeros((count, self.dim), dtype=int)
        drop = np.zeros(count, dtype=bool)
        start, end = p.copy(), q.copy()
        active = np.ones(count, dtype=bool)
        first = True
        for it in range(self.passes):
            idx = np.flatnonzero(active)
            if idx.size == 0:
                break
            a = start[idx] @ self.transverse.T
            b = end[idx] @ self.transverse.T
            best = np.full(idx.size, np.inf)
            which = np.full(idx.size, -1)
            sense = np.zeros(idx.size, dtype=bool)  # True: forward
            for f, face in enumerate(self.faces):
                n = face.normal
                sa, sb = (a - face.origin) @ n, (b - face.origin) @ n
                # strict: a bond that merely ends on a face line (at a core on the face's start) does not cross it
                crosses = sa * sb < 0
                denom = np.where(crosses, sa - sb, 1.0)
                lam = np.where(crosses, sa / denom, np.inf)
                point = a + np.where(crosses, lam, 0.0)[:, None] * (b - a)
                along = (point - face.origin) @ face.direction
                inside = crosses & (along >= 0) & (along < face.length)
                if not first:
                    inside &= lam > 1e-9  # the continued bond starts on the partner face
                better = inside & (lam < best)
                best[better] = lam[better]
                which[better] = f
                sense[better] = (sb > sa)[better]
            hit = which >= 0
            active[idx[~hit]] = False
            if it == self.passes - 1:  # still crossing: the bond runs through a core, no consistent continuation
                drop[idx[hit]] = True
                break
            for f, face in enumerate(self.faces):
                for forward in (True, False):
                    sel = hit & (which == f) & (sense == forward)
                    if not np.any(sel):
                        continue
                    rows = idx[sel]
                    iso = face.forward if forward else face.backward
                    if iso is DROP:
                        drop[rows] = True
                        active[rows] = False
                        continue
                    m = np.full(rows.size, iso[0], dtype=int)
                    tau = np.tile(np.array(iso[1], dtype=int), (rows.size, 1))
                    lam = best[sel][:, None]
                    crossing = start[rows] + lam * (end[rows] - start[rows])
                    start[rows] = self._cartesian(m, tau, crossing)
                    end[rows] = self._cartesian(m, tau, end[rows])
                    power[rows], shift[rows] = compose(self.rot, (power[rows], shift[rows]), (m, tau))
            first = False
        return np.asarray(chart).copy(), power, shift, drop, None
