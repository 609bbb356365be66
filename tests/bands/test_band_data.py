"""Band data: ordered products, Wilson-loop conventions, caching of sub-grids, gap and Hermiticity errors."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from crystaltop.bands import BandData, ordered_product
from crystaltop.errors import FillingError, GapClosedError, NonHermitianError
from crystaltop.kspace import plane, uniform_mesh

from ._two_band import AtomicChain, TwoBandPlane


@settings(max_examples=25, deadline=None)
@given(n=st.integers(1, 17), m=st.integers(1, 3), seed=st.integers(0, 10_000))
def test_ordered_product_equals_the_sequential_product(n, m, seed):
    rng = np.random.default_rng(seed)
    mats = rng.normal(size=(3, n, m, m)) + 1j * rng.normal(size=(3, n, m, m))
    expected = np.stack([np.linalg.multi_dot([np.eye(m)] + [mats[b, j] for j in range(n)] + [np.eye(m)])
                         for b in range(3)])
    assert np.allclose(ordered_product(mats, axis=1), expected)


@pytest.mark.parametrize("x0", [0.0, 0.1, 0.3, 0.75])
def test_wannier_centre_of_an_atomic_orbital_is_its_position(x0):
    # Common practice (no source): an isolated occupied orbital at x0 has its Wannier centre at x0.
    bands = BandData(AtomicChain(x0), filling=1)
    centres = bands.wannier_centres(uniform_mesh((16,)), axis=0)
    assert centres.shape == (1,)
    assert abs(((centres[0] - x0) + 0.5) % 1 - 0.5) < 1e-12


def test_a_plane_of_a_cached_mesh_is_sliced_not_diagonalised_again():
    bands = BandData(TwoBandPlane(1.0), filling=1)
    bands.eigensystem(uniform_mesh((8, 8)))
    assert bands.stats.k_points == 64
    e_line, _ = bands.eigensystem(plane(2, 0, 0.5, (8,)))
    e_half, _ = bands.eigensystem(uniform_mesh((4, 4)))
    bands.at([[0.5, 0.5], [0.0, 0.25]])
    assert bands.stats.k_points == 64  # nothing new diagonalised
    assert e_line.shape == (1, 8, 2) and e_half.shape == (4, 4, 2)
    assert np.allclose(e_line[0, 0], [-np.sqrt((1.0 - 1 + 1) ** 2), np.sqrt((1.0 - 1 + 1) ** 2)])


def test_a_closed_gap_names_the_k_point():
    # Qi–Wu–Zhang (Phys. Rev. B 74, 085308 (2006)): at m = 2 the gap closes at M = (1/2, 1/2).
    bands = BandData(TwoBandPlane(2.0), filling=1)
    with pytest.raises(GapClosedError, match=r"k=\(0\.500, 0\.500\)"):
        bands.check_gap(uniform_mesh((8, 8)))


def test_non_hermitian_input_is_refused_with_the_k_point():
    bands = BandData(AtomicChain(0.0, hermitian=False), filling=1)
    with pytest.raises(NonHermitianError, match=r"not Hermitian at k=\(0\.000\)"):
        bands.eigensystem(uniform_mesh((4,)))


@pytest.mark.parametrize("filling", [0, 2, -1])
def test_filling_out_of_range_is_refused(filling):
    with pytest.raises(FillingError, match="out of range"):
        BandData(TwoBandPlane(1.0), filling=filling)


def test_a_large_grid_shows_a_progress_bar_when_asked_and_none_otherwise(capsys):
    from tests.bands._two_band import TwoBandPlane as Model

    for progress, expect in ((True, True), (False, False)):
        bands = BandData(Model(1.0), filling=1, progress=progress)
        bands.CHUNK_BYTES = 64 * 16 * 4  # 64 two-band k-points per chunk: a 16x16 mesh is 4 chunks
        bands.eigensystem(uniform_mesh((16, 16)))
        err = capsys.readouterr().err
        assert ("diagonalising 16x16" in err) is expect


def test_a_mesh_asked_after_its_planes_diagonalises_only_the_points_not_yet_known():
    bands = BandData(TwoBandPlane(1.0), filling=1)
    e_line, _ = bands.eigensystem(plane(2, 0, 0.0, (8,)))  # the line k1 = 0: 8 points
    e_full, v_full = bands.eigensystem(uniform_mesh((8, 8)))
    assert bands.stats.k_points == 64  # 8 + 56, not 8 + 64
    ref = BandData(TwoBandPlane(1.0), filling=1).eigensystem(uniform_mesh((8, 8)))[0]
    assert np.allclose(e_full, ref) and np.allclose(e_full[0], e_line[0])


def test_a_mesh_that_shares_only_some_points_with_the_first_one_diagonalises_only_the_others():
    # 16x16 after 24x24: the points j/8 on both axes (8 x 8 of them) are common to the two meshes
    bands = BandData(TwoBandPlane(1.0), filling=1)
    bands.eigensystem(uniform_mesh((24, 24)))
    e16, _ = bands.eigensystem(uniform_mesh((16, 16)))
    assert bands.stats.k_points == 24 * 24 + 16 * 16 - 8 * 8
    ref = BandData(TwoBandPlane(1.0), filling=1).eigensystem(uniform_mesh((16, 16)))[0]
    assert np.allclose(e16, ref)


def test_points_asked_one_by_one_are_not_diagonalised_again_by_a_later_grid():
    bands = BandData(TwoBandPlane(1.0), filling=1)
    bands.eigensystem(plane(2, 0, 0.0, (8,)))
    e_pts, _ = bands.at([[0.25, 0.5], [0.5, 0.125], [0.3, 0.3]])  # two on the 8x8 mesh, one off it
    e_full, _ = bands.eigensystem(uniform_mesh((8, 8)))
    assert bands.stats.k_points == 8 + 3 + (64 - 8 - 2)
    assert np.array_equal(e_full[2, 4], e_pts[0]) and np.array_equal(e_full[4, 1], e_pts[1])
    again, _ = bands.at([[0.3, 0.3], [0.25, 0.5]])
    assert bands.stats.k_points == 8 + 3 + (64 - 8 - 2) and np.array_equal(again[0], e_pts[2])


def test_a_grid_without_a_closed_axis_asked_first_is_not_diagonalised_again_by_a_mesh():
    bands = BandData(TwoBandPlane(1.0), filling=1)
    from crystaltop.kspace import Grid

    bands.eigensystem(Grid(((0.0, 0.5), (0.0, 0.5)), (False, False)))  # the four TRIMs
    bands.eigensystem(uniform_mesh((8, 8)))
    assert bands.stats.k_points == 4 + 60


def test_without_a_mesh_store_grids_and_points_are_still_found_and_not_diagonalised_twice():
    bands = BandData(TwoBandPlane(1.0), filling=1)
    bands.STORE_BYTES = 0  # no store: every lookup matches grids and points against each other
    bands.eigensystem(plane(2, 0, 0.0, (8,)))
    e_pts, _ = bands.at([[0.25, 0.5], [0.5, 0.125], [0.3, 0.3]])
    e_full, _ = bands.eigensystem(uniform_mesh((8, 8)))
    assert bands._store is None and bands.stats.k_points == 8 + 3 + (64 - 8 - 2)
    assert np.array_equal(e_full[2, 4], e_pts[0])


def test_prefetched_grids_and_points_are_diagonalised_once_and_give_the_same_eigensystems():
    bands = BandData(TwoBandPlane(1.0), filling=1)
    grids = [plane(2, 0, 0.0, (8,)), uniform_mesh((8, 8)), uniform_mesh((4, 4))]
    assert bands.prefetch(grids + [np.array([[0.25, 0.5], [0.3, 0.3]])]) == 64 + 1  # (0.3, 0.3) is off the mesh
    assert bands.prefetch(grids) == 0
    ref = BandData(TwoBandPlane(1.0), filling=1)
    for g in grids:
        assert np.allclose(bands.eigensystem(g)[0], ref.eigensystem(g)[0])
    assert np.allclose(bands.at([[0.3, 0.3]])[0], ref.at([[0.3, 0.3]])[0])
    assert bands.stats.k_points == 65


def test_a_prefetch_does_not_check_the_gap_but_a_later_request_does():
    # Qi–Wu–Zhang (Phys. Rev. B 74, 085308 (2006)): at m = 2 the gap closes at M = (1/2, 1/2).
    bands = BandData(TwoBandPlane(2.0), filling=1)
    assert bands.prefetch([uniform_mesh((8, 8))]) == 64 and bands.gap_log == []
    with pytest.raises(GapClosedError, match=r"k=\(0\.500, 0\.500\)"):
        bands.occupied(uniform_mesh((8, 8)))


@settings(max_examples=20, deadline=None)
@given(n=st.integers(3, 5), m=st.integers(1, 2), seed=st.integers(0, 10_000), with_phase=st.booleans())
def test_link_determinants_from_plucker_coordinates_equal_the_determinants_of_the_link_matrices(n, m, seed, with_phase):
    # Cauchy–Binet: det(V† P V') = Σ_S conj(μ_S) φ_S μ'_S (products.link_determinants); the reference is the
    # determinant of each link matrix (numpy.linalg.det)
    from crystaltop.bands.products import link_determinants, link_matrices

    rng = np.random.default_rng(seed)
    a = rng.normal(size=(4, 5, n, n)) + 1j * rng.normal(size=(4, 5, n, n))
    vectors = np.linalg.qr(a)[0][..., :m]
    phase = np.diag(np.exp(2j * np.pi * rng.random(n))) if with_phase else None
    for axis in (0, 1):
        expected = np.linalg.det(link_matrices(vectors, axis, phase))
        assert np.allclose(link_determinants(vectors, axis, phase), expected, atol=1e-12)


def test_grids_on_a_complete_mesh_give_the_link_determinants_and_gaps_of_their_own_states():
    # grids on the whole mesh store take the Plücker coordinates and gaps of the store; a band data without the
    # mesh (the planes asked alone) forms them from the planes' own states. The links depend on the gauge, their
    # product around each closed loop (det of the Wilson loop) does not.
    from crystaltop.examples import fu_kane_mele

    model = fu_kane_mele(dt=0.4, frame="bond")
    grids = [uniform_mesh((8, 8, 8)), uniform_mesh((4, 4, 4)), plane(3, 1, 0.0, (8, 8)), plane(3, 2, 0.5, (8, 8))]
    whole = BandData(model, filling=2)
    whole.prefetch(grids[:1])
    for g in grids:
        alone = BandData(model, filling=2)
        assert whole.gap(g)[0] == pytest.approx(alone.gap(g)[0], rel=1e-12)
        for axis in (i for i in range(3) if g.periodic[i]):
            for embed in (True, False):
                got = np.prod(whole.link_determinants(g, axis, embed=embed), axis=axis)
                assert np.allclose(got, np.prod(alone.link_determinants(g, axis, embed=embed), axis=axis), atol=1e-10)
    assert whole._mesh_minors is not None and whole.stats.k_points == 512


@pytest.mark.parametrize("rotated", [False, True])
def test_states_taken_from_minus_k_by_time_reversal_diagonalise_h_there(rotated):
    # U_T H(k)* U_T† = H(−k) (docs/conventions.md): U_T V(k)* holds eigenvectors of H(−k) with the energies of k.
    # Checked against H(−k) itself and numpy.linalg.eigvalsh; a rotated basis makes U_T dense (the matrix-product
    # path), real orbitals with spin make it one signed entry per row (the gather path)
    from crystaltop.examples import fu_kane_mele

    model = fu_kane_mele(dt=0.4, frame="bond")
    if rotated:
        q = np.linalg.qr(np.random.default_rng(5).normal(size=(4, 4)) + 1j * np.random.default_rng(6).normal(size=(4, 4)))[0]
        model = model.with_basis(q)
    bands = BandData(model, filling=2, time_reversal=model.time_reversal_matrix())
    mesh = uniform_mesh((6, 6, 6))
    e, v = bands.eigensystem(mesh)
    assert bands.stats.k_points == 216 and bands.stats.time_reversed == (216 - 8) // 2
    k = mesh.points.reshape(-1, 3)
    h = model.hamiltonian(k)
    e, v = e.reshape(-1, 4), v.reshape(-1, 4, 4)
    assert np.abs(h @ v - v * e[:, None, :]).max() < 1e-12
    assert np.allclose(e, np.linalg.eigvalsh(h), atol=1e-12)
    assert np.allclose(np.conj(np.swapaxes(v, -1, -2)) @ v, np.eye(4), atol=1e-12)


def test_points_whose_partner_is_known_take_its_states_in_a_later_batch_too():
    from crystaltop.examples import fu_kane_mele
    from crystaltop.kspace import Grid

    model = fu_kane_mele(dt=0.4, frame="bond")
    bands = BandData(model, filling=2, time_reversal=model.time_reversal_matrix())
    full = tuple(np.arange(8) / 8)
    first = Grid((full, tuple(np.arange(5) / 8), (0.0,)), (True, False, False))  # k2 from 0 to 1/2
    second = Grid((full, (5 / 8, 6 / 8, 7 / 8), (0.0,)), (True, False, False))  # its partners are all in the first
    bands.eigensystem(first)
    before = (bands.stats.k_points, bands.stats.time_reversed)
    e, v = bands.eigensystem(second)
    assert (bands.stats.k_points, bands.stats.time_reversed) == (before[0] + 24, before[1] + 24)
    h = model.hamiltonian(second.points).reshape(-1, 4, 4)
    e, v = e.reshape(-1, 4), v.reshape(-1, 4, 4)
    assert np.abs(h @ v - v * e[:, None, :]).max() < 1e-12


def test_time_reversed_states_in_a_mesh_diagonalised_in_chunks_match_the_unhalved_ones(monkeypatch):
    # a mesh larger than one chunk of H (CHUNK_BYTES made small): the rows to diagonalise are split over the chunks
    from crystaltop.examples import fu_kane_mele

    model = fu_kane_mele(dt=0.4, frame="bond")
    monkeypatch.setattr(BandData, "CHUNK_BYTES", 16 * 16 * 37)  # 37 points per chunk
    mesh = uniform_mesh((6, 6, 6))
    halved = BandData(model, filling=2, time_reversal=model.time_reversal_matrix())
    whole = BandData(model, filling=2)
    e1, v1 = halved.eigensystem(mesh)
    e2, v2 = whole.eigensystem(mesh)
    assert halved.stats.time_reversed == (216 - 8) // 2 and whole.stats.time_reversed == 0
    assert np.allclose(e1, e2, atol=1e-12)
    # the occupied projectors agree (the eigenvectors themselves may differ by a gauge)
    p1 = v1[..., :2] @ np.conj(np.swapaxes(v1[..., :2], -1, -2))
    p2 = v2[..., :2] @ np.conj(np.swapaxes(v2[..., :2], -1, -2))
    assert np.allclose(p1, p2, atol=1e-10)
