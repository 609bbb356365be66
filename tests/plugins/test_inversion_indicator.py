"""Inversion symmetry indicator κ₁ (Z4) and weak Z2 indices from parity counts."""

from __future__ import annotations

import pytest

import crystaltop as ct
from crystaltop.examples import fu_kane_mele, kane_mele
from crystaltop.examples.constructions import doubled, multilayer_stack

from crystaltop_plugins.inversion_indicator import indicator


def _indicator(model, group, filling=2):
    return ct.classify(model, group=group, filling=filling, invariants=["inversion_indicator"])


# Khalaf, Po, Vishwanath, Watanabe, PRX 8, 031070 (2018), in the form κ₁ = ¼ Σ (n⁺ − n⁻) mod 4 (PHYSICS.md §5,
# checked on the Fu–Kane–Mele parities): 1;(111) gives κ₁ = 1, 0;(111) gives κ₁ = 0, weak (111) both.
@pytest.mark.parametrize("dt, kappa, phase", [(0.4, 1, "strong topological insulator"),
                                              (-0.4, 0, "weak topological insulator")])
def test_fu_kane_mele_indicator(dt, kappa, phase):
    report = _indicator(fu_kane_mele(dt=dt, frame="bond"), "-3m")
    res = report["inversion_indicator"]
    assert res.status == "ok" and res.value == (kappa, (1, 1, 1))
    assert res.details["phase"] == phase and not res.details["second_order"]
    check, = res.cross_checks  # against the Wannier-centre values (z2, weak_indices)
    assert check.agree and check.value == (kappa % 2, (1, 1, 1))


def test_two_copies_of_a_strong_topological_insulator_are_flagged_as_second_order():
    # κ₁ is additive: 1 + 1 = 2 with ν₀ = 0 and weak indices (111) + (111) = (000) — the inversion-protected
    # second-order phase (Khalaf et al. 2018, from memory); a small symmetric coupling between the copies keeps it.
    group = ct.point_group("-3m")
    res = _indicator(doubled(fu_kane_mele(dt=0.4, frame="bond"), 0.1, group=group), group, filling=4)
    ind = res["inversion_indicator"]
    assert res["z2"].value == 0 and res["weak_indices"].value == (0, 0, 0)
    assert ind.value == (2, (0, 0, 0)) and ind.details["second_order"]
    assert any("second-order" in note for note in ind.notes)


@pytest.mark.parametrize("offset, kappa", [(0.0, 2), (0.5, 0)])
def test_two_quantum_spin_hall_layers_per_cell_are_second_order_only_on_the_inversion_planes(offset, kappa):
    # Layers on the two inversion-invariant planes z = 0 and z = c/2 are pinned there (a layer construction of the
    # κ₁ = 2 phase, from memory); a pair of layers at ±c/4 can be moved together and removed symmetrically, which
    # is trivial (derived). Both have ν₀ = 0 and weak indices (000).
    model = multilayer_stack(kane_mele(), 2, 0.02, offset=offset)
    res = _indicator(model, "6/mmm", filling=4)["inversion_indicator"]
    assert res.value == (kappa, (0, 0, 0))
    assert res.details["second_order"] == (kappa == 2)


def test_kappa_two_with_a_weak_index_is_not_claimed_as_second_order():
    # one QSH layer per cell: κ₁ = 2 but ν₃ = 1, and moving the inversion centre by c/2 changes κ₁ by 2 z₂,₃
    res = _indicator(multilayer_stack(kane_mele(), 1, 0.02), "6/mmm")["inversion_indicator"]
    assert res.value == (2, (0, 0, 1)) and not res.details["second_order"]
    assert any("depends on the inversion centre" in note for note in res.notes)


def test_the_sign_form_is_stated_and_the_other_form_is_minus_kappa():
    # PHYSICS.md §5: Σ n⁻/2 mod 4 = −κ₁. Four TRIMs with all occupied states odd (n⁻ = 2, n⁺ = 0), four even:
    import numpy as np

    from crystaltop.plugin import trims

    points = trims(3)
    diff = np.array([-2 if k.sum() < 1 else 2 for k in points])  # n⁺ − n⁻ per TRIM, two occupied states
    minus = (2 - diff) // 2
    kappa, _ = indicator(points, diff)
    assert (minus.sum() // 2) % 4 == (-kappa) % 4
    res = _indicator(fu_kane_mele(dt=0.4, frame="bond"), "-3m")["inversion_indicator"]
    assert "n⁺ − n⁻" in res.details["sign_form"] and "−κ₁" in res.details["sign_form"]


def test_the_indicator_needs_inversion_and_three_dimensions():
    assert _indicator(kane_mele(), "6/mmm")["inversion_indicator"].status == "skipped"
