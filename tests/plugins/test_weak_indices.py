"""Weak indices: Fu–Kane–Mele phases, stacks of quantum spin Hall layers, the weak vector, shared plane values."""

from __future__ import annotations

import numpy as np
import pytest

import crystaltop as ct
from crystaltop.examples import bernevig_hughes_zhang, fu_kane_mele, kane_mele, stacked_layers
from crystaltop.examples.constructions import multilayer_stack


def _weak(model, group, filling=2, **kw):
    return ct.classify(model, group=group, filling=filling, invariants=["weak_indices"], **kw)


# Fu, Kane, Mele, Phys. Rev. Lett. 98, 106803 (2007): δt = ±0.4 on the [111] bond gives (111) in both phases, in
# the basis b1 = (2π/a)(−1, 1, 1) and cyclic (PHYSICS.md §4, checked).
@pytest.mark.parametrize("dt", [0.4, -0.4])
def test_fu_kane_mele_weak_indices_are_111_in_both_phases(dt):
    res = _weak(fu_kane_mele(dt=dt, frame="bond"), "-3m")["weak_indices"]
    assert res.status == "ok" and res.value == (1, 1, 1)
    assert res.details["label"] == "(111)"
    assert res.details["fu_kane_label"] == ("1;(111)" if dt > 0 else "0;(111)")


def test_the_weak_vector_is_half_the_sum_of_the_reciprocal_vectors_in_cartesian_form():
    # cubic frame: b1 + b2 + b3 = 2π(1, 1, 1) (a = 1), so M_ν = π(1, 1, 1) (PHYSICS.md §8 uses it for B·M_ν)
    group = ct.point_group("-3m", axis=(1, 1, 1), secondary=(1, -1, 0))
    res = _weak(fu_kane_mele(dt=0.4), group)["weak_indices"]
    np.testing.assert_allclose(res.details["weak_vector"], np.pi * np.ones(3), atol=1e-12)
    np.testing.assert_allclose(res.details["G_nu"], 2 * np.pi * np.ones(3), atol=1e-12)


@pytest.mark.parametrize("layer, group, tz", [(kane_mele(), "6/mmm", 0.02), (bernevig_hughes_zhang(m=2.0), "4/mmm", 0.1)])
def test_weakly_coupled_quantum_spin_hall_layers_are_weak_along_the_stacking(layer, group, tz):
    # a stack of 2D Z2 layers is the weak phase 0;(001) (Fu, Kane, Mele 2007; stacked_layers docstring)
    report = _weak(stacked_layers(layer, tz), group)
    assert report["z2"].value == 0
    assert report["weak_indices"].value == (0, 0, 1)


@pytest.mark.parametrize("n_layers, tz, expected", [(2, 0.0, (0, 0, 0)), (2, 0.02, (0, 0, 0)), (3, 0.02, (0, 0, 1))])
def test_layers_per_cell_count_mod_two(n_layers, tz, expected):
    # ν₃ = n_layers · Z2(layer) mod 2: decoupled (or weakly coupled) layers, an even number per cell, are trivial
    # in the Z2 sense (Fu, Kane, Mele 2007; the parity of a stack, no further source)
    report = _weak(multilayer_stack(kane_mele(), n_layers, tz), "6/mmm", filling=2 * n_layers)
    assert report["z2"].value == 0
    assert report["weak_indices"].value == expected


def test_the_plane_values_are_read_from_z2_so_no_plane_is_diagonalised_twice():
    report = _weak(fu_kane_mele(dt=0.4, frame="bond"), "-3m")
    assert report["weak_indices"].details["plane_z2"] == report["z2"].details["planes"]
    # the six half planes of 13 x 24 points, each distinct point once (planes share lines), nothing more
    from crystaltop.kspace import Grid

    half, full = tuple(np.arange(13) / 24), tuple(np.arange(24) / 24)
    points = set()
    for i in range(3):
        for value in (0.0, 0.5):
            axes = [None, None, None]
            axes[i], axes[(i + 1) % 3], axes[(i + 2) % 3] = (value,), half, full
            grid = Grid(tuple(axes), (False, False, False))
            points |= {tuple(np.round(p, 9)) for p in grid.points.reshape(-1, 3)}
    assert report.band_stats["k_points"] == len(points) < 6 * 13 * 24


def test_a_closed_gap_makes_weak_indices_fail_naming_the_plane_and_k_point():
    # Fu–Kane–Mele at δt = 0: a semimetal with the gap closing at the three X points (factory docstring)
    res = _weak(fu_kane_mele(dt=0.0, frame="bond"), "-3m")["weak_indices"]
    assert res.status == "failed" and "plane k" in res.message and "k=(" in res.message


def test_weak_indices_do_not_apply_in_two_dimensions():
    res = ct.classify(kane_mele(), group="6/mmm", filling=2, invariants=["weak_indices"])["weak_indices"]
    assert res.status == "skipped" and "dimension 3" in res.message
