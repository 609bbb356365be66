"""Corner charge and filling anomaly from the rotation indices (Benalcazar, Li, Hughes 2019; formulas from memory)."""

from __future__ import annotations

import pytest

import crystaltop as ct
from crystaltop.examples import benalcazar_bernevig_hughes, c4_breathing_square, qi_wu_zhang
from crystaltop.examples.crystalline import breathing_kagome, hexagon_triangle, kekule_honeycomb

NAME = "corner_charge"


def _corner(model, group, filling):
    return ct.classify(model, group=group, filling=filling, invariants=[NAME])[NAME]


def test_c4_breathing_square_has_corner_charge_a_quarter():
    # Benalcazar, Li, Hughes, PRB 99, 245151 (2019): Q = (e/4)([X1] + 2[M1] + 3[M2]) (from memory, PHYSICS.md §6)
    # with χ = (−1, −1, 0) gives e/4; a finite flake measures 0.25 (PHYSICS.md §6, checked)
    res = _corner(c4_breathing_square(gamma=0.5), "4/mmm", 1)
    assert res.status == "ok" and res.value == pytest.approx(0.25)
    assert res.details["fraction"] == "1/4" and res.details["filling_anomaly"] == 1
    assert any("FROM MEMORY" in n for n in res.notes)
    assert any("polarization" in n for n in res.notes)  # P = (1/2, 1/2) here: cut-dependent, said so


@pytest.mark.parametrize("build, group, filling, value, source", [
    (lambda: breathing_kagome(0.2, 1.0), "3m", 1, 2 / 3,
     "C3, Wannier centre at (2/3, 2/3), triangle about the origin: −e/3 (counting; measured in test_corner_flakes)"),
    (lambda: kekule_honeycomb(0.3, 1.0), "6/mmm", 3, 1 / 2, "C6 at 3c: e/2"),
    (lambda: hexagon_triangle(0.3, 1.0), "6/mmm", 2, 2 / 3,
     "C6 at 2b: −e/3 (counting (0 − 2)/6; measured on a hexagon in test_corner_flakes)"),
])
def test_c3_and_c6_obstructed_limits_have_the_corner_charges_of_their_wyckoff_positions(build, group, filling,
                                                                                        value, source):
    # PHYSICS.md §6 band-representation checks (Benalcazar, Li, Hughes 2019; C6 formula from memory), signed:
    # electrons +1, ions at 1a, mod e
    res = _corner(build(), group, filling)
    assert res.status == "ok", res.message
    assert res.value == pytest.approx(value), source


def test_trivial_atomic_limit_has_no_corner_charge():
    assert _corner(c4_breathing_square(gamma=1.5), "4/mmm", 1).value == 0.0


def test_corner_charge_of_a_chern_insulator_is_skipped_with_the_reason():
    # QWZ at m = 1 has C = −1 (PHYSICS.md §2): no corner charge
    res = _corner(qi_wu_zhang(m=1.0), "4/m", 1)
    assert res.status == "skipped" and "Chern number -1 is not zero" in res.message


def test_bbh_quadrupole_corner_charge_is_left_to_the_finite_flake():
    # Benalcazar, Bernevig, Hughes, Science 357, 61 (2017): C4^4 = −1, the spinless formula would give 1/4 or 3/4,
    # never the measured 1/2 (PHYSICS.md §6): refused, pointing at the finite-flake measurement
    res = _corner(benalcazar_bernevig_hughes(gamma=0.5), "4mm", 2)
    assert res.status == "skipped" and "C4^4 = −1" in res.message and "finite flake" in res.message


def test_a_gapless_model_fails_naming_the_gap_before_anything_else():
    res = _corner(c4_breathing_square(gamma=1.0), "4/mmm", 1)
    assert res.status == "failed" and "gap" in res.message and "k=" in res.message


# ---------------------------------------------------------------------------------------------- second method
@pytest.mark.parametrize("build, group, filling, by_centre", [
    (lambda: c4_breathing_square(gamma=0.3), "4", 1, {"(0, 0)": "3/4", "(1/2, 1/2)": "1/4"}),
    (lambda: breathing_kagome(0.2, 1.0), "3m", 1, {"(0, 0)": "2/3", "(1/3, 1/3)": "0", "(2/3, 2/3)": "1/3"}),
    (lambda: kekule_honeycomb(0.5, 1.0), None, None, {"(0, 0)": "1/2"}),
], ids=["C4 SSH", "breathing kagome", "Kekulé"])
def test_the_index_formula_is_cross_checked_by_the_wannier_content_at_every_centre(build, group, filling, by_centre):
    """Common practice (PHYSICS.md §8 counting): a flake of whole cells about w holds q_w/n per corner sector, the
    charge disclination_charge gives at Ω = +2π/n about w. It must agree with the formula of Benalcazar, Li,
    Hughes, PRB 99, 245151 (2019) (from memory) at every centre; the values are the flake measurements of
    tests/defects/test_corner_flakes.py."""
    record = ct.classify(build(), group, filling, invariants=["corner_charge"])["corner_charge"]
    assert record.ok
    (check,) = record.cross_checks
    assert check.agree and "Wannier content" in check.method
    assert record.details["by_centre"] == by_centre


def test_without_time_reversal_the_value_comes_from_the_wannier_content_not_the_formula():
    """The C4 formula is not established without time reversal: the value is q_w/4 from the content (1/4 about
    the plaquette centre for the C4 SSH limit, as measured on a flake), the formula's values only recorded."""
    record = ct.classify(c4_breathing_square(gamma=0.3), "4", 1, time_reversal=False,
                         invariants=["corner_charge"])["corner_charge"]
    assert record.ok and record.value == pytest.approx(0.25)
    assert record.method.startswith("Wannier content")
    assert record.details["formula_by_centre"] == {"(0, 0)": "3/4", "(1/2, 1/2)": "1/4"}


def test_without_time_reversal_and_without_the_wannier_content_no_c4_value_is_given():
    """With the disclination prediction made for ions on the sites (not the 1a background the formulas assume),
    the content does not apply, so a model without time reversal gets no C4 corner charge."""
    report = ct.classify(c4_breathing_square(gamma=0.3), "4", 1, time_reversal=False, invariants=["corner_charge"],
                         options={"disclination_charge": {"ions": "sites"}})
    record = report["corner_charge"]
    assert record.status == "skipped" and "not established" in record.message
