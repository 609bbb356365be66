"""dislocation_response: predictions of what a dislocation binds, against the published rules."""

from __future__ import annotations

import numpy as np
import pytest

import crystaltop as ct
from crystaltop.examples import (bernevig_hughes_zhang, c4_breathing_square, fu_kane_mele, qi_wu_zhang,
                                 stacked_layers)


def _predict(model, group, filling, **options):
    report = ct.classify(model, group=group, filling=filling, invariants=["dislocation_response"],
                         options={"dislocation_response": options} if options else None)
    return report["dislocation_response"]


@pytest.mark.parametrize("m, binds", [(2.0, False), (6.0, True)])
def test_bhz_binds_a_kramers_pair_at_an_edge_dislocation_only_with_the_band_inversion_at_m(m, binds):
    # Juričić, Mesaros, Slager, Zaanen, Phys. Rev. Lett. 108, 106403 (2012): b·K = π with K = (π, π) for
    # 4 < M/B < 8 binds a Kramers pair for b = a x̂; K = Γ (0 < M/B < 4) binds none (PHYSICS.md §8, from memory)
    res = _predict(bernevig_hughes_zhang(m=m), "4/mmm", 2)
    assert res.status == "ok"
    for rec in res.details["per_burgers_vector"]:
        assert rec["kramers_pair"] is binds
    assert res.details["band_inversion_k"] == ((0.5, 0.5) if binds else (0.0, 0.0))


def test_fu_kane_mele_strong_phase_binds_helical_modes_for_odd_burgers_vectors_only():
    # Ran, Zhang, Vishwanath, Nat. Phys. 5, 298 (2009) with the FKM weak indices (111) (Fu, Kane, Mele 2007):
    # B = (a/2)(0,1,1) = a1 binds, B = (a/2)(1,-1,0) = a1 - a2 does not (PHYSICS.md §8)
    res = _predict(fu_kane_mele(dt=0.4), None, 2, burgers=[(1, -1, 0)])
    assert res.value["b=(1, 0, 0)"] == "helical Kramers pair along the line"
    assert res.value["b=(1, -1, 0)"] == "nothing protected"
    assert res.details["weak_indices"] == (1, 1, 1)


def test_a_weak_stack_binds_modes_for_a_burgers_vector_along_the_stacking_direction_only():
    # Ran, Zhang, Vishwanath 2009: weakly coupled Z2 layers, weak index (001): B = c ẑ binds, in-plane B does not
    res = _predict(stacked_layers(bernevig_hughes_zhang(m=2.0), 0.1), "4/mmm", 2, burgers=[(1, 1, 1), (1, 0, 2)])
    binds = {tuple(r["burgers"]): r["binds"] for r in res.details["per_burgers_vector"]}
    assert binds == {(1, 0, 0): False, (0, 1, 0): False, (0, 0, 1): True, (1, 1, 1): True, (1, 0, 2): False}


def test_a_polarized_insulator_binds_half_a_charge_at_a_dislocation():
    # PHYSICS.md §8: Q = e (ẑ × b)·P mod e; P = (1/2, 1/2) per cell and b = a x̂ give e/2. The flux-free C4
    # model of Benalcazar, Li, Hughes (Phys. Rev. B 99, 245151 (2019)) at 1/4 filling has P = (1/2, 1/2).
    res = _predict(c4_breathing_square(gamma=0.5), "4/mmm", 1, burgers=[(1, 1)])
    charges = {tuple(r["burgers"]): r["charge"] for r in res.details["per_burgers_vector"]}
    assert charges == {(1, 0): 0.5, (0, 1): 0.5, (1, 1): 0.0}


def test_a_chern_insulator_gets_no_charge_prediction_and_says_why():
    res = _predict(qi_wu_zhang(m=1.0), "4/m", 1)
    assert res.status == "skipped" and "Chern number -1" in res.message


def test_a_burgers_vector_that_is_not_a_lattice_vector_is_refused():
    res = _predict(c4_breathing_square(), "4/mmm", 1, burgers=[(0.5, 0.0)])
    assert res.status == "failed" and "is not a non-zero lattice vector" in res.message
