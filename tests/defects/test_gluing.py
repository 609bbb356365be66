"""The cut-and-glue construction: what the samples are, checked against the perfect lattice and against each other.

No outside source: these pin the geometry down. A disclination with all n sectors glued back must be the perfect
flake, whatever the orbitals (s, p, spinful complex BHZ states): that is only true if every seam bond carries the
representation of the rotation on orbitals and spin, with the full turn's sign (−1 for spin ½) compensated.
"""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.defects import (DefectSpec, build_sample, disclination, disclination_dipole, dislocation_line,
                                edge_dislocation, flake, rotation_centre_names, supercell)
from crystaltop.defects import builders
from crystaltop.examples import bernevig_hughes_zhang, c4_breathing_square, kane_mele
from crystaltop.examples.obstructed_limits import kekule_honeycomb
from crystaltop.models import LatticeModel, symmetry_violations
from crystaltop.symmetry import point_group


def spectrum(sample) -> np.ndarray:
    return np.sort(np.linalg.eigvalsh(sample.hamiltonian.toarray()))


def p_orbital_square(t_sigma: float = 1.0, t_pi: float = -0.3, t_sp: float = 0.6) -> LatticeModel:
    """s, px, py on the square lattice with σ, π and s–p bonds; C4 maps px to py, so seams must rotate the
    orbitals. The two p bands (filling 2) are gapped from the s band at +8."""
    model = LatticeModel(np.eye(2), name="s and p orbitals, square")
    s, px, py = model.add_site([0.0, 0.0], "s px py")
    model.set_onsite(s, 8.0)
    model.add_hopping(-0.5, s, s, [1, 0])
    model.add_hopping(-0.5, s, s, [0, 1])
    model.add_hopping(t_sigma, px, px, [1, 0])
    model.add_hopping(t_pi, py, py, [1, 0])
    model.add_hopping(t_pi, px, px, [0, 1])
    model.add_hopping(t_sigma, py, py, [0, 1])
    # the p lobe pointing at the neighbour: + towards +x, − towards −x
    model.add_hopping(t_sp, s, px, [1, 0])
    model.add_hopping(-t_sp, s, px, [-1, 0])
    model.add_hopping(t_sp, s, py, [0, 1])
    model.add_hopping(-t_sp, s, py, [0, -1])
    return model


def perfect_by_sectors(model, fold, core, size, filling=None):
    """All ``fold`` sectors glued: the construction of a disclination with k = 0."""
    prep = builders._prepare(model, filling, None)
    _, _, op, centre = builders._fold_for(prep.form, 2 * np.pi / fold, core)
    return builders._sector_sample(prep, DefectSpec("disclination", size), fold, 0, op, centre, size), centre


@pytest.mark.parametrize("name, model, fold, core, filling", [
    ("BHZ, spinful complex orbitals, site core", bernevig_hughes_zhang(m=6.0), 4, "1a", None),
    ("BHZ, plaquette core", bernevig_hughes_zhang(m=6.0), 4, "1b", None),
    ("s and p orbitals", p_orbital_square(), 4, "1a", 2),
    ("C4 breathing square", c4_breathing_square(gamma=0.3), 4, "1b", 1),
    ("Kane-Mele with Rashba, six sectors", kane_mele(rashba=0.05), 6, "1a", None),
])
def test_all_sectors_glued_back_give_the_perfect_flake(name, model, fold, core, filling):
    glued, centre = perfect_by_sectors(model, fold, core, 8, filling)
    plain = flake(model, "polygon", 8, centre=centre, whole_cells=False, filling=filling)
    assert glued.n_states == plain.n_states
    assert np.abs(spectrum(glued) - spectrum(plain)).max() < 1e-10, name


@pytest.mark.parametrize("model, core, filling", [
    (bernevig_hughes_zhang(m=6.0), "1a", None),
    (bernevig_hughes_zhang(m=6.0), "1b", None),
    (p_orbital_square(), "1b", 2),
])
def test_sectors_and_a_removed_wedge_build_the_same_disclination(model, core, filling):
    by_sectors = disclination(model, np.pi / 2, 8, core=core, filling=filling)
    by_faces = builders._disclination_by_faces(model, np.pi / 2, 8, core=core, filling=filling)
    assert by_sectors.sectors == 3
    assert np.abs(spectrum(by_sectors) - spectrum(by_faces)).max() < 1e-10


def test_the_p_orbital_seam_needs_the_rotation_matrix():
    """Gluing px to px across the seam (no rotation) is a different, wrong, Hamiltonian."""
    model = p_orbital_square()
    right = disclination(model, np.pi / 2, 10, core="1a", filling=2)
    prep = builders._prepare(model, 2, None)
    _, _, op, centre = builders._fold_for(prep.form, np.pi / 2, "1a")
    wrong_form = builders.RealSpaceForm(prep.form.lattice, prep.form.positions, prep.form.cells, prep.form.blocks,
                                        prep.form.site_of_state, False, _IdentityRotation(model), None, "wrong")
    wrong = builders._sector_sample(builders._Prepared(wrong_form, prep.gap, 2, prep.ion_positions,
                                                       prep.ion_charges), right.spec, 4, 1, op, centre, 10)
    assert np.abs(spectrum(right) - spectrum(wrong)).max() > 1e-3


