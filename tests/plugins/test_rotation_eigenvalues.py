"""Occupied rotation eigenvalues, C_n^n detection, time-reversal pairs, and the Chern number mod n cross-check."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import crystaltop as ct
from crystaltop.errors import SymmetryBreakingError
from crystaltop.examples import (benalcazar_bernevig_hughes, c4_breathing_square, haldane, kane_mele, qi_wu_zhang,
                                 stacked_layers)
from crystaltop.examples.crystalline import random_rotation_model
from crystaltop.models import BlochFunction, LatticeModel
from crystaltop.symmetry import point_group

NAME = "rotation_eigenvalues"


def _run(model, group, filling, **kw):
    return ct.classify(model, group=group, filling=filling, invariants=[NAME], **kw)


def _fgb(report):
    chern = report["chern"]
    checks = [c for c in chern.cross_checks if "Fang" in c.method]
    assert len(checks) == 1, chern
    return chern, checks[0]


# PHYSICS.md §3 check: QWZ with spinless D(4z+) = diag(1, i) has the C4 product i^C = −i at m = 1 (C = −1),
# +i at m = −1 (C = +1), 1 at m = 3 (C = 0) (Fang, Gilbert, Bernevig, PRB 86, 115112 (2012); checked).
@pytest.mark.parametrize("m, chern", [(1.0, -1), (-1.0, 1), (3.0, 0)])
def test_qi_wu_zhang_chern_number_mod_4_from_rotation_eigenvalues(m, chern):
    report = _run(qi_wu_zhang(m=m), "4/m", 1)
    res, check = _fgb(report)
    assert res.status == "ok" and res.value == chern and check.agree
    assert check.value["mod 4"] == chern % 4 and check.value["mod 2"] == chern % 2


def test_haldane_chern_number_mod_6_3_and_2_agree_with_the_lattice_value():
    # Haldane, PRL 61, 2015 (1988), our convention: C = −1 at φ = π/2, M = 0 (PHYSICS.md §2); FGB for C6, C3, C2
    res, check = _fgb(_run(haldane(), "6/m", 1))
    assert res.value == -1 and check.agree
    assert check.value == {"mod 6": 5, "mod 3": 2, "mod 2": 1}


def test_a_disagreeing_rotation_count_turns_the_chern_record_into_a_failure_naming_both_values():
    # flip the C4 representation's phase on the p-like state: D = diag(1, −i) makes FGB give −C
    good = qi_wu_zhang(m=1.0)
    group = point_group("4")
    bad = BlochFunction(good, representations={group["4z+"]: np.diag([1.0, -1j])}, group=group)
    report = ct.classify(bad, group="4", filling=1, invariants=[NAME], symmetry_tol=1e3)
    chern = report["chern"]
    assert chern.status == "failed" and "cross-check disagrees" in chern.message
    assert "-1" in chern.message and "Fang" in chern.message


def test_c4_breathing_square_counts_at_gamma_x_and_m():
    # Benalcazar, Li, Hughes, PRB 99, 245151 (2019): Wannier centre at 1b, so C4 = 1 at Γ, −1 at M, C2 = −1 at X
    res = _run(c4_breathing_square(), "4/mmm", 1)[NAME]
    assert res.status == "ok"
    assert res.value["4z+"]["Γ"] == {"1": 1, "±i": 0, "-1": 0}
    assert res.value["4z+"]["M"] == {"1": 0, "±i": 0, "-1": 1}
    assert res.value["2z"]["X"] == {"1": 0, "-1": 1}


def test_bbh_quadrupole_c4_squares_to_minus_one_and_its_eigenvalues_are_paired():
    # Benalcazar, Bernevig, Hughes, Science 357, 61 (2017): π flux, C4^4 = −1; PHYSICS.md §6 (checked):
    # e^{±3iπ/4} at Γ and e^{±iπ/4} at M for γ = 0.5, λ = 1
    res = _run(benalcazar_bernevig_hughes(gamma=0.5), "4mm", 2)[NAME]
    assert res.status == "ok"
    assert res.details["powers"]["4z+"] == -1
    assert any("4z+^4 = −1 on a spinless model" in n for n in res.notes)
    assert res.value["4z+"]["Γ"] == {"e^{±iπ/4}": 0, "e^{±3iπ/4}": 1}
    assert res.value["4z+"]["M"] == {"e^{±iπ/4}": 1, "e^{±3iπ/4}": 0}


def test_spinful_kane_mele_reports_kramers_pairs_at_time_reversal_invariant_momenta_only():
    # Kane, Mele, PRL 95, 226801 (2005): spin ½, C_n^n = −1; K is not a TRIM, so it is counted, not paired
    res = _run(kane_mele(), "6/mmm", 2)[NAME]
    assert res.status == "ok" and res.details["powers"] == {"2z": -1, "3z+": -1, "6z+": -1}
    assert res.value["2z"]["M"] == {"±i": 1}
    assert res.value["3z+"]["K"] == {"e^{iπ/3}": 1, "-1": 0, "e^{-iπ/3}": 1}
    assert sum(res.value["6z+"]["Γ"].values()) == 1


def test_three_dimensional_stack_cross_checks_the_chern_number_of_the_plane_normal_to_the_axis():
    # a stack of Haldane layers (Haldane 1988, C = −1 per layer, convention of PHYSICS.md §2): C3 = −1 on k3 = 0
    report = _run(stacked_layers(haldane(), 0.05), "6/m", 1)
    res, check = _fgb(report)
    assert res.value[2] == -1 and check.agree
    assert check.value["C3 mod 6"] == 5


def test_degenerate_bands_across_the_filling_at_a_high_symmetry_momentum_are_named():
    # a px, py doublet on the square lattice at filling 1: C4 keeps the doublet degenerate at Γ (and M)
    model = LatticeModel(np.eye(2), name="p doublet")
    px, py = model.add_site([0.0, 0.0], "px py")
    for cell, (a, b) in (((1, 0), (1.0, -0.3)), ((0, 1), (-0.3, 1.0))):
        model.add_hopping(a, px, px, cell)
        model.add_hopping(b, py, py, cell)
    res = _run(model, "4mm", 1)[NAME]
    assert res.status == "failed"
    assert "gap" in res.message and "k=(0.000, 0.000)" in res.message and "Γ" in res.message


def test_qi_wu_zhang_at_its_transition_fails_naming_m():
    # QWZ (PRB 74, 085308 (2006)): the gap closes at M for m = 2 (PHYSICS.md §2)
    res = _run(qi_wu_zhang(m=2.0), "4/m", 1)[NAME]
    assert res.status == "failed" and "k=(0.500, 0.500)" in res.message and "M" in res.message


def test_a_rotation_matrix_that_is_not_a_symmetry_is_refused_and_named():
    model = c4_breathing_square()
    group = point_group("4")
    wrong = BlochFunction(model, representations={group["4z+"]: np.diag([1.0, -1.0, 1.0, 1.0])}, group=group)
    with pytest.raises(SymmetryBreakingError, match=r"breaks (4z\+|2z)"):
        ct.classify(wrong, group="4", filling=1, invariants=[NAME])
    # past the model check (tolerance raised by hand) the plugin itself refuses, naming the operation
    res = ct.classify(wrong, group="4", filling=1, invariants=[NAME], symmetry_tol=1e3)[NAME]
    assert res.status == "failed" and "4z+" in res.message and "Γ" in res.message
    assert "symmetry of the model" in res.message


# Fang, Gilbert, Bernevig, PRB 86, 115112 (2012): C ≡ (rotation-eigenvalue product) mod n on every gapped sample
# of random C_n-symmetric Chern insulators built from s, p and d orbitals (angular momenta 0, ±1, ±2).
@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.filter_too_much, HealthCheck.too_slow])
@given(n=st.sampled_from([2, 3, 4, 6]), seed=st.integers(0, 10_000), orbitals=st.integers(0, 2),
       extra=st.sampled_from([None, 0, 1]))
def test_fang_gilbert_bernevig_value_equals_the_lattice_chern_number_mod_n(n, seed, orbitals, extra):
    model = random_rotation_model(seed, n, orbitals=orbitals, extra_site=extra)
    mesh = np.stack(np.meshgrid(np.arange(12) / 12, np.arange(12) / 12, indexing="ij"), -1).reshape(-1, 2)
    e = np.linalg.eigvalsh(model.hamiltonian(mesh))
    gaps = (e[:, 1:] - e[:, :-1]).min(axis=0)
    filling = int(np.argmax(gaps)) + 1
    if gaps[filling - 1] < 0.1:
        return  # no gapped filling for this sample: nothing to compare
    report = ct.classify(model, group=str(n), filling=filling, invariants=[NAME], gap_tol=1e-3,
                         options={"chern": {"mesh": 24, "max_mesh": 96}})
    chern = report["chern"]
    if chern.status != "ok" and "cross-check" not in chern.message:
        return  # a gap too small for the meshes allowed
    checks = [c for c in chern.cross_checks if "Fang" in c.method]
    assert checks and checks[0].agree, f"C = {chern.value}, FGB {checks[0].value if checks else None}"


@settings(max_examples=40, deadline=None)
@given(n=st.sampled_from([2, 3, 4, 6]), power=st.sampled_from([1, -1]), momenta=st.integers(1, 5),
       occupied=st.integers(1, 4), seed=st.integers(0, 10_000), stray=st.booleans())
def test_the_batched_sector_counts_equal_the_counts_momentum_by_momentum(n, power, momenta, occupied, seed, stray):
    # sector_counts (one batch) against count_sectors and rotation_power of crystaltop.plugin at each momentum; a
    # stray phase anywhere sends the caller back to the one-by-one path, which names the momentum
    from crystaltop.plugin import count_sectors, rotation_power, rotation_sectors, sector_counts

    rng = np.random.default_rng(seed)
    sectors = rotation_sectors(n, power)
    lams = [sectors[rng.integers(0, n, occupied)] * np.exp(1e-7j * rng.normal(size=occupied)) for _ in range(momenta)]
    if stray:
        lams[rng.integers(momenta)][0] *= np.exp(0.3j)
        assert sector_counts(lams, n) == (None, None)
        return
    got_power, got = sector_counts(lams, n)
    assert got_power == power == rotation_power(lams[0], n)
    assert [c.tolist() for c in got] == [count_sectors(lam, n, power).tolist() for lam in lams]
