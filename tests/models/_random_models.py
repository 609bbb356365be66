"""Random tight-binding models for property tests: structure drawn by hypothesis, amplitudes from a seeded rng."""

from __future__ import annotations

import numpy as np
from hypothesis import strategies as st

from crystaltop.models import LatticeModel

ORBITAL_SETS = ("s", "p", "d", "px py", "s px py", "dxy dx2-y2", "s pz")

#: Generic lattices (no symmetry beyond inversion) per dimension.
GENERIC_LATTICES = {
    1: np.array([[1.3]]),
    2: np.array([[1.0, 0.1], [0.35, 1.2]]),
    3: np.array([[1.0, 0.1, 0.0], [0.3, 1.1, 0.2], [0.1, -0.2, 0.9]]),
}

_SQ3 = np.sqrt(3.0)
_HEX2 = np.array([[1.0, 0.0], [0.5, _SQ3 / 2]])
_HEX3 = np.array([[1.0, 0.0, 0.0], [0.5, _SQ3 / 2, 0.0], [0.0, 0.0, 1.6]])
_TETRA = np.diag([1.0, 1.0, 1.4])
_ORTHO = np.diag([1.0, 1.3, 1.7])

#: (group symbol, lattice, orbits): each orbit is a list of reduced positions sharing one orbital set.
SYMMETRIC_SETTINGS = {
    "4mm-square": ("4mm", np.eye(2), [[(0.0, 0.0)], [(0.5, 0.0), (0.0, 0.5)], [(0.5, 0.5)]]),
    "4-square": ("4", np.eye(2), [[(0.0, 0.0)], [(0.5, 0.5)]]),
    "6mm-honeycomb": ("6mm", _HEX2, [[(0.0, 0.0)], [(1 / 3, 1 / 3), (2 / 3, 2 / 3)]]),
    "6/mmm-kagome": ("6/mmm", _HEX2, [[(0.5, 0.0), (0.0, 0.5), (0.5, 0.5)]]),
    "3m-honeycomb": ("3m", _HEX2, [[(1 / 3, 1 / 3)], [(2 / 3, 2 / 3)]]),
    "2mm-rectangular": ("mm2", np.diag([1.0, 1.4]), [[(0.0, 0.0)], [(0.5, 0.0)]]),
    "-1-oblique": ("-1", GENERIC_LATTICES[2], [[(0.0, 0.0)], [(0.2, 0.1), (-0.2, -0.1)]]),
    "-1-chain": ("-1", GENERIC_LATTICES[1], [[(0.0,)], [(0.3,), (-0.3,)]]),
    "mmm-chain": ("mmm", np.array([[1.0]]), [[(0.0,)], [(0.25,), (-0.25,)]]),
    "m-3m-cubic": ("m-3m", np.eye(3), [[(0.0, 0.0, 0.0)], [(0.5, 0.5, 0.5)]]),
    "4/mmm-tetragonal": ("4/mmm", _TETRA, [[(0.0, 0.0, 0.0)], [(0.5, 0.0, 0.0), (0.0, 0.5, 0.0)]]),
    "6/mmm-hexagonal": ("6/mmm", _HEX3, [[(0.0, 0.0, 0.0)], [(0.0, 0.0, 0.5)]]),
    "-3m-hexagonal": ("-3m", _HEX3, [[(1 / 3, 1 / 3, 0.25), (2 / 3, 2 / 3, -0.25)]]),
    "mmm-orthorhombic": ("mmm", _ORTHO, [[(0.0, 0.0, 0.0)], [(0.5, 0.5, 0.0)]]),
}


def _random_block(rng, spinful: bool, scale: float = 1.0):
    if spinful:
        return scale * (rng.normal(size=(2, 2)) + 1j * rng.normal(size=(2, 2)))
    return scale * complex(rng.normal(), rng.normal())


def _random_onsite(rng, spinful: bool):
    if spinful:
        a = rng.normal(size=(2, 2)) + 1j * rng.normal(size=(2, 2))
        return a + a.conj().T
    return float(rng.normal())


def fill_randomly(model: LatticeModel, rng, n_bonds: int, reach: int = 1) -> LatticeModel:
    """Add random onsite terms and ``n_bonds`` random bonds (cells within ``reach``)."""
    for orbital in range(model.n_orbitals):
        model.set_onsite(orbital, _random_onsite(rng, model.spinful))
    for _ in range(n_bonds):
        i, j = (int(x) for x in rng.integers(0, model.n_orbitals, size=2))
        cell = rng.integers(-reach, reach + 1, size=model.dim)
        if i == j and not cell.any():
            cell[0] = 1
        model.add_hopping(_random_block(rng, model.spinful, 0.5), i, j, cell)
    return model


@st.composite
def random_lattice_models(draw, dims=(1, 2, 3)):
    """A LatticeModel on a generic lattice: 1-3 sites of random orbital sets, random onsite terms and bonds."""
    dim = draw(st.sampled_from(dims))
    spinful = draw(st.booleans())
    n_sites = draw(st.integers(1, 3))
    orbitals = draw(st.lists(st.sampled_from(ORBITAL_SETS), min_size=n_sites, max_size=n_sites))
    n_bonds = draw(st.integers(0, 8))
    rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
    model = LatticeModel(GENERIC_LATTICES[dim], spinful=spinful, name="random")
    for kinds in orbitals:
        model.add_site(rng.uniform(-1, 1, size=dim), kinds)
    return fill_randomly(model, rng, n_bonds)


@st.composite
def symmetric_settings(draw, names=None):
    """(setting name, group symbol, LatticeModel with random bonds) on a lattice and sites that the group fits."""
    name = draw(st.sampled_from(sorted(names or SYMMETRIC_SETTINGS)))
    symbol, lattice, orbits = SYMMETRIC_SETTINGS[name]
    spinful = draw(st.booleans())
    kinds = draw(st.lists(st.sampled_from(("s", "p", "d", "s p", "s d")), min_size=len(orbits), max_size=len(orbits)))
    rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
    model = LatticeModel(lattice, spinful=spinful, name=name)
    for label, (orbit, orbital_set) in enumerate(zip(orbits, kinds)):
        for position in orbit:
            model.add_site(position, orbital_set, label=f"orbit{label}")
    return name, symbol, fill_randomly(model, rng, n_bonds=draw(st.integers(1, 6)))


def random_unitary(n: int, rng) -> np.ndarray:
    """Haar-random unitary (QR of a complex Gaussian matrix, phases of R removed)."""
    z = rng.normal(size=(n, n)) + 1j * rng.normal(size=(n, n))
    q, r = np.linalg.qr(z)
    return q * (np.diag(r) / np.abs(np.diag(r)))


def kramers_safe_shifts(model, rng, reach: int = 2) -> np.ndarray:
    """Random integer shifts per basis state, equal for the two spin states of an orbital."""
    per = 2 if model.spinful else 1
    shifts = rng.integers(-reach, reach + 1, size=(model.n_states // per, model.dim))
    return np.repeat(shifts, per, axis=0)
