"""High-symmetry momenta of a point group on a lattice, their labels and little co-groups; mirror-invariant planes;
the rotation-eigenvalue sectors of the cyclic little co-groups.

Everything here is derived from the lattice and the operations of the group (``Operation.fixes`` and
``Operation.acts_on_k``); nothing is typed in per lattice except the *names* of the special points, which follow
the usual conventions (Setyawan & Curtarolo, Comput. Mater. Sci. 49, 299 (2010) in 3D; Γ, X, Y, M, K, K′ in 2D as in
Benalcazar, Li, Hughes, Phys. Rev. B 99, 245151 (2019)).

Momenta fixed by a rotation
---------------------------
A momentum ``k`` (reduced coordinates) is fixed by ``g`` when ``g k = k + G`` for a reciprocal lattice vector ``G``.
In 2D the rotations about z fix isolated momenta (C2: the four TRIMs; C4: Γ, M; C3: Γ, K, K′; C6: Γ). In 3D a
rotation fixes lines along its axis; the momenta reported are where those lines cross the plane through Γ normal
to the axis and the zone-boundary plane normal to it, where that is a different plane (``k·u = 0`` and
``k·u = 1/2`` with ``u`` the shortest lattice vector along the axis). Every fixed momentum of a crystallographic
operation has coordinates with denominators dividing 12, so a 12-point grid per axis finds them all.

Labels
------
2D: Γ = 0. On a hexagonal lattice K is the zone corner ``(4π/3a) â`` with ``â`` the shortest lattice vector of
azimuth in [0°, 60°), K′ = −K, and the three TRIMs are M (b1/2), M′ (b2/2), M″ ((b1 + b2)/2). Otherwise the
TRIM with the longest shortest representative (the zone corner of a rectangle or square) is M and the other two
are X and Y in the order b1/2, b2/2 (the corner is called S in some tables). 3D: the named points of the
primitive cubic, face- and body-centred cubic, primitive tetragonal, primitive orthorhombic and hexagonal lattices
in the conventional cell found from the lattice's own symmetry (holohedry); other momenta are named by their
reduced coordinates, e.g. ``(1/2,0,1/4)``. Distinct momenta with the same name get primes (X, X′, ...).

Rotation-eigenvalue sectors
---------------------------
A rotation ``C_n`` with ``C_n^n = +1`` (spinless) has the eigenvalues ``Π_p = e^{2πi(p−1)/n}``, p = 1 … n
(Benalcazar, Li, Hughes 2019); with ``C_n^n = −1`` (spin ½, or a spinless model with π flux such as the
Benalcazar–Bernevig–Hughes quadrupole) the eigenvalues are ``e^{iπ(2p−1)/n}``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction
from functools import lru_cache
from itertools import product

import numpy as np

from ..errors import CrystaltopError, ShapeError, SymmetryBreakingError
from ..symmetry.catalogue import type_count_key
from ..symmetry.groups import class_of_type_counts
from ..symmetry.lattice_basis import matrix_in_basis

__all__ = [
    "wrap_reduced",
    "HighSymmetryMomentum",
    "MirrorPlane",
    "high_symmetry_momenta",
    "fixed_momenta",
    "rotation_levels",
    "mirror_planes",
    "label_momenta",
    "little_cogroup",
    "planar_rotations",
    "rotation_sectors",
    "sector_names",
    "pair_name",
    "fraction_text",
    "fraction_mod1",
    "count_sectors",
    "sector_counts",
    "rotation_power",
    "reciprocal_basis",
]

#: every fixed momentum of a crystallographic operation has reduced coordinates in (1/12) Z
DENOMINATOR = 12
_TOL = 1e-8

_PRIMES = ("", "′", "″", "‴")
_PRIORITY = ("Γ", "X", "Y", "Z", "M", "K", "K′", "A", "L", "H", "H′", "R", "S", "T", "U", "W", "N", "P")


# ---------------------------------------------------------------------------------------------- basics
def _lattice(lattice) -> np.ndarray:
    arr = np.asarray(lattice, dtype=float)
    if arr.ndim != 2 or arr.shape[0] != arr.shape[1] or arr.shape[0] not in (1, 2, 3):
        raise ShapeError(f"lattice must have shape (dim, dim) with dim 1, 2 or 3 (vectors as rows), got {arr.shape}")
    return arr


def reciprocal_basis(lattice) -> np.ndarray:
    """Reciprocal vectors as rows, ``B = 2π inv(lattice)ᵀ`` (docs/conventions.md)."""
    return 2.0 * np.pi * np.linalg.inv(_lattice(lattice)).T


def _padded(vectors: np.ndarray) -> np.ndarray:
    out = np.zeros(vectors.shape[:-1] + (3,))
    out[..., : vectors.shape[-1]] = vectors
    return out


def wrap_reduced(k) -> np.ndarray:
    """Reduced coordinates (of a momentum or a point) into [0, 1), rounded to 1e-9 so that 1 − ε becomes 0."""
    out = np.mod(np.round(np.asarray(k, dtype=float), 9), 1.0)
    out[np.isclose(out, 1.0, atol=1e-9)] = 0.0
    return out + 0.0


def _key(k) -> tuple:
    """Exact key of a momentum on the (1/12) grid, e.g. (6, 0) for (1/2, 0)."""
    return tuple(int(x) % DENOMINATOR for x in np.rint(np.asarray(k, dtype=float) * DENOMINATOR))


def _from_key(key) -> np.ndarray:
    return np.asarray(key, dtype=float) / DENOMINATOR


def _canonical_order(key) -> tuple:
    """Γ first, then fewer non-zero coordinates, then b1/2 before b2/2 (so X = (1/2, 0) precedes Y = (0, 1/2))."""
    return (sum(1 for x in key if x), tuple(-x for x in key))


def _same(a, b) -> bool:
    d = np.asarray(a, dtype=float) - np.asarray(b, dtype=float)
    return bool(np.all(np.abs(d - np.rint(d)) < 1e-7))


def _candidates(dim: int) -> np.ndarray:
    axes = [np.arange(DENOMINATOR) / DENOMINATOR] * dim
    return np.stack(np.meshgrid(*axes, indexing="ij"), axis=-1).reshape(-1, dim)


def _fraction_text(x: float) -> str:
    return fraction_text(Fraction(float(x)).limit_denominator(DENOMINATOR * 2))


def fraction_text(f: Fraction) -> str:
    """A fraction as text: ``'3/4'``, ``'0'``, ``'-1'``."""
    return str(f.numerator) if f.denominator == 1 else f"{f.numerator}/{f.denominator}"


def fraction_mod1(f: Fraction) -> Fraction:
    """``f`` mod 1, in [0, 1), exactly (a charge in units of e, a coordinate in units of a lattice vector)."""
    return f - (f.numerator // f.denominator)


def _coordinates_name(k) -> str:
    return "(" + ",".join(_fraction_text(x) for x in wrap_reduced(k)) + ")"


def planar_rotations(group, dim: int) -> tuple:
    """The proper rotations of ``group`` that act on a ``dim``-dimensional zone with isolated or line fixed sets.

    In 2D these are the rotations about z (the vocabulary ``C2 … C6`` of :meth:`PointGroup.elements`), in 3D all
    proper rotations; the identity is excluded.
    """
    if dim == 2:
        return tuple(op for op in group.rotations() if abs(op.axis[2]) > 1 - 1e-8)
    if dim == 3:
        return tuple(group.rotations())
    return ()


def _integer_direction(vector: np.ndarray, basis: np.ndarray, what: str) -> np.ndarray:
    """The shortest integer combination of the rows of ``basis`` along the Cartesian ``vector`` (3D)."""
    coeff = np.linalg.solve(basis.T, vector)
    scale = np.abs(coeff).max()
    coeff = coeff / scale
    fracs = [Fraction(float(c)).limit_denominator(DENOMINATOR * 4) for c in coeff]
    lcm = 1
    for f in fracs:
        lcm = lcm * f.denominator // math.gcd(lcm, f.denominator)
    ints = np.array([int(f * lcm) for f in fracs], dtype=int)
    g = 0
    for x in ints:
        g = math.gcd(g, abs(int(x)))
    ints = ints // max(g, 1)
    back = ints @ basis
    if np.linalg.norm(np.cross(back, vector)) > 1e-6 * np.linalg.norm(back) * np.linalg.norm(vector):
        raise CrystaltopError(f"the {what} is not along a lattice direction")
    if back @ vector < 0:
        ints = -ints
    return ints


def rotation_levels(op, lattice) -> tuple[np.ndarray, tuple[float, ...]]:
    """For an operation of a 3D lattice: the shortest lattice vector ``u`` along its axis (mirror: its normal), as
    integer reduced coordinates pointing along ``op.axis``, and the levels ``c`` of the planes ``k·u = c`` normal
    to it that it maps onto themselves: 0 (through Γ) and, when it is a different plane mod G, 1/2 (zone boundary).

    The zone boundary along ``u`` is half the shortest reciprocal vector ``G_u`` along it, at ``k·u = (G_u·u)/2``;
    it coincides with the plane through Γ when ``G_u·u`` is even (e.g. along a cube axis of an fcc lattice).
    """
    lat = _lattice(lattice)
    if lat.shape[0] != 3:
        raise ShapeError("rotation_levels needs a 3D lattice")
    u, levels = _rotation_levels(op, *_lattice_key(lat))
    return u.copy(), levels


@lru_cache(maxsize=1024)
def _rotation_levels(op, lattice_bytes: bytes, dim: int) -> tuple[np.ndarray, tuple[float, ...]]:
    lat = _from_lattice_key(lattice_bytes, dim)
    axis = np.asarray(op.axis, dtype=float)
    u = _integer_direction(axis, lat, f"axis of {op.label}")
    g = _integer_direction(axis, reciprocal_basis(lat), f"axis of {op.label} (reciprocal)")
    j = int(abs(g @ u))
    return u, ((0.0, 0.5) if j % 2 else (0.0,))


# ---------------------------------------------------------------------------------------------- fixed momenta
def fixed_momenta(op, lattice) -> np.ndarray:
    """The momenta (reduced, in [0, 1)) fixed by a rotation, modulo reciprocal lattice vectors.

    Parameters
    ----------
    op : Operation
        In 2D a rotation about z, in 3D any proper rotation (its fixed lines are cut by the planes normal to it
        through Γ and at the zone boundary, see :func:`rotation_levels`).
    lattice : (dim, dim) array_like

    Returns
    -------
    (m, dim) ndarray, sorted.

    Raises
    ------
    CrystaltopError
        If the operation is not a rotation of that kind (its fixed set is not a set of points).

    Examples
    --------
    >>> import numpy as np
    >>> from crystaltop.symmetry import point_group
    >>> fixed_momenta(point_group("4")["4z+"], np.eye(2)).tolist()
    [[0.0, 0.0], [0.5, 0.5]]
    """
    lat = _lattice(lattice)
    dim = lat.shape[0]
    if op.kind != "rotation" or (dim == 2 and abs(op.axis[2]) < 1 - 1e-8) or dim == 1:
        raise CrystaltopError(f"operation {op.label} does not fix isolated momenta of a {dim}D zone: "
                              "in 2D only rotations about z do, in 3D proper rotations (on the planes normal to them)")
    cand = _candidates(dim)
    keep = op.fixes(cand, lat)
    if dim == 3:
        u, levels = rotation_levels(op, lat)
        level = np.mod(cand @ u, 1.0)
        on = np.zeros(len(cand), dtype=bool)
        for c in levels:
            on |= np.abs(level - c) < 1e-9
        keep &= on
    pts = cand[keep]
    return pts[np.lexsort(pts.T[::-1])] if len(pts) else pts


def little_cogroup(group, k, lattice) -> tuple:
    """The operations of ``group`` that fix ``k`` modulo reciprocal lattice vectors, in group order."""
    lat = _lattice(lattice)
    k = np.asarray(k, dtype=float)
    return tuple(op for op in group.operations if bool(op.fixes(k, lat)))


def _class_symbol(ops) -> str:
    return class_of_type_counts(type_count_key(op.type_symbol for op in ops)) or "?"


# ---------------------------------------------------------------------------------------------- names
def _shortest_length(points: np.ndarray, lattice: np.ndarray) -> np.ndarray:
    dim = lattice.shape[0]
    shifts = np.array(list(product((-1, 0, 1), repeat=dim)), dtype=float)
    cart = (points[:, None, :] + shifts[None]) @ reciprocal_basis(lattice)
    return np.linalg.norm(cart, axis=-1).min(axis=1)


def _lattice_rotates_by(lattice: np.ndarray, degrees: float) -> bool:
    t = np.radians(degrees)
    rot = np.array([[np.cos(t), -np.sin(t), 0.0], [np.sin(t), np.cos(t), 0.0], [0.0, 0.0, 1.0]])
    try:
        matrix_in_basis(rot, lattice, f"rotation by {degrees}°")
    except CrystaltopError:
        return False
    return True


def _hexagonal_k(lattice2: np.ndarray) -> np.ndarray:
    """Reduced coordinates of K = (4π/3a) â, â the shortest lattice vector of azimuth in [0°, 60°)."""
    vecs = np.array([i * lattice2[0] + j * lattice2[1] for i in range(-2, 3) for j in range(-2, 3) if i or j])
    lengths = np.linalg.norm(vecs, axis=1)
    short = vecs[np.abs(lengths - lengths.min()) < 1e-8]
    azimuth = np.mod(np.degrees(np.arctan2(short[:, 1], short[:, 0])) + 1e-7, 360.0)
    a_vec = short[np.argmin(np.where(azimuth < 60.0, azimuth, 999.0))]
    a = np.linalg.norm(a_vec)
    k_cart = (4.0 * np.pi / (3.0 * a)) * a_vec / a
    return wrap_reduced(lattice2 @ k_cart / (2.0 * np.pi))


def _names_2d(points: np.ndarray, lattice: np.ndarray) -> list[str]:
    hexagonal = _lattice_rotates_by(lattice, 60.0)
    square = not hexagonal and _lattice_rotates_by(lattice, 90.0)
    trim_order = [(0.5, 0.0), (0.0, 0.5), (0.5, 0.5)]
    trims = np.array(trim_order)
    if hexagonal:
        trim_names = ["M", "M", "M"]
        k_point = _hexagonal_k(lattice)
    else:
        lengths = _shortest_length(trims, lattice)
        if square:
            c4 = np.array([[0.0, -1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 1.0]])
            w = matrix_in_basis(c4, lattice, "4z+").astype(float)
            corner = [i for i, t in enumerate(trims) if _same(t @ np.linalg.inv(w), t)]
        else:
            longest = np.flatnonzero(np.abs(lengths - lengths.max()) < 1e-8)
            corner = list(longest) if len(longest) == 1 else [2]
        others = iter(("X", "Y"))
        trim_names = ["M" if i == corner[0] else next(others) for i in range(3)]
        k_point = None
    names = []
    for k in points:
        if _same(k, 0.0 * k):
            names.append("Γ")
        elif _same(2 * k, 0.0 * k):
            names.append(trim_names[[i for i, t in enumerate(trims) if _same(t, k)][0]])
        elif k_point is not None and _same(k, k_point):
            names.append("K")
        elif k_point is not None and _same(k, -k_point):
            names.append("K′")
        else:
            names.append(_coordinates_name(k))
    return names


@lru_cache(maxsize=64)
def _holohedry(lattice_bytes: bytes, dim: int):
    from ..symmetry import site_symmetry_group

    lattice = np.frombuffer(lattice_bytes).reshape(dim, dim)
    return site_symmetry_group(lattice, np.zeros((1, dim)), [0])


_TABLES = {  # conventional reciprocal coordinates (units 2π/a_i along the conventional axes), Setyawan–Curtarolo
    "cP": {"X": (0, .5, 0), "M": (.5, .5, 0), "R": (.5, .5, .5)},
    "cF": {"X": (0, 1, 0), "L": (.5, .5, .5), "W": (.5, 1, 0), "K": (.75, .75, 0), "U": (.25, 1, .25)},
    "cI": {"H": (0, 0, 1), "N": (.5, .5, 0), "P": (.5, .5, .5)},
    "tP": {"X": (0, .5, 0), "M": (.5, .5, 0), "Z": (0, 0, .5), "R": (0, .5, .5), "A": (.5, .5, .5)},
    "oP": {"X": (.5, 0, 0), "Y": (0, .5, 0), "Z": (0, 0, .5), "S": (.5, .5, 0), "U": (.5, 0, .5), "T": (0, .5, .5),
           "R": (.5, .5, .5)},
}


def _conventional(lattice: np.ndarray):
    """(Bravais symbol, conventional axes (3, 3) as rows, their lengths) from the lattice's holohedry, or None."""
    holo = _holohedry(np.ascontiguousarray(lattice, dtype=float).tobytes(), 3)
    rots = [op for op in holo.operations if op.kind == "rotation"]
    axes = {n: [] for n in (2, 3, 4, 6)}
    for op in rots:
        if op.angle > 0 or op.fold == 2:
            if not any(abs(abs(op.axis @ a) - 1) < 1e-8 for a in axes[op.fold]):
                axes[op.fold].append(np.asarray(op.axis, dtype=float))

    def length_along(e):
        u = _integer_direction(e, lattice, "conventional axis")
        return float(np.linalg.norm(u @ lattice))

    def order_like_xyz(vectors):  # the axis closest to x first, then y, then z
        chosen = []
        for ref in np.eye(3):
            chosen.append(max((v for v in vectors if not any(v is c for c in chosen)), key=lambda v: abs(v @ ref)))
        return chosen

    volume = abs(np.linalg.det(lattice))
    if axes[6]:
        return ("hP", None, None)
    if len(axes[4]) == 3:
        e = order_like_xyz(axes[4])
        a = length_along(e[0])
        ratio = volume / a**3
        kind = {1: "cP", 2: "cI", 4: "cF"}.get(int(round(1.0 / ratio)))
        return (kind, np.array(e), np.array([a, a, a])) if kind else None
    if len(axes[4]) == 1:
        c_axis = axes[4][0]
        perp = [v for v in axes[2] if abs(v @ c_axis) < 1e-8]
        lengths = [length_along(v) for v in perp]
        a_axis = perp[int(np.argmin(lengths))]
        a, c = min(lengths), length_along(c_axis)
        if abs(volume / (a * a * c) - 1) > 1e-6:
            return None  # body-centred tetragonal: named by coordinates
        b_axis = np.cross(c_axis, a_axis)
        return ("tP", np.array([a_axis, b_axis, c_axis]), np.array([a, a, c]))
    if len(axes[2]) == 3 and not axes[3]:
        e = order_like_xyz(axes[2])
        lengths = np.array([length_along(v) for v in e])
        if abs(volume / np.prod(lengths) - 1) > 1e-6:
            return None
        return ("oP", np.array(e), lengths)
    return None


