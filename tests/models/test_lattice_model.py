"""The tight-binding builder: assembly of H(k), Hermitian completion, spin, symmetry matrices, bad input."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings

from crystaltop.errors import CrystaltopError, LatticeMismatchError, NonHermitianError, ShapeError
from crystaltop.models import LatticeModel, check_hermitian, symmetry_violations
from crystaltop.symmetry import point_group

from ._random_models import random_lattice_models, symmetric_settings

SX = np.array([[0, 1], [1, 0]], dtype=complex)
SY = np.array([[0, -1j], [1j, 0]], dtype=complex)
SZ = np.diag([1.0, -1.0]).astype(complex)


def _by_hand(model: LatticeModel, k: np.ndarray) -> np.ndarray:
    """H(k) summed term by term in plain Python: the reference for the vectorised assembly."""
    s = 2 if model.spinful else 1
    out = np.zeros((model.n_states, model.n_states), dtype=complex)
    for orbital, block in model.onsite_terms.items():
        out[orbital * s:(orbital + 1) * s, orbital * s:(orbital + 1) * s] += block
    for bond in model.bonds:
        value = np.asarray(bond.value, dtype=complex).reshape(s, s)
        phase = np.exp(2j * np.pi * np.dot(k, bond.cell))
        i, j = bond.target * s, bond.source * s
        out[i:i + s, j:j + s] += value * phase
        out[j:j + s, i:i + s] += value.conj().T * np.conj(phase)
    return out


# ---------------------------------------------------------------------------------------------- assembly
@settings(max_examples=30, deadline=None)
@given(model=random_lattice_models())
def test_random_lattice_models_are_hermitian_and_match_the_term_by_term_sum(model):
    rng = np.random.default_rng(0)
    ks = rng.random((5, model.dim))
    h = model.hamiltonian(ks)
    assert h.shape == (5, model.n_states, model.n_states)
    assert check_hermitian(model, ks) < 1e-13
    for k, hk in zip(ks, h):
        assert np.allclose(hk, _by_hand(model, k), atol=1e-12)


def test_a_batch_of_any_shape_gives_h_of_the_same_leading_shape():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s px")
    model.add_hopping(0.3, 0, 1, [1, 0])
    ks = np.random.default_rng(1).random((3, 4, 2))
    h = model.hamiltonian(ks)
    assert h.shape == (3, 4, 2, 2)
    assert np.allclose(h[1, 2], model.hamiltonian(ks[1, 2]))


def test_the_bloch_hamiltonian_is_periodic_in_reduced_k():
    # periodic gauge, docs/conventions.md: H(k + G) = H(k)
    model = LatticeModel([[1.0, 0.0], [0.3, 1.1]])
    model.add_site([0.1, 0.2], "s")
    model.add_site([0.6, 0.7], "px py")
    model.add_hopping(0.4 + 0.2j, 0, 1, [1, -1])
    model.add_hopping(0.7, 1, 2, [0, 1])
    k = np.array([0.13, 0.71])
    assert np.allclose(model.hamiltonian(k), model.hamiltonian(k + [1, -2]))


def test_a_hop_carries_exp_2pi_i_k_dot_cell_from_source_to_target():
    # add_hopping(v, i, j, R) is v c†_{i,0} c_{j,R}: H_ij(k) = v e^{2πi k·R}, H_ji = conj
    model = LatticeModel([[1.0]])
    model.add_site([0.0], "s")
    model.add_site([0.5], "s")
    model.add_hopping(0.5j, 0, 1, [2])
    h = model.hamiltonian([[0.1]])[0]
    assert np.isclose(h[0, 1], 0.5j * np.exp(2j * np.pi * 0.2))
    assert np.isclose(h[1, 0], np.conj(h[0, 1]))


def test_adding_the_same_bond_twice_adds_the_amplitudes():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s")
    model.add_hopping(0.25, 0, 0, [1, 0])
    model.add_hopping(0.25, 0, 0, [1, 0])
    # an orbital hopping to its own image: 2 t cos(2π k_x) with t = 0.5
    assert np.isclose(model.hamiltonian([0.1, 0.0])[0, 0], 2 * 0.5 * np.cos(2 * np.pi * 0.1))


def test_a_spinful_hop_takes_a_spin_matrix_and_a_number_means_spin_independent():
    model = LatticeModel(np.eye(2), spinful=True)
    model.add_site([0, 0], "s")
    model.add_hopping((SZ - 1j * SX) / 2, 0, 0, [1, 0])
    model.add_hopping(0.1, 0, 0, [0, 1])
    model.set_onsite(0, 0.3 * SZ)
    kx, ky = 0.2, 0.35
    expected = (np.sin(2 * np.pi * kx) * SX + np.cos(2 * np.pi * kx) * SZ + 0.3 * SZ
                + 0.2 * np.cos(2 * np.pi * ky) * np.eye(2))
    assert np.allclose(model.hamiltonian([kx, ky]), expected)


def test_positions_are_per_basis_state_with_spin_partners_together():
    model = LatticeModel(np.eye(2), spinful=True)
    model.add_site([0.1, 0.2], "s px")
    model.add_site([0.5, 0.5], "s")
    assert model.n_orbitals == 3 and model.n_states == 6
    assert np.allclose(model.positions, [[0.1, 0.2]] * 4 + [[0.5, 0.5]] * 2)
    assert model.orbital_kinds == ("s", "px", "s")
    assert list(model.orbital_sites) == [0, 0, 1]


def test_orbital_shells_expand_in_the_documented_order():
    # docs/conventions.md: p = (px, py, pz), d = (dxy, dyz, dzx, dx2-y2, dz2)
    model = LatticeModel(np.eye(3))
    assert model.add_site([0, 0, 0], "s p") == [0, 1, 2, 3]
    assert model.add_site([0.5, 0.5, 0.5], ["d"]) == [4, 5, 6, 7, 8]
    assert model.sites[1].kinds == ("dxy", "dyz", "dzx", "dx2-y2", "dz2")


def test_real_space_blocks_reproduce_h_and_put_the_home_cell_first():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s px")
    model.set_onsite(0, 1.5)
    model.add_hopping(0.2 + 0.1j, 0, 1, [1, 1])
    cells, blocks = model.real_space_blocks()
    assert not cells[0].any()
    k = np.array([0.3, 0.8])
    assert np.allclose(np.einsum("m,mij->ij", np.exp(2j * np.pi * cells @ k), blocks), model.hamiltonian(k))


# ---------------------------------------------------------------------------------------------- symmetry matrices
def test_the_translation_phase_follows_the_conventions_on_a_hand_built_example():
    # docs/conventions.md / PHYSICS.md §1: g x_s = x_{s'} + n_s, D_{s's}(k) = exp(-2πi (g k)·n_s) × orbital block.
    # Edge centres X = (1/2, 0), Y = (0, 1/2) of the square lattice under 4z+: X -> Y (n = 0),
    # Y -> (-1/2, 0) = X + (-1, 0), so D[X, Y](k) = exp(+2πi (g k)_1).
    model = LatticeModel(np.eye(2))
    x, = model.add_site([0.5, 0.0], "s")
    y, = model.add_site([0.0, 0.5], "s")
    for cell in ([0, 0], [1, 0], [0, -1], [1, -1]):  # the four bonds from X to its Y neighbours
        model.add_hopping(0.7, x, y, cell)
    c4 = point_group("4")["4z+"]
    k = np.array([0.13, 0.41])
    gk = np.array([-0.41, 0.13])  # k' = k inv(W): a counter-clockwise quarter turn
    assert np.allclose(c4.acts_on_k(k, model.lattice), gk)
    d = model.symmetry_matrix(c4, k)
    assert np.allclose(d, [[0, np.exp(2j * np.pi * gk[0])], [1, 0]])
    assert np.allclose(d @ model.hamiltonian(k) @ d.conj().T, model.hamiltonian(gk))
    # the other sign of the phase (D† convention) fails: the test is sensitive to it
    wrong = np.array([[0, np.exp(-2j * np.pi * gk[0])], [1, 0]])
    assert not np.allclose(wrong @ model.hamiltonian(k) @ wrong.conj().T, model.hamiltonian(gk))


def test_p_orbitals_rotate_with_the_cartesian_matrix():
    # docs/conventions.md: D_p = R for (px, py, pz)
    model = LatticeModel(np.eye(3))
    model.add_site([0, 0, 0], "p")
    c4 = point_group("4")["4z+"]
    assert np.allclose(model.symmetry_matrix(c4, np.zeros(3)), c4.matrix)


def test_spinful_symmetry_matrices_tensor_the_orbital_block_with_the_spin_image():
    model = LatticeModel(np.eye(2), spinful=True)
    model.add_site([0, 0], "px py")
    op = point_group("4mm")["mx"]
    expected = np.kron(np.diag([-1.0, 1.0]), op.spin)  # mirror x: px -> -px; spin -i σ_x
    assert np.allclose(model.symmetry_matrix(op, [0.2, 0.3]), expected)
    assert np.allclose(op.spin, -1j * SX)


@settings(max_examples=20, deadline=None)
@given(setting=symmetric_settings(names=["4mm-square", "6mm-honeycomb", "-3m-hexagonal", "4/mmm-tetragonal"]))
def test_symmetry_matrices_compose_as_d_gh_k_equals_d_g_hk_d_h_k_up_to_the_double_group_sign(setting):
    # the composition law behind BlochFunction's closure; spinful: the SU(2) product sign of the double group
    _, symbol, model = setting
    group = point_group(symbol)
    ks = np.random.default_rng(3).random((4, model.dim))
    for g in group:
        for h in group.generators:
            h = group[h]
            gh = group.multiply(g, h)
            lhs = model.symmetry_matrix(gh, ks)
            rhs = model.symmetry_matrix(g, h.acts_on_k(ks, model.lattice)) @ model.symmetry_matrix(h, ks)
            sign = group.double_group_sign(g, h) if model.spinful else 1
            assert np.allclose(sign * lhs, rhs, atol=1e-12)


def test_an_operation_that_maps_a_site_onto_no_equivalent_site_is_refused_naming_op_and_site():
    model = LatticeModel(np.eye(2))
    model.add_site([0.0, 0.0], "s", label="A")
    model.add_site([0.5, 0.0], "s", label="B")
    with pytest.raises(LatticeMismatchError, match=r"operation 4z\+ maps site 1 \(label 'B'"):
        model.symmetry_matrix(point_group("4")["4z+"], [0.1, 0.2])


def test_sites_with_different_labels_are_not_equivalent():
    model = LatticeModel([[1.0]])
    model.add_site([-0.25], "s", label="A")
    model.add_site([0.25], "s", label="B")
    with pytest.raises(LatticeMismatchError, match="operation -1 maps site 0"):
        model.symmetry_matrix(point_group("-1")["-1"], [[0.1]])


def test_an_operation_the_lattice_does_not_admit_is_refused():
    model = LatticeModel([[1.0, 0.0], [0.0, 1.5]])
    model.add_site([0, 0], "s")
    with pytest.raises(LatticeMismatchError, match=r"4z\+"):
        model.symmetry_matrix(point_group("4")["4z+"], [0.0, 0.0])


def test_an_orbital_set_that_is_not_closed_under_the_operation_is_refused():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "px")
    with pytest.raises(CrystaltopError, match="px"):
        model.symmetry_matrix(point_group("4")["4z+"], [0.0, 0.0])


def test_a_model_with_a_mass_on_one_sublattice_is_measured_as_breaking_the_swap():
    model = LatticeModel([[1.0]])
    a, = model.add_site([-0.25], "s")
    b, = model.add_site([0.25], "s")
    model.add_hopping(1.0, a, b)
    model.add_hopping(0.5, b, a, [1])
    assert symmetry_violations(model, point_group("-1"))["-1"] < 1e-14
    model.set_onsite(a, 0.3)
    assert symmetry_violations(model, point_group("-1"))["-1"] > 0.1


def test_time_reversal_of_real_orbitals_is_one_spinless_and_i_sigma_y_spinful():
    # PHYSICS.md §1: T = iσ_y K spinful, T = K spinless
    spinless, spinful = LatticeModel(np.eye(2)), LatticeModel(np.eye(2), spinful=True)
    for model in (spinless, spinful):
        model.add_site([0, 0], "s p")
    assert np.allclose(spinless.time_reversal_matrix(), np.eye(4))
    assert np.allclose(spinful.time_reversal_matrix(), np.kron(np.eye(4), [[0, 1], [-1, 0]]))


# ---------------------------------------------------------------------------------------------- bad input
def test_a_non_hermitian_onsite_term_is_refused():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s")
    with pytest.raises(NonHermitianError, match="onsite term of orbital 0 is not Hermitian"):
        model.set_onsite(0, 1.0 + 0.5j)


def test_a_non_hermitian_onsite_spin_matrix_is_refused():
    model = LatticeModel(np.eye(2), spinful=True)
    model.add_site([0, 0], "s")
    with pytest.raises(NonHermitianError, match="not Hermitian"):
        model.set_onsite(0, [[0, 1], [0, 0]])


def test_k_of_the_wrong_shape_is_refused_with_the_expected_shape_in_the_message():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s")
    with pytest.raises(ShapeError, match=r"k must have shape \(\.\.\., 2\).*got shape \(5, 3\)"):
        model.hamiltonian(np.zeros((5, 3)))
    with pytest.raises(ShapeError, match=r"\(\.\.\., 2\)"):
        model.hamiltonian(0.5)
    with pytest.raises(ShapeError, match=r"\(\.\.\., 2\)"):
        model.symmetry_matrix(point_group("4")["4z+"], np.zeros(3))
    with pytest.raises(ShapeError, match="real"):
        model.hamiltonian(np.zeros(2) + 0.5j)


def test_a_one_dimensional_model_wants_k_with_a_last_axis_of_length_one():
    model = LatticeModel([[1.0]])
    model.add_site([0.0], "s")
    with pytest.raises(ShapeError, match=r"\(\.\.\., 1\)"):
        model.hamiltonian(np.linspace(0, 1, 5)[None, :])
    assert model.hamiltonian(np.linspace(0, 1, 5)[:, None]).shape == (5, 1, 1)


@pytest.mark.parametrize("call, error, text", [
    (lambda m: m.add_hopping(1.0, 0, 0), CrystaltopError, "onsite term"),
    (lambda m: m.add_hopping(1.0, 0, 7), CrystaltopError, "out of range"),
    (lambda m: m.add_hopping(1.0, 0, 1, [0.5, 0]), ShapeError, "integers"),
    (lambda m: m.add_hopping(1.0, 0, 1, [1, 0, 0]), ShapeError, "2 integers"),
    (lambda m: m.add_hopping(np.eye(2), 0, 1), ShapeError, "spinless"),
    (lambda m: m.add_site([0.0, 0.0, 0.0], "s"), ShapeError, r"shape \(2,\)"),
    (lambda m: m.add_site([0.3, 0.3], "f"), CrystaltopError, "f"),
    (lambda m: m.add_site([1.0, 0.0], "s px"), CrystaltopError, "already sits"),
    (lambda m: m.set_onsite(0, [[1, 0], [0, 1]]), ShapeError, "spinless"),
])
def test_bad_builder_input_raises_a_crystaltop_error_naming_the_cause(call, error, text):
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s px")
    with pytest.raises(error, match=text):
        call(model)


@pytest.mark.parametrize("lattice", [np.eye(4), np.zeros((2, 2)), [[1.0, 0.0]], [[np.nan]]])
def test_a_lattice_that_is_not_square_or_is_singular_is_refused(lattice):
    with pytest.raises(ShapeError, match="lattice"):
        LatticeModel(lattice)


def test_the_summary_names_the_sizes():
    model = LatticeModel(np.eye(2), spinful=True, name="toy")
    model.add_site([0, 0], "s px py")
    model.add_hopping(0.1, 0, 1, [1, 0])
    assert repr(model) == "LatticeModel('toy', 2D, 1 sites, 3 orbitals, 1 bonds, spinful)"


# ---------------------------------------------------------------------------------------------- on a mesh
@settings(max_examples=30, deadline=None)
@given(model=random_lattice_models())
def test_h_on_a_uniform_mesh_equals_h_at_its_points(model):
    # the mesh sum (one Fourier sum per axis) against the sum over lattice vectors at each point, in C order
    shape = (5, 4, 3)[: model.dim]
    axes = np.meshgrid(*[np.arange(n) / n for n in shape], indexing="ij")
    expected = model.hamiltonian(np.stack(axes, axis=-1))
    got = model.hamiltonian_on_mesh(shape)
    assert got.shape == shape + (model.n_states, model.n_states)
    assert np.allclose(got, expected, atol=1e-12)


def test_a_few_long_hoppings_on_a_mesh_are_summed_over_their_vectors_with_the_same_result():
    # a box of lattice vectors far larger than the set of vectors is left to the sum over vectors (BOX_FILL)
    model = LatticeModel(np.eye(3))
    model.add_site([0, 0, 0], "s px")
    model.add_hopping(0.3, 0, 1, [9, 0, -7])
    model.add_hopping(0.2j, 1, 1, [0, 8, 0])
    axes = np.meshgrid(*[np.arange(n) / n for n in (4, 6, 5)], indexing="ij")
    assert np.allclose(model.hamiltonian_on_mesh((4, 6, 5)), model.hamiltonian(np.stack(axes, axis=-1)), atol=1e-12)


@pytest.mark.parametrize("shape", [(4,), (4, 4, 4), (4, 0), "ab", None])
def test_a_mesh_shape_that_is_not_one_positive_size_per_axis_is_refused(shape):
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s")
    with pytest.raises(ShapeError, match="mesh shape must be 2 positive integers"):
        model.hamiltonian_on_mesh(shape)


@settings(max_examples=15, deadline=None)
@given(model=random_lattice_models())
def test_a_mesh_built_slab_by_slab_is_the_whole_mesh(model):
    shape = (5, 4, 3)[: model.dim]
    slabs = model.mesh_slabs(shape)
    pieces = np.concatenate([slabs(0, 2), slabs(2, 3), slabs(3, 5)])
    assert pieces.shape == shape + (model.n_states, model.n_states)
    assert np.array_equal(pieces, model.hamiltonian_on_mesh(shape))
