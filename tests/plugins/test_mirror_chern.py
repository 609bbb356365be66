"""Mirror Chern numbers: spin Chern number of S_z-conserving insulators, a published 3D value, random mirror models."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import crystaltop as ct
from crystaltop.examples import bernevig_hughes_zhang, kane_mele, stacked_layers
from crystaltop.examples.crystalline import random_mirror_model, rocksalt_snte

NAME = "mirror_chern"


def _mirror(model, group, filling, **kw):
    res = ct.classify(model, group=group, filling=filling, invariants=[NAME], **kw)[NAME]
    return res


def test_kane_mele_without_rashba_has_mirror_chern_number_one_for_mz():
    # Sheng, Weng, Sheng, Haldane, PRL 97, 036808 (2006): spin Chern number ±1 of the Kane–Mele QSH phase
    # (Kane, Mele, PRL 95, 226801 (2005), λ_SO = 0.06); PHYSICS.md §7: |n_M| = 1 for the mirror with normal z.
    # In our convention (docs): mz = −iσ_z on spin, so +i is spin down, whose block is Haldane's model with φ = −π/2
    # (C = +1, PHYSICS.md §2): C₊ = 1, C₋ = −1.
    res = _mirror(kane_mele(soc=0.06), "6/mmm", 2)
    assert res.status == "ok", res.message
    assert abs(res.value["mz"]["C_M"]) == 1
    assert res.value["mz"] == {"C+": 1, "C-": -1, "C_M": 1}
    assert res.cross_checks and res.cross_checks[0].agree  # C₊ + C₋ = C = 0 of the chern plugin


@pytest.mark.parametrize("m, magnitude", [(2.0, 1), (6.0, 1), (9.0, 0)])
def test_bhz_mirror_chern_number_follows_its_z2_phase_diagram(m, magnitude):
    # Bernevig, Hughes, Zhang, Science 314, 1757 (2006), lattice form: spin Chern number ±1 for 0 < M/B < 8
    # (sgn B and −sgn B on the two sides of M/B = 4, PHYSICS.md §4/§7), 0 beyond
    res = _mirror(bernevig_hughes_zhang(a=1.0, b=1.0, m=m), "4/mmm", 2)
    assert res.status == "ok" and abs(res.value["mz"]["C_M"]) == magnitude
    if magnitude:
        other = _mirror(bernevig_hughes_zhang(a=1.0, b=1.0, m=8.0 - m), "4/mmm", 2)
        assert other.value["mz"]["C_M"] == -res.value["mz"]["C_M"]


def test_stacked_kane_mele_layers_have_mirror_chern_number_one_on_both_mz_planes():
    # weakly coupled Kane–Mele layers: every plane k3 = const is a QSH layer (Sheng et al. 2006 per plane)
    res = _mirror(stacked_layers(kane_mele(), 0.02), "6/mmm", 2, options={NAME: {"mirrors": ["mz"]}})
    assert res.status == "ok", res.message
    assert {abs(p["C_M"]) for p in res.value["mz"].values()} == {1} and set(res.value["mz"]) == {"0", "π"}


def test_rocksalt_snte_has_mirror_chern_number_two_on_the_110_mirror_planes():
    # Hsieh, Lin, Liu, Duan, Bansil, Fu, Nat. Commun. 3, 982 (2012): n_M = −2 on the {110} mirror plane of SnTe
    # (sign from memory, so the magnitude is checked; PHYSICS.md §7); the model's parameters are from memory too.
    res = _mirror(rocksalt_snte(mass=1.65), "m-3m", 6)
    assert res.status == "ok", res.message
    for label, planes in res.value.items():
        expected = 2 if label.startswith("m[") else 0  # the six {110} mirrors, then mx, my, mz ({100})
        assert [abs(p["C_M"]) for p in planes.values()] == [expected], label
    # the normal side of the band inversion at L (opposite sign of the mass): all mirror Chern numbers vanish
    normal = _mirror(rocksalt_snte(mass=-1.65), "m-3m", 6, options={NAME: {"mirrors": ["m[110]", "mz"]}})
    assert normal.value == {"mz": {"0": {"C+": 0, "C-": 0, "C_M": 0}}, "m[110]": {"0": {"C+": 0, "C-": 0, "C_M": 0}}}


def test_mirror_chern_applies_to_mz_in_two_dimensions_and_to_any_mirror_in_three():
    # in 2D a mirror with an in-plane normal leaves only lines invariant (no plane, no mirror Chern number)
    assert NAME in ct.applicable_invariants("m", dim=2)
    assert NAME not in ct.applicable_invariants("mm2", dim=2)
    assert NAME in ct.applicable_invariants("mm2", dim=3)
    res = _mirror(kane_mele(soc=0.06, rashba=0.05), "6mm", 2)
    assert res.status == "skipped" and "mirror_z" in res.message


def test_an_unknown_mirror_asked_for_is_named():
    res = _mirror(kane_mele(), "6/mmm", 2, options={NAME: {"mirrors": ["m[111]"]}})
    assert res.status == "failed" and "m[111]" in res.message


# C₊ + C₋ equals the Chern number of the plane (chern plugin) on every gapped sample of random models whose only
# symmetry is mz (spinless s, pz orbitals, or spin ½ with mz = −iσ_z).
@settings(max_examples=10, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10_000), spinful=st.booleans())
def test_the_two_mirror_sectors_add_up_to_the_chern_number_of_the_plane(seed, spinful):
    model = random_mirror_model(seed, spinful=spinful)
    mesh = np.stack(np.meshgrid(np.arange(12) / 12, np.arange(12) / 12, indexing="ij"), -1).reshape(-1, 2)
    e = np.linalg.eigvalsh(model.hamiltonian(mesh))
    gaps = (e[:, 1:] - e[:, :-1]).min(axis=0)
    filling = int(np.argmax(gaps)) + 1
    if gaps[filling - 1] < 0.1:
        return
    options = {"chern": {"mesh": 24, "max_mesh": 96}, NAME: {"mesh": 24, "max_mesh": 96}}
    report = ct.classify(model, group="m", filling=filling, invariants=[NAME], time_reversal=False, gap_tol=1e-3,
                         options=options)
    res, chern = report[NAME], report["chern"]
    if chern.status != "ok" or res.status != "ok":
        assert "cross-check" not in res.message
        return  # gap too small for the meshes allowed
    assert res.value["mz"]["C+"] + res.value["mz"]["C-"] == chern.value
    assert res.cross_checks[0].agree


def _sector_case(d_of_points):
    """One 4 x 4 plane whose occupied state is the first basis state, with mirror matrices d_of_points(i, j)."""
    from types import SimpleNamespace

    occ = np.zeros((1, 4, 4, 2, 1), dtype=complex)
    occ[..., 0, 0] = 1.0
    d = np.array([[d_of_points(i, j) for j in range(4)] for i in range(4)], dtype=complex)[None]
    pts = np.zeros((1, 4, 4, 3))
    pts[0, ..., 0], pts[0, ..., 1] = np.arange(4)[:, None] / 4, np.arange(4)[None, :] / 4
    plane = SimpleNamespace(name="0")
    return [(SimpleNamespace(label="mz"), plane)], occ, d, pts


@pytest.mark.parametrize("d_of_points, error, text", [
    # σx takes the occupied state to the empty one: the occupied space is not invariant
    (lambda i, j: [[0, 1], [1, 0]], "SymmetryBreakingError", "does not map the occupied states of its plane 0"),
    # a phase e^{iπ/3}: its square is neither +1 nor −1
    (lambda i, j: np.diag([np.exp(1j * np.pi / 3), 1.0]), "SymmetryBreakingError", "squares to"),
    # the occupied state is mirror-even on half the plane and mirror-odd on the other half
    (lambda i, j: np.diag([1.0 if i < 2 else -1.0, 1.0]), "CrystaltopError", "changes across the plane 0 of mz"),
])
def test_each_check_of_the_mirror_sectors_names_its_cause_or_sends_the_planes_one_by_one(d_of_points, error, text):
    from crystaltop_plugins.mirror_chern import MirrorChern

    planes, occ, d, pts = _sector_case(d_of_points)
    plugin = MirrorChern()
    assert plugin._sector_cherns(planes, occ, d, pts, 4, strict=False) is None  # the stacked pass gives up
    with pytest.raises(Exception, match=text) as info:
        plugin._sector_cherns(planes, occ, d, pts, 4, strict=True)
    assert type(info.value).__name__ == error and "\n" not in str(info.value)