def _names_3d(points: np.ndarray, lattice: np.ndarray) -> list[str]:
    conv = _conventional(lattice)
    names = [None] * len(points)
    for i, k in enumerate(points):
        if _same(k, 0.0 * k):
            names[i] = "Γ"
    if conv is not None and conv[0] == "hP":
        holo = _holohedry(np.ascontiguousarray(lattice, dtype=float).tobytes(), 3)
        c_axis = next(op.axis for op in holo.operations if op.kind == "rotation" and op.fold == 6)
        u = _integer_direction(np.asarray(c_axis, dtype=float), lattice, "six-fold axis")
        # the in-plane lattice: the two shortest lattice vectors normal to c, as a 2D lattice in its own frame
        vecs = np.array([v for v in (np.array(t) for t in product(range(-2, 3), repeat=3)) if v @ u == 0 and v.any()])
        cart = vecs @ lattice
        order = np.argsort(np.linalg.norm(cart, axis=1), kind="stable")
        first = order[0]
        second = next(j for j in order[1:] if abs(np.cross(cart[first], cart[j]) @ c_axis) > 1e-8)
        e1 = cart[first] / np.linalg.norm(cart[first])
        e2 = np.cross(c_axis, e1)
        in_plane = np.array([[cart[first] @ e1, cart[first] @ e2], [cart[second] @ e1, cart[second] @ e2]])
        # reduced coordinates of k on (vecs[first], vecs[second], u): k·v over the three real-space vectors
        frame = np.array([vecs[first], vecs[second], u]).T
        for i, k in enumerate(points):
            if names[i] is not None:
                continue
            kk = np.asarray(k) @ frame
            base = _names_2d(wrap_reduced(kk[:2])[None], in_plane)[0]
            up = abs(np.mod(kk[2], 1.0) - 0.5) < 1e-8
            if not up and abs(np.mod(kk[2] + 1e-12, 1.0)) > 1e-8:
                names[i] = _coordinates_name(k)
            elif base.startswith("("):
                names[i] = _coordinates_name(k)
            else:
                names[i] = {"Γ": "A", "M": "L", "K": "H", "K′": "H′"}[base] if up else base
        return names
    if conv is not None:
        kind, axes, lengths = conv
        holo = _holohedry(np.ascontiguousarray(lattice, dtype=float).tobytes(), 3)
        mats = np.array([op.matrix for op in holo.operations])
        for name, x in _TABLES[kind].items():
            named = (np.asarray(x) * 2.0 * np.pi / lengths) @ axes  # Cartesian
            images = named @ np.swapaxes(mats, 1, 2)  # R n for every holohedry operation
            reduced = images @ lattice.T / (2.0 * np.pi)
            for i, k in enumerate(points):
                if names[i] is None and any(_same(k, r) for r in reduced):
                    names[i] = name
    return [n if n is not None else _coordinates_name(k) for n, k in zip(names, points)]


