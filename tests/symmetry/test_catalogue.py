"""The catalogue of the 32 point groups against International Tables for Crystallography, Vol. A."""

from __future__ import annotations

from collections import Counter

import numpy as np
import pytest
import sympy

from crystaltop.errors import CrystaltopError, ShapeError, UnknownGroupError
from crystaltop.symmetry import CLASS_SYMBOLS, all_point_groups, normalize_symbol, point_group

TYPES = ("1", "2", "3", "4", "6", "-1", "m", "-3", "-4", "-6")

# Numbers of operations of each ITA type in each crystallographic point group, counted from the
# general-position tables of the 32 point groups in International Tables for Crystallography, Vol. A
# (ed. M. I. Aroyo, 6th edition, 2016), chapter 3.2 (written from memory); orders and Schoenflies
# symbols as listed there.
#                 HM       Schoenflies  order    1  2  3  4  6 -1  m -3 -4 -6
ITA_TABLE = [
    ("1", "C1", 1, (1, 0, 0, 0, 0, 0, 0, 0, 0, 0)),
    ("-1", "Ci", 2, (1, 0, 0, 0, 0, 1, 0, 0, 0, 0)),
    ("2", "C2", 2, (1, 1, 0, 0, 0, 0, 0, 0, 0, 0)),
    ("m", "Cs", 2, (1, 0, 0, 0, 0, 0, 1, 0, 0, 0)),
    ("2/m", "C2h", 4, (1, 1, 0, 0, 0, 1, 1, 0, 0, 0)),
    ("222", "D2", 4, (1, 3, 0, 0, 0, 0, 0, 0, 0, 0)),
    ("mm2", "C2v", 4, (1, 1, 0, 0, 0, 0, 2, 0, 0, 0)),
    ("mmm", "D2h", 8, (1, 3, 0, 0, 0, 1, 3, 0, 0, 0)),
    ("4", "C4", 4, (1, 1, 0, 2, 0, 0, 0, 0, 0, 0)),
    ("-4", "S4", 4, (1, 1, 0, 0, 0, 0, 0, 0, 2, 0)),
    ("4/m", "C4h", 8, (1, 1, 0, 2, 0, 1, 1, 0, 2, 0)),
    ("422", "D4", 8, (1, 5, 0, 2, 0, 0, 0, 0, 0, 0)),
    ("4mm", "C4v", 8, (1, 1, 0, 2, 0, 0, 4, 0, 0, 0)),
    ("-42m", "D2d", 8, (1, 3, 0, 0, 0, 0, 2, 0, 2, 0)),
    ("4/mmm", "D4h", 16, (1, 5, 0, 2, 0, 1, 5, 0, 2, 0)),
    ("3", "C3", 3, (1, 0, 2, 0, 0, 0, 0, 0, 0, 0)),
    ("-3", "C3i", 6, (1, 0, 2, 0, 0, 1, 0, 2, 0, 0)),
    ("32", "D3", 6, (1, 3, 2, 0, 0, 0, 0, 0, 0, 0)),
    ("3m", "C3v", 6, (1, 0, 2, 0, 0, 0, 3, 0, 0, 0)),
    ("-3m", "D3d", 12, (1, 3, 2, 0, 0, 1, 3, 2, 0, 0)),
    ("6", "C6", 6, (1, 1, 2, 0, 2, 0, 0, 0, 0, 0)),
    ("-6", "C3h", 6, (1, 0, 2, 0, 0, 0, 1, 0, 0, 2)),
    ("6/m", "C6h", 12, (1, 1, 2, 0, 2, 1, 1, 2, 0, 2)),
    ("622", "D6", 12, (1, 7, 2, 0, 2, 0, 0, 0, 0, 0)),
    ("6mm", "C6v", 12, (1, 1, 2, 0, 2, 0, 6, 0, 0, 0)),
    ("-6m2", "D3h", 12, (1, 3, 2, 0, 0, 0, 4, 0, 0, 2)),
    ("6/mmm", "D6h", 24, (1, 7, 2, 0, 2, 1, 7, 2, 0, 2)),
    ("23", "T", 12, (1, 3, 8, 0, 0, 0, 0, 0, 0, 0)),
    ("m-3", "Th", 24, (1, 3, 8, 0, 0, 1, 3, 8, 0, 0)),
    ("432", "O", 24, (1, 9, 8, 6, 0, 0, 0, 0, 0, 0)),
    ("-43m", "Td", 24, (1, 3, 8, 0, 0, 0, 6, 0, 6, 0)),
    ("m-3m", "Oh", 48, (1, 9, 8, 6, 0, 1, 9, 8, 6, 0)),
]

