"""The published models: each respects its documented group, and reproduces the published check values.

Sources named beside each check. Chern numbers below are in the Berry convention of docs/conventions.md,
computed with a plaquette sum written out here (Fukui, Hatsugai, Suzuki, J. Phys. Soc. Jpn. 74, 1674 (2005)),
independent of crystaltop's band layer.
"""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.examples import (CATALOGUE, benalcazar_bernevig_hughes, bernevig_hughes_zhang, c4_breathing_square,
                                 conformance_probes, fu_kane_mele, haldane, kane_mele, qi_wu_zhang, stacked_layers,
                                 su_schrieffer_heeger)
from crystaltop.examples.published import BOND_FRAME
from crystaltop.errors import ShapeError
from crystaltop.models import BlochFunction, LatticeModel, detect_point_group, symmetry_violations
from crystaltop.symmetry import point_group

SQ3 = np.sqrt(3.0)
SX = np.array([[0, 1], [1, 0]], dtype=complex)
SY = np.array([[0, -1j], [1j, 0]], dtype=complex)
SZ = np.diag([1.0, -1.0]).astype(complex)


def berry_chern(hamiltonian, filling: int, n: int = 36) -> float:
    """Chern number of the lowest ``filling`` bands, Berry convention: minus the literal plaquette sum."""
    g = np.arange(n) / n
    k = np.stack(np.meshgrid(g, g, indexing="ij"), axis=-1)
    u = np.linalg.eigh(hamiltonian(k))[1][..., :filling]

    def link(a, b):
        return np.linalg.det(np.conj(np.swapaxes(a, -1, -2)) @ b)

    u1, u2 = np.roll(u, -1, 0), np.roll(u, -1, 1)
    u12 = np.roll(u1, -1, 1)
    flux = np.angle(link(u, u1) * link(u1, u12) * link(u12, u2) * link(u2, u))
    return float(-flux.sum() / (2 * np.pi))


def gaps(model, k, filling):
    e = np.linalg.eigvalsh(model.hamiltonian(np.asarray(k, dtype=float)))
    return e[..., filling] - e[..., filling - 1]


def reduced(model, k_cartesian):
    """Reduced coordinates of a Cartesian momentum: k_red = k · a_i / 2π."""
    return np.asarray(k_cartesian, dtype=float) @ model.lattice.T / (2 * np.pi)


def occupied_eigenvalues(model, op, k, filling):
    k = np.asarray(k, dtype=float)
    v = np.linalg.eigh(model.hamiltonian(k))[1][:, :filling]
    return np.linalg.eigvals(v.conj().T @ model.symmetry_matrix(op, k) @ v)


def mesh(dim, n=6):
    g = np.arange(n) / n
    return np.stack(np.meshgrid(*([g] * dim), indexing="ij"), axis=-1).reshape(-1, dim)


# ---------------------------------------------------------------------------------------------- the catalogue
@pytest.mark.parametrize("entry", CATALOGUE, ids=lambda e: e.name)
def test_every_catalogue_model_respects_its_documented_group_and_time_reversal(entry):
    model = entry.build()
    assert (model.dim, model.spinful) == (entry.dim, entry.spinful)
    v = symmetry_violations(model, point_group(entry.group), time_reversal=entry.time_reversal, samples=12)
    assert max(v.values()) < 1e-10, v
    if not entry.time_reversal and model.time_reversal_matrix() is not None:
        assert symmetry_violations(model, [], time_reversal=True)["T"] > 1e-3


@pytest.mark.parametrize("entry", CATALOGUE, ids=lambda e: e.name)
def test_every_catalogue_model_is_gapped_at_its_filling(entry):
    model = entry.build()
    ks = np.concatenate([mesh(entry.dim), np.random.default_rng(1).random((50, entry.dim))])
    assert gaps(model, ks, entry.filling).min() > 0.05


