"""Fu–Kane parity criterion: published values, the band-inversion momentum, cross-checks of the Wilson-loop values,
and agreement with them on random inversion- and time-reversal-symmetric models (hypothesis)."""

from __future__ import annotations

import types

import pytest
from hypothesis import HealthCheck, event, given, reject, settings
from hypothesis import strategies as st

import crystaltop as ct
from crystaltop.dispatch import InvariantRegistry
from crystaltop.examples import bernevig_hughes_zhang, fu_kane_mele, kane_mele, stacked_layers
from crystaltop.plugin import Invariant, Outcome, Requirements, hookimpl
from crystaltop.testing_models import ORBITAL_CHOICES, direct_gap, random_inversion_tr_model
from crystaltop_plugins.parity_indices import ParityIndices


def _report(model, group, filling=2, **kw):
    return ct.classify(model, group=group, filling=filling, invariants=["parity_indices"], **kw)


# Bernevig, Hughes, Zhang, Science 314, 1757 (2006), PHYSICS.md §4 (checked): Z2 = 1 for 0 < M/B < 8 with the band
# inversion at Γ for 0 < M/B < 4 and at M = (π, π) for 4 < M/B < 8. Derivation of the check: at a TRIM the occupied
# Kramers pair of d·τ is the E (s, even) state where d_z < 0 and the H (p, odd) state where d_z > 0, and
# d_z(Γ, X, M) = M, M − 4B, M − 8B; the TRIM whose δ differs from the other three is the inverted one.
@pytest.mark.parametrize("m, z2, trim", [(-1.0, 0, None), (1.0, 1, "(0, 0)"), (3.0, 1, "(0, 0)"),
                                         (5.0, 1, "(1/2, 1/2)"), (7.0, 1, "(1/2, 1/2)"), (9.0, 0, None)])
def test_bernevig_hughes_zhang_parities_and_the_momentum_of_the_band_inversion(m, z2, trim):
    report = _report(bernevig_hughes_zhang(a=1.0, b=1.0, m=m), "4/mmm")
    res = report["parity_indices"]
    assert res.status == "ok" and res.value == z2
    assert res.details.get("band_inversion_trim") == trim
    if trim is not None:
        assert res.details["band_inversion_k"] == ((0.0, 0.0) if trim == "(0, 0)" else (0.5, 0.5))
        assert f"band inversion at {trim}" in report["z2"].cross_checks[0].note  # shown beside z2 too


def test_kane_mele_with_inversion_is_a_quantum_spin_hall_insulator_by_parities_too():
    # Fu & Kane, PRB 76, 045302 (2007) discuss graphene with spin-orbit coupling: Z2 = 1 (from memory);
    # at λ_v = λ_R = 0 the Kane–Mele model has 6/mmm (factory docstring), inversion included
    report = _report(kane_mele(soc=0.06), "6/mmm")
    assert report["parity_indices"].value == 1
    assert report["z2"].cross_checks[0].agree and report["z2"].cross_checks[0].value == 1


# Fu, Kane, Mele, PRL 98, 106803 (2007) and Fu & Kane, PRB 76, 045302 (2007): 1;(111) for δt = +0.4, 0;(111) for
# δt = −0.4 (PHYSICS.md §4, checked).
@pytest.mark.parametrize("dt, value, label", [(0.4, (1, (1, 1, 1)), "1;(111)"), (-0.4, (0, (1, 1, 1)), "0;(111)")])
def test_fu_kane_mele_parities_give_the_published_indices_and_agree_with_the_wannier_centre_flow(dt, value, label):
    report = _report(fu_kane_mele(dt=dt, frame="bond"), "-3m")
    res = report["parity_indices"]
    assert res.status == "ok" and res.value == value and res.details["label"] == label
    assert res.cross_checks and res.cross_checks[0].agree
    for other in ("z2", "weak_indices"):
        checks = report[other].cross_checks
        assert report[other].status == "ok" and len(checks) == 1 and checks[0].agree
        assert "Fu–Kane" in checks[0].method


def test_the_parity_values_do_not_depend_on_the_inversion_centre():
    # Fu & Kane 2007: the products are independent of the centre. Moving every orbital by a lattice vector keeps the
    # centre; here a stack whose layer sits at z = 0 is compared with the same stack re-wrapped (conformance-style).
    model = stacked_layers(kane_mele(), 0.02)
    shifted = model.rewrapped([[0, 0, 1]] * model.n_states)
    assert _report(model, "6/mmm")["parity_indices"].value == _report(shifted, "6/mmm")["parity_indices"].value \
        == (0, (0, 0, 1))