# Settings that differ from the class symbol only by orientation (same type counts).
SETTINGS = ["-4m2", "312", "31m", "-31m", "-62m"]


def test_the_table_itself_is_consistent_counts_sum_to_the_order():
    for symbol, _, order, counts in ITA_TABLE:
        assert sum(counts) == order, symbol


def test_there_are_32_classes_in_ita_order():
    # Order of the classes as in ITA Vol. A (2016), chapter 3.2.
    assert CLASS_SYMBOLS == tuple(row[0] for row in ITA_TABLE)
    assert tuple(group.symbol for group in all_point_groups()) == CLASS_SYMBOLS


@pytest.mark.parametrize("symbol, schoenflies, order, counts", ITA_TABLE, ids=[row[0] for row in ITA_TABLE])
def test_order_schoenflies_symbol_and_operation_type_counts_agree_with_ita(symbol, schoenflies, order, counts):
    group = point_group(symbol)
    assert group.order == order == len(group.operations)
    assert group.schoenflies == schoenflies
    found = Counter(op.type_symbol for op in group)
    assert tuple(found.get(t, 0) for t in TYPES) == counts


@pytest.mark.parametrize("setting", SETTINGS)
def test_alternative_settings_have_the_type_counts_of_their_class(setting):
    group = point_group(setting)
    counts = dict((row[0], row[3]) for row in ITA_TABLE)[group.symbol]
    found = Counter(op.type_symbol for op in group)
    assert tuple(found.get(t, 0) for t in TYPES) == counts
    assert not group.approx_equal(point_group(group.symbol))  # a different orientation


@pytest.mark.parametrize(
    "alias, setting",
    [
        ("C4v", "4mm"),
        ("c4v", "4mm"),
        ("D3h", "-6m2"),
        ("-62m", "-62m"),
        ("2mm", "mm2"),
        ("m2m", "mm2"),
        ("m3m", "m-3m"),
        ("Oh", "m-3m"),
        ("m3", "m-3"),
        ("4/m 2/m 2/m", "4/mmm"),
        ("6/m2/m2/m", "6/mmm"),
        ("-3 2/m", "-3m1"),
        ("3m", "3m1"),
        ("32", "321"),
        ("S6", "-3"),
        ("C3i", "-3"),
        ("S2", "-1"),
        ("Td", "-43m"),
        ("4\u0305", "-4"),  # written with a combining overline
    ],
)
def test_usual_spellings_and_schoenflies_symbols_name_the_same_setting(alias, setting):
    assert normalize_symbol(alias) == setting
    assert point_group(alias) is point_group(setting)


def test_mm2_and_2mm_are_the_same_group_with_the_two_fold_along_the_axis():
    assert point_group("2mm") is point_group("mm2")
    assert [op.label for op in point_group("mm2").rotations()] == ["2z"]


def test_3m1_has_mirror_normals_along_the_secondary_direction_and_31m_perpendicular_to_it():
    # ITA Vol. A, space groups P3m1 (156) and P31m (157): with a1 along x, the mirrors of P3m1 are
    # perpendicular to a1 (normals at 0°, 60°, 120°), those of P31m contain a1 (normals at 30°, 90°, 150°).
    azimuths = lambda group: sorted(round(np.degrees(np.arctan2(m.axis[1], m.axis[0])) % 180) for m in group.mirrors())
    assert azimuths(point_group("3m1")) == [0, 60, 120]
    assert azimuths(point_group("31m")) == [30, 90, 150]


def test_minus_4m2_has_mirrors_where_minus_42m_has_two_folds():
    # ITA Vol. A: in -42m the secondary directions <100> carry two-fold axes, in -4m2 mirror normals.
    assert {op.label for op in point_group("-42m").rotations(2)} == {"2z", "2x", "2y"}
    assert {op.label for op in point_group("-4m2").mirrors()} == {"mx", "my"}


