"""Defects: finite samples with dislocations and disclinations, and what they bind."""
from .builders import (build_sample, disclination, disclination_dipole, dislocation_line, edge_dislocation, flake,
                       rotation_centre_names, supercell)
from .samples import Core, DefectSpec, Sample
from .solvers import (BoundCharge, DefectMeasurement, NearStates, OccupiedDensity, bound_charge, local_density,
                      localisation, measure_defect, occupied_density, region_charge, states_near)
