"""Z2 index from the Wannier-centre flow: published phase diagrams, 3D strong index, bad input, figures, caching."""

from __future__ import annotations

import numpy as np
import pytest

import crystaltop as ct
from crystaltop.errors import FillingError, SymmetryBreakingError
from crystaltop.examples import bernevig_hughes_zhang, fu_kane_mele, kane_mele, stacked_layers
from crystaltop.plugin import Grid

FKM_GROUP = "-3m"  # fu_kane_mele(frame="bond"): the [111] bond along z (factory docstring)


def _z2(model, group, **kw):
    return ct.classify(model, group=group, filling=kw.pop("filling", 2), invariants=["z2"], **kw)["z2"]


# Kane & Mele, Phys. Rev. Lett. 95, 226801 (2005), t = 1, λ_SO = 0.06: at λ_R = 0 the gap closes at
# λ_v = 3√3 λ_SO, Z2 = 1 below (λ_v/λ_SO = 5.0) and 0 above (5.5) (PHYSICS.md §4, checked). With λ_v ≠ 0 the model
# has no inversion (group -6m2), so only the Wannier-centre method applies.
@pytest.mark.parametrize("ratio, expected", [(0.0, 1), (5.0, 1), (5.5, 0)])
def test_kane_mele_z2_on_both_sides_of_the_staggering_boundary(ratio, expected):
    group = "6/mmm" if ratio == 0 else "-6m2"
    res = _z2(kane_mele(soc=0.06, stagger=ratio * 0.06), group)
    assert res.status == "ok" and res.value == expected
    assert res.convergence < 1 - 0.3  # every step passed the gap check


def test_kane_mele_with_rashba_coupling_is_still_a_quantum_spin_hall_insulator():
    # Kane & Mele 2005, PHYSICS.md §4: (λ_R, λ_v) = (0.05, 0.1) gives Z2 = 1; S_z is not conserved and the
    # factory documents the group 3m (no inversion): only the general method applies.
    res = _z2(kane_mele(soc=0.06, rashba=0.05, stagger=0.1), "3m")
    assert res.status == "ok" and res.value == 1


# Bernevig, Hughes, Zhang, Science 314, 1757 (2006), lattice form of PHYSICS.md §4: Z2 = 1 for 0 < M/B < 8.
@pytest.mark.parametrize("m, b, expected", [(-1.0, 1.0, 0), (1.0, 1.0, 1), (3.0, 1.0, 1), (5.0, 1.0, 1),
                                            (7.0, 1.0, 1), (9.0, 1.0, 0), (-2.0, -1.0, 1), (2.0, -1.0, 0)])
def test_bernevig_hughes_zhang_z2_over_the_m_over_b_phase_diagram(m, b, expected):
    res = _z2(bernevig_hughes_zhang(a=1.0, b=b, m=m), "4/mmm")
    assert res.status == "ok" and res.value == expected


# Fu, Kane, Mele, Phys. Rev. Lett. 98, 106803 (2007), t = 1, λ_SO = 0.125, δt = ±0.4 on the [111] bond:
# 1;(111) and 0;(111) (PHYSICS.md §4, checked; the paper's statement from memory).
@pytest.mark.parametrize("dt, strong", [(0.4, 1), (-0.4, 0)])
def test_fu_kane_mele_strong_index_and_plane_values(dt, strong):
    res = _z2(fu_kane_mele(dt=dt, frame="bond"), FKM_GROUP)
    assert res.status == "ok" and res.value == strong
    planes = res.details["planes"]
    assert all(planes[f"k{i}=0.5"] == 1 for i in (1, 2, 3))
    assert all(planes[f"k{i}=0"] == strong ^ 1 for i in (1, 2, 3))  # ν₀ = Z2(k_i=0) + Z2(k_i=1/2) mod 2


def test_fu_kane_mele_in_the_cubic_frame_gives_the_same_strong_index():
    group = ct.point_group("-3m", axis=(1, 1, 1), secondary=(1, -1, 0))  # the factory's docstring
    assert _z2(fu_kane_mele(dt=0.4), group).value == 1