@pytest.mark.parametrize("entry", [e for e in CATALOGUE if e.gapless is not None], ids=lambda e: e.name)
def test_every_gapless_point_closes_the_gap_at_a_time_reversal_invariant_momentum(entry):
    trims = np.array(np.meshgrid(*([[0.0, 0.5]] * entry.dim), indexing="ij")).reshape(entry.dim, -1).T
    assert gaps(entry.gapless(), trims, entry.filling).min() < 1e-12


def test_the_catalogue_serves_as_conformance_probes_with_the_probe_fields():
    fields = ("name", "build", "group", "filling", "dim", "time_reversal", "spinful", "gapless")
    for probe in conformance_probes():
        assert all(hasattr(probe, f) for f in fields)
        assert 0 < probe.filling < probe.build().n_states
    assert len({p.name for p in conformance_probes()}) == len(CATALOGUE)


# ---------------------------------------------------------------------------------------------- Qi–Wu–Zhang
@pytest.mark.parametrize("m, where", [(-2.0, [0.0, 0.0]), (0.0, [0.5, 0.0]), (0.0, [0.0, 0.5]), (2.0, [0.5, 0.5])])
def test_qi_wu_zhang_gap_closes_at_gamma_x_y_and_m(m, where):
    # Qi, Wu, Zhang, Phys. Rev. B 74, 085308 (2006); PHYSICS.md §2 [checked]: m = −2 at Γ, 0 at X and Y, 2 at M
    assert gaps(qi_wu_zhang(m), where, 1) < 1e-12
    assert gaps(qi_wu_zhang(m + 0.1), where, 1) > 0.1


@pytest.mark.parametrize("m, chern", [(-1.0, 1), (1.0, -1), (3.0, 0), (-3.0, 0)])
def test_qi_wu_zhang_lower_band_chern_numbers_in_the_berry_convention(m, chern):
    # PHYSICS.md §2 [checked]: C = +1 for −2 < m < 0, −1 for 0 < m < 2, 0 for |m| > 2
    for encoding in ("orbital", "spin"):
        assert round(berry_chern(qi_wu_zhang(m, encoding=encoding).hamiltonian, 1)) == chern


def test_qi_wu_zhang_four_fold_rotation_is_diag_1_i_and_the_spin_encoding_has_the_same_bands():
    # PHYSICS.md §3: "QWZ with spinless D = diag(1, i)"
    orbital, spin = qi_wu_zhang(0.7), qi_wu_zhang(0.7, encoding="spin")
    c4 = point_group("4")["4z+"]
    assert np.allclose(orbital.symmetry_matrix(c4, [0.3, 0.1]), np.diag([1, 1j]))
    assert np.allclose(spin.symmetry_matrix(c4, [0.3, 0.1]), np.exp(-1j * np.pi / 4) * np.diag([1, 1j]))
    ks = np.random.default_rng(2).random((8, 2))
    assert np.allclose(orbital.hamiltonian(ks), spin.hamiltonian(ks))
    assert max(symmetry_violations(spin, point_group("4")).values()) < 1e-12
    assert orbital.time_reversal_matrix() is None


def test_qi_wu_zhang_is_the_formula_of_the_paper():
    k = np.random.default_rng(3).random((5, 2))
    kx, ky = (2 * np.pi * k).T
    formula = (np.sin(kx)[:, None, None] * SX + np.sin(ky)[:, None, None] * SY
               + (0.4 + np.cos(kx) + np.cos(ky))[:, None, None] * SZ)
    assert np.allclose(qi_wu_zhang(0.4).hamiltonian(k), formula)


# ---------------------------------------------------------------------------------------------- Haldane
def test_haldane_k_points_and_gap_closing_at_three_root_three_t2_sin_phi():
    # Haldane, Phys. Rev. Lett. 61, 2015 (1988); PHYSICS.md §2 [checked]: |M| = 3√3 |t2 sin φ|
    model = haldane()
    k_point = reduced(model, [4 * np.pi / 3, 0.0])
    assert np.allclose(k_point, [2 / 3, 1 / 3])
    valleys = np.array([k_point, -k_point])
    for phi in (np.pi / 2, np.pi / 4, 2.0):
        critical = 3 * SQ3 * 0.1 * abs(np.sin(phi))
        for mass in (critical, -critical):
            assert gaps(haldane(phi=phi, mass=mass), valleys, 1).min() < 1e-12
        assert gaps(haldane(phi=phi, mass=0.9 * critical), valleys, 1).min() > 1e-3
        assert gaps(haldane(phi=phi, mass=1.1 * critical), valleys, 1).min() > 1e-3


