"""A dislocation split into a disclination dipole (+Ω at c₁, −Ω at c₂ = c₁ + s): which core its charge and its bound
states follow as the separation grows.

The separation fixes the net Burgers vector, b = R_{−Ω} s − s (crystaltop.defects.disclination_dipole), so a sweep
at fixed core types keeps the class of b: with Ω = π/2, c₁ at 1a and c₂ at 1b, n₁ − n₂ and n₁ + n₂ are odd at every
separation; with c₂ at 1a both are even. Sources beside each check; "from memory" where PHYSICS.md says so.
"""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.defects import split_dislocation
from crystaltop.defects.splitting import (BOTH_CORES, FOLLOWS_MINUS, FOLLOWS_PLUS, NONE_BOUND, OPPOSITE, SPLITS,
                                          UNDETERMINED, _charge_verdict, _state_verdict)
from crystaltop.defects.solvers import BoundCharge
from crystaltop.errors import DefectGeometryError
from crystaltop.examples import bernevig_hughes_zhang, c4_breathing_square

ONE_AT_1A = [((0.0, 0.0), 1.0)]
#: Second core at 1b, at 1a, at 1b: |s| = 5.52, 6.00, 7.52; b = (−5, −6), (−6, −6), (−7, −8).
SWEEP = [(5.5, 0.5), (6.0, 0.0), (7.5, 0.5)]


def mod1(x: float) -> float:
    """Distance of x from the nearest integer."""
    return abs((x + 0.5) % 1.0 - 0.5)


@pytest.fixture(scope="module")
def c4_sweep():
    """The C4 SSH obstructed limit (γ = 0.3, λ = 1, 1/4 filling, ions at 1a: Wannier centres at 1b, P = (½, ½)), as in
    test_charges.py."""
    return split_dislocation(c4_breathing_square(gamma=0.3), np.pi / 2, SWEEP, core="1a", filling=1, ions=ONE_AT_1A)


# ---------------------------------------------------------------------------------------------- charge
def test_each_core_of_the_split_c4_dislocation_holds_the_charge_of_the_counting_rule(c4_sweep):
    """PHYSICS.md §8 counting rule δN ≡ (Ω/2π) q_core mod 1, q_core = −1 at 1a and +1 at 1b for this limit (the rule
    is stated for P = 0; test_charges.py finds single disclinations of this P = (½, ½) limit obeying it). Predicted:
    +π/2 at 1a → −1/4; −π/2 at 1b → −1/4; −π/2 at 1a → +1/4. Measured: −0.250, −0.248 (converging to −0.250 from
    |s| = 7.5 on), +0.250, whatever the separation."""
    q_core = {"1a": -1, "1b": 1}
    for step in c4_sweep.steps:
        for core in step.cores:
            expected = core.frank_angle / (2 * np.pi) * q_core[core.wyckoff]
            assert core.charge.spread < 1e-2
            assert mod1(core.charge.value - expected) < 1e-2, (step.separation, core.wyckoff)


def test_the_two_cores_together_hold_the_charge_of_their_net_dislocation_at_every_separation(c4_sweep):
    """PHYSICS.md §8: Q = e (ẑ × b)·P mod e, Q/e = n₁P₂ − n₂P₁ = (n₁ − n₂)/2 for P = (½, ½), with b the pair's net
    Burgers vector; that a dislocation is a bound disclination pair holding this charge is common practice, no
    source. Measured: −0.498, 0.000, −0.500 (e/2, 0, e/2 mod e)."""
    for step in c4_sweep.steps:
        n1, n2 = step.burgers
        expected = 0.5 * (n1 - n2)
        assert mod1(step.total.value - expected) < 1e-2, step.burgers
        assert step.total.value == pytest.approx(sum(c.charge.value for c in step.cores), abs=1e-9)  # disjoint discs


def test_the_half_charge_of_the_c4_dislocation_splits_into_two_quarters(c4_sweep):
    """What the two checks above imply, in the verdicts: a 1a–1b pair shares e/2 equally (−1/4 each), a 1a–1a pair
    holds ∓1/4 and nothing net. No in-gap state is bound at any core (the limit has none)."""
    kinds = [step.charge_verdict.kind for step in c4_sweep.steps]
    assert kinds == [SPLITS, OPPOSITE, SPLITS]
    for step in (c4_sweep.steps[0], c4_sweep.steps[2]):
        assert step.charge_verdict.fractions == pytest.approx((0.5, 0.5), abs=0.02)
    assert all(step.state_verdict.kind == NONE_BOUND for step in c4_sweep.steps)
    assert [s.burgers for s in c4_sweep.steps] == [(-5, -6), (-6, -6), (-7, -8)]
    assert [tuple(c.wyckoff for c in s.cores) for s in c4_sweep.steps] == [("1a", "1b"), ("1a", "1a"), ("1a", "1b")]