class _IdentityRotation:
    """A model stand-in whose rotation matrix is the identity (what a seam that ignores orbitals would use)."""

    def __init__(self, model):
        self.model = model
        self.dim, self.lattice = model.dim, model.lattice

    def symmetry_matrix(self, op, k):
        return np.eye(self.model.n_states)


def test_a_supercell_has_the_band_structure_on_its_momenta():
    model = bernevig_hughes_zhang(m=2.0)
    cell = supercell(model, 4)
    g = np.arange(4) / 4
    k = np.stack(np.meshgrid(g, g, indexing="ij"), axis=-1).reshape(-1, 2)
    bands = np.sort(np.linalg.eigvalsh(model.hamiltonian(k)).ravel())
    assert np.abs(spectrum(cell) - bands).max() < 1e-12


@pytest.mark.parametrize("build", [
    lambda: edge_dislocation(bernevig_hughes_zhang(m=6.0), (1, 0), 16),
    lambda: edge_dislocation(c4_breathing_square(gamma=0.3), (1, 1), 16, separation=6, filling=1),
    lambda: disclination_dipole(c4_breathing_square(gamma=0.3), np.pi / 2, (0.5, 0.5), 16, filling=1),
    lambda: disclination(kekule_honeycomb(), -np.pi / 3, 10, ions=[((0, 0), 3.0)]),
], ids=["edge dislocation", "dislocation dipole on a torus", "disclination dipole", "inserted sector"])
def test_every_glued_bond_has_its_reverse(build):
    sample = build()
    h = sample.hamiltonian
    assert abs(h - h.conj().T).max() < 1e-12
    assert sample.unpaired_bonds == 0
    # no state is counted with a missing ion, and the ions neutralise the bulk filling
    assert np.all(sample.state_ion >= 0)


def test_a_dislocation_removes_one_half_row_per_burgers_vector():
    model = bernevig_hughes_zhang(m=2.0)
    plain = supercell(model, 16)
    dipole = edge_dislocation(model, (1, 0), 16, separation=6)
    # the strip between the cores: 6 sites wide along ẑ × b̂ = ŷ, one along b
    assert plain.n_states - dipole.n_states == 6 * 4
    assert [tuple(c.burgers) for c in dipole.cores] == [(1, 0), (-1, 0)]


def test_a_disclination_dipole_carries_the_net_burgers_vector_of_its_rotation():
    """Net b = R(−Ω) s − s for Ω = π/2 at 1a and s = (½, ½) to 1b: (0, −1)."""
    sample = disclination_dipole(c4_breathing_square(gamma=0.3), np.pi / 2, (0.5, 0.5), 16, filling=1)
    assert sample.spec.burgers == (0, -1)
    assert [c.frank_angle for c in sample.cores] == [pytest.approx(np.pi / 2), pytest.approx(-np.pi / 2)]


def test_a_screw_line_keeps_every_site_and_a_stacked_model_without_real_space_form_is_transformed():
    from crystaltop.examples import stacked_layers
    model = stacked_layers(bernevig_hughes_zhang(m=2.0), 0.05)  # a callable H(k): Fourier transformed
    line = dislocation_line(model, (0, 0, 1), (0, 0, 1), 10, "screw", length=4, separation=4)
    assert line.n_states == 10 * 10 * 4 * 4
    assert line.cut_bonds == 0 and line.unpaired_bonds == 0


def test_rotation_centres_are_named_as_in_the_international_tables():
    square = rotation_centre_names(np.eye(2))
    assert sorted(square) == ["1a", "1b", "2c"]
    assert np.allclose(square["1b"], [0.5, 0.5])
    hexagonal = rotation_centre_names(kekule_honeycomb().lattice)
    assert sorted(hexagonal) == ["1a", "2b", "3c"]


def test_a_spec_rebuilds_the_same_sample():
    model = c4_breathing_square(gamma=0.3)
    sample = disclination(model, -np.pi / 2, 10, core="1b", filling=1)
    again = build_sample(model, sample.spec)
    assert np.abs(spectrum(sample) - spectrum(again)).max() == 0.0


def test_the_kekule_model_respects_its_group():
    model = kekule_honeycomb(0.5, 1.0)
    assert max(symmetry_violations(model, point_group("6/mmm")).values()) < 1e-12
    assert max(symmetry_violations(p_orbital_square(), point_group("4/mmm")).values()) < 1e-12


def test_a_triangular_flake_is_symmetric_under_the_third_turn_and_refused_on_the_square_lattice():
    """Geometry only: the cells of a triangle of inradius L/2 about 1a map onto themselves under C3 (and not under
    C2, a triangle not being centrosymmetric); a square lattice has no triangle of Wigner–Seitz face normals."""
    from crystaltop.errors import DefectGeometryError
    from crystaltop.examples.crystalline import breathing_kagome

    sample = flake(breathing_kagome(0.2, 1.0), "triangle", 12, filling=1)
    xy = sample.ion_positions - sample.ion_positions.mean(axis=0)
    turn = 2 * np.pi / 3
    rot = np.array([[np.cos(turn), -np.sin(turn)], [np.sin(turn), np.cos(turn)]])
    key = lambda pts: sorted(map(tuple, np.round(pts, 6)))  # noqa: E731
    assert key(xy @ rot.T) == key(xy)
    assert key(-xy) != key(xy)
    with pytest.raises(DefectGeometryError, match="hexagonal lattice"):
        flake(c4_breathing_square(gamma=0.3), "triangle", 8, filling=1)
