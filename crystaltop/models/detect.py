"""Reading a model's point group from the model itself.

The candidates come from what the model knows about its geometry: for a :class:`LatticeModel` the
operations about its origin that map its decorated lattice onto itself (sites, labels and orbital kinds, via
spglib); for a :class:`BlochFunction` the group its representations generate. A candidate is kept if the
Hamiltonian respects it; the operations kept form a group (products of symmetries are symmetries).
"""

from __future__ import annotations

import numpy as np

from ..errors import CrystaltopError
from ..symmetry import PointGroup, point_group, site_symmetry_group
from .bloch_function import BlochFunction
from .checks import violation_details
from .lattice_model import LatticeModel
from .transformed import TransformedModel

__all__ = ["detect_point_group"]


def _candidates(model) -> tuple:
    if isinstance(model, TransformedModel):
        return _candidates(model.parent)
    if isinstance(model, LatticeModel):
        if not model.sites:
            return tuple(point_group("1").operations)
        species = [(site.label, site.kinds) for site in model.sites]
        codes = {sp: c for c, sp in enumerate(dict.fromkeys(species))}
        positions = np.array([site.position for site in model.sites])
        group = site_symmetry_group(model.lattice, positions, [codes[sp] for sp in species])
        return tuple(group.operations)
    if isinstance(model, BlochFunction):
        group = model.generated_group()
        if group is not None:
            return tuple(group.operations)
    return tuple(point_group("1").operations)


def detect_point_group(model, *, tol: float = 1e-8, samples: int = 16, seed: int = 0) -> PointGroup:
    """The largest point group (about the origin) that the model's geometry allows and its ``H(k)`` respects.

    Parameters
    ----------
    model : BlochModel
    tol : float
        Largest relative violation (as :func:`~crystaltop.models.symmetry_violations`) accepted.
    samples, seed : int
        Random momenta used for the check.

    Returns
    -------
    PointGroup
        In the model's own Cartesian orientation; the trivial group ``1`` for a bare callable.

    Examples
    --------
    >>> from crystaltop.examples import haldane
    >>> detect_point_group(haldane(mass=0.2)).symbol in ("3", "-6")
    True
    """
    kept = []
    for op in _candidates(model):
        try:
            value = violation_details(model, (op,), samples=samples, seed=seed)[op.label].value
        except CrystaltopError:  # the orbitals of a site do not span a representation of op, and similar
            continue
        if value <= tol:
            kept.append(np.asarray(op.matrix, dtype=float))
    return PointGroup.from_matrices(kept)
