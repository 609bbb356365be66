"""The callable wrapper: shape checks, explicit representations closed by composition, time reversal."""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.errors import CrystaltopError, NonHermitianError, ShapeError, UnknownOperationError
from crystaltop.models import BlochFunction, LatticeModel, symmetrized, symmetry_violations
from crystaltop.symmetry import point_group

SX = np.array([[0, 1], [1, 0]], dtype=complex)
SY = np.array([[0, -1j], [1j, 0]], dtype=complex)
SZ = np.diag([1.0, -1.0]).astype(complex)


def two_band(k, m=1.0):
    """Qi–Wu–Zhang form (Phys. Rev. B 74, 085308 (2006)), written directly in numpy."""
    kx, ky = 2 * np.pi * k[..., 0], 2 * np.pi * k[..., 1]
    return (np.sin(kx)[..., None, None] * SX + np.sin(ky)[..., None, None] * SY
            + (m + np.cos(kx) + np.cos(ky))[..., None, None] * SZ)


def test_a_callable_is_wrapped_with_its_lattice_and_positions():
    f = BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)), name="qwz")
    k = np.random.default_rng(0).random((3, 5, 2))
    assert f.dim == 2 and f.n_states == 2 and not f.spinful and f.basis is None
    assert np.allclose(f.hamiltonian(k), two_band(k))
    assert f.time_reversal_matrix() is None
    assert "qwz" in repr(f)


def test_a_callable_returning_the_wrong_shape_is_refused_naming_the_expected_shape():
    f = BlochFunction(lambda k: np.zeros(k.shape[:-1] + (3, 3)), lattice=np.eye(2), positions=np.zeros((2, 2)))
    with pytest.raises(ShapeError, match=r"expected \(\.\.\., n, n\) = \(4, 2, 2\)"):
        f.hamiltonian(np.zeros((4, 2)))


def test_k_of_the_wrong_shape_is_refused_before_the_callable_sees_it():
    calls = []
    f = BlochFunction(lambda k: calls.append(k) or two_band(k), lattice=np.eye(2), positions=np.zeros((2, 2)))
    with pytest.raises(ShapeError, match=r"\(\.\.\., 2\)"):
        f.hamiltonian(np.zeros((4, 3)))
    assert calls == []


def test_representations_of_generators_are_closed_by_composition():
    # Qi–Wu–Zhang with spinless D(4z+) = diag(1, i) (PHYSICS.md §3); 2z and 4z- follow as D², D³
    group = point_group("4")
    f = BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)),
                      representations={"4z+": np.diag([1, 1j])}, group=group)
    assert np.allclose(f.symmetry_matrix(group["2z"], [0.1, 0.2]), np.diag([1, -1]))
    assert np.allclose(f.symmetry_matrix(group["4z-"], [0.1, 0.2]), np.diag([1, -1j]))
    assert np.allclose(f.symmetry_matrix(group["1"], [0.1, 0.2]), np.eye(2))
    assert max(symmetry_violations(f, group).values()) < 1e-12


def test_operations_can_key_the_representations_without_a_group():
    group = point_group("4")
    f = BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)),
                      representations={group["4z+"]: np.diag([1, 1j])})
    assert np.allclose(f.symmetry_matrix(point_group("4/m")["2z"], [0.3, 0.3]), np.diag([1, -1]))
    with pytest.raises(UnknownOperationError, match="no representation of operation mx"):
        f.symmetry_matrix(point_group("4mm")["mx"], [0.3, 0.3])


