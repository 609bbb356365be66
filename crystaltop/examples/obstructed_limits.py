"""A C6-symmetric obstructed atomic limit for defect checks: the Kekulé-textured honeycomb lattice.

Honeycomb lattice with the √3 × √3 Kekulé texture (a triangular lattice of hexagonal molecules): six s sites
per cell on a hexagon of radius 1/3 about the cell centre (Wyckoff 1a), hopping ``−t_intra`` around the hexagon and
``−t_inter`` on the bond that joins the site pointing at a neighbouring cell to the facing site of that cell.
It is the lattice of the photonic mid-gap defect modes of J. Noh, W. A. Benalcazar, S. Huang, M. J. Collins,
K. P. Chen, T. L. Hughes, M. C. Rechtsman, Nat. Photonics 12, 408 (2018), and the C6 example of T. Li, P. Zhu,
W. A. Benalcazar, T. L. Hughes, Phys. Rev. B 101, 115115 (2020) (from memory: the paper's notation and
parameter values are not reproduced here).

At half filling (3 of 6 bands) with ``t_inter > t_intra`` the occupied Wannier functions are the bonding orbitals
of the inter-cell bonds, centred on the bond midpoints (Wyckoff 3c): an obstructed atomic limit with
χ^(6) = (−2, 0) and corner charge e/2 (PHYSICS.md §6, from memory). With ``t_intra > t_inter`` they sit on the
hexagons (1a): a trivial atomic insulator. The gap closes at ``t_intra = t_inter`` (graphene, its Dirac points
folded onto Γ).
"""

from __future__ import annotations

import numpy as np

from ..models import LatticeModel

__all__ = ["kekule_honeycomb", "KEKULE_LATTICE"]

#: Triangular lattice of the Kekulé cells (lattice constant 1, 60° between the vectors), as
#: :data:`crystaltop.examples.published.HONEYCOMB`.
KEKULE_LATTICE = np.array([[1.0, 0.0], [0.5, np.sqrt(3.0) / 2.0]])


def kekule_honeycomb(t_intra: float = 0.5, t_inter: float = 1.0) -> LatticeModel:
    """The Kekulé-textured honeycomb model (see the module docstring).

    Parameters
    ----------
    t_intra : float
        Hopping magnitude around each hexagon (the amplitude is ``−t_intra``).
    t_inter : float
        Hopping magnitude on the bonds between hexagons (amplitude ``−t_inter``).

    Returns
    -------
    LatticeModel
        Six states, filling 3, spinless, time-reversal symmetric (real hoppings), respects ``6/mmm`` about the
        hexagon centre (the origin).

    Examples
    --------
    >>> import numpy as np
    >>> model = kekule_honeycomb(0.5, 1.0)
    >>> bool(np.all(np.linalg.eigvalsh(model.hamiltonian(np.zeros(2)))[:3] < 0))
    True
    """
    model = LatticeModel(KEKULE_LATTICE, name=f"Kekule honeycomb, t_intra={t_intra:g}, t_inter={t_inter:g}")
    inv = np.linalg.inv(KEKULE_LATTICE)
    angles = np.arange(6) * np.pi / 3.0  # vertex j points at the neighbouring cell in direction 60° j
    radius = 1.0 / 3.0
    sites = []
    for theta in angles:
        cart = radius * np.array([np.cos(theta), np.sin(theta)])
        sites.append(model.add_site(cart @ inv, "s")[0])
    for j in range(6):
        model.add_hopping(-t_intra, sites[j], sites[(j + 1) % 6])
    # vertex j of the home cell faces vertex j + 3 of the cell at (direction of 60° j); each such bond once
    for j in range(3):
        direction = np.array([np.cos(angles[j]), np.sin(angles[j])])
        cell = np.rint(direction @ inv).astype(int)
        model.add_hopping(-t_inter, sites[(j + 3) % 6], sites[j], -cell)
    return model