def label_momenta(points, lattice) -> list[str]:
    """Unique standard labels of distinct momenta (reduced coordinates), in the order given.

    Equal names of distinct momenta get primes in the order of the points (X, X′, X″).

    Examples
    --------
    >>> import numpy as np
    >>> label_momenta([[0, 0], [0.5, 0], [0, 0.5], [0.5, 0.5]], np.eye(2))
    ['Γ', 'X', 'Y', 'M']
    """
    lat = _lattice(lattice)
    pts = np.atleast_2d(np.asarray(points, dtype=float))
    if pts.shape[-1] != lat.shape[0]:
        raise ShapeError(f"momenta must have shape (m, {lat.shape[0]}), got {pts.shape}")
    if lat.shape[0] == 2:
        base = _names_2d(pts, lat)
    elif lat.shape[0] == 3:
        base = _names_3d(pts, lat)
    else:
        base = ["Γ" if _same(k, 0 * k) else _coordinates_name(k) for k in pts]
    seen: dict[str, int] = {}
    out = []
    for name in base:
        count = seen.get(name, 0)
        seen[name] = count + 1
        out.append(name + _PRIMES[min(count, 3)] + "′" * max(count - 3, 0) if not name.startswith("(") else name)
    return out


def _priority(name: str) -> int:
    stem = name.rstrip("′″‴")
    return _PRIORITY.index(stem) if stem in _PRIORITY else len(_PRIORITY)


