"""Models for the crystalline invariants: C3 and C6 obstructed atomic limits, the rocksalt model of SnTe, and random
C_n- and mirror-symmetric models for property tests.

Each factory cites its paper (or says that it is a construction of ours) and states its sign convention. The
obstructed atomic limits place the occupied Wannier functions at a maximal Wyckoff position away from the origin
(Benalcazar, Li, Hughes, Phys. Rev. B 99, 245151 (2019); PHYSICS.md §6 lists their rotation indices).
"""

from __future__ import annotations

import itertools

import numpy as np

from ..errors import CrystaltopError
from ..models import LatticeModel, symmetrized
from ..symmetry import point_group

__all__ = [
    "HEXAGONAL",
    "breathing_kagome",
    "kekule_honeycomb",
    "hexagon_triangle",
    "rocksalt_snte",
    "random_rotation_model",
    "random_mirror_model",
    "ROTATION_SETTINGS",
]

_SQ3 = np.sqrt(3.0)

#: Triangular (hexagonal) lattice, unit lattice constant, a1 along x and 60° between the rows.
HEXAGONAL = np.array([[1.0, 0.0], [0.5, _SQ3 / 2.0]])


def _ring(lattice, radius, angles_deg):
    """Reduced positions of sites on a circle about the origin."""
    t = np.radians(np.asarray(angles_deg, dtype=float))
    cart = radius * np.stack([np.cos(t), np.sin(t)], axis=-1)
    return cart @ np.linalg.inv(lattice)


def _pairs_at(lattice, positions, distance, tol=1e-6, reach=1):
    """Bonds (i, j, cell) of one length, each pair once: site j in ``cell`` to site i in the home cell."""
    dim = lattice.shape[0]
    cells = np.array(list(itertools.product(range(-reach, reach + 1), repeat=dim)), dtype=int)
    vec = (positions[:, None, None, :] - positions[None, :, None, :] - cells[None, None]) @ lattice
    i, j, c = np.nonzero(np.abs(np.linalg.norm(vec, axis=-1) - distance) < tol)
    out = []
    for a, b, r in zip(i, j, cells[c]):
        key = (int(a), int(b), tuple(int(x) for x in r))
        if key < (int(b), int(a), tuple(-int(x) for x in r)):
            out.append(key)
    return out


def _two_hopping_model(positions, lattice, distance_intra, distance_inter, t_intra, t_inter, name):
    """s orbitals at ``positions``; bonds of the first length inside the cell get ``−t_intra``, bonds of the second
    length between cells get ``−t_inter`` (negative amplitudes: the bonding combinations lie lowest)."""
    model = LatticeModel(lattice, name=name)
    for p in positions:
        model.add_site(p, "s")
    for i, j, cell in _pairs_at(lattice, positions, distance_intra):
        if not any(cell):
            model.add_hopping(-t_intra, i, j, cell)
    for i, j, cell in _pairs_at(lattice, positions, distance_inter):
        if any(cell):
            model.add_hopping(-t_inter, i, j, cell)
    return model


def breathing_kagome(t_up: float = 0.2, t_down: float = 1.0) -> LatticeModel:
    """Breathing kagome lattice (M. Ezawa, Phys. Rev. Lett. 120, 026801 (2018)): a C3 obstructed atomic limit.

    Three s sites per cell on a triangle about the origin (Wyckoff 1a; azimuths 90°, 210°, 330°, distance 1/(2√3)
    on :data:`HEXAGONAL`); its bonds carry ``−t_up``, the bonds of the triangles between cells ``−t_down``. Those
    are centred at Wyckoff 1b of p3 — (1/3, 2/3) in the 120° hexagonal axes of the International Tables, the
    Cartesian point (0, 1/√3), reduced (2/3, 2/3) on :data:`HEXAGONAL`. For ``t_down > t_up > 0`` the lowest band is
    their bonding state: at filling 1 the Wannier centre sits at 1b and χ^(3) = (−1, 1) (PHYSICS.md §6, Benalcazar,
    Li, Hughes 2019), with K = (4π/3)(1, 0) (crystaltop.kspace.high_symmetry). The polarization is not zero, so the
    corner charge depends on the flake's centre: −e/3 (≡ 2e/3) on a triangle of whole cells about the origin, e/3
    about 1b (tests/defects/test_corner_flakes.py). The gap closes at ``t_up = t_down``.

    Returns
    -------
    LatticeModel
        Three states, filling 1, time-reversal symmetric, point group ``3m`` (mirror normals x, 60°, 120°).
    """
    pos = _ring(HEXAGONAL, 1.0 / (2.0 * _SQ3), [90.0, 210.0, 330.0])
    return _two_hopping_model(pos, HEXAGONAL, 0.5, 0.5, t_up, t_down,
                              f"breathing kagome, t_up={t_up:g}, t_down={t_down:g}")


