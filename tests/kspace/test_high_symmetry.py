"""High-symmetry momenta, their labels and little co-groups, mirror planes and the C_n eigenvalue sectors."""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.errors import CrystaltopError, SymmetryBreakingError
from crystaltop.kspace import (count_sectors, fixed_momenta, high_symmetry_momenta, label_momenta, mirror_planes,
                               pair_name, rotation_levels, rotation_power, rotation_sectors, sector_names)
from crystaltop.symmetry import point_group

SQUARE = np.eye(2)
HEXAGONAL = np.array([[1.0, 0.0], [0.5, np.sqrt(3.0) / 2.0]])
FCC = 0.5 * np.array([[0.0, 1.0, 1.0], [1.0, 0.0, 1.0], [1.0, 1.0, 0.0]])
BCC = 0.5 * np.array([[-1.0, 1.0, 1.0], [1.0, -1.0, 1.0], [1.0, 1.0, -1.0]])
TETRAGONAL = np.diag([1.0, 1.0, 1.4])
ORTHORHOMBIC = np.diag([1.0, 1.3, 1.7])
HEXAGONAL_3D = np.array([[1.0, 0.0, 0.0], [0.5, np.sqrt(3.0) / 2.0, 0.0], [0.0, 0.0, 1.6]])


def _representatives(group, lattice):
    return [m.label for m in high_symmetry_momenta(point_group(group), lattice) if m.is_representative]


# A rotation of the 2-torus by 2π/n has det(1 − R) = 2 − 2 cos(2π/n) fixed points (Lefschetz): 4, 3, 2, 1.
@pytest.mark.parametrize("symbol, label, lattice, count", [("2", "2z", SQUARE, 4), ("3", "3z+", HEXAGONAL, 3),
                                                           ("4", "4z+", SQUARE, 2), ("6", "6z+", HEXAGONAL, 1)])
def test_a_two_dimensional_rotation_fixes_as_many_momenta_as_the_lefschetz_number(symbol, label, lattice, count):
    pts = fixed_momenta(point_group(symbol)[label], lattice)
    assert len(pts) == count
    assert np.allclose(pts[0], 0.0)


def test_square_lattice_momenta_are_gamma_x_y_m_with_their_little_cogroups():
    # labels as in Benalcazar, Li, Hughes, PRB 99, 245151 (2019): X = (π, 0), Y = (0, π), M = (π, π)
    ms = {m.label: m for m in high_symmetry_momenta(point_group("4mm"), SQUARE)}
    assert list(ms) == ["Γ", "X", "Y", "M"]
    assert ms["X"].k == (0.5, 0.0) and ms["M"].k == (0.5, 0.5)
    assert (ms["Γ"].little_cogroup_symbol, ms["X"].little_cogroup_symbol, ms["M"].little_cogroup_symbol) == \
        ("4mm", "mm2", "4mm")
    assert ms["X"].star == ("X", "Y") and ms["Y"].is_representative is False
    assert ms["X"].rotations == ("2z",) and set(ms["M"].rotations) == {"2z", "4z+", "4z-"}


def test_hexagonal_k_lies_along_the_first_lattice_vector_and_c6_maps_it_to_k_prime():
    # convention (docs): K = (4π/3a) â1 = (2/3, 1/3) reduced on a1 = (1, 0), a2 = (1/2, √3/2); K′ = −K
    ms = {m.label: m for m in high_symmetry_momenta(point_group("6"), HEXAGONAL)}
    assert ms["K"].k == pytest.approx((2 / 3, 1 / 3)) and ms["K′"].k == pytest.approx((1 / 3, 2 / 3))
    assert ms["K"].star == ("K", "K′") and ms["M"].star == ("M", "M′", "M″")
    assert ms["K"].little_cogroup_symbol == "3" and ms["M"].little_cogroup_symbol == "2"
    # with C3 alone K and K′ are not related
    assert _representatives("3", HEXAGONAL) == ["Γ", "K", "K′"]


def test_labels_follow_the_geometry_not_the_basis_vectors():
    # the square lattice written with a1 = (1, 0), a2 = (1, 1): b1/2 = π(1, −1) is the zone corner M, while
    # b2/2 = π(0, 1) and (b1 + b2)/2 = π(1, 0) are the face centres
    names = label_momenta([[0.5, 0.0], [0.0, 0.5], [0.5, 0.5]], np.array([[1.0, 0.0], [1.0, 1.0]]))
    assert names == ["M", "X", "Y"]