# ---------------------------------------------------------------------------------------------- the list
@dataclass(frozen=True)
class HighSymmetryMomentum:
    """One momentum fixed by a rotation of the group (see the module docstring)."""

    label: str
    """Unique standard label, e.g. ``"Γ"``, ``"M"``, ``"K′"``, ``"(1/2,0,1/4)"``."""
    k: tuple
    """Reduced coordinates in [0, 1)."""
    star: tuple
    """Labels of the momenta ``g k`` (g in the group) modulo G, the representative first."""
    little_cogroup: tuple
    """Labels of the operations of the group that fix ``k`` modulo G."""
    little_cogroup_symbol: str
    """Hermann–Mauguin symbol of the class of the little co-group."""
    rotations: tuple
    """Labels of the rotations of the group (in 2D about z) that fix ``k``."""

    @property
    def is_representative(self) -> bool:
        """True for the first momentum of its star (one per class of equivalent momenta)."""
        return self.star[0] == self.label


def high_symmetry_momenta(group, lattice) -> tuple[HighSymmetryMomentum, ...]:
    """Every momentum fixed by a rotation of ``group`` on ``lattice``, labelled, with its star and little co-group.

    Parameters
    ----------
    group : PointGroup
        In the lattice's Cartesian frame (2D: the xy plane).
    lattice : (dim, dim) array_like
        Lattice vectors as rows, dim 2 or 3.

    Returns
    -------
    tuple of HighSymmetryMomentum
        Ordered Γ first, then by label; every member of every star is listed (``is_representative`` picks one).

    Raises
    ------
    LatticeMismatchError
        If an operation of the group does not map the lattice onto itself.

    Examples
    --------
    >>> import numpy as np
    >>> from crystaltop.symmetry import point_group
    >>> [(m.label, m.little_cogroup_symbol) for m in high_symmetry_momenta(point_group("4"), np.eye(2))]
    [('Γ', '4'), ('X', '2'), ('Y', '2'), ('M', '4')]
    """
    lat = _lattice(lattice)
    dim = lat.shape[0]
    if dim not in (2, 3):
        raise ShapeError(f"high-symmetry momenta are defined here for 2D and 3D lattices, got dim {dim}")
    return _high_symmetry_momenta(group, *_lattice_key(lat))


