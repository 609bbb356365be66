"""Requests the builders refuse, each with one clear DefectGeometryError."""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.defects import (bound_charge, disclination, disclination_dipole, dislocation_line, edge_dislocation,
                                flake)
from crystaltop.errors import DefectGeometryError
from crystaltop.examples import bernevig_hughes_zhang, c4_breathing_square, qi_wu_zhang, stacked_layers
from crystaltop.models import LatticeModel


def test_a_burgers_vector_that_is_not_a_lattice_vector_is_refused():
    with pytest.raises(DefectGeometryError, match="not a lattice vector"):
        edge_dislocation(bernevig_hughes_zhang(m=6.0), (0.5, 0.0), 16)


def test_a_zero_burgers_vector_is_refused():
    with pytest.raises(DefectGeometryError, match="must not be zero"):
        edge_dislocation(bernevig_hughes_zhang(m=6.0), (0, 0), 16)


def test_a_frank_angle_the_square_lattice_lacks_is_refused():
    with pytest.raises(DefectGeometryError, match="3-fold rotation .* lattice .* lacks"):
        disclination(c4_breathing_square(gamma=0.3), 2 * np.pi / 3, 12, filling=1)


def test_a_frank_angle_that_is_no_crystallographic_rotation_is_refused():
    with pytest.raises(DefectGeometryError, match="not a multiple of 2π/n"):
        disclination(c4_breathing_square(gamma=0.3), 2 * np.pi / 5, 12, filling=1)


def c4_breaking_model() -> LatticeModel:
    """Square lattice, s orbital, different hopping along x and y: C2 but not C4, and gapped at half filling."""
    model = LatticeModel(np.eye(2), name="anisotropic square")
    a, = model.add_site([0.0, 0.0], "s")
    b, = model.add_site([0.0, 0.0], "s", label="B")
    model.set_onsite(a, -2.0)
    model.set_onsite(b, 2.0)
    model.add_hopping(0.5, a, a, [1, 0])
    model.add_hopping(0.2, a, a, [0, 1])
    model.add_hopping(-0.5, b, b, [1, 0])
    model.add_hopping(-0.2, b, b, [0, 1])
    return model


def test_a_quarter_turn_for_a_model_that_breaks_it_is_refused():
    with pytest.raises(DefectGeometryError, match="breaks the 4-fold rotation"):
        disclination(c4_breaking_model(), np.pi / 2, 12)


def test_the_same_model_accepts_a_half_turn():
    assert disclination(c4_breaking_model(), np.pi, 12).sectors == 1


def test_a_core_that_is_not_a_rotation_centre_is_refused():
    with pytest.raises(DefectGeometryError, match="not a 4-fold rotation centre"):
        disclination(c4_breathing_square(gamma=0.3), np.pi / 2, 12, core=(0.5, 0.0), filling=1)


def test_an_ambiguous_core_type_is_refused_with_the_choices():
    with pytest.raises(DefectGeometryError, match="ambiguous"):
        disclination(c4_breathing_square(gamma=0.3), np.pi / 2, 12, core="plaquette", filling=1)


def test_a_sample_too_small_for_the_defect_is_refused():
    with pytest.raises(DefectGeometryError, match="too small"):
        disclination(c4_breathing_square(gamma=0.3), np.pi / 2, 6, filling=1)
    with pytest.raises(DefectGeometryError, match="too small"):
        edge_dislocation(bernevig_hughes_zhang(m=6.0), (1, 0), 12, separation=10)
    with pytest.raises(DefectGeometryError, match="too small"):
        disclination_dipole(c4_breathing_square(gamma=0.3), np.pi / 2, (3.0, 3.0), 10, filling=1)


def test_a_disc_that_reaches_the_edge_is_refused():
    sample = disclination(c4_breathing_square(gamma=0.3), np.pi / 2, 12, core="1b", filling=1)
    with pytest.raises(DefectGeometryError, match="open boundary"):
        bound_charge(sample, radii=[2.5, 5.5])


def test_a_metallic_model_is_refused():
    """QWZ at m = 2 closes its gap at M; the C4 SSH model at filling 2 has overlapping bands."""
    with pytest.raises(DefectGeometryError, match="metallic"):
        flake(qi_wu_zhang(m=2.0), "parallelogram", 8)
    with pytest.raises(DefectGeometryError, match="metallic"):
        disclination(c4_breathing_square(gamma=0.3), np.pi / 2, 12, filling=2)


def test_a_mixed_dislocation_line_is_refused_for_either_kind():
    model = stacked_layers(bernevig_hughes_zhang(m=2.0), 0.05)
    with pytest.raises(DefectGeometryError, match="perpendicular"):
        dislocation_line(model, (1, 0, 1), (0, 0, 1), 10, "edge")
    with pytest.raises(DefectGeometryError, match="parallel"):
        dislocation_line(model, (1, 0, 1), (0, 0, 1), 10, "screw")
    with pytest.raises(DefectGeometryError, match="primitive"):
        dislocation_line(model, (0, 0, 2), (0, 0, 2), 10, "screw")