def test_a_stack_of_weakly_coupled_quantum_spin_hall_layers_is_not_strong():
    # Fu, Kane, Mele 2007: stacked 2D Z2 layers are weak, ν₀ = 0, with Z2 = 1 on both planes k3 = 0, 1/2
    res = _z2(stacked_layers(kane_mele(), 0.02), "6/mmm")
    assert res.value == 0
    assert res.details["planes"]["k3=0"] == res.details["planes"]["k3=0.5"] == 1


def test_several_occupied_kramers_pairs_are_handled():
    # two uncoupled copies of the BHZ model at M/B = 2 (Z2 = 1 each) add up to Z2 = 0; one copy with M/B = 2 and
    # one with M/B = 9 (trivial) stays 1 (Z2 is additive mod 2; common practice, no source)
    from crystaltop.examples.constructions import doubled

    group = ct.point_group("4/mmm")
    same = _z2(doubled(bernevig_hughes_zhang(m=2.0), 0.05, group=group), group, filling=4)
    assert same.status == "ok" and same.value == 0


def test_the_refinement_adds_pumping_steps_where_the_centres_move_fast():
    # close to the Kane–Mele boundary (λ_v/λ_SO = 5.0, gap 0.024) the centres sweep across the zone near K
    res = _z2(kane_mele(soc=0.06, stagger=0.3), "-6m2", options={"z2": {"mesh": 24}})
    assert res.value == 1
    assert res.details["refined_steps"]["zone"] > 0
    assert res.details["smallest_midpoint_distance"] > 0


# ---------------------------------------------------------------------------------------------- bad input
def _zeeman_kane_mele(field=0.1):
    model = kane_mele()
    for site in range(2):
        model.set_onsite(site, field * np.diag([1.0, -1.0]))  # an exchange field along z breaks time reversal
    return model


def test_a_model_that_breaks_time_reversal_is_refused_with_the_size_of_the_violation():
    with pytest.raises(SymmetryBreakingError, match=r"breaks time reversal: .* = \d\.\d\de-0\d"):
        ct.classify(_zeeman_kane_mele(), group="3", filling=2, time_reversal=True, invariants=["z2"])


def test_z2_on_a_model_without_time_reversal_is_skipped_with_the_reason():
    res = ct.classify(_zeeman_kane_mele(), group="3", filling=2, invariants=["z2"])["z2"]
    assert res.status == "skipped" and res.message == "needs time-reversal symmetry"


def test_an_odd_filling_with_kramers_pairs_is_refused():
    with pytest.raises(FillingError, match="odd"):
        ct.classify(kane_mele(), group="6/mmm", filling=1, invariants=["z2"])


@pytest.mark.parametrize("model, group, plane, k", [
    (fu_kane_mele(dt=0.0, frame="bond"), FKM_GROUP, "plane k1=0", "k=(0.000, 0.500, 0.500)"),  # the X points
    (bernevig_hughes_zhang(m=0.0), "4/mmm", "zone", "k=(0.000, 0.000)"),  # BHZ at M = 0: Γ
    (kane_mele(stagger=3 * np.sqrt(3) * 0.06), "-6m2", "zone", "k=(0.333, 0.667)"),  # Kane–Mele boundary: K
])
def test_a_gap_closing_on_an_invariant_plane_is_a_failure_naming_the_plane_and_the_k_point(model, group, plane, k):
    res = _z2(model, group)
    assert res.status == "failed" and res.value is None
    assert plane in res.message and k in res.message and "gap" in res.message


def test_an_unresolvable_flow_is_refused_rather_than_counted():
    # a Kane–Mele point 0.3 % from its boundary (gap 0.0006) with a coarse loop mesh that may not be refined
    res = _z2(kane_mele(stagger=0.997 * 3 * np.sqrt(3) * 0.06), "-6m2", options={"z2": {"mesh": 12, "max_mesh": 12}})
    assert res.status == "failed" and "not converged" in res.message and "gap" in res.message