def _lattice_key(lattice: np.ndarray) -> tuple[bytes, int]:
    return np.ascontiguousarray(lattice, dtype=float).tobytes(), lattice.shape[0]


def _from_lattice_key(data: bytes, dim: int) -> np.ndarray:
    return np.frombuffer(data, dtype=float).reshape(dim, dim)


# Memoised: a report asks for the momenta of its group from several invariants, and a sweep for every point;
# the result is immutable (frozen records of tuples). Groups compare by their operations' labels and matrices.
@lru_cache(maxsize=256)
def _high_symmetry_momenta(group, lattice_bytes: bytes, dim: int) -> tuple[HighSymmetryMomentum, ...]:
    lat = _from_lattice_key(lattice_bytes, dim)
    group.in_basis(lat)  # LatticeMismatchError naming the operation
    found: set[tuple] = {_key(np.zeros(dim))}
    for op in planar_rotations(group, dim):
        found.update(_key(k) for k in fixed_momenta(op, lat))
    # close under the group, so that every member of every star is there
    for key in list(found):
        found.update(_key(op.acts_on_k(_from_key(key), lat)) for op in group.operations)
    keys = sorted(found, key=_canonical_order)
    names = label_momenta(np.array([_from_key(key) for key in keys]), lat)
    order = sorted(range(len(keys)), key=lambda i: (_priority(names[i]), len(names[i]), _canonical_order(keys[i])))
    keys = [keys[i] for i in order]
    names = [names[i] for i in order]
    index = {key: i for i, key in enumerate(keys)}
    rotations = planar_rotations(group, dim)
    out = []
    for i, key in enumerate(keys):
        k = _from_key(key)
        members = sorted({index[_key(op.acts_on_k(k, lat))] for op in group.operations})
        little = little_cogroup(group, k, lat)
        out.append(HighSymmetryMomentum(
            label=names[i], k=tuple(float(x) for x in k), star=tuple(names[j] for j in members),
            little_cogroup=tuple(op.label for op in little),
            little_cogroup_symbol=_class_symbol(little),
            rotations=tuple(op.label for op in rotations if bool(op.fixes(k, lat)))))
    return tuple(out)