def test_k_dependent_representations_compose_with_the_momentum_moved_by_each_factor():
    # D_{gh}(k) = D_g(h k) D_h(k): compare the closure with a LatticeModel whose matrices carry phases
    model = LatticeModel(np.eye(2))
    model.add_site([0.5, 0.0], "s")
    model.add_site([0.0, 0.5], "s")
    model.add_site([0.0, 0.0], "px py")
    rng = np.random.default_rng(4)
    for i, j, cell in ((0, 1, [0, 0]), (0, 2, [1, 0]), (1, 3, [0, -1]), (0, 0, [1, 1]), (2, 1, [1, 0])):
        model.add_hopping(complex(*rng.normal(size=2)), i, j, cell)
    group = point_group("4mm")
    sym = symmetrized(model, group)
    gens = {group[label]: (lambda k, _op=group[label]: model.symmetry_matrix(_op, k)) for label in group.generators}
    f = BlochFunction(sym.hamiltonian, lattice=np.eye(2), positions=model.positions, representations=gens, group=group)
    ks = rng.random((6, 2))
    for op in group:
        assert np.allclose(f.symmetry_matrix(op, ks), model.symmetry_matrix(op, ks))
    assert max(symmetry_violations(f, group).values()) < 1e-12


def test_a_spinful_closure_keeps_the_sign_of_the_documented_spin_image():
    # U(4z-) = exp(+iπσ_z/4), not U(4z+)³ = −U(4z-): the double-group sign is fixed by op.spin
    group = point_group("4")
    c4 = group["4z+"]
    f = BlochFunction(lambda k: np.zeros(k.shape[:-1] + (2, 2)), lattice=np.eye(2), positions=np.zeros((2, 2)),
                      spinful=True, representations={c4: c4.spin}, group=group)
    for op in group:
        assert np.allclose(f.symmetry_matrix(op, [0.2, 0.1]), op.spin)


def test_representations_that_do_not_generate_the_group_are_refused():
    with pytest.raises(UnknownOperationError, match=r"do not generate group 4mm.*mx"):
        BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)),
                      representations={"4z+": np.diag([1, 1j])}, group=point_group("4mm"))


def test_a_label_needs_a_group_and_must_belong_to_it():
    with pytest.raises(UnknownOperationError, match="needs group"):
        BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)), representations={"4z+": np.eye(2)})
    with pytest.raises(UnknownOperationError, match="not an element of group 4"):
        BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)), representations={"mx": np.eye(2)},
                      group=point_group("4"))


def test_a_representation_of_the_wrong_shape_or_not_unitary_is_refused():
    with pytest.raises(ShapeError, match=r"representation of 4z\+ must have shape \(2, 2\)"):
        BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)), representations={"4z+": np.eye(3)},
                      group=point_group("4"))
    with pytest.raises(CrystaltopError, match="not unitary"):
        BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)),
                      representations={"4z+": 2 * np.eye(2)}, group=point_group("4"))
    f = BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)),
                      representations={"4z+": lambda k: np.zeros(k.shape[:-1] + (3, 3))}, group=point_group("4"))
    with pytest.raises(ShapeError, match=r"representation of 4z\+ returned shape"):
        f.symmetry_matrix(point_group("4")["4z+"], np.zeros((2, 2)))


def test_time_reversal_true_gives_the_standard_matrix():
    f = BlochFunction(lambda k: np.zeros(k.shape[:-1] + (4, 4)), lattice=np.eye(1), positions=np.zeros((4, 1)),
                      spinful=True, time_reversal=True)
    assert np.allclose(f.time_reversal_matrix(), np.kron(np.eye(2), [[0, 1], [-1, 0]]))
    with pytest.raises(ShapeError, match="even number"):
        BlochFunction(two_band, lattice=np.eye(1), positions=np.zeros((3, 1)), spinful=True)


def test_positions_of_the_wrong_shape_are_refused():
    with pytest.raises(ShapeError, match=r"positions must have shape \(n, 2\)"):
        BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 3)))