@pytest.mark.parametrize("phi, mass, chern", [(np.pi / 2, 0.0, -1), (np.pi / 4, 0.33, -1), (np.pi / 4, 0.40, 0),
                                              (-np.pi / 2, 0.0, 1)])
def test_haldane_chern_numbers_with_nu_plus_one_counter_clockwise(phi, mass, chern):
    # PHYSICS.md §2 [checked]: t1 = 1, t2 = 0.1; φ = π/2, M = 0 gives −1; φ = π/4: M = 0.33 gives −1, 0.40 gives 0
    assert round(berry_chern(haldane(t2=0.1, phi=phi, mass=mass).hamiltonian, 1)) == chern


def test_haldane_without_mass_has_six_fold_symmetry_and_with_mass_only_three_fold():
    assert detect_point_group(haldane()).symbol == "6/m"
    assert detect_point_group(haldane(mass=0.2)).symbol == "-6"
    assert detect_point_group(haldane(phi=0.0)).symbol == "6/mmm"  # graphene with real second neighbours


# ---------------------------------------------------------------------------------------------- SSH
def test_ssh_bloch_hamiltonian_and_inversion_swapping_the_two_sites():
    # Su, Schrieffer, Heeger, Phys. Rev. Lett. 42, 1698 (1979): H(k) = [[0, v + w e^{-ik}], [v + w e^{ik}, 0]]
    model = su_schrieffer_heeger(0.3, 1.2)
    k = np.array([[0.17]])
    off = 0.3 + 1.2 * np.exp(-2j * np.pi * 0.17)
    assert np.allclose(model.hamiltonian(k)[0], [[0, off], [np.conj(off), 0]])
    assert np.allclose(model.symmetry_matrix(point_group("-1")["-1"], k)[0], SX)
    assert detect_point_group(model).symbol == "mmm"


@pytest.mark.parametrize("v, w, centre", [(0.5, 1.0, 0.5), (1.0, 0.5, 0.0)])
def test_ssh_wannier_centre_is_at_the_cell_boundary_when_the_intercell_bond_wins(v, w, centre):
    # Wilson loop with the position phases of docs/conventions.md; centre = −arg(W)/2π mod 1
    model = su_schrieffer_heeger(v, w)
    n = 60
    ks = (np.arange(n) / n)[:, None]
    u = np.linalg.eigh(model.hamiltonian(ks))[1][:, :, 0]
    step = model.position_phase(np.array([1.0 / n]))
    links = np.einsum("ka,ab,kb->k", u.conj(), step, np.roll(u, -1, axis=0))
    assert np.isclose(np.mod(-np.angle(np.prod(links)) / (2 * np.pi) + 1e-9, 1.0), centre, atol=1e-6)


# ---------------------------------------------------------------------------------------------- Kane–Mele
@pytest.mark.parametrize("stagger", [0.0, 0.1, 0.3, 0.5])
def test_kane_mele_gap_at_k_is_twice_three_root_three_soc_minus_stagger(stagger):
    # Kane, Mele, Phys. Rev. Lett. 95, 226801 (2005); PHYSICS.md §4 [checked]: at λ_R = 0 the gap is 2|3√3 λ_SO − λ_v|
    model = kane_mele(soc=0.06, stagger=stagger)
    k_point = reduced(model, [4 * np.pi / 3, 0.0])
    for valley in (k_point, -k_point):
        assert np.isclose(gaps(model, valley, 2), 2 * abs(3 * SQ3 * 0.06 - stagger), atol=1e-12)


