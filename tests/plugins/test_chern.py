"""Chern number: published phase diagrams, mesh refinement, errors."""

from __future__ import annotations

import numpy as np
import pytest

import crystaltop as ct
from crystaltop.examples import haldane, qi_wu_zhang


# Qi, Wu, Zhang, Phys. Rev. B 74, 085308 (2006): C = +1 for -2 < m < 0, -1 for 0 < m < 2, 0 for |m| > 2
# in the Berry convention of docs/conventions.md (the published sign depends on the convention; PHYSICS.md §2).
@pytest.mark.parametrize("m, expected", [(-3.0, 0), (-1.5, 1), (-0.5, 1), (0.5, -1), (1.5, -1), (2.5, 0)])
def test_qi_wu_zhang_chern_number_over_its_phase_diagram(m, expected):
    res = ct.classify(qi_wu_zhang(m=m), group="4/m", filling=1)["chern"]
    assert res.status == "ok" and res.value == expected
    assert res.convergence < 0.35


def test_qi_wu_zhang_spin_encoding_gives_the_same_chern_number():
    # the same Hamiltonian written on spin (Qi, Wu, Zhang 2006 used spin language)
    assert ct.classify(qi_wu_zhang(m=-1.0, encoding="spin"), group="4", filling=1)["chern"].value == 1


# Haldane, Phys. Rev. Lett. 61, 2015 (1988): the phase boundary is |M| = 3√3 t2 |sin φ|; with t2 = 0.1 and
# φ = π/4 it sits at M = 0.367 (PHYSICS.md §2: M = 0.33 gives -1, M = 0.40 gives 0, in our hopping convention).
@pytest.mark.parametrize("phi, mass, expected", [(np.pi / 2, 0.0, -1), (np.pi / 4, 0.33, -1), (np.pi / 4, 0.40, 0),
                                                 (-np.pi / 2, 0.0, 1), (np.pi / 2, 0.6, 0)])
def test_haldane_chern_number_on_both_sides_of_its_boundary(phi, mass, expected):
    res = ct.classify(haldane(t2=0.1, phi=phi, mass=mass), group="3", filling=1)["chern"]
    assert res.status == "ok" and res.value == expected


def test_haldane_boundary_sits_at_three_root_three_t2_sin_phi():
    # Haldane 1988: the gap closes at |M| = 3√3 t2 |sin φ| (at K or K'); just inside and just outside.
    t2, phi = 0.1, np.pi / 3
    edge = 3 * np.sqrt(3) * t2 * abs(np.sin(phi))
    inside = ct.classify(haldane(t2=t2, phi=phi, mass=0.93 * edge), group="3", filling=1)["chern"]
    outside = ct.classify(haldane(t2=t2, phi=phi, mass=1.07 * edge), group="3", filling=1)["chern"]
    assert inside.value == -1 and outside.value == 0


def test_a_small_gap_refines_the_mesh_until_the_plaquette_phases_are_small():
    # Haldane model close to its boundary (M = 0.45 < 3√3 t2 = 0.52): curvature peaked at K, coarse start mesh
    res = ct.classify(haldane(t2=0.1, phi=np.pi / 2, mass=0.45), group="3", filling=1,
                      options={"chern": {"mesh": 8}})["chern"]
    assert res.value == -1
    assert res.mesh == "64x64" and res.convergence < 0.35


def test_a_mesh_that_cannot_converge_is_an_error_not_a_value():
    res = ct.classify(haldane(t2=0.1, phi=np.pi / 2, mass=0.5), group="3", filling=1,
                      options={"chern": {"mesh": 8, "max_mesh": 32}})["chern"]
    assert res.status == "failed" and "not converged" in res.message and res.value is None


def test_a_gapless_model_fails_with_the_k_point_named():
    res = ct.classify(qi_wu_zhang(m=2.0), group="4/m", filling=1)["chern"]
    assert res.status == "failed" and res.value is None
    assert "closes at k=(0.500, 0.500)" in res.message


def test_three_dimensional_chern_numbers_per_family_of_planes():
    # Qi–Wu–Zhang layers stacked along z without coupling (common practice, no source): C = (0, 0, C_layer),
    # the planes k3 = const carry the layer's Chern number.
    from crystaltop.examples import stacked_layers

    res = ct.classify(stacked_layers(qi_wu_zhang(m=1.0), 0.0), group="1", filling=1,
                      invariants=["chern"])["chern"]
    assert res.status == "ok" and tuple(res.value) == (0, 0, -1)


from hypothesis import given, settings, strategies as st  # noqa: E402

from crystaltop.testing import random_unitary  # noqa: E402


@settings(max_examples=12, deadline=None)
@given(seed=st.integers(0, 2**31 - 1), which=st.sampled_from(["qwz", "haldane"]))
def test_chern_number_is_unchanged_by_random_basis_changes_and_k_dependent_phases(seed, which):
    # Qi–Wu–Zhang m = 1 (C = -1, Phys. Rev. B 74, 085308 (2006)); Haldane phi = pi/2, M = 0 (C = -1, PRL 61, 2015)
    model, group = (qi_wu_zhang(m=1.0), "4/m") if which == "qwz" else (haldane(), "6/m")
    rng = np.random.default_rng(seed)
    rotated = model.with_basis(random_unitary(model.n_states, rng))
    rewrapped = rotated.rewrapped(rng.integers(-3, 4, size=(model.n_states, 2)))
    res = ct.classify(rewrapped, group=group, filling=1, invariants=["chern"], gauge_seed=seed)["chern"]
    assert res.status == "ok" and res.value == -1