# ---------------------------------------------------------------------------------------------- mirror planes
@dataclass(frozen=True)
class MirrorPlane:
    """A plane of the zone mapped onto itself by a mirror, with an oriented integer basis."""

    mirror: str
    """Label of the mirror."""
    name: str
    """``"0"`` for the plane through Γ, ``"π"`` for the zone-boundary plane (``k·u = 1/2``)."""
    level: float
    """``k·u`` on the plane (0 or 1/2); in 2D the plane is the whole zone and the level 0."""
    normal: tuple
    """``u``: the shortest lattice vector along the mirror normal, integer reduced coordinates (3D), or ()."""
    origin: tuple
    """A reduced momentum on the plane."""
    basis: tuple
    """Two integer reciprocal vectors (reduced) spanning the plane's lattice, ordered so that (v1 × v2)·n̂ > 0
    (Cartesian, n̂ the mirror's normal ``op.axis``): a Chern number computed on the mesh ``origin + (i v1 + j
    v2)/N`` in this order refers to the orientation +n̂."""

    @property
    def axes(self) -> tuple[int, int] | None:
        """``(a, b)`` if ``basis`` is ``(e_a, e_b)`` (the plane is a product grid of reduced axes), else None."""
        v1, v2 = (np.asarray(v) for v in self.basis)
        if sorted(np.abs(v1).tolist()) == [0] * (len(v1) - 1) + [1] and v1.sum() == 1 and \
                sorted(np.abs(v2).tolist()) == [0] * (len(v2) - 1) + [1] and v2.sum() == 1:
            return int(np.argmax(v1)), int(np.argmax(v2))
        return None

    def points(self, n: int) -> np.ndarray:
        """The ``n × n`` mesh ``origin + (i v1 + j v2)/n`` (reduced), shape ``(n, n, dim)``."""
        v1, v2 = (np.asarray(v, dtype=float) for v in self.basis)
        s = np.arange(n) / n
        return np.asarray(self.origin)[None, None, :] + s[:, None, None] * v1 + s[None, :, None] * v2


