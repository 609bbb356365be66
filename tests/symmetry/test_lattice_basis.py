"""Operations in a lattice basis, and their action on reduced momenta."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from crystaltop.errors import LatticeMismatchError, ShapeError
from crystaltop.symmetry import point_group

SQUARE = np.eye(2)
RECTANGLE = np.diag([1.0, 1.6])
HEXAGONAL = np.array([[1.0, 0.0], [-0.5, np.sqrt(3) / 2]])  # a1 along x, a2 at 120°
HEXAGONAL_3D = np.array([[1.0, 0.0, 0.0], [-0.5, np.sqrt(3) / 2, 0.0], [0.0, 0.0, 1.7]])


def reciprocal(lattice):
    return 2 * np.pi * np.linalg.inv(lattice).T


def test_square_lattice_admits_4mm_as_integer_matrices():
    matrices = point_group("4mm").in_basis(SQUARE)
    assert set(matrices) == {op.label for op in point_group("4mm")}
    assert all(w.dtype.kind == "i" and w.shape == (2, 2) for w in matrices.values())
    assert np.array_equal(matrices["4z+"], [[0, -1], [1, 0]])
    assert np.array_equal(matrices["m[110]"], [[0, -1], [-1, 0]])  # normal (1, 1): (x, y) -> (-y, -x)
    assert np.array_equal(matrices["m[-110]"], [[0, 1], [1, 0]])


def test_square_lattice_admits_4_over_mmm_including_the_horizontal_mirror():
    matrices = point_group("4/mmm").in_basis(SQUARE)
    assert np.array_equal(matrices["mz"], np.eye(2, dtype=int))
    assert np.array_equal(matrices["2x"], np.diag([1, -1]))


def test_rectangular_lattice_refuses_the_four_fold_rotation_naming_it():
    with pytest.raises(LatticeMismatchError) as info:
        point_group("4").in_basis(RECTANGLE)
    message = str(info.value)
    assert "4z+" in message and "not integral" in message and "\n" not in message
    assert set(point_group("mm2").in_basis(RECTANGLE)) == {"1", "2z", "mx", "my"}


@pytest.mark.parametrize("symbol", ["6mm", "6/mmm", "3m1", "31m", "321", "312", "-6m2", "-62m", "-3m1", "-31m"])
def test_hexagonal_lattice_with_a1_along_x_admits_both_orientations_of_the_trigonal_groups(symbol):
    # A hexagonal lattice has holohedry 6/mmm (ITA Vol. A, 2016, §3.1), so every subgroup in the standard
    # orientation maps it onto itself; 3m1 and 31m are the two ways 3m sits in it (P3m1 and P31m).
    assert all(w.dtype.kind == "i" for w in point_group(symbol).in_basis(HEXAGONAL).values())
    assert all(w.shape == (3, 3) for w in point_group(symbol).in_basis(HEXAGONAL_3D).values())


def test_hexagonal_lattice_refuses_a_3m_turned_by_15_degrees_and_a_four_fold_rotation():
    turned = point_group("3m", secondary=(np.cos(np.pi / 12), np.sin(np.pi / 12), 0.0))
    with pytest.raises(LatticeMismatchError, match="m\\(15°\\)"):
        turned.in_basis(HEXAGONAL)
    with pytest.raises(LatticeMismatchError, match="4z\\+"):
        point_group("4").in_basis(HEXAGONAL)


def test_hexagonal_matrices_agree_with_the_ita_coordinate_triplets():
    # ITA Vol. A, space group P6mm (183): 6+ is (x-y, x, z) and the mirror (-x+y, y, z) has its normal along a1.
    group = point_group("6mm")
    assert np.array_equal(group["6z+"].in_basis(HEXAGONAL_3D), [[1, -1, 0], [1, 0, 0], [0, 0, 1]])
    assert np.array_equal(group["mx"].in_basis(HEXAGONAL_3D), [[-1, 1, 0], [0, 1, 0], [0, 0, 1]])


def test_a_two_dimensional_lattice_refuses_operations_that_tilt_its_plane():
    with pytest.raises(LatticeMismatchError, match="plane"):
        point_group("m-3m").in_basis(SQUARE)


def test_a_one_dimensional_lattice_admits_operations_keeping_its_line():
    matrices = point_group("mmm").in_basis([[2.0]])
    assert matrices["mx"].tolist() == [[-1]] and matrices["2x"].tolist() == [[1]] and matrices["-1"].tolist() == [[-1]]
    with pytest.raises(LatticeMismatchError, match="4z\\+.*line"):
        point_group("4").in_basis([[2.0]])


def test_c4_maps_x_to_y_and_fixes_m_on_the_square_lattice():
    c4 = point_group("4")["4z+"]
    assert np.allclose(c4.acts_on_k([0.5, 0.0], SQUARE), [0.0, 0.5])
    points = np.array([[0.0, 0.0], [0.5, 0.0], [0.5, 0.5], [0.25, 0.1]])
    assert c4.fixes(points, SQUARE).tolist() == [True, False, True, False]
    assert point_group("2")["2z"].fixes(points, SQUARE).tolist() == [True, True, True, False]


def test_k_point_of_the_hexagonal_zone_is_fixed_by_c3_but_not_by_c6():
    # K = (1/3, 1/3) in units of b1, b2 for a2 at 120° from a1; C6 maps K to K' (standard hexagonal zone).
    k_point = np.array([1 / 3, 1 / 3])
    assert point_group("3")["3z+"].fixes(k_point, HEXAGONAL)
    assert not point_group("6")["6z+"].fixes(k_point, HEXAGONAL)


@settings(max_examples=30, deadline=None)
@given(
    label=st.sampled_from([op.label for op in point_group("6/mmm")]),
    k=st.lists(st.floats(-1, 1, allow_nan=False), min_size=3, max_size=3),
)
def test_reduced_k_rule_matches_the_cartesian_rotation_of_k(label, k):
    op = point_group("6/mmm")[label]
    k = np.array(k)
    b = reciprocal(HEXAGONAL_3D)
    assert np.allclose(op.acts_on_k(k, HEXAGONAL_3D) @ b, op.matrix @ (k @ b), atol=1e-12)


def test_acts_on_k_is_batched_over_leading_axes():
    k = np.random.default_rng(0).random((4, 5, 2))
    image = point_group("4")["4z+"].acts_on_k(k, SQUARE)
    assert image.shape == (4, 5, 2) and np.allclose(image[..., 0], -k[..., 1]) and np.allclose(image[..., 1], k[..., 0])


def test_wrong_shapes_raise_shape_errors():
    c4 = point_group("4")["4z+"]
    with pytest.raises(ShapeError):
        c4.acts_on_k([0.1, 0.2, 0.3], SQUARE)
    with pytest.raises(ShapeError):
        c4.in_basis(np.ones((2, 3)))
    with pytest.raises(ShapeError):
        c4.in_basis([[1.0, 0.0], [2.0, 0.0]])
