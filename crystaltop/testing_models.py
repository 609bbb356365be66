"""Random symmetric models for property tests of invariant plugins (a companion of :mod:`crystaltop.testing`).

:func:`random_inversion_tr_model` draws a spin-1/2 tight-binding model on a generic (oblique / triclinic) lattice
with random onsite terms and bonds, then averages it over inversion and time reversal
(:func:`crystaltop.models.symmetrized`), so that it respects exactly the point group ``-1`` and ``T = iσ_y K``.
Orbitals of both parities (s and p) at inversion centres give band inversions, so both Z2 phases occur.
"""

from __future__ import annotations

import numpy as np

from .models import LatticeModel, symmetrized
from .symmetry import point_group

__all__ = ["GENERIC_LATTICES", "ORBITAL_CHOICES", "random_inversion_tr_model", "direct_gap"]

#: Lattices without any symmetry beyond inversion.
GENERIC_LATTICES = {
    2: np.array([[1.0, 0.1], [0.35, 1.2]]),
    3: np.array([[1.0, 0.1, 0.0], [0.3, 1.1, 0.2], [0.1, -0.2, 0.9]]),
}

#: Orbital sets at the origin (an inversion centre); each gives an even number of orbitals, so that half filling
#: is an even number of bands (Kramers pairs).
ORBITAL_CHOICES = ("s pz", "s px", "px py", "s px py pz", "s s")


def random_inversion_tr_model(seed: int, dim: int = 2, orbitals: str = "s pz", *, n_bonds: int = 6,
                              hopping: float = 0.6, pair: bool = False, mass: float = 0.0):
    """A random spinful model symmetric under inversion (about the origin) and time reversal.

    Parameters
    ----------
    seed : int
        Seed of the amplitudes.
    dim : {2, 3}
    orbitals : str
        Orbital kinds at the origin (e.g. ``"s pz"``); ``"s s"`` puts s orbitals at the origin and at (1/2, ...), both inversion centres.
    n_bonds : int
        Number of random bonds (nearest cells, before symmetrization).
    hopping : float
        Scale of the random hopping matrices (spin-dependent: spin-orbit coupling included).
    pair : bool
        Also put an s orbital at ±x₀ (a pair of sites exchanged by inversion).
    mass : float
        Onsite energy ``+mass`` on even (s, d) and ``−mass`` on odd (p) orbitals: sweeping it inverts bands of
        opposite parity, so that both Z2 phases are drawn often.

    Returns
    -------
    BlochFunction
        ``n`` states (``n/2`` even), group ``-1``, ``U_T = 1 ⊗ iσ_y``. Half filling is ``n // 2``.
    """
    rng = np.random.default_rng(seed)
    model = LatticeModel(GENERIC_LATTICES[dim], spinful=True, name=f"random -1 with T, seed {seed}")
    kinds = orbitals.split()
    if kinds == ["s", "s"]:
        model.add_site(np.zeros(dim), "s", label="A")
        model.add_site(np.full(dim, 0.5), "s", label="B")
    else:
        model.add_site(np.zeros(dim), orbitals)
    if pair:
        x0 = rng.uniform(0.1, 0.4, size=dim)
        model.add_site(x0, "s", label="P")
        model.add_site(-x0, "s", label="P")
    n_orb = model.n_orbitals
    parity = [-1.0 if kind.startswith("p") else 1.0 for kind in model.orbital_kinds]
    for orbital in range(n_orb):
        a = rng.normal(size=(2, 2)) + 1j * rng.normal(size=(2, 2))
        energy = 1.5 * rng.normal() + mass * parity[orbital]
        model.set_onsite(orbital, energy * np.eye(2) + 0.2 * (a + a.conj().T))
    for _ in range(n_bonds):
        i, j = (int(v) for v in rng.integers(0, n_orb, size=2))
        cell = rng.integers(-1, 2, size=dim)
        if i == j and not cell.any():
            cell[0] = 1
        block = hopping * (rng.normal(size=(2, 2)) + 1j * rng.normal(size=(2, 2)))
        model.add_hopping(block, i, j, cell)
    return symmetrized(model, point_group("-1"), time_reversal=True, name=model.name)


def direct_gap(model, filling: int, n: int = 12, *, samples: int = 200, seed: int = 0) -> float:
    """Smallest direct gap above ``filling`` bands over an ``n^dim`` mesh and random points (a quick screen)."""
    rng = np.random.default_rng(seed)
    grids = np.meshgrid(*[np.arange(n) / n] * model.dim, indexing="ij")
    k = np.concatenate([np.stack(grids, -1).reshape(-1, model.dim), rng.random((samples, model.dim))])
    e = np.linalg.eigvalsh(model.hamiltonian(k))
    return float((e[:, filling] - e[:, filling - 1]).min())
