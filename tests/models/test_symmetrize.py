"""The group average: symmetric random models for many groups, orbital sets and spin."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings

from crystaltop.errors import SymmetryBreakingError
from crystaltop.models import BlochFunction, LatticeModel, check_hermitian, symmetrized, symmetry_violations
from crystaltop.symmetry import point_group

from ._random_models import SYMMETRIC_SETTINGS, symmetric_settings

PLANAR_AND_CHAIN = sorted(name for name, (_, lattice, _) in SYMMETRIC_SETTINGS.items() if len(lattice) < 3)
BULK = sorted(name for name, (_, lattice, _) in SYMMETRIC_SETTINGS.items() if len(lattice) == 3)


def _check(setting, with_t):
    name, symbol, model = setting
    group = point_group(symbol)
    sym = symmetrized(model, group, time_reversal=with_t)
    assert isinstance(sym, BlochFunction) and sym.group is group
    v = symmetry_violations(sym, group, time_reversal=with_t, samples=6)
    assert max(v.values()) < 1e-10, f"{name}: {v}"
    assert check_hermitian(sym, samples=4) < 1e-12
    return sym, model


@settings(max_examples=30, deadline=None)
@given(setting=symmetric_settings(names=PLANAR_AND_CHAIN))
def test_symmetrized_planar_and_chain_models_respect_their_group(setting):
    _check(setting, with_t=False)


@settings(max_examples=15, deadline=None)
@given(setting=symmetric_settings(names=BULK))
def test_symmetrized_bulk_models_respect_their_group_and_time_reversal(setting):
    _check(setting, with_t=True)


@settings(max_examples=15, deadline=None)
@given(setting=symmetric_settings(names=PLANAR_AND_CHAIN))
def test_symmetrized_models_with_time_reversal_respect_both(setting):
    sym, model = _check(setting, with_t=True)
    assert np.allclose(sym.time_reversal_matrix(), model.time_reversal_matrix())


def test_the_average_of_a_symmetric_model_is_the_model_itself():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s")
    model.add_hopping(0.3, 0, 0, [1, 0])
    model.add_hopping(0.3, 0, 0, [0, 1])
    sym = symmetrized(model, point_group("4mm"), time_reversal=True)
    ks = np.random.default_rng(0).random((5, 2))
    assert np.allclose(sym.hamiltonian(ks), model.hamiltonian(ks))


def test_the_average_keeps_the_models_representations_positions_and_name():
    model = LatticeModel(np.eye(2), name="toy")
    model.add_site([0.5, 0.0], "s")
    model.add_site([0.0, 0.5], "s")
    model.add_hopping(0.3 + 0.1j, 0, 1, [1, 0])
    group = point_group("4mm")
    sym = symmetrized(model, group)
    k = np.array([[0.1, 0.3]])
    for op in group:
        assert np.allclose(sym.symmetry_matrix(op, k), model.symmetry_matrix(op, k))
    assert np.allclose(sym.positions, model.positions) and sym.name == "toy (symmetrized)"


def test_averaging_over_time_reversal_needs_a_time_reversal_matrix():
    f = BlochFunction(lambda k: np.zeros(k.shape[:-1] + (1, 1)), lattice=np.eye(1), positions=np.zeros((1, 1)))
    with pytest.raises(SymmetryBreakingError, match="no time-reversal matrix"):
        symmetrized(f, point_group("1"), time_reversal=True)