# ---------------------------------------------------------------------------------------------- output
def test_the_flow_is_summarised_in_plain_text_for_every_plane():
    res = _z2(fu_kane_mele(dt=0.4, frame="bond"), FKM_GROUP)
    assert set(res.details["flow"]) == {f"k{i}={v}" for i in (1, 2, 3) for v in ("0", "0.5")}
    assert "Z2 = 1" in res.details["flow"]["k1=0.5"]
    centres = res.details["centres"]["k1=0.5"]
    assert len(centres["pump"]) == len(centres["centres"]) and centres["pump"][0] == 0.0 and centres["pump"][-1] == 0.5


def test_the_flow_figures_are_written_as_png_files(tmp_path):
    pytest.importorskip("matplotlib")
    report = ct.classify(bernevig_hughes_zhang(m=2.0), group="4/mmm", filling=2, invariants=["z2"])
    written = report.save_figures(tmp_path)
    assert set(written) == {"z2/flow"}
    assert (tmp_path / "z2-flow.png").stat().st_size > 1000


# ---------------------------------------------------------------------------------------------- shared band data
def test_the_planes_of_chern_and_z2_are_diagonalised_in_one_planned_batch_each_point_once():
    report = ct.classify(fu_kane_mele(dt=0.4, frame="bond"), group=FKM_GROUP, filling=2, invariants=["chern", "z2"])
    batches = [what for what, _ in report.band_stats["batches"]]
    # both plan their first pass (chern's planes k_i = 0, z2's half planes k_i = 0 and 1/2): one batch before either runs
    assert len(batches) == 1 and batches[0].startswith("planned by chern, z2"), batches
    half, full = tuple(np.arange(13) / 24), tuple(np.arange(24) / 24)
    points = set()
    for i in range(3):
        for value, pump in ((0.0, full), (0.5, half)):
            axes = [None, None, None]
            axes[i], axes[(i + 1) % 3], axes[(i + 2) % 3] = (value,), pump, full
            points |= {tuple(np.round(p, 9)) for p in Grid(tuple(axes), (False,) * 3).points.reshape(-1, 3)}
    assert report.band_stats["k_points"] == len(points)  # each distinct k-point once


def test_in_two_dimensions_the_half_zone_is_sliced_from_the_chern_mesh():
    report = ct.classify(kane_mele(), group="6/mmm", filling=2, invariants=["chern", "z2"])
    assert report.band_stats["k_points"] == 48 * 48


def test_the_crossing_count_is_that_of_the_shorter_arc_and_keeps_the_parity():
    # Soluyanov & Vanderbilt (PRB 83, 235401 (2011)), §IV: either arc between the largest-gap midpoints of two steps
    # gives the same parity for an even number of centres; the shorter one does not jump with rounding
    from crystaltop_plugins.z2 import step_crossings

    rng = np.random.default_rng(4)
    for _ in range(200):
        z = rng.random((3, 2))
        x = np.sort(rng.random((3, 2, 4)), axis=-1)
        arc = np.mod(z[:, 1] - z[:, 0], 1.0)
        ahead = np.sum(np.mod(x[:, 1] - z[:, :1], 1.0) < arc[:, None], axis=-1)  # counter-clockwise, every time
        got = step_crossings(z, x)[:, 0]
        assert np.array_equal(got % 2, ahead % 2)
        assert np.all(got <= 4)
    # a midpoint that does not move (up to 1e-16 either way) is crossed by no centre
    x = np.array([[[0.1, 0.2, 0.6, 0.7], [0.1, 0.2, 0.6, 0.7]]])
    for eps in (1e-16, -1e-16):
        assert step_crossings(np.array([[0.4, 0.4 + eps]]), x)[0, 0] == 0


def test_the_flow_details_are_the_same_in_every_gauge():
    # the Wannier centres are gauge invariant, and so is the count of crossings of the shorter arcs
    model = fu_kane_mele(dt=0.4, frame="bond")
    reports = [ct.classify(model, group="-3m", filling=2, invariants=["z2"], gauge_seed=seed) for seed in (None, 1, 2)]
    counts = [r["z2"].details["crossings"] for r in reports]
    assert counts[0] == counts[1] == counts[2]
