"""Point groups are groups, in every setting and orientation, and answer questions about themselves."""

from __future__ import annotations

import numpy as np
import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from crystaltop.errors import ShapeError, UnknownGroupError, UnknownOperationError
from crystaltop.symmetry import PointGroup, point_group
from crystaltop.symmetry.catalogue import normalize_symbol

from .strategies import ALL_SETTINGS, rotations, symbols


def assert_group_axioms(group: PointGroup) -> None:
    mats = group.matrices
    assert group.operations[0].label == "1" and np.allclose(mats[0], np.eye(3))
    labels = [op.label for op in group]
    assert len(set(labels)) == len(labels) == group.order
    for a in group:
        assert np.allclose(group.multiply(a, group.inverse(a)).matrix, np.eye(3), atol=1e-12)
        for b in group:
            product = group.multiply(a, b)  # raises if R_a R_b is not in the group
            assert np.allclose(product.matrix, a.matrix @ b.matrix, atol=1e-10)


@pytest.mark.parametrize("symbol", ALL_SETTINGS)
def test_every_catalogue_group_is_closed_has_the_identity_first_and_inverses(symbol):
    assert_group_axioms(point_group(symbol))


@pytest.mark.parametrize("symbol", ALL_SETTINGS)
def test_every_catalogue_operation_is_exactly_orthogonal_and_its_float_form_matches(symbol):
    for op in point_group(symbol):
        exact = op.exact
        assert (exact * exact.T).applyfunc(sympy.expand) == sympy.eye(3)
        assert int(exact.det()) == op.det
        assert np.allclose(np.array(exact.evalf().tolist(), dtype=float), op.matrix, atol=1e-15)


@pytest.mark.parametrize("symbol", ALL_SETTINGS)
def test_the_generators_generate_the_whole_group(symbol):
    group = point_group(symbol)
    found = {"1"}
    frontier = ["1"]
    while frontier:
        current = frontier.pop()
        for gen in group.generators:
            label = group.multiply(current, gen).label
            if label not in found:
                found.add(label)
                frontier.append(label)
    assert found == {op.label for op in group}


@settings(max_examples=25, deadline=None)
@given(symbol=symbols, rotation=rotations)
def test_randomly_oriented_groups_satisfy_the_group_axioms_with_unique_labels(symbol, rotation):
    group = point_group(symbol).oriented(rotation)
    assert_group_axioms(group)
    assert group.symbol == point_group(symbol).symbol
    assert np.allclose(group.frame, rotation if np.linalg.det(rotation) > 0 else -rotation)


@settings(max_examples=20, deadline=None)
@given(symbol=symbols, rotation=rotations)
def test_from_matrices_identifies_the_class_in_any_orientation(symbol, rotation):
    reference = point_group(symbol)
    mats = np.einsum("ij,njk,lk->nil", rotation, reference.matrices, rotation)
    shuffled = mats[np.random.default_rng(0).permutation(len(mats))]
    found = PointGroup.from_matrices(shuffled)
    assert found.symbol == reference.symbol
    assert found.approx_equal(reference.oriented(rotation), tol=1e-6)


@pytest.mark.parametrize("symbol", ALL_SETTINGS)
def test_from_matrices_recognises_the_catalogue_setting_in_the_standard_frame(symbol):
    found = PointGroup.from_matrices(point_group(symbol).matrices[::-1])
    assert found.setting == point_group(symbol).setting
    assert found.operations[0].label == "1"


def test_from_matrices_rejects_a_set_that_is_not_closed():
    group = point_group("4")
    with pytest.raises(UnknownGroupError, match="not closed"):
        PointGroup.from_matrices(group.matrices[:3])  # 1, 2z, 4z+ without 4z-


def test_from_matrices_rejects_a_set_without_the_identity():
    with pytest.raises(UnknownGroupError, match="identity"):
        PointGroup.from_matrices([np.diag([-1.0, -1.0, 1.0])])


def test_from_matrices_rejects_a_five_fold_rotation_group():
    c, s = np.cos(2 * np.pi / 5), np.sin(2 * np.pi / 5)
    five = np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]])
    with pytest.raises(UnknownGroupError):
        PointGroup.from_matrices([np.linalg.matrix_power(five, n) for n in range(5)])


def test_from_matrices_rejects_non_orthogonal_matrices():
    with pytest.raises(ShapeError):
        PointGroup.from_matrices([np.eye(3), 2 * np.eye(3)])


def test_multiplication_follows_matrix_order():
    group = point_group("4mm")
    # R(4z+) R(mx): first the mirror x -> -x, then the quarter turn: the mirror with normal (1, 1, 0)/√2.
    assert group.multiply("4z+", "mx").label == "m[110]"
    assert group.multiply("mx", "4z+").label == "m[-110]"
    assert group.inverse("4z+").label == "4z-"


def test_lookup_by_label_operation_or_matrix():
    group = point_group("6mm")
    op = group["6z+"]
    assert group["6z+"] is op and op in group and "6z+" in group and op.matrix in group
    assert "4z+" not in group and point_group("4")["4z+"] not in group
    with pytest.raises(UnknownOperationError, match="4z\\+"):
        group["4z+"]
    with pytest.raises(UnknownOperationError):
        group.multiply("6z+", point_group("4")["4z+"])