def kekule_honeycomb(t_intra: float = 0.3, t_inter: float = 1.0) -> LatticeModel:
    """Honeycomb lattice with a Kekulé (breathing-hexagon) texture (L.-H. Wu, X. Hu, Phys. Rev. Lett. 114, 223901
    (2015); a C6 obstructed atomic limit in Benalcazar, Li, Hughes 2019).

    Six s sites per cell on a hexagon of radius 1/3 about the origin (azimuths 0°, 60°, … on :data:`HEXAGONAL`):
    the bonds of the hexagon carry ``−t_intra``, those between neighbouring hexagons ``−t_inter`` (all bonds have
    length 1/3, the graphene geometry). For ``t_inter > t_intra > 0`` the three lowest bands are the bonding states
    of the inter-hexagon bonds, centred at 3c = (1/2, 0), (0, 1/2), (1/2, 1/2): at filling 3, χ^(6) = (−2, 0) and
    corner charge e/2 (PHYSICS.md §6); the gap closes at ``t_intra = t_inter``.

    Returns
    -------
    LatticeModel
        Six states, filling 3, time-reversal symmetric, point group ``6/mmm``.
    """
    pos = _ring(HEXAGONAL, 1.0 / 3.0, np.arange(6) * 60.0)
    return _two_hopping_model(pos, HEXAGONAL, 1.0 / 3.0, 1.0 / 3.0, t_intra, t_inter,
                              f"Kekule honeycomb, t_intra={t_intra:g}, t_inter={t_inter:g}")


def hexagon_triangle(t_hexagon: float = 0.3, t_triangle: float = 1.0, radius: float = 0.25) -> LatticeModel:
    """A C6 obstructed atomic limit with its Wannier centres at 2b (a construction of ours; the index values it
    must give, χ^(6) = (0, −2) and |Q| = e/3, are those of Benalcazar, Li, Hughes 2019 via PHYSICS.md §6; the sign,
    Q = −e/3 with ions at 1a, is measured on a hexagonal flake in tests/defects/test_corner_flakes.py).

    Six s sites per cell on a hexagon of radius ``radius`` about the origin at azimuths 30°, 90°, …; each points at a
    2b position ((1/3, 1/3) or (2/3, 2/3) reduced, distance 1/√3), around which three sites of three neighbouring
    cells form a triangle. Hexagon bonds carry ``−t_hexagon``, triangle bonds ``−t_triangle``. For
    ``t_triangle ≫ t_hexagon`` the two lowest bands are the bonding states of the two triangles: filling 2.

    Returns
    -------
    LatticeModel
        Six states, filling 2, time-reversal symmetric, point group ``6/mmm``.
    """
    if not 0.0 < radius < 1.0 / _SQ3:
        raise CrystaltopError(f"radius {radius} must lie between 0 and 1/√3 (the distance of the 2b positions)")
    pos = _ring(HEXAGONAL, radius, 30.0 + np.arange(6) * 60.0)
    return _two_hopping_model(pos, HEXAGONAL, radius, 1.0 - _SQ3 * radius, t_hexagon, t_triangle,
                              f"hexagon-triangle C6 lattice, t_hex={t_hexagon:g}, t_tri={t_triangle:g}")


# ---------------------------------------------------------------------------------------------- SnTe
#: Levi-Civita symbol, for the p-orbital angular momentum (L_k)_{ab} = −i ε_{kab}
_EPS = np.zeros((3, 3, 3))
for _a, _b, _c in itertools.permutations(range(3)):
    _EPS[_a, _b, _c] = np.linalg.det(np.eye(3)[[_a, _b, _c]])