def _plane_basis(u: np.ndarray, lattice: np.ndarray, normal: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    nz = np.flatnonzero(u)
    if len(nz) == 1:  # the plane k_i = c: the other two reduced axes, in cyclic order
        i = int(nz[0])
        v1, v2 = np.eye(3, dtype=int)[(i + 1) % 3], np.eye(3, dtype=int)[(i + 2) % 3]
    else:
        vecs = np.array([v for v in product(range(-2, 3), repeat=3) if np.dot(v, u) == 0 and any(v)], dtype=int)
        lengths = np.linalg.norm(vecs @ reciprocal_basis(lattice), axis=1)
        cross = np.cross(vecs[:, None, :], vecs[None, :, :])
        ok = np.all(cross == u, axis=-1) | np.all(cross == -u, axis=-1)
        a, b = np.nonzero(ok)
        if len(a) == 0:  # pragma: no cover - small crystallographic directions always have one
            raise CrystaltopError(f"no integer basis found for the plane normal to {u.tolist()}")
        best = int(np.argmin(lengths[a] + lengths[b] + 1e-9 * (a * len(vecs) + b)))
        v1, v2 = vecs[a[best]], vecs[b[best]]
    rb = reciprocal_basis(lattice)
    if np.cross(v1 @ rb, v2 @ rb) @ normal < 0:
        v1, v2 = v2, v1
    return v1, v2


def mirror_planes(op, lattice) -> tuple[MirrorPlane, ...]:
    """The planes of the zone that a mirror maps onto themselves (normal to it; through Γ and at the boundary).

    In 2D only the mirror whose normal is z has one (the whole zone). In 3D the planes ``k·u = 0`` and, when it is
    a different plane mod G, ``k·u = 1/2`` (see :func:`rotation_levels`).

    Raises
    ------
    CrystaltopError
        If ``op`` is not a mirror, or in 2D its normal lies in the plane (it leaves only lines invariant).
    """
    lat = _lattice(lattice)
    return _mirror_planes(op, *_lattice_key(lat))


@lru_cache(maxsize=1024)
def _mirror_planes(op, lattice_bytes: bytes, dim: int) -> tuple[MirrorPlane, ...]:
    lat = _from_lattice_key(lattice_bytes, dim)
    if op.kind != "mirror":
        raise CrystaltopError(f"operation {op.label} is not a mirror")
    normal = np.asarray(op.axis, dtype=float)
    if dim == 2:
        if abs(normal[2]) < 1 - 1e-8:
            raise CrystaltopError(f"mirror {op.label} of a 2D model has an in-plane normal: it leaves lines of the zone "
                                  "invariant, not a plane (only the mirror with normal z has a mirror Chern number)")
        e1, e2 = (1, 0), (0, 1)
        b = _padded(reciprocal_basis(lat))
        basis = (e1, e2) if np.cross(b[0], b[1]) @ normal > 0 else (e2, e1)
        return (MirrorPlane(op.label, "0", 0.0, (), (0.0, 0.0), basis),)
    if dim != 3:
        raise CrystaltopError(f"mirror planes are defined for 2D and 3D zones, not {dim}D")
    u, levels = rotation_levels(op, lat)
    v1, v2 = _plane_basis(u, lat, normal)
    out = []
    for c in levels:
        if c == 0.0:
            origin = np.zeros(3)
        else:
            ws = [np.array(v) for v in product(range(-2, 3), repeat=3) if np.dot(v, u) == 1]
            origin = 0.5 * min(ws, key=lambda v: (int(np.abs(v).sum()), -int(v.sum())))
        if not bool(op.fixes(origin, lat)):  # pragma: no cover - guaranteed by the parity of G_u·u
            continue
        out.append(MirrorPlane(op.label, "0" if c == 0.0 else "π", float(c), tuple(int(x) for x in u),
                               tuple(float(x) for x in origin), (tuple(int(x) for x in v1), tuple(int(x) for x in v2))))
    return tuple(out)


# ---------------------------------------------------------------------------------------------- C_n sectors
def rotation_sectors(n: int, power: int = 1) -> np.ndarray:
    """The eigenvalues of a rotation ``C_n`` with ``C_n^n = power``, in the order p = 1 … n.

    ``power = +1``: ``Π_p = e^{2πi(p−1)/n}`` (Benalcazar, Li, Hughes, PRB 99, 245151 (2019));
    ``power = −1``: ``e^{iπ(2p−1)/n}`` (spin ½, or π flux).
    """
    n = int(n)
    if n < 1 or power not in (1, -1):
        raise CrystaltopError(f"rotation sectors need n >= 1 and power ±1, got n={n}, power={power}")
    return _sectors(n, int(power)).copy()


@lru_cache(maxsize=64)
def _sectors(n: int, power: int) -> np.ndarray:
    # a handful of (n, power) pairs; every eigenvalue count of every report asks for them again
    p = np.arange(1, n + 1)
    angle = 2 * np.pi * (p - 1) / n if power == 1 else np.pi * (2 * p - 1) / n
    return np.exp(1j * angle)


def _phase_fraction(z: complex) -> Fraction:
    """arg z / π as a fraction in (−1, 1]."""
    f = Fraction(float(np.angle(z) / np.pi)).limit_denominator(DENOMINATOR)
    return Fraction(1) if f == -1 else f


def _phase_text(f: Fraction, sign: str = "") -> str:
    if f == 0:
        return "1"
    if f == 1:
        return "-1"
    if abs(f) == Fraction(1, 2):
        return (sign or ("" if f > 0 else "-")) + "i"
    num = abs(f.numerator)
    core = f"{'' if num == 1 else num}iπ/{f.denominator}"
    return "e^{" + (sign or ("" if f > 0 else "-")) + core + "}"


@lru_cache(maxsize=64)
def sector_names(n: int, power: int = 1) -> tuple[str, ...]:
    """Text of each eigenvalue of :func:`rotation_sectors`, e.g. ``('1', 'i', '-1', '-i')``."""
    return tuple(_phase_text(_phase_fraction(z)) for z in rotation_sectors(n, power))


@lru_cache(maxsize=256)
def pair_name(z: complex) -> str:
    """Text of the complex-conjugate pair {z, z*}, e.g. ``'e^{±iπ/4}'``, ``'±i'``; a real z is named alone."""
    f = _phase_fraction(z)
    return _phase_text(f) if f in (0, 1) else _phase_text(abs(f), "±")


def rotation_power(eigenvalues, n: int, *, tol: float = 1e-4, what: str = "") -> int:
    """``C_n^n`` (+1 or −1) read from the eigenvalues of ``C_n`` on an invariant subspace.

    Raises
    ------
    SymmetryBreakingError
        If the eigenvalues are not all n-th roots of +1, or all of −1 (a representation with a stray phase).
    """
    lam = np.asarray(eigenvalues, dtype=complex)
    power = _power_of(lam, n, tol)
    if power is not None:
        return power
    where = f" {what}" if what else ""
    raise SymmetryBreakingError(
        f"the eigenvalues of the {n}-fold rotation{where} are not n-th roots of +1 or of −1 (their n-th powers are "
        f"{np.round(lam ** int(n), 4).tolist()}): the representation carries a stray phase or is not a rotation")


def count_sectors(eigenvalues, n: int, power: int, *, tol: float = 1e-4) -> np.ndarray:
    """Number of eigenvalues in each sector p = 1 … n of :func:`rotation_sectors` (integer array of length n).

    Raises
    ------
    SymmetryBreakingError
        If an eigenvalue is farther than ``tol`` from every sector.
    """
    lam = np.asarray(eigenvalues, dtype=complex).reshape(-1)
    p, dist = _nearest_sectors(lam, n, power)
    if lam.size and dist.max() > tol:
        bad = lam[int(np.argmax(dist))]
        raise SymmetryBreakingError(f"eigenvalue {complex(np.round(bad, 5))} of a {n}-fold rotation is none of "
                                    f"{', '.join(sector_names(n, power))}")
    return np.bincount(p, minlength=n).astype(int)


def sector_counts(eigenvalues, n: int, *, tol: float = 1e-4) -> tuple[int | None, list | None]:
    """:func:`rotation_power` and the :func:`count_sectors` of the eigenvalues at each of several momenta (a
    sequence of equally long arrays), in one batch: ``(power, [counts per momentum])``. ``(None, None)`` when the
    arrays differ in length or a check fails anywhere (then take the momenta one by one, for the error that names
    the momentum); one power must serve every momentum."""
    if not len(eigenvalues) or len({len(lam) for lam in eigenvalues}) != 1:
        return None, None
    lam = np.asarray(eigenvalues, dtype=complex)  # (momenta, occupied)
    power = _power_of(lam, n, tol)
    if power is None:
        return None, None
    p, dist = _nearest_sectors(lam, n, power)
    if dist.max(initial=0.0) > tol:
        return None, None
    return power, list((p[..., None] == np.arange(n)).sum(axis=1).astype(int))  # per momentum, as a bincount


def _power_of(lam: np.ndarray, n: int, tol: float) -> int | None:
    """+1 or −1 if every eigenvalue is an n-th root of it (within ``tol · n``), else None."""
    powers = lam ** int(n)
    for s in (1, -1):
        if np.all(np.abs(powers - s) < tol * n):
            return s
    return None


def _nearest_sectors(lam: np.ndarray, n: int, power: int) -> tuple[np.ndarray, np.ndarray]:
    """The nearest sector p of each eigenvalue (0-based, any leading shape) and its distance from it."""
    dist = np.abs(lam[..., None] - _sectors(n, power))
    p = np.argmin(dist, axis=-1)
    return p, np.take_along_axis(dist, p[..., None], axis=-1)[..., 0]