def test_cubic_groups_are_in_the_cubic_frame():
    group = point_group("m-3m")
    assert {op.label for op in group.rotations(4)} == {"4x+", "4x-", "4y+", "4y-", "4z+", "4z-"}
    assert {tuple(np.round(np.sqrt(3) * np.abs(op.axis), 9)) for op in group.rotations(3)} == {(1.0, 1.0, 1.0)}


def test_groups_are_cached_on_symbol_and_orientation():
    assert point_group("4mm") is point_group("C4v")
    assert point_group("4mm", axis=(1, 0, 0), secondary=(0, 1, 0)) is point_group("4mm", axis=(1, 0, 0), secondary=(0, 1, 0))


def test_principal_axis_and_secondary_direction_orient_the_group():
    group = point_group("4mm", axis=(1, 0, 0), secondary=(0, 1, 1))
    assert {op.label for op in group.rotations(4)} == {"4x+", "4x-"}
    assert "m[011]" in group and "my" in group


def test_monoclinic_unique_axis_is_the_axis_argument():
    group = point_group("2/m", axis=(0, 1, 0), secondary=(0, 0, 1))
    assert [op.label for op in group] == ["1", "2y", "-1", "my"]


def test_reoriented_catalogue_groups_stay_exact():
    group = point_group("m-3m", axis=(1, 1, 1), secondary=(1, -1, 0))
    for op in group:
        assert not any(entry.has(sympy.Float) for entry in op.exact)
        assert np.allclose(np.array(op.exact.evalf().tolist(), dtype=float), op.matrix, atol=1e-14)
    assert {op.label for op in group.rotations(4, axis=(1, 1, 1))} == {"4[111]+", "4[111]-"}
    assert {op.label for op in group.rotations(2, axis=(1, -1, 0))} == {"2[-110]"}


def test_unknown_symbol_raises_unknown_group_error_with_a_one_line_message():
    with pytest.raises(UnknownGroupError) as info:
        point_group("5mm")
    message = str(info.value)
    assert "'5mm'" in message and "\n" not in message
    assert "Hermann" in message


def test_non_string_symbol_raises_unknown_group_error():
    with pytest.raises(UnknownGroupError):
        point_group(4)  # type: ignore[arg-type]


def test_operations_and_matrices_are_read_only():
    op = point_group("4")["4z+"]
    with pytest.raises(ValueError):
        op.matrix[0, 0] = 2.0
    with pytest.raises(ValueError):
        op.spin[0, 0] = 2.0
    with pytest.raises(ValueError):
        point_group("4").matrices[0, 0, 0] = 2.0


def test_a_secondary_direction_is_projected_into_the_plane_perpendicular_to_the_axis():
    tilted = point_group("2/m", axis=(0, 0, 1), secondary=(1, 0, 5))
    assert tilted.approx_equal(point_group("2/m"))
    assert np.allclose(point_group("mm2", secondary=(1, 1, 3)).frame[:, 0], np.array([1, 1, 0]) / np.sqrt(2))


def test_a_secondary_direction_along_the_axis_is_refused():
    with pytest.raises(CrystaltopError, match="parallel"):
        point_group("4mm", axis=(0, 0, 1), secondary=(0, 0, 2))


@pytest.mark.parametrize("bad", [(0, 0, 0), (1, 0), (np.nan, 0, 1)])
def test_a_malformed_axis_is_refused(bad):
    with pytest.raises(ShapeError):
        point_group("4mm", axis=bad)


def test_a_label_depends_only_on_the_matrix_so_shared_operations_share_labels():
    holohedries = [point_group("m-3m"), point_group("6/mmm")]
    for symbol in CLASS_SYMBOLS:
        for op in point_group(symbol):
            big = next(h for h in holohedries if op.matrix in h)
            assert big.find(op.matrix).label == op.label


def test_the_labels_documented_in_the_operations_module_exist():
    documented = {"2z", "4z+", "4z-", "3[111]+", "6z-", "mx", "mz", "m[-110]", "m(60°)", "-4z+", "-3[1-11]-", "-6z+",
                  "2[110]", "2(30°)"}
    present = {op.label for symbol in CLASS_SYMBOLS for op in point_group(symbol)}
    assert documented <= present
