"""The conventions of docs/conventions.md, each pinned on a case where the answer is known."""

from __future__ import annotations

import numpy as np

import crystaltop as ct
from crystaltop.examples import qi_wu_zhang
from crystaltop.models import BlochFunction


def _mirrored_qwz(m):
    """Qi–Wu–Zhang on a left-handed basis (a1 = x, a2 = -y): the same crystal, reduced axes reversed in handedness."""
    base = qi_wu_zhang(m=m)

    def h(k):  # k2 along b2 = -y: the physical k_y is -k2
        return base.hamiltonian(np.stack([k[..., 0], -k[..., 1]], axis=-1))

    return BlochFunction(h, lattice=np.diag([1.0, -1.0]), positions=np.zeros((2, 2)))


def test_the_chern_number_refers_to_the_right_handed_orientation_whatever_the_lattice_basis():
    # Qi, Wu, Zhang, Phys. Rev. B 74, 085308 (2006): C = -1 at m = 1 in our Berry convention (PHYSICS.md §2)
    assert ct.classify(_mirrored_qwz(1.0), group="1", filling=1)["chern"].value == -1


def test_reduced_k_transforms_with_the_inverse_transpose_of_the_lattice_matrix():
    # common practice (no source): (R k_cart) in reduced units equals inv(W).T k_red for W = inv(A.T) R A.T
    lattice = np.array([[1.0, 0.0], [-0.5, np.sqrt(3) / 2]])
    op = ct.point_group("6")["6z+"]
    w = np.asarray(op.in_basis(lattice), dtype=float)
    k = np.array([0.2, 0.35])
    recip = 2 * np.pi * np.linalg.inv(lattice).T
    r = op.matrix[:2, :2]
    by_cartesian = np.linalg.solve(recip.T, r @ (recip.T @ k))
    assert np.allclose(op.acts_on_k(k, lattice), by_cartesian)
    assert np.allclose(np.linalg.inv(w).T @ k, by_cartesian)


def test_a_full_turn_is_minus_one_on_spin_and_a_mirror_is_inversion_times_a_half_turn():
    pg = ct.point_group("4/mmm")
    c4 = pg["4z+"].spin
    assert np.allclose(np.linalg.matrix_power(c4, 4), -np.eye(2))
    assert np.allclose(pg["mz"].spin, pg["2z"].spin)
    assert np.allclose(pg["-1"].spin, np.eye(2))


def test_time_reversal_squares_to_minus_one_with_spin_and_plus_one_without():
    from crystaltop.symmetry import time_reversal_matrix

    ut = time_reversal_matrix(3, True)
    assert np.allclose(ut @ ut.conj(), -np.eye(6))
    assert np.allclose(time_reversal_matrix(3, False), np.eye(3))
