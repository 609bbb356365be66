"""Orbital, spin and time-reversal representations of the point operations."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from crystaltop.errors import ShapeError, SymmetryBreakingError, UnknownOrbitalError
from crystaltop.symmetry import (
    double_group_sign,
    expand_kinds,
    orbital_block,
    orbital_matrix,
    point_group,
    spin_matrix,
    time_reversal_matrix,
)
from crystaltop.symmetry.spin import PAULI

from .strategies import ALL_SETTINGS, rotations, symbols

SPD = ["s", "p", "d"]


def _group_and_pair(data, symbol, rotation):
    group = point_group(symbol).oriented(rotation)
    a = data.draw(st.sampled_from(group.operations), label="a")
    b = data.draw(st.sampled_from(group.operations), label="b")
    return group, a, b


# -- orbitals ------------------------------------------------------------------------------------


@settings(max_examples=40, deadline=None)
@given(data=st.data(), symbol=symbols, rotation=rotations)
def test_orbital_matrices_of_s_p_d_multiply_like_the_operations(data, symbol, rotation):
    group, a, b = _group_and_pair(data, symbol, rotation)
    product = group.multiply(a, b)
    d_a, d_b, d_ab = (orbital_block(SPD, op) for op in (a, b, product))
    assert np.abs(d_a @ d_b - d_ab).max() < 1e-12
    assert np.abs(d_a @ d_a.T - np.eye(9)).max() < 1e-12


@pytest.mark.parametrize("symbol", ALL_SETTINGS)
def test_orbital_representation_is_a_homomorphism_on_every_catalogue_group(symbol):
    group = point_group(symbol)
    reps = orbital_block(SPD, group.matrices)  # batched over the operations
    for i, a in enumerate(group):
        for j, b in enumerate(group):
            k = group.operations.index(group.multiply(a, b))
            assert np.abs(reps[i] @ reps[j] - reps[k]).max() < 1e-12


def test_p_orbitals_transform_with_the_cartesian_matrix():
    for op in point_group("m-3m"):
        assert np.array_equal(orbital_matrix("p", op), op.matrix)


def _real_d_harmonics(r: np.ndarray) -> np.ndarray:
    # Real d spherical harmonics up to their common factor √15/(2√π) (e.g. the table in Blanco, Flórez
    # and Bermejo, J. Mol. Struct. THEOCHEM 419, 19 (1997) -- from memory): xy, yz, zx, (x²-y²)/2,
    # (3z²-r²)/(2√3).
    x, y, z = r.T
    return np.stack([x * y, y * z, z * x, (x * x - y * y) / 2, (3 * z * z - (x * x + y * y + z * z)) / (2 * np.sqrt(3))], -1)


@settings(max_examples=30, deadline=None)
@given(data=st.data(), symbol=symbols, rotation=rotations)
def test_d_matrix_reproduces_g_f_of_r_equal_f_of_r_inverse_r_on_the_polynomials(data, symbol, rotation):
    group, op, _ = _group_and_pair(data, symbol, rotation)
    points = np.random.default_rng(1).normal(size=(12, 3))
    moved = _real_d_harmonics(points @ op.matrix)  # f(R⁻¹ r) for rows r, R orthogonal
    expected = _real_d_harmonics(points) @ orbital_matrix("d", op)  # Σ_a f_a(r) D[a, b]
    assert np.abs(moved - expected).max() < 1e-12


@pytest.mark.parametrize("symbol", ["m-3m", "6/mmm"])
def test_characters_of_p_and_d_follow_the_rotation_angle_formula(symbol):
    # Character of the angular-momentum-l representation: χ_l(θ) = sin((l + 1/2)θ) / sin(θ/2), with parity
    # (-1)^l under inversion (Tinkham, Group Theory and Quantum Mechanics, McGraw-Hill 1964, §5-6 -- from memory).
    for op in point_group(symbol):
        theta = op.angle
        chi = lambda l: 2 * l + 1 if abs(theta) < 1e-12 else np.sin((l + 0.5) * theta) / np.sin(theta / 2)
        assert np.trace(orbital_matrix("p", op)) == pytest.approx(op.det * chi(1), abs=1e-12)
        assert np.trace(orbital_matrix("d", op)) == pytest.approx(chi(2), abs=1e-12)


def test_four_fold_rotation_on_d_orbitals():
    # C4z: xy and x²-y² change sign, z² is invariant (characters of B2, B1, A1 in the standard C4v character
    # table -- from memory); from f(R⁻¹ r) with R⁻¹(x, y, z) = (y, -x, z): g dyz = -dzx and g dzx = dyz.
    d = orbital_matrix("d", point_group("4")["4z+"])
    assert np.allclose(np.diag(d)[[0, 3, 4]], [-1, -1, 1])
    assert np.allclose(d[1:3, 1:3], [[0, 1], [-1, 0]])


def test_a_span_that_is_not_invariant_raises_naming_the_orbitals_and_the_operation():
    c4 = point_group("4")["4z+"]
    with pytest.raises(SymmetryBreakingError) as info:
        orbital_block(["px"], c4)
    assert "px" in str(info.value) and "4z+" in str(info.value) and "\n" not in str(info.value)
    with pytest.raises(SymmetryBreakingError, match="3z\\+"):
        orbital_block(["dxy"], point_group("3")["3z+"].matrix)  # a plain matrix gets its label too
    assert np.allclose(orbital_block(["px", "py"], c4), [[0, -1], [1, 0]])
    # (dxy, dx2-y2) carry the two-dimensional E of C3v: character -1 under C3 (standard table -- from memory).
    e_block = orbital_block(["dxy", "dx2-y2"], point_group("3")["3z+"])
    assert np.allclose(e_block @ e_block.T, np.eye(2)) and np.trace(e_block) == pytest.approx(-1.0)


def test_orbital_blocks_on_mixed_and_repeated_kinds():
    mx = point_group("mm2")["mx"]
    assert np.allclose(orbital_block("s px", mx), np.diag([1, -1]))
    assert np.allclose(orbital_block(["s", "s"], mx), np.eye(2))
    block = orbital_block(["px", "py", "px", "py"], point_group("4")["4z+"])
    assert np.allclose(block[:2, 2:], 0) and np.allclose(block[:2, :2], block[2:, 2:])


def test_expand_kinds_unfolds_shells_and_aliases():
    assert expand_kinds("s p") == ["s", "px", "py", "pz"]
    assert expand_kinds(["d"]) == ["dxy", "dyz", "dzx", "dx2-y2", "dz2"]
    assert expand_kinds("px, dxz") == ["px", "dzx"]
    with pytest.raises(UnknownOrbitalError, match="'f'"):
        expand_kinds("s f")
    with pytest.raises(UnknownOrbitalError):
        expand_kinds([])


def test_orbital_block_rejects_a_non_orthogonal_matrix():
    with pytest.raises(ShapeError):
        orbital_block("p", np.ones((3, 3)))


# -- spin -----------------------------------------------------------------------------------------


@settings(max_examples=40, deadline=None)
@given(data=st.data(), symbol=symbols, rotation=rotations)
def test_spin_images_multiply_like_the_operations_up_to_the_double_group_sign(data, symbol, rotation):
    group, a, b = _group_and_pair(data, symbol, rotation)
    sign = group.double_group_sign(a, b)
    assert sign in (1, -1)
    assert sign == double_group_sign(a.matrix, b.matrix)
    assert np.abs(a.spin @ b.spin - sign * group.multiply(a, b).spin).max() < 1e-12


@settings(max_examples=30, deadline=None)
@given(data=st.data(), symbol=symbols, rotation=rotations)
def test_spin_image_covers_the_proper_part(data, symbol, rotation):
    # SU(2) -> SO(3): U (n·σ) U† = (P n)·σ for the proper part P = det(R) R (Sakurai, Modern Quantum
    # Mechanics, Addison-Wesley 1994, §3.3 -- from memory); fixes the sense of rotation.
    _, op, _ = _group_and_pair(data, symbol, rotation)
    u = op.spin
    proper = op.det * op.matrix
    assert np.allclose(u @ u.conj().T, np.eye(2)) and np.isclose(np.linalg.det(u), 1)
    for j in range(3):
        assert np.allclose(u @ PAULI[j] @ u.conj().T, np.einsum("i,iab->ab", proper[:, j], PAULI), atol=1e-12)
    assert np.array_equal(spin_matrix(op.matrix), op.spin)


def test_spin_conventions_for_rotations_mirrors_and_inversion():
    group = point_group("4/mmm")
    sx, sy, sz = PAULI
    assert np.allclose(group["2z"].spin, -1j * sz)
    assert np.allclose(group["mz"].spin, -1j * sz)  # mirror = inversion × C2 about its normal
    assert np.allclose(group["mx"].spin, -1j * sx)
    assert np.allclose(group["-1"].spin, np.eye(2))
    assert np.allclose(group["4z+"].spin, (np.eye(2) - 1j * sz) / np.sqrt(2))
    assert np.allclose(group["-4z+"].spin, group["4z+"].spin)
    # A full turn is -1 for spin-1/2 (Sakurai 1994, §3.2 -- from memory).
    assert np.allclose(np.linalg.matrix_power(group["4z+"].spin, 4), -np.eye(2))


def test_half_turns_use_the_canonical_axis_sign():
    for op in point_group("m-3m"):
        if op.fold == 2:
            assert op.angle == pytest.approx(np.pi)
            first = next(c for c in op.axis[::-1] if abs(c) > 1e-9)
            assert first > 0, op.label


# -- time reversal --------------------------------------------------------------------------------


def test_time_reversal_squares_to_minus_one_with_spin_and_plus_one_without():
    spinful = time_reversal_matrix(3, spinful=True)
    spinless = time_reversal_matrix(3, spinful=False)
    assert spinful.shape == (6, 6) and spinless.shape == (3, 3)
    assert np.allclose(spinful @ spinful.conj(), -np.eye(6))
    assert np.allclose(spinless @ spinless.conj(), np.eye(3))
    assert np.allclose(spinful[:2, :2], [[0, 1], [-1, 0]])  # i σ_y on (up, down) of orbital 0


def test_time_reversal_commutes_with_every_spinful_point_operation():
    u_t = time_reversal_matrix(9, spinful=True)
    for op in point_group("m-3m"):
        u_g = np.kron(orbital_block(SPD, op), op.spin)
        assert np.allclose(u_t @ u_g.conj() @ u_t.conj().T, u_g)


@pytest.mark.parametrize("bad", [0, -1, 2.5, True])
def test_time_reversal_rejects_a_bad_orbital_count(bad):
    with pytest.raises(ShapeError):
        time_reversal_matrix(bad, spinful=True)