# standard labels of the special points (Setyawan & Curtarolo, Comput. Mater. Sci. 49, 299 (2010); the
# coordinates are textbook values, quoted from memory)
@pytest.mark.parametrize("lattice, group, expected", [
    (np.eye(3), "m-3m", {"Γ", "X", "M", "R"}),
    (FCC, "m-3m", {"Γ", "X", "L"}),
    (BCC, "m-3m", {"Γ", "H", "N"}),
    (TETRAGONAL, "4/mmm", {"Γ", "X", "M", "Z", "R", "A"}),
    (ORTHORHOMBIC, "mmm", {"Γ", "X", "Y", "Z", "S", "T", "U", "R"}),
    (HEXAGONAL_3D, "6/mmm", {"Γ", "M", "K", "A", "L", "H"}),
])
def test_three_dimensional_special_points_carry_their_usual_names(lattice, group, expected):
    names = set(_representatives(group, lattice))
    assert expected <= names
    assert all(n in expected or n.startswith("(") for n in names)


def test_fcc_momenta_have_the_little_cogroups_of_the_tables():
    # International Tables / Bradley & Cracknell: X has 4/mmm, L has -3m in m-3m (fcc)
    ms = {m.label: m for m in high_symmetry_momenta(point_group("m-3m"), FCC)}
    assert ms["X"].little_cogroup_symbol == "4/mmm" and ms["L"].little_cogroup_symbol == "-3m"
    assert len(ms["X"].star) == 3 and len(ms["L"].star) == 4


def test_three_dimensional_rotation_levels_detect_a_boundary_plane_distinct_from_gamma():
    # tetragonal P: kz = 0 and kz = π are two planes; fcc along a cube axis: the plane at the boundary (X) is the
    # plane through Γ shifted by a reciprocal vector (b1 + b2 = (4π/a) ẑ ... with (−1, 1, 1)·2π of odd height)
    u, levels = rotation_levels(point_group("4/mmm")["4z+"], TETRAGONAL)
    assert u.tolist() == [0, 0, 1] and levels == (0.0, 0.5)
    u, levels = rotation_levels(point_group("m-3m")["4z+"], FCC)
    assert (u @ FCC).tolist() == [0.0, 0.0, 1.0] and levels == (0.0,)


def test_mirror_planes_are_oriented_by_the_mirror_normal():
    planes = mirror_planes(point_group("4/mmm")["mz"], TETRAGONAL)
    assert [p.name for p in planes] == ["0", "π"] and planes[1].level == 0.5
    assert planes[0].axes == (0, 1)
    rb = 2 * np.pi * np.linalg.inv(TETRAGONAL).T
    for p in mirror_planes(point_group("4/mmm")["m[110]"], TETRAGONAL):
        v1, v2 = (np.asarray(v) @ rb for v in p.basis)
        assert np.cross(v1, v2) @ point_group("4/mmm")["m[110]"].axis > 0
        assert p.axes is None and p.points(4).shape == (4, 4, 3)
    # a left-handed 2D basis: the two axes are swapped so that the plane is oriented by +z
    assert mirror_planes(point_group("m")["mz"], np.array([[0.0, 1.0], [1.0, 0.0]]))[0].axes == (1, 0)


def test_a_mirror_with_an_in_plane_normal_has_no_invariant_plane_in_two_dimensions():
    with pytest.raises(CrystaltopError, match="in-plane normal"):
        mirror_planes(point_group("mm2")["mx"], SQUARE)
    with pytest.raises(CrystaltopError, match="does not fix isolated momenta"):
        fixed_momenta(point_group("mm2")["mx"], SQUARE)


def test_rotation_sectors_are_the_eigenvalues_of_benalcazar_li_hughes_and_their_double_valued_partners():
    # Benalcazar, Li, Hughes (2019): Π_p^(n) = e^{2πi(p−1)/n}; C_n^n = −1 gives e^{iπ(2p−1)/n}
    assert np.allclose(rotation_sectors(4, 1), [1, 1j, -1, -1j])
    assert sector_names(4, 1) == ("1", "i", "-1", "-i")
    assert sector_names(4, -1) == ("e^{iπ/4}", "e^{3iπ/4}", "e^{-3iπ/4}", "e^{-iπ/4}")
    assert sector_names(3, 1) == ("1", "e^{2iπ/3}", "e^{-2iπ/3}")
    assert pair_name(np.exp(0.75j * np.pi)) == "e^{±3iπ/4}" and pair_name(1j) == "±i"
    assert count_sectors([1, -1, -1], 2, 1).tolist() == [1, 2]
    assert rotation_power(np.exp(1j * np.pi * np.array([0.25, -0.25])), 4) == -1


def test_an_eigenvalue_off_every_sector_is_refused():
    with pytest.raises(SymmetryBreakingError, match="none of"):
        count_sectors([np.exp(0.3j)], 4, 1)
    with pytest.raises(SymmetryBreakingError, match="not n-th roots"):
        rotation_power([np.exp(0.3j)], 4)
