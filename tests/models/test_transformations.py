"""Basis changes and rewrapping: same spectra, same symmetry, consistently transformed D, U_T and positions."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from crystaltop.errors import CrystaltopError, ShapeError
from crystaltop.models import LatticeModel, symmetrized, symmetry_violations
from crystaltop.symmetry import point_group

from ._random_models import kramers_safe_shifts, random_lattice_models, random_unitary, symmetric_settings

FAST_SETTINGS = ["4mm-square", "6mm-honeycomb", "3m-honeycomb", "-1-chain", "-1-oblique", "4/mmm-tetragonal"]


def _spectrum(model, ks):
    return np.linalg.eigvalsh(model.hamiltonian(ks))


@settings(max_examples=25, deadline=None)
@given(model=random_lattice_models(), seed=st.integers(0, 10_000))
def test_a_random_unitary_basis_change_keeps_the_spectrum_and_composes_the_basis(model, seed):
    rng = np.random.default_rng(seed)
    u = random_unitary(model.n_states, rng)
    rotated = model.with_basis(u)
    ks = rng.random((6, model.dim))
    assert np.allclose(_spectrum(rotated, ks), _spectrum(model, ks), atol=1e-10)
    assert np.allclose(rotated.hamiltonian(ks), u.conj().T @ model.hamiltonian(ks) @ u)
    assert np.allclose(rotated.basis, u)
    assert np.allclose(rotated.positions, model.positions)
    again = rotated.with_basis(u.conj().T)
    assert np.allclose(again.hamiltonian(ks), model.hamiltonian(ks), atol=1e-12)
    assert np.allclose(again.basis, np.eye(model.n_states), atol=1e-12)


@settings(max_examples=25, deadline=None)
@given(model=random_lattice_models(), seed=st.integers(0, 10_000))
def test_rewrapping_keeps_the_spectrum_and_moves_the_positions(model, seed):
    rng = np.random.default_rng(seed)
    shifts = kramers_safe_shifts(model, rng)
    moved = model.rewrapped(shifts)
    ks = rng.random((6, model.dim))
    assert np.allclose(_spectrum(moved, ks), _spectrum(model, ks), atol=1e-10)
    assert np.allclose(moved.positions, model.positions + shifts)
    # the k-dependent phase: H'_ab(k) = e^{2πi k·(n_a − n_b)} H_ab(k)
    phase = np.exp(2j * np.pi * (ks @ shifts.T))
    assert np.allclose(moved.hamiltonian(ks), phase[:, :, None] * model.hamiltonian(ks) * np.conj(phase[:, None, :]))
    cells, blocks = moved.real_space_blocks()
    assert np.allclose(np.einsum("km,mij->kij", np.exp(2j * np.pi * ks @ cells.T), blocks), moved.hamiltonian(ks))


@settings(max_examples=20, deadline=None)
@given(setting=symmetric_settings(names=FAST_SETTINGS), seed=st.integers(0, 10_000), with_t=st.booleans())
def test_basis_changes_and_rewrapping_keep_a_symmetric_model_symmetric(setting, seed, with_t):
    _, symbol, model = setting
    group = point_group(symbol)
    symmetric = symmetrized(model, group, time_reversal=with_t)
    rng = np.random.default_rng(seed)
    rotated = symmetric.with_basis(random_unitary(model.n_states, rng))
    moved = symmetric.rewrapped(kramers_safe_shifts(model, rng))
    both = moved.with_basis(random_unitary(model.n_states, rng)).rewrapped(kramers_safe_shifts(model, rng))
    for variant in (rotated, moved, both):
        assert max(symmetry_violations(variant, group, time_reversal=with_t, samples=6).values()) < 1e-10


def test_the_position_phase_is_diagonal_in_the_site_basis_and_rotates_with_the_basis():
    model = LatticeModel(np.eye(2))
    model.add_site([0.25, 0.0], "s")
    model.add_site([0.0, 0.5], "s")
    dk = np.array([0.1, 0.2])
    expected = np.diag(np.exp(-2j * np.pi * np.array([0.025, 0.1])))
    assert np.allclose(model.position_phase(dk), expected)
    u = random_unitary(2, np.random.default_rng(0))
    assert np.allclose(model.with_basis(u).position_phase(dk), u.conj().T @ expected @ u)
    moved = model.rewrapped([[1, 0], [0, -1]])
    assert np.allclose(moved.position_phase(dk), np.diag(np.exp(-2j * np.pi * np.array([0.125, -0.1]))))
    with pytest.raises(ShapeError, match=r"dk must have shape \(2,\)"):
        model.position_phase(np.zeros((2, 2)))


def test_time_reversal_transforms_as_q_dagger_u_t_q_conjugate():
    model = LatticeModel(np.eye(2), spinful=True)
    model.add_site([0, 0], "s")
    model.add_hopping(0.3, 0, 0, [1, 0])
    u = random_unitary(2, np.random.default_rng(5))
    rotated = model.with_basis(u)
    assert np.allclose(rotated.time_reversal_matrix(), u.conj().T @ model.time_reversal_matrix() @ u.conj())
    assert symmetry_violations(rotated, [], time_reversal=True)["T"] < 1e-12


def test_rewrapping_that_splits_kramers_partners_is_refused():
    model = LatticeModel(np.eye(2), spinful=True)
    model.add_site([0, 0], "s")
    with pytest.raises(CrystaltopError, match="time reversal relates basis states 0 and 1"):
        model.rewrapped([[0, 0], [1, 0]])


def test_shifts_must_be_integers_of_shape_n_states_by_dim():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s")
    with pytest.raises(ShapeError, match=r"shifts must be integers of shape \(1, 2\)"):
        model.rewrapped([[0.5, 0]])
    with pytest.raises(ShapeError, match=r"\(1, 2\)"):
        model.rewrapped([0, 0, 1])


def test_a_basis_change_must_be_unitary_and_square():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s px")
    with pytest.raises(CrystaltopError, match="not unitary"):
        model.with_basis(2 * np.eye(2))
    with pytest.raises(ShapeError, match=r"\(2, 2\)"):
        model.with_basis(np.eye(3))