def test_wrapping_a_lattice_model_keeps_its_real_space_form_and_replaces_its_representations():
    model = LatticeModel(np.eye(2))
    model.add_site([0, 0], "s")
    model.add_site([0.5, 0.5], "s")
    model.add_hopping(0.4, 0, 1)
    f = BlochFunction(model, representations={"4z+": np.eye(2)}, group=point_group("4"))
    assert f.lattice is not None and f.n_states == 2
    cells, blocks = f.real_space_blocks()
    assert np.allclose(blocks, model.real_space_blocks()[1]) and np.array_equal(cells, model.real_space_blocks()[0])
    assert np.allclose(f.symmetry_matrix(point_group("4")["4z+"], [0.1, 0.1]), np.eye(2))


def test_from_real_space_sums_the_blocks_and_refuses_a_non_hermitian_set():
    cells = [(0, 0), (1, 0), (-1, 0)]
    hop = (SZ - 1j * SX) / 2
    f = BlochFunction.from_real_space(cells, [0.5 * SZ, hop, hop.conj().T], lattice=np.eye(2),
                                    positions=np.zeros((2, 2)))
    k = np.array([[0.2, 0.7]])
    kx = 2 * np.pi * 0.2
    assert np.allclose(f.hamiltonian(k)[0], np.sin(kx) * SX + (0.5 + np.cos(kx)) * SZ)
    assert np.array_equal(f.real_space_blocks()[0], np.array(cells))
    with pytest.raises(NonHermitianError, match=r"R = \(1, 0\)"):
        BlochFunction.from_real_space(cells, [0.5 * SZ, hop, hop], lattice=np.eye(2), positions=np.zeros((2, 2)))


def test_a_bare_callable_has_no_real_space_form():
    f = BlochFunction(two_band, lattice=np.eye(2), positions=np.zeros((2, 2)))
    with pytest.raises(CrystaltopError, match="no real-space"):
        f.real_space_blocks()


def test_a_spinful_model_given_only_generators_reproduces_every_matrix_of_the_builder():
    # the closure with the double-group sign fixed by op.spin, on the 24 operations of 6/mmm
    from crystaltop.examples import kane_mele

    model = kane_mele(rashba=0.0)
    group = point_group("6/mmm")
    gens = {group[label]: (lambda k, _op=group[label]: model.symmetry_matrix(_op, k)) for label in group.generators}
    f = BlochFunction(model.hamiltonian, lattice=model.lattice, positions=model.positions, spinful=True,
                      representations=gens)
    assert f.generated_group().symbol == "6/mmm"
    ks = np.random.default_rng(6).random((3, 2))
    for op in group:
        assert np.allclose(f.symmetry_matrix(op, ks), model.symmetry_matrix(op, ks)), op.label


def test_on_a_mesh_a_real_space_form_is_summed_per_axis_and_a_callable_is_evaluated_at_the_points():
    cells = [(0, 0), (1, 0), (-1, 0), (0, 1), (0, -1)]
    hop_x, hop_y = (SZ - 1j * SX) / 2, (SZ - 1j * SY) / 2
    blocks = [0.5 * SZ, hop_x, hop_x.conj().T, hop_y, hop_y.conj().T]
    summed = BlochFunction.from_real_space(cells, blocks, lattice=np.eye(2), positions=np.zeros((2, 2)))
    bare = BlochFunction(lambda k: two_band(k, 0.5), lattice=np.eye(2), positions=np.zeros((2, 2)))
    axes = np.meshgrid(np.arange(5) / 5, np.arange(3) / 3, indexing="ij")
    points = np.stack(axes, axis=-1)
    # the blocks are the Qi–Wu–Zhang form at m = 0.5 (Phys. Rev. B 74, 085308 (2006)), as two_band writes it
    for model in (summed, bare):
        assert np.allclose(model.hamiltonian_on_mesh((5, 3)), two_band(points, 0.5), atol=1e-12)
    # h(−R) = h(R)† is checked when the blocks are given: no Hermiticity test of every H(k) is needed after that
    assert getattr(summed, "hermitian_by_construction", False) and not getattr(bare, "hermitian_by_construction", False)