_PAULI = np.array([[[0, 1], [1, 0]], [[0, -1j], [1j, 0]], [[1, 0], [0, -1]]], dtype=complex)


def rocksalt_snte(mass: float = 1.65, t12: float = 0.9, t11: float = 0.5, t22: float = -0.5,
                  soc1: float = 0.7, soc2: float = 0.7) -> LatticeModel:
    """The p-orbital tight-binding model of rocksalt SnTe (T. H. Hsieh, H. Lin, J. Liu, W. Duan, A. Bansil, L. Fu,
    Nat. Commun. 3, 982 (2012)); parameters and their signs FROM MEMORY.

    ``H = m Σ_j (−1)^j Σ_{r,α} c†_{jα}(r) c_{jα}(r) + Σ_{⟨r,r'⟩} t_{jj'} c†_{jα}(r) d̂_α d̂_β c_{j'β}(r')
    + Σ_j λ_j Σ_r c†_j(r) L·S c_j(r)``: p orbitals with spin on the two fcc sublattices, Sn (j = 1, onsite +m) at
    the origin and Te (j = 2, onsite −m) at (a/2)(1, 1, 1) ≡ (a/2)(1, 0, 0); σ-type hoppings along the bond
    direction d̂ between nearest neighbours (t12) and next-nearest neighbours of the same sublattice (t11, t22);
    ``L·S`` with ``(L_k)_{αβ} = −i ε_{kαβ}`` and ``S = σ/2``. Cubic constant a = 1, fcc vectors
    ``(0, 1, 1)/2, (1, 0, 1)/2, (1, 1, 0)/2``.

    The paper finds the band gap inverted at the four L points and the mirror Chern number n_M = −2 on the
    {110} mirror planes (the plane through Γ and two L points); which sign of ``m`` is the inverted one depends on the
    sign conventions, which is why the tests compare magnitudes and check the normal phase on the other side.

    Returns
    -------
    LatticeModel
        Twelve states, filling 6, time-reversal symmetric, point group ``m-3m`` about the Sn site.
    """
    lattice = 0.5 * np.array([[0.0, 1.0, 1.0], [1.0, 0.0, 1.0], [1.0, 1.0, 0.0]])
    model = LatticeModel(lattice, spinful=True, name=f"rocksalt SnTe (Hsieh et al.), m={mass:g}")
    sites = [model.add_site([0.0, 0.0, 0.0], "px py pz", label="Sn"),
             model.add_site([0.5, 0.5, 0.5], "px py pz", label="Te")]
    positions = np.array([[0.0, 0.0, 0.0], [0.5, 0.5, 0.5]])
    for j, (orbitals, sign) in enumerate(zip(sites, (1.0, -1.0))):
        for o in orbitals:
            model.set_onsite(o, sign * mass)
        lam = (soc1, soc2)[j]
        for a, b in itertools.combinations(range(3), 2):  # λ L·S between different p orbitals of one site
            block = lam * 0.5 * sum(-1j * _EPS[k, a, b] * _PAULI[k] for k in range(3))
            model.add_hopping(block, orbitals[a], orbitals[b])
    amplitudes = {(0, 1): t12, (1, 0): t12, (0, 0): t11, (1, 1): t22}
    for distance in (0.5, 1.0 / np.sqrt(2.0)):
        for i, j, cell in _pairs_at(lattice, positions, distance):
            t = amplitudes[(i, j)]
            if (distance < 0.6) != (i != j):
                continue  # nearest neighbours are Sn–Te, next-nearest are of one sublattice
            d = positions[i] @ lattice - positions[j] @ lattice - np.asarray(cell) @ lattice
            d = d / np.linalg.norm(d)
            for a in range(3):
                for b in range(3):
                    if abs(d[a] * d[b]) > 1e-12:
                        model.add_hopping(t * d[a] * d[b], sites[i][a], sites[j][b], cell)
    return model