def test_with_the_plus_core_at_1b_both_cores_hold_plus_a_quarter():
    """Same counting rule: +π/2 at 1b → +1/4, −π/2 at 1a → +1/4; total +1/2 ≡ (ẑ × b)·P. Measured: +0.249, +0.250."""
    sweep = split_dislocation(c4_breathing_square(gamma=0.3), np.pi / 2, [(5.5, 0.5)], core="1b", filling=1,
                              ions=ONE_AT_1A)
    plus, minus = sweep.steps[0].cores
    assert (plus.wyckoff, minus.wyckoff) == ("1b", "1a")
    assert mod1(plus.charge.value - 0.25) < 1e-2 and mod1(minus.charge.value - 0.25) < 1e-2
    assert mod1(sweep.totals[0] - 0.5) < 1e-2


# ---------------------------------------------------------------------------------------------- bound states
@pytest.mark.parametrize("core, follows, even", [("1a", FOLLOWS_MINUS, NONE_BOUND), ("1b", FOLLOWS_PLUS, BOTH_CORES)])
def test_the_bhz_kramers_pair_follows_the_plaquette_centred_disclination(core, follows, even):
    """Juričić, Mesaros, Slager, Zaanen, PRL 108, 106403 (2012) (PHYSICS.md §8, from memory): with the band inversion
    at K = (π, π) (BHZ, M/B = 6) a dislocation binds a Kramers pair iff K·b = π. Each core's holonomy is a rotation
    plus the translation T = (1 − R)c: T = 0 at 1a, T = (1, 0) or (0, 1) at 1b, so K·T = π only at the 1b core, and
    with c₁ at 1a the whole net b is the 1b core's T. That a disclination binds a pair iff K·T = π is the same rule
    applied to the translation part of the holonomy (Teo, Hughes, PRL 111, 047006 (2013), from memory).

    Measured (open flakes, 16 states nearest E = 0, weights within the disc radius): 1.83–1.97 states' weight at the
    1b core, at most 0.02 at the 1a core, at every separation, whether the 1b core has +π/2 or −π/2; the pair stays
    at E = 0 (|E| < 1e-3). For the middle separation, s = (6, 0), b = (−6, −6) is even (K·b = 0): a 1a–1a pair
    binds nothing, a 1b–1b pair binds a Kramers pair at each core (K·T = π at both; two pairs, trivial in total),
    measured 1.95 states' weight at each, hybridised across the cores into levels at ±0.006."""
    sweep = split_dislocation(bernevig_hughes_zhang(m=6.0), np.pi / 2, SWEEP, core=core, track="states", count=16,
                              charge=False)
    odd = [sweep.steps[0], sweep.steps[2]]
    for step in odd:
        assert step.n_bound == 2
        assert step.state_verdict.kind == follows
        at_1b = next(c for c in step.cores if c.wyckoff == "1b")
        assert at_1b.states_held > 1.8
        assert np.abs(step.states.energies[step.bound]).max() < 1e-3
    assert sweep.steps[1].state_verdict.kind == even
    if even == BOTH_CORES:
        assert sweep.steps[1].n_bound == 4
        assert all(c.states_held > 1.8 for c in sweep.steps[1].cores)
    assert sweep.verdicts == tuple(s.state_verdict for s in sweep.steps)
    assert all(s.charge_verdict.kind == "not measured" and s.total is None for s in sweep.steps)


def test_bhz_with_the_inversion_at_gamma_binds_nothing_at_any_separation():
    """Same source: K = Γ gives K·b = 0 for every b (M/B = 2), so no pair; the sweep reports "none bound", it does not
    refuse the model."""
    sweep = split_dislocation(bernevig_hughes_zhang(m=2.0), np.pi / 2, [(5.5, 0.5), (7.5, 0.5)], track="states",
                              count=16, charge=False)
    assert [v.kind for v in sweep.verdicts] == [NONE_BOUND, NONE_BOUND]
    assert "none bound at every separation" in sweep.summary


