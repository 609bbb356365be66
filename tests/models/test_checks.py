"""Checks: Hermiticity, violations per operation and for time reversal, refusal messages, group detection."""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.errors import NonHermitianError, SymmetryBreakingError
from crystaltop.models import (BlochFunction, LatticeModel, check_hermitian, check_symmetric, detect_point_group,
                               symmetry_violations)
from crystaltop.symmetry import point_group


def square_s_model(onsite_b: float = 0.0) -> LatticeModel:
    """s orbitals at 1a and 1b of the square lattice, nearest-neighbour bonds: symmetric under 4/mmm."""
    model = LatticeModel(np.eye(2), name="two s sites")
    a, = model.add_site([0.0, 0.0], "s")
    b, = model.add_site([0.5, 0.5], "s", label="b")
    for cell in ([0, 0], [-1, 0], [0, -1], [-1, -1]):
        model.add_hopping(0.4, a, b, cell)
    model.add_hopping(0.1, a, a, [1, 0])
    model.add_hopping(0.1, a, a, [0, 1])
    model.set_onsite(b, onsite_b)
    return model


def test_a_symmetric_model_has_violations_at_rounding_level_for_every_operation_and_time_reversal():
    v = symmetry_violations(square_s_model(), point_group("4/mmm"), time_reversal=True)
    assert set(v) == {op.label for op in point_group("4/mmm")} | {"T"}
    assert max(v.values()) < 1e-14


def test_violations_are_relative_to_the_size_of_h():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s px py")
    model.add_hopping(0.3, 0, 1, [1, 0])  # s-px bond along x only: breaks the four-fold rotation
    small = symmetry_violations(model, point_group("4"))["4z+"]
    model.add_hopping(0.3 * 1e5, 0, 1, [1, 0])
    assert np.isclose(symmetry_violations(model, point_group("4"))["4z+"], small, rtol=1e-6)


def test_a_group_the_model_breaks_is_refused_naming_the_operation_the_group_and_the_size():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s px py")
    model.add_hopping(0.3, 0, 1, [1, 0])
    model.add_hopping(0.3, 0, 2, [0, 1])
    model.add_hopping(0.1j, 1, 2, [1, 1])  # a complex px-py bond along [110]: breaks the mirrors
    with pytest.raises(SymmetryBreakingError) as info:
        check_symmetric(model, point_group("4mm"))
    message = str(info.value)
    assert message.startswith("the model breaks ") and " of group 4mm: ||D H(k) D† − H(gk)|| = " in message
    worst = max((v, k) for k, v in symmetry_violations(model, point_group("4mm")).items())
    assert f"breaks {worst[1]} of group 4mm" in message
    assert f"= {worst[0]:.2g} ||H|| at k=(" in message


def test_time_reversal_breaking_is_refused_with_its_own_message():
    model = square_s_model()
    model.add_hopping(0.2j, 0, 0, [1, 1])  # complex amplitude: breaks T = K
    assert symmetry_violations(model, point_group("1"), time_reversal=True)["T"] > 0.01
    with pytest.raises(SymmetryBreakingError, match=r"breaks time reversal: \|\|U_T H\(k\)\* U_T† − H\(−k\)\|\| = "):
        check_symmetric(model, point_group("1"), time_reversal=True)


def test_check_symmetric_returns_the_violations_when_the_model_passes():
    v = check_symmetric(square_s_model(), point_group("4mm"), time_reversal=True)
    assert max(v.values()) < 1e-12


def test_asking_for_time_reversal_of_a_model_without_one_is_refused():
    f = BlochFunction(lambda k: np.zeros(k.shape[:-1] + (1, 1)), lattice=np.eye(1), positions=np.zeros((1, 1)))
    with pytest.raises(SymmetryBreakingError, match="defines no time-reversal matrix"):
        symmetry_violations(f, point_group("1"), time_reversal=True)


def test_the_sample_is_reproducible_from_the_seed_and_can_be_given_explicitly():
    model = square_s_model(onsite_b=0.2)
    model.add_hopping(0.05, 0, 1, [1, 0])
    group = point_group("4mm")
    assert symmetry_violations(model, group, seed=3) == symmetry_violations(model, group, seed=3)
    at_gamma = symmetry_violations(model, group, samples=np.zeros((1, 2)))
    assert max(at_gamma.values()) < 1e-14  # every operation fixes Γ, where a symmetric-looking H cannot be told apart


def test_a_non_hermitian_callable_is_refused_naming_the_k_point_and_the_size():
    def h(k):
        out = np.zeros(k.shape[:-1] + (2, 2), dtype=complex)
        out[..., 0, 1] = 0.5
        return out

    f = BlochFunction(h, lattice=np.eye(2), positions=np.zeros((2, 2)))
    with pytest.raises(NonHermitianError, match=r"H\(k\) is not Hermitian at k=\(0\.250, 0\.500\): \|H - H†\| = 7\.1e-01"):
        check_hermitian(f, [[0.25, 0.5]])


def test_the_hermiticity_check_returns_the_relative_deviation():
    assert check_hermitian(square_s_model()) < 1e-15


def test_detection_finds_the_largest_group_the_sites_allow_and_h_respects():
    # s orbitals at 1a and 1b of the square lattice: 4/mmm (mz acts trivially on a planar s model)
    assert detect_point_group(square_s_model()).symbol == "4/mmm"
    model = square_s_model()
    model.add_hopping(0.05, 0, 0, [1, 1])  # a bond along [110] but not [-110]: mirrors m[110], m[-110] stay
    found = detect_point_group(model)
    assert found.symbol == "mmm"
    assert {op.label for op in found} == {"1", "2z", "2[110]", "2[-110]", "-1", "mz", "m[110]", "m[-110]"}


def test_detection_of_a_bare_callable_gives_the_trivial_group():
    f = BlochFunction(lambda k: np.zeros(k.shape[:-1] + (1, 1)), lattice=np.eye(2), positions=np.zeros((1, 2)))
    assert detect_point_group(f).symbol == "1"


def test_detection_of_a_wrapped_model_uses_the_group_its_representations_generate():
    model = square_s_model()
    f = BlochFunction(model.hamiltonian, lattice=np.eye(2), positions=model.positions,
                      representations={op: (lambda k, _op=op: model.symmetry_matrix(_op, k))
                                       for op in point_group("2mm")})
    assert detect_point_group(f).symbol == "mm2"