def test_kane_mele_rashba_closes_the_gap_at_two_root_three_soc():
    # Kane, Mele (2005); PHYSICS.md §4: at λ_v = 0, Z2 = 1 for λ_R < 2√3 λ_SO; beyond, the gap closes near K
    g = np.arange(240) / 240
    ks = np.stack(np.meshgrid(g, g, indexing="ij"), axis=-1)
    critical = 2 * SQ3 * 0.06
    assert gaps(kane_mele(soc=0.06, rashba=0.98 * critical), ks, 2).min() > 1e-3
    assert gaps(kane_mele(soc=0.06, rashba=1.02 * critical), ks, 2).min() < 1e-10


def test_kane_mele_spin_up_block_is_haldane_at_phi_pi_over_two():
    ks = np.random.default_rng(5).random((6, 2))
    up = kane_mele(soc=0.07, stagger=0.2).hamiltonian(ks)[:, ::2, ::2]
    assert np.allclose(up, haldane(t2=0.07, phi=np.pi / 2, mass=0.2).hamiltonian(ks))


def test_kane_mele_symmetry_drops_from_6_mmm_as_the_terms_are_switched_on():
    assert detect_point_group(kane_mele()).symbol == "6/mmm"
    assert detect_point_group(kane_mele(rashba=0.05)).symbol == "6mm"
    assert detect_point_group(kane_mele(stagger=0.1)).symbol == "-6m2"
    assert detect_point_group(kane_mele(rashba=0.05, stagger=0.1)).symbol == "3m"


# ---------------------------------------------------------------------------------------------- BHZ
@pytest.mark.parametrize("m, chern_up", [(2.0, 1), (6.0, -1), (9.0, 0), (-1.0, 0)])
def test_bhz_spin_up_chern_number_is_sign_b_then_minus_sign_b(m, chern_up):
    # Bernevig, Hughes, Zhang, Science 314, 1757 (2006); PHYSICS.md §4 [checked]: sgn B for 0 < M/B < 4,
    # −sgn B for 4 < M/B < 8
    model = bernevig_hughes_zhang(a=1.0, b=1.0, m=m)
    up = [0, 2]
    assert round(berry_chern(lambda k: model.hamiltonian(k)[..., up, :][..., :, up], 1)) == chern_up


@pytest.mark.parametrize("m, where", [(0.0, [0.0, 0.0]), (4.0, [0.5, 0.0]), (8.0, [0.5, 0.5])])
def test_bhz_gap_closes_at_gamma_x_and_m(m, where):
    # PHYSICS.md §4: band inversion at Γ for 0 < M/B < 4, at M for 4 < M/B < 8 (X in between)
    assert gaps(bernevig_hughes_zhang(m=m), where, 2) < 1e-12


def test_bhz_representations_come_from_real_s_and_p_orbitals_with_spin():
    model = bernevig_hughes_zhang()
    group = point_group("4/mmm")
    inversion = model.symmetry_matrix(group["-1"], [0.0, 0.0])
    assert np.allclose(inversion, np.diag([1, 1, -1, -1]))  # s even, p odd
    c4 = np.diag(model.symmetry_matrix(group["4z+"], [0.0, 0.0]))
    # rotation eigenvalues e^{-iπ j/2}: E↑, E↓ with j = ±1/2, H↑ = i(px − i py)↑ with j = −1/2, H↓ with +1/2
    assert np.allclose(c4, np.exp(-0.5j * np.pi * np.array([0.5, -0.5, -0.5, 0.5])))
    assert np.allclose(model.time_reversal_matrix(), np.kron(np.eye(2), [[0, 1], [-1, 0]]))


def test_bhz_hamiltonian_is_the_d_vector_formula():
    model = bernevig_hughes_zhang(a=0.8, b=1.1, m=1.7)
    ks = np.random.default_rng(6).random((4, 2))
    kx, ky = (2 * np.pi * ks).T
    d = np.stack([0.8 * np.sin(kx), 0.8 * np.sin(ky), 1.7 - 2 * 1.1 * (2 - np.cos(kx) - np.cos(ky))], axis=-1)
    up = np.einsum("ka,aij->kij", d, np.array([SX, SY, SZ]))
    h = model.hamiltonian(ks)
    assert np.allclose(h[:, [0, 2]][:, :, [0, 2]], up)
    assert np.allclose(h[:, [1, 3]][:, :, [1, 3]], np.conj(model.hamiltonian(-ks)[:, [0, 2]][:, :, [0, 2]]))


