"""Rotation invariants [Π_p] and χ^(n): obstructed atomic limits with C3, C4, C6, and the π-flux quadrupole."""

from __future__ import annotations

import pytest

import crystaltop as ct
from crystaltop.examples import benalcazar_bernevig_hughes, c4_breathing_square, qi_wu_zhang
from crystaltop.examples.crystalline import breathing_kagome, hexagon_triangle, kekule_honeycomb

NAME = "rotation_indices"


def _indices(model, group, filling, **kw):
    res = ct.classify(model, group=group, filling=filling, invariants=[NAME], **kw)[NAME]
    assert res.status == "ok", res.message
    return res


def test_flux_free_c4_breathing_square_at_quarter_filling_has_chi4_minus1_minus1_0():
    # Benalcazar, Li, Hughes, PRB 99, 245151 (2019): Wannier centre at 1b, χ^(4) = (−1, −1, 0) (PHYSICS.md §6)
    res = _indices(c4_breathing_square(gamma=0.5, lam=1.0), "4/mmm", 1)
    assert res.value["C4"] == (-1, -1, 0)
    assert res.value["C2"] == (-1, -1, 0)  # ([X1], [Y1], [M1])
    assert res.details["sets"]["χ(4)"] == "[X1^(2)], [M1^(4)], [M2^(4)]"


def test_trivial_side_of_the_c4_breathing_square_has_vanishing_indices():
    assert _indices(c4_breathing_square(gamma=1.5, lam=1.0), "4/mmm", 1).value["C4"] == (0, 0, 0)


def test_breathing_kagome_with_wannier_centres_at_1b_has_chi3_minus1_1():
    # Ezawa, PRL 120, 026801 (2018) lattice; index values of Benalcazar, Li, Hughes 2019 via PHYSICS.md §6
    # (checked eigenvalues): C3 obstructed limit at 1b, χ^(3) = ([K1], [K2]) = (−1, 1); K = (4π/3)(1, 0)
    assert _indices(breathing_kagome(t_up=0.2, t_down=1.0), "3m", 1).value["C3"] == (-1, 1)
    assert _indices(breathing_kagome(t_up=1.0, t_down=0.2), "3m", 1).value["C3"] == (0, 0)


def test_kekule_honeycomb_with_wannier_centres_at_3c_has_chi6_minus2_0():
    # Wu & Hu, PRL 114, 223901 (2015) lattice; χ^(6) = ([M1^(2)], [K1^(3)]) = (−2, 0) at 3c (PHYSICS.md §6)
    assert _indices(kekule_honeycomb(t_intra=0.3, t_inter=1.0), "6/mmm", 3).value["C6"] == (-2, 0)
    assert _indices(kekule_honeycomb(t_intra=1.0, t_inter=0.3), "6/mmm", 3).value["C6"] == (0, 0)


def test_c6_obstructed_limit_at_2b_has_chi6_0_minus2():
    # PHYSICS.md §6 (Benalcazar, Li, Hughes 2019, checked eigenvalues): Wannier centres at 2b give χ^(6) = (0, −2)
    assert _indices(hexagon_triangle(t_hexagon=0.3, t_triangle=1.0), "6/mmm", 2).value["C6"] == (0, -2)


def test_without_time_reversal_the_sets_keep_the_sectors_time_reversal_would_tie():
    # QWZ (PRB 74, 085308 (2006)) breaks time reversal: [M3^(4)] is listed too (rule derived here, not BLH)
    res = _indices(qi_wu_zhang(m=1.0), "4/m", 1)
    assert len(res.value["C4"]) == 4 and res.details["time_reversal"] is False
    assert any("derived here" in n for n in res.notes)


@pytest.mark.parametrize("gamma, relation", [(0.5, "differ"), (1.5, "coincide")])
def test_bbh_quadrupole_is_refused_by_the_spinless_formula_and_compares_gamma_with_m(gamma, relation):
    # Benalcazar, Bernevig, Hughes, Science 357, 61 (2017): C4^4 = −1 (π flux); PHYSICS.md §6 (checked): the occupied
    # C4 eigenvalues at Γ and M differ in the quadrupole phase γ/λ = 0.5 and coincide for |γ/λ| > 1
    res = _indices(benalcazar_bernevig_hughes(gamma=gamma, lam=1.0), "4mm", 2)
    entry = res.value["C4"]
    assert isinstance(entry, dict) and "C4^4 = −1" in entry["refused"]
    assert entry["compared with Γ"]["M"] == relation
    # no value of the spinless formula anywhere in the record
    assert not any(isinstance(v, tuple) for v in res.value.values())


def test_rotation_indices_apply_only_to_spinless_models():
    from crystaltop.examples import kane_mele

    res = ct.classify(kane_mele(), group="6/mmm", filling=2, invariants=[NAME])[NAME]
    assert res.status == "skipped" and "spinless" in res.message
