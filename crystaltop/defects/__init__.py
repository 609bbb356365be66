"""Defects: finite samples with dislocations and disclinations, and what they bind.

Builders (any model with a real-space form; sizes in cells, Burgers vectors and line directions as integer
vectors of the lattice basis; conventions in :mod:`crystaltop.defects.builders`):

* :func:`flake`, :func:`supercell` -- an open flake of whole cells, a periodic supercell;
* :func:`edge_dislocation` (2D), :func:`dislocation_line` (3D, edge or screw) -- single, or a ±b dipole on a torus;
* :func:`disclination` -- Frank angle ±2π/n and multiples, core at any rotation centre (``"1a"``, ``"1b"``, ...);
* :func:`disclination_dipole` -- +Ω and −Ω: a dislocation split in two;
* :func:`build_sample` -- from a :class:`DefectSpec`, the frozen description the predictions hand over.

Measurements (frozen results with the method and a convergence or error figure):

* :func:`states_near` -> :class:`NearStates` (shift-invert, localisation at the cores and the boundary);
* :func:`local_density`, :func:`localisation`;
* :func:`occupied_density` -> :class:`OccupiedDensity` (dense diagonalisation, or the Chebyshev expansion on local
  vectors with its error bound);
* :func:`bound_charge` -> :class:`BoundCharge` (charge in discs around the cores against the radius),
  :func:`region_charge` (any set of ions);
* :func:`measure_defect` -> :class:`DefectMeasurement` (all of it, per core);
* :func:`split_dislocation` -> :class:`DislocationSplitting` (a disclination dipole swept in separation: which
  core the bound states and the charge follow).

Examples
--------
>>> import numpy as np
>>> from crystaltop.examples import c4_breathing_square
>>> from crystaltop.defects import disclination, bound_charge
>>> sample = disclination(c4_breathing_square(gamma=0.3), np.pi / 2, 14, core="1b", filling=1,
...                       ions=[((0.0, 0.0), 1.0)])
>>> round(bound_charge(sample).value, 2)
0.25
"""

from .builders import (build_sample, disclination, disclination_dipole, dislocation_line, edge_dislocation, flake,
                       rotation_centre_names, supercell)
from .samples import Core, DefectSpec, Sample
from .solvers import (BoundCharge, DefectMeasurement, NearStates, OccupiedDensity, bound_charge, dense_spectrum,
                      local_density, localisation, measure_defect, occupied_density, region_charge, states_near)
from .splitting import DislocationSplitting, SplitCore, SplittingStep, SplitVerdict, split_dislocation

__all__ = [
    "flake",
    "supercell",
    "edge_dislocation",
    "dislocation_line",
    "disclination",
    "disclination_dipole",
    "build_sample",
    "rotation_centre_names",
    "DefectSpec",
    "Core",
    "Sample",
    "states_near",
    "NearStates",
    "local_density",
    "localisation",
    "occupied_density",
    "dense_spectrum",
    "OccupiedDensity",
    "bound_charge",
    "region_charge",
    "BoundCharge",
    "measure_defect",
    "DefectMeasurement",
    "split_dislocation",
    "DislocationSplitting",
    "SplittingStep",
    "SplitCore",
    "SplitVerdict",
]