# ---------------------------------------------------------------------------------------------- Fu–Kane–Mele
def _fu_kane_indices(model):
    """(ν0; ν1 ν2 ν3) from inversion parities at the eight TRIMs (Fu & Kane, Phys. Rev. B 76, 045302 (2007))."""
    trims = np.array([[a, b, c] for a in (0, 0.5) for b in (0, 0.5) for c in (0, 0.5)])
    inversion = point_group("-1")["-1"]
    deltas = []
    for k in trims:
        parities = occupied_eigenvalues(model, inversion, k, 2).real
        deltas.append((-1) ** (int(np.sum(parities < 0)) // 2))  # one parity per Kramers pair
    deltas = np.array(deltas)
    strong = int(np.prod(deltas) < 0)
    weak = tuple(int(np.prod(deltas[trims[:, i] == 0.5]) < 0) for i in range(3))
    return strong, weak


@pytest.mark.parametrize("dt, indices", [(0.4, (1, (1, 1, 1))), (-0.4, (0, (1, 1, 1)))])
def test_fu_kane_mele_indices_from_parities(dt, indices):
    # Fu, Kane, Mele, Phys. Rev. Lett. 98, 106803 (2007); PHYSICS.md §4 [checked]: δt = +0.4 on the [111] bond
    # gives 1;(111), δt = −0.4 gives 0;(111), with b1 = 2π(−1, 1, 1) and cyclic
    model = fu_kane_mele(dt=dt)
    assert np.allclose(2 * np.pi * np.linalg.inv(model.lattice).T[0], 2 * np.pi * np.array([-1, 1, 1]))
    assert _fu_kane_indices(model) == indices
    assert _fu_kane_indices(fu_kane_mele(dt=dt, frame="bond")) == indices


def test_fu_kane_mele_without_distortion_is_gapless_at_the_three_x_points():
    # Fu, Kane, Mele (2007) [from memory]: δt = 0 is a semimetal with Dirac points at X
    x_points = np.array([[0.0, 0.5, 0.5], [0.5, 0.0, 0.5], [0.5, 0.5, 0.0]])
    assert gaps(fu_kane_mele(dt=0.0), x_points, 2).max() < 1e-12


def test_fu_kane_mele_respects_d3d_about_the_bond_in_both_frames():
    cubic_group = point_group("-3m", axis=(1, 1, 1), secondary=(1, -1, 0))
    cubic, bond = fu_kane_mele(), fu_kane_mele(frame="bond")
    assert max(symmetry_violations(cubic, cubic_group, time_reversal=True).values()) < 1e-10
    assert max(symmetry_violations(bond, point_group("-3m"), time_reversal=True).values()) < 1e-10
    assert np.allclose(cubic.lattice @ BOND_FRAME.T, bond.lattice)
    ks = np.random.default_rng(7).random((6, 3))
    assert np.allclose(np.linalg.eigvalsh(cubic.hamiltonian(ks)), np.linalg.eigvalsh(bond.hamiltonian(ks)))


# ---------------------------------------------------------------------------------------------- 2D SSH and BBH
def test_c4_breathing_square_has_the_rotation_index_of_wannier_centres_at_the_plaquette_centre():
    # Benalcazar, Li, Hughes, Phys. Rev. B 99, 245151 (2019); PHYSICS.md §6 [checked]: at 1/4 filling
    # χ^(4) = ([X1^(2)], [M1^(4)], [M2^(4)]) = (−1, −1, 0)
    model = c4_breathing_square(gamma=0.5, lam=1.0)
    group = point_group("4mm")
    c4, c2 = group["4z+"], group["2z"]

    def count(op, k, value):
        return int(np.sum(np.isclose(occupied_eigenvalues(model, op, k, 1), value)))

    gamma, x, m = [0.0, 0.0], [0.5, 0.0], [0.5, 0.5]
    chi = (count(c2, x, 1) - count(c2, gamma, 1), count(c4, m, 1) - count(c4, gamma, 1),
           count(c4, m, 1j) - count(c4, gamma, 1j))
    assert chi == (-1, -1, 0)


def test_bbh_four_fold_rotation_raised_to_the_fourth_power_is_minus_one():
    # Benalcazar, Bernevig, Hughes, Science 357, 61 (2017); PHYSICS.md §6: π flux, C4^4 = −1
    model = benalcazar_bernevig_hughes()
    d = model.symmetry_matrix(point_group("4mm")["4z+"], [0.0, 0.0])
    assert np.allclose(np.linalg.matrix_power(d, 4), -np.eye(4))
    assert isinstance(model, BlochFunction)


def test_bbh_hamiltonian_is_the_gamma_matrix_formula():
    # PHYSICS.md §6 [from memory]: Γ0 = τ3σ0, Γk = −τ2σk, Γ4 = τ1σ0, basis index 2τ + σ
    gamma, lam = 0.3, 1.1
    g1, g2, g3 = (-np.kron(SY, s) for s in (SX, SY, SZ))
    g4 = np.kron(SX, np.eye(2))
    ks = np.random.default_rng(8).random((5, 2))
    kx, ky = (2 * np.pi * ks).T
    c = lambda a: a[:, None, None]  # noqa: E731
    formula = c(gamma + lam * np.cos(kx)) * g4 + c(lam * np.sin(kx)) * g3 + c(gamma + lam * np.cos(ky)) * g2 \
        + c(lam * np.sin(ky)) * g1
    assert np.allclose(benalcazar_bernevig_hughes(gamma, lam).hamiltonian(ks), formula)


@pytest.mark.parametrize("gamma, same", [(0.5, False), (1.5, True)])
def test_bbh_occupied_rotation_eigenvalues_at_gamma_and_m(gamma, same):
    # PHYSICS.md §6 [checked]: e^{±3iπ/4} at Γ, e^{±iπ/4} at M for γ = 0.5, λ = 1; equal beyond |γ/λ| = 1
    model = benalcazar_bernevig_hughes(gamma, 1.0)
    c4 = point_group("4mm")["4z+"]
    at_gamma = np.sort(np.angle(occupied_eigenvalues(model, c4, [0.0, 0.0], 2)))
    at_m = np.sort(np.angle(occupied_eigenvalues(model, c4, [0.5, 0.5], 2)))
    if same:
        assert np.allclose(at_gamma, at_m)
    else:
        assert np.allclose(at_gamma, [-3 * np.pi / 4, 3 * np.pi / 4]) and np.allclose(at_m, [-np.pi / 4, np.pi / 4])


def test_bbh_keeps_its_real_space_bonds():
    cells, blocks = benalcazar_bernevig_hughes(0.5, 1.0).real_space_blocks()
    home = blocks[np.flatnonzero(~cells.any(axis=1))[0]]
    assert np.allclose(home[1, 2], -0.5) and np.allclose(home[0, 2], 0.5)  # the π-flux bond carries −γ


# ---------------------------------------------------------------------------------------------- stacking
def test_stacked_layers_add_two_tz_cos_kz_and_keep_the_layer_group():
    for layer, group in ((kane_mele(), "6/mmm"), (bernevig_hughes_zhang(), "4/mmm")):
        stack = stacked_layers(layer, tz=0.1)
        assert stack.dim == 3 and isinstance(stack, type(layer))
        ks = np.random.default_rng(9).random((5, 3))
        expected = layer.hamiltonian(ks[:, :2]) + (0.2 * np.cos(2 * np.pi * ks[:, 2]))[:, None, None] * np.eye(4)
        assert np.allclose(stack.hamiltonian(ks), expected)
        v = symmetry_violations(stack, point_group(group), time_reversal=True)
        assert max(v.values()) < 1e-10


def test_stacking_needs_a_planar_layer():
    with pytest.raises(ShapeError, match="2D layer"):
        stacked_layers(su_schrieffer_heeger())
    assert isinstance(stacked_layers(haldane()), LatticeModel)
