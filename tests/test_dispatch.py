"""The dispatcher: dependency order, isolation of a failing plugin, skipped with reasons, cross-check failures."""

from __future__ import annotations

import types

import numpy as np
import pytest

from crystaltop.bands import BandData
from crystaltop.dispatch import InvariantRegistry, dependency_order, run_invariants
from crystaltop.errors import NotApplicable, PluginError
from crystaltop.plugin import CrossCheck, Invariant, Outcome, Requirements, hookimpl

from .bands._two_band import TwoBandPlane


class _Group:
    symbol = "stub"

    def __init__(self, elements):
        self._elements = frozenset(elements)

    def elements(self, dim):
        return self._elements


def _inv(name, compute, **req):
    cls = type(name.title(), (Invariant,), {"name": name, "title": name, "requires": Requirements(**req),
                                            "compute": lambda self, ctx: compute(ctx)})
    return cls()


def _registry(*invariants):
    plugin = types.SimpleNamespace(crystaltop_invariants=hookimpl(lambda: list(invariants)))
    reg = InvariantRegistry(autoload=False)
    reg.register(plugin, name="test-plugin")
    return reg


def _run(reg, elements=(), trs=False):
    model = TwoBandPlane(1.0)
    return run_invariants(model=model, group=_Group(elements), filling=1, time_reversal=trs,
                          bands=BandData(model, 1), registry=reg)


def test_invariants_run_after_those_they_use_and_a_failing_one_is_isolated():
    def boom(ctx):
        raise RuntimeError("deliberate failure")

    def uses_a(ctx):
        return Outcome(value=ctx.result("a").value + 1, method="m")

    reg = _registry(
        _inv("b", uses_a, uses=("a",)),
        _inv("a", lambda ctx: Outcome(value=1, method="m")),
        _inv("c", boom),
        _inv("d", lambda ctx: Outcome(value="after", method="m")),
    )
    res = _run(reg)
    assert list(res).index("a") < list(res).index("b")
    assert res["b"].value == 2 and res["b"].status == "ok"
    assert res["c"].status == "failed" and "deliberate failure" in res["c"].message
    assert res["d"].status == "ok"


def test_an_invariant_that_does_not_apply_is_skipped_with_the_reason():
    reg = _registry(
        _inv("needs_c4", lambda ctx: Outcome(value=0, method="m"), elements={"C4"}),
        _inv("needs_trs", lambda ctx: Outcome(value=0, method="m"), time_reversal=True),
        _inv("declines", lambda ctx: (_ for _ in ()).throw(NotApplicable("Chern number is 2"))),
        _inv("uses_declined", lambda ctx: Outcome(value=0, method="m"), uses=("declines",)),
    )
    res = _run(reg, elements={"C2"})
    assert res["needs_c4"].status == "skipped" and "C4" in res["needs_c4"].message
    assert res["needs_trs"].status == "skipped" and "time-reversal" in res["needs_trs"].message
    assert res["declines"].status == "skipped" and res["declines"].message == "Chern number is 2"
    assert res["uses_declined"].status == "skipped" and "declines" in res["uses_declined"].message


def test_a_disagreeing_cross_check_turns_the_result_into_a_failure_naming_both_values():
    def with_check(ctx):
        return Outcome(value=1, method="lattice sum", cross_check=CrossCheck(method="rotation eigenvalues",
                                                                           value=3, agree=False, note="mod 4"))

    def attaches(ctx):
        return Outcome(value=0, method="m", checks_for={"good": CrossCheck("second", 5, True)})

    reg = _registry(_inv("bad", with_check), _inv("good", lambda ctx: Outcome(value=5, method="first")),
                    _inv("z_attach", attaches, uses=("good",)))
    res = _run(reg)
    assert res["bad"].status == "failed"
    assert "lattice sum gives 1" in res["bad"].message and "rotation eigenvalues gives 3" in res["bad"].message
    assert res["good"].status == "ok" and res["good"].cross_checks[0].method == "second"


def test_a_dependency_cycle_and_duplicate_names_are_refused():
    a = _inv("a", lambda ctx: None, uses=("b",))
    b = _inv("b", lambda ctx: None, uses=("a",))
    with pytest.raises(PluginError, match="cycle"):
        dependency_order({"a": a, "b": b})
    with pytest.raises(PluginError, match="two plugins"):
        _registry(_inv("a", lambda ctx: None), _inv("a", lambda ctx: None)).invariants()


def test_a_compute_that_returns_no_outcome_is_recorded_as_failed():
    res = _run(_registry(_inv("raw", lambda ctx: 42)))
    assert res["raw"].status == "failed" and "expected crystaltop.plugin.Outcome" in res["raw"].message


def test_a_misspelt_hook_implementation_fails_loudly():
    plugin = types.SimpleNamespace(crystaltop_invariant=hookimpl(lambda: []))
    reg = InvariantRegistry(autoload=False)
    with pytest.raises(Exception, match="unknown hook"):
        reg.register(plugin, name="typo")


def _planning(name, planned, compute):
    cls = type(name.title(), (Invariant,), {"name": name, "title": name, "requires": Requirements(),
                                            "planned_grids": lambda self, ctx: planned(ctx),
                                            "compute": lambda self, ctx: compute(ctx)})
    return cls()


def test_the_grids_that_invariants_plan_are_diagonalised_in_one_batch_before_any_of_them_runs():
    from crystaltop.kspace import plane, uniform_mesh

    def whole(ctx):
        return Outcome(value=float(ctx.bands.occupied(uniform_mesh((8, 8))).size), method="m")

    def line(ctx):
        return Outcome(value=ctx.bands.check_gap(plane(2, 0, 0.0, (8,))), method="m")

    reg = _registry(_planning("a", lambda ctx: [plane(2, 0, 0.0, (8,))], line),
                    _planning("b", lambda ctx: [uniform_mesh((8, 8)), np.array([[0.5, 0.5]])], whole))
    model = TwoBandPlane(1.0)
    bands = BandData(model, 1)
    res = run_invariants(model=model, group=_Group(()), filling=1, time_reversal=False, bands=bands, registry=reg)
    assert res["a"].status == "ok" and res["b"].status == "ok"
    assert bands.stats.batches == [("planned by a, b (64 points)", 64)]
    assert res["a"].smallest_gap is not None  # the gap is still checked when the invariant asks


def test_a_plan_that_raises_is_left_out_and_the_invariant_still_runs():
    from crystaltop.kspace import uniform_mesh

    def broken(ctx):
        raise RuntimeError("no plan")

    reg = _registry(_planning("a", broken, lambda ctx: Outcome(
        value=ctx.bands.check_gap(uniform_mesh((4, 4))), method="m")))
    model = TwoBandPlane(1.0)
    bands = BandData(model, 1)
    res = run_invariants(model=model, group=_Group(()), filling=1, time_reversal=False, bands=bands, registry=reg)
    assert res["a"].status == "ok" and bands.stats.batches == [("4x4", 16)]