def test_operations_work_as_dictionary_keys():
    group = point_group("mmm")
    table = {op: op.label for op in group}
    assert table[point_group("mmm")["mz"]] == "mz"
    assert point_group("mm2")["mx"] == group["mx"]


def test_rotations_mirrors_and_inversion_queries():
    group = point_group("6/mmm")
    assert group.has_inversion and not point_group("6mm").has_inversion
    assert [op.label for op in group.rotations(6)] == ["6z+", "6z-"]
    assert len(group.rotations(2)) == 7 and len(group.mirrors()) == 7
    assert [op.label for op in group.rotations(axis=(0, 0, -1))] == ["2z", "3z+", "3z-", "6z+", "6z-"]
    assert group.rotations(1) == (group["1"],)


def test_keeps_axis_tells_a_two_dimensional_group_from_a_cubic_one():
    assert point_group("6/mmm").keeps_axis()
    assert not point_group("m-3m").keeps_axis()
    assert point_group("m-3m").keeps_axis((1, 0, 0)) is False
    assert point_group("4mm", axis=(1, 0, 0), secondary=(0, 1, 0)).keeps_axis((1, 0, 0))


def test_elements_use_the_shared_vocabulary():
    assert point_group("4/mmm").elements(3) == {"inversion", "C2", "C4", "mirror"}
    assert point_group("4/mmm").elements(2) == {"inversion", "C2", "C4", "mirror", "mirror_z"}
    assert point_group("m-3m").elements(3) == {"inversion", "C2", "C3", "C4", "mirror"}
    assert point_group("-6m2").elements(2) == {"C3", "mirror", "mirror_z"}
    # principal axis x: in the xy plane only the mirrors with normals y and z act, no rotation about z
    assert point_group("4mm", axis=(1, 0, 0), secondary=(0, 1, 0)).elements(2) == {"mirror", "mirror_z"}
    assert point_group("mm2", axis=(1, 0, 0), secondary=(0, 1, 0)).elements(1) == {"C2"}
    assert point_group("mmm").elements(1) == {"inversion", "C2", "mirror"}
    with pytest.raises(ShapeError):
        point_group("1").elements(4)


def test_double_group_signs_of_squares():
    # Spin-1/2: a half turn squares to the 2π rotation, i.e. -1; so does a mirror (inversion × C2), while
    # the inversion squares to +1 (Bradley & Cracknell, The Mathematical Theory of Symmetry in Solids,
    # Oxford 1972, ch. 6 -- from memory).
    group = point_group("4/mmm")
    assert group.double_group_sign("2z", "2z") == -1
    assert group.double_group_sign("mx", "mx") == -1
    assert group.double_group_sign("-1", "-1") == 1
    assert group.double_group_sign("4z+", "4z-") == 1
    assert group.double_group_sign("4z+", "4z+") == 1  # U(4z+)² = U(2z) with θ = +π


def test_oriented_rejects_a_non_orthogonal_matrix():
    with pytest.raises(ShapeError):
        point_group("4").oriented(np.diag([1.0, 2.0, 1.0]))


@given(st.sampled_from(ALL_SETTINGS))
@settings(max_examples=10, deadline=None)
def test_orienting_by_the_identity_changes_nothing(symbol):
    group = point_group(symbol)
    same = group.oriented(np.eye(3))
    assert [op.label for op in same] == [op.label for op in group] and same.approx_equal(group, 0.0)


def test_class_identification_table_equals_the_one_counted_from_the_exact_groups():
    # the table used by from_matrices and the little co-groups is derived from float closures of the
    # generators; it must agree with the operation types of the exactly closed groups
    from crystaltop.symmetry import groups
    from crystaltop.symmetry.catalogue import type_count_key

    exact = {type_count_key(op.type_symbol for op in g): g.symbol for g in groups.all_point_groups()}
    assert groups._classes_by_type_counts() == exact


@pytest.mark.parametrize("setting", ALL_SETTINGS)
def test_float_closure_of_each_setting_has_the_matrices_of_the_exact_group(setting):
    # from_matrices recognises a catalogue setting by this float closure instead of building the exact group
    from crystaltop.symmetry import groups

    exact = point_group(setting)
    floats = groups._standard_matrices(normalize_symbol(setting))
    assert len(floats) == exact.order
    assert groups._same_matrix_sets(floats, exact.matrices, 1e-12)


def test_from_matrices_terminates_for_an_orientation_with_entries_near_the_exactness_tolerance():
    # a hypothesis example that made the generator search loop forever: entries of order 1e-8 are snapped to 0
    # in the exact forms of some operations but not of others
    rotation = np.array([[-0.6000000000000001, 0.7999999999999999, 8e-09],
                         [0.7999999999999999, 0.5999999999999999, 1.6e-08],
                         [8e-09, 1.6e-08, -0.9999999999999998]])
    reference = point_group("32")
    mats = np.einsum("ij,njk,lk->nil", rotation, reference.matrices, rotation)
    found = PointGroup.from_matrices(mats[np.random.default_rng(0).permutation(len(mats))])
    assert found.symbol == reference.symbol
    assert found.approx_equal(reference.oriented(rotation), tol=1e-6)