def test_parity_indices_need_inversion():
    res = _report(kane_mele(soc=0.06, rashba=0.05, stagger=0.1), "3m")["parity_indices"]
    assert res.status == "skipped" and "inversion" in res.message


def test_a_wrong_wilson_loop_value_is_turned_into_a_failure_naming_both_values():
    class WrongZ2(Invariant):
        name = "z2"
        title = "deliberately wrong Z2"
        requires = Requirements(dims={2, 3}, time_reversal=True, spinful=True)

        def compute(self, context):
            return Outcome(value=0, method="a wrong method")

    reg = InvariantRegistry(autoload=False)
    reg.register(types.SimpleNamespace(crystaltop_invariants=hookimpl(lambda: [WrongZ2(), ParityIndices()])),
                 name="wrong-z2")
    report = ct.classify(bernevig_hughes_zhang(m=2.0), group="4/mmm", filling=2, registry=reg)
    z2 = report["z2"]
    assert z2.status == "failed" and z2.value == 0
    assert "a wrong method gives 0" in z2.message and "Fu–Kane parity criterion" in z2.message and "gives 1" in z2.message
    assert report["parity_indices"].status == "failed"


# ---------------------------------------------------------------------------------------------- hypothesis
@settings(max_examples=24, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.filter_too_much])
@given(seed=st.integers(0, 10_000), dim=st.sampled_from([2, 3]), orbitals=st.sampled_from(ORBITAL_CHOICES),
       pair=st.booleans(), mass=st.floats(-2.5, 2.5))
def test_wilson_loop_and_parity_values_agree_on_random_inversion_and_time_reversal_symmetric_models(
        seed, dim, orbitals, pair, mass):
    model = random_inversion_tr_model(seed, dim, orbitals, pair=pair, mass=mass, hopping=0.8)
    filling = model.n_states // 2
    if filling % 2 or direct_gap(model, filling, n=24 if dim == 2 else 12) < 0.05:
        reject()  # an odd number of Kramers pairs at half filling, or (nearly) gapless: not an insulator
    report = ct.classify(model, group="-1", filling=filling, time_reversal=True,
                         invariants=["parity_indices"], options={"mesh": 24 if dim == 2 else 12})
    z2 = report["z2"]
    if z2.status == "failed":
        # a flow that cannot be resolved is refused, naming the small gap, never counted (a gap below the screen)
        assert z2.details["exception"] == "MeshTooCoarseError" and "gap" in z2.message, z2.message
        reject()
    parity = report["parity_indices"]
    assert parity.status == "ok", parity.message
    wilson = z2.value if dim == 2 else (z2.value, tuple(report["weak_indices"].value))
    assert parity.value == wilson
    event(f"{dim}D, value {parity.value}")


# Random draws (found by a scan) that land in non-trivial phases, so that the agreement is tested where it matters:
# strong, weak and both, in 2D and 3D.
@pytest.mark.parametrize("seed, dim, orbitals, pair, mass", [
    (15, 2, "s pz", False, 0.96), (9, 2, "s s", False, 1.85), (11, 3, "s px", False, -1.86),
    (25, 3, "s pz", False, -1.7), (89, 3, "s s", False, 0.38), (152, 3, "px py", True, -1.41),
    (176, 3, "s px", True, 2.04)])
def test_wilson_loop_and_parity_values_agree_on_random_models_in_non_trivial_phases(seed, dim, orbitals, pair, mass):
    model = random_inversion_tr_model(seed, dim, orbitals, pair=pair, mass=mass, hopping=0.8)
    report = ct.classify(model, group="-1", filling=model.n_states // 2, time_reversal=True,
                         invariants=["parity_indices"], options={"mesh": 24 if dim == 2 else 12})
    names = ("z2", "parity_indices") + (("weak_indices",) if dim == 3 else ())
    assert all(report[n].status == "ok" for n in names), [(r.name, r.message) for r in report]
    parity = report["parity_indices"].value
    wilson = report["z2"].value if dim == 2 else (report["z2"].value, tuple(report["weak_indices"].value))
    assert parity == wilson and parity not in (0, (0, (0, 0, 0)))