# ---------------------------------------------------------------------------------------------- random models
#: (lattice, orbital choices at the origin, extra orbits of sites) per rotation order: s, p and d orbitals carry
#: the angular momenta 0, ±1, ±2 about z, so their C_n eigenvalues differ.
ROTATION_SETTINGS = {
    2: (np.array([[1.0, 0.0], [0.25, 1.1]]), ("s px", "s dxy", "px py"), [[(0.5, 0.0)], [(0.5, 0.5)]]),
    4: (np.eye(2), ("s px py", "s dxy", "px py dx2-y2"), [[(0.5, 0.5)], [(0.5, 0.0), (0.0, 0.5)]]),
    3: (HEXAGONAL, ("s px py", "s dxy dx2-y2", "px py"), [[(1 / 3, 1 / 3)], [(2 / 3, 2 / 3)]]),
    6: (HEXAGONAL, ("s px py", "s dxy dx2-y2", "px py"), [[(1 / 3, 1 / 3), (2 / 3, 2 / 3)]]),
}


def _random_bonds(model, rng, n_bonds, scale, spinful):
    for orbital in range(model.n_orbitals):
        if spinful:
            h = rng.normal(size=(2, 2)) + 1j * rng.normal(size=(2, 2))
            model.set_onsite(orbital, h + h.conj().T)
        else:
            model.set_onsite(orbital, float(rng.normal()))
    for _ in range(n_bonds):
        i, j = (int(x) for x in rng.integers(0, model.n_orbitals, size=2))
        cell = rng.integers(-1, 2, size=model.dim)
        if i == j and not cell.any():
            cell[0] = 1
        if spinful:
            value = scale * (rng.normal(size=(2, 2)) + 1j * rng.normal(size=(2, 2)))
        else:
            value = scale * complex(rng.normal(), rng.normal())
        model.add_hopping(value, i, j, cell)


def random_rotation_model(seed: int, n: int, *, orbitals: int = 0, extra_site: int | None = None,
                          n_bonds: int = 8, scale: float = 0.7):
    """A random spinless model with the rotation group C_n (no mirrors, no time reversal), for property tests.

    Random complex onsite terms and bonds between the orbitals of :data:`ROTATION_SETTINGS` (choice ``orbitals`` at
    the origin, optionally one orbit ``extra_site`` of s sites), averaged over ``C_n``
    (:func:`crystaltop.models.symmetrized`). Invented data for tests, not a published model.

    Returns
    -------
    BlochFunction
        Symmetric under ``point_group(str(n))``; its Chern numbers are generically non-zero.
    """
    if n not in ROTATION_SETTINGS:
        raise CrystaltopError(f"random rotation models exist for n = 2, 3, 4, 6, not {n}")
    lattice, choices, orbits = ROTATION_SETTINGS[n]
    rng = np.random.default_rng(seed)
    model = LatticeModel(lattice, name=f"random C{n} model {seed}")
    model.add_site([0.0, 0.0], choices[orbitals % len(choices)])
    if extra_site is not None:
        for p in orbits[extra_site % len(orbits)]:
            model.add_site(p, "s")
    _random_bonds(model, rng, n_bonds, scale, spinful=False)
    return symmetrized(model, point_group(str(n)), name=f"random C{n} model {seed} (symmetrized)")


def random_mirror_model(seed: int, *, spinful: bool = False, n_bonds: int = 8, scale: float = 0.7):
    """A random 2D model with the mirror mz (normal z) and nothing else, for property tests.

    Spinless: orbitals s and pz at the origin and s at (1/2, 0) (even s, odd pz under mz); spin ½: s orbitals at the
    origin and at (1/2, 0), mz acting on spin as −iσ_z. Random bonds averaged over ``m`` (the group {1, mz}). Invented
    data for tests, not a published model.
    """
    rng = np.random.default_rng(seed)
    model = LatticeModel(np.array([[1.0, 0.0], [0.3, 1.2]]), spinful=spinful, name=f"random mz model {seed}")
    model.add_site([0.0, 0.0], "s" if spinful else "s pz")
    model.add_site([0.5, 0.0], "s")
    _random_bonds(model, rng, n_bonds, scale, spinful)
    return symmetrized(model, point_group("m"), name=f"random mz model {seed} (symmetrized)")