# ---------------------------------------------------------------------------------------------- verdicts
def _charge(value, spread=0.0, error=0.0):
    return BoundCharge((0,), np.array([2.0, 3.0]), np.array([value, value]), np.array([error, error]), value,
                       spread, 0.0, "test", 0, False)


@pytest.mark.parametrize("plus, minus, kind", [
    (0.5, 0.0, FOLLOWS_PLUS), (1.0, -0.5, FOLLOWS_MINUS), (-0.25, -0.25, SPLITS), (0.25, -0.25, OPPOSITE),
    (1.0, 2.0, NONE_BOUND)])
def test_the_charge_verdict_reads_the_charges_mod_e(plus, minus, kind):
    verdict = _charge_verdict([_charge(plus), _charge(minus)], _charge(plus + minus), 0.02, 0.9)
    assert verdict.kind == kind


@pytest.mark.parametrize("weights, kind", [
    ([[0.98, 0.97], [0.01, 0.02]], FOLLOWS_PLUS), ([[0.0, 0.95, 0.0, 0.95], [0.97, 0.0, 0.97, 0.0]], BOTH_CORES),
    ([[0.45, 0.45], [0.45, 0.45]], SPLITS), (np.zeros((2, 0)), NONE_BOUND)],
    ids=["one core", "a level at each core", "shared by both", "nothing"])
def test_the_state_verdict_reads_the_localised_bound_states(weights, kind):
    assert _state_verdict(np.array(weights), 0.9).kind == kind


def test_an_unconverged_charge_or_one_with_a_large_error_bound_is_undetermined():
    """A state at the Fermi level is half filled by the Chebyshev step; its error bound says so (the BHZ pair at E = 0
    gives an error bound of 0.9 at its core), and the verdict must not read a number from it."""
    assert _charge_verdict([_charge(0.5, spread=0.1), _charge(0.0)], _charge(0.5), 0.02, 0.9).kind == UNDETERMINED
    assert _charge_verdict([_charge(0.0, error=0.9), _charge(0.0)], _charge(0.0), 0.02, 0.9).kind == UNDETERMINED


# ---------------------------------------------------------------------------------------------- output
def test_the_sweep_renders_as_a_table_a_dict_and_a_figure(c4_sweep, tmp_path):
    text = str(c4_sweep)
    assert text == c4_sweep.table()
    assert len(text.splitlines()) == 3 + len(SWEEP) + 1
    assert "splits between them (+Ω 0.50, −Ω 0.50)" in text and "Summary (charge)" in text
    data = c4_sweep.to_dict()
    assert [s["burgers"] for s in data["steps"]] == [[-5, -6], [-6, -6], [-7, -8]]
    assert data["steps"][0]["cores"][1]["wyckoff"] == "1b"
    pytest.importorskip("matplotlib")
    ax = c4_sweep.plot(path=tmp_path / "split.png")
    assert ax is not None and (tmp_path / "split.png").stat().st_size > 0


# ---------------------------------------------------------------------------------------------- bad input
MODEL = c4_breathing_square(gamma=0.3)


@pytest.mark.parametrize("call, message", [
    (lambda: split_dislocation(MODEL, np.pi / 2, [(2.5, 0.5)], filling=1), "do not fit between them"),
    (lambda: split_dislocation(MODEL, np.pi / 2, [(6.5, 0.5)], 20, filling=1), "give size >="),
    (lambda: split_dislocation(MODEL, np.pi / 2, [(6.25, 0.5)], filling=1), "not a 4-fold rotation centre"),
    (lambda: split_dislocation(MODEL, np.pi / 2, [(6.5, 0.5)], filling=1, track="weight"), "track must be"),
    (lambda: split_dislocation(MODEL, np.pi / 2, [(6.5, 0.5)], filling=1, charge=False), "needs charge=True"),
    (lambda: split_dislocation(MODEL, np.pi / 2, [6.5], filling=1), "reduced vectors of 2 numbers"),
    (lambda: split_dislocation(MODEL, -np.pi / 2, [(6.5, 0.5)], filling=1), "needs 0 < Ω < π"),
], ids=["cores too close", "flake too small", "not a rotation centre", "unknown track", "charge off",
        "scalar separation", "negative Frank angle"])
def test_bad_requests_are_refused_before_any_diagonalisation(call, message):
    with pytest.raises(DefectGeometryError, match=message):
        call()
