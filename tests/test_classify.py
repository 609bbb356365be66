"""classify: the public entry point, and each kind of bad input refused with a one-line message."""

from __future__ import annotations

import numpy as np
import pytest

import crystaltop as ct
from crystaltop.errors import (FillingError, LatticeMismatchError, NonHermitianError, ShapeError,
                               SymmetryBreakingError, UnknownGroupError)
from crystaltop.examples import haldane, kane_mele, qi_wu_zhang, su_schrieffer_heeger


def _one_line(exc_info):
    text = str(exc_info.value)
    assert "\n" not in text and len(text) < 300
    return text


def test_the_public_contract_of_a_report():
    report = ct.classify(qi_wu_zhang(m=1.0), group="C4h", filling=1)
    assert report["chern"].value == -1
    assert set(report.keys()) >= {"chern", "polarization"}
    d = report.to_dict()
    assert d["invariants"]["chern"]["value"] == -1 and d["model"]["group"] == "4/m"
    md = report.to_markdown()
    assert "| chern | -1 | ok |" in md
    assert "chern" in str(report) and "Fukui" in str(report)


def test_applicable_invariants_need_no_hamiltonian():
    names = ct.applicable_invariants("4mm", dim=2, time_reversal=False)
    assert {"chern", "polarization"} <= set(names)
    assert names.index("chern") < names.index("polarization")  # polarization reads the Chern number
    assert "chern" not in ct.applicable_invariants("-1", dim=1, time_reversal=True)


def test_an_unknown_group_symbol_is_refused():
    with pytest.raises(UnknownGroupError) as info:
        ct.classify(qi_wu_zhang(m=1.0), group="4mmm", filling=1)
    assert "4mmm" in _one_line(info)


def test_a_group_the_model_breaks_is_refused_with_the_operation_and_the_size():
    # the massive Haldane model (Haldane 1988) has no two-fold rotation: M ≠ 0 breaks it
    with pytest.raises(SymmetryBreakingError) as info:
        ct.classify(haldane(mass=0.2), group="6", filling=1)
    text = _one_line(info)
    assert "breaks" in text and "of point group 6" in text and "= " in text


def test_a_lattice_that_does_not_admit_the_group_is_refused():
    # a square lattice has no three-fold axis
    with pytest.raises(LatticeMismatchError) as info:
        ct.classify(qi_wu_zhang(m=1.0), group="3", filling=1)
    assert "3z" in _one_line(info)


@pytest.mark.parametrize("filling", [0, 2, 5, 1.5])
def test_a_filling_out_of_range_is_refused(filling):
    with pytest.raises(FillingError) as info:
        ct.classify(qi_wu_zhang(m=1.0), group="4", filling=filling)
    assert "filling" in _one_line(info)


def test_an_odd_filling_with_kramers_pairs_is_refused():
    with pytest.raises(FillingError) as info:
        ct.classify(kane_mele(), group="6/mmm", filling=1)
    assert "Kramers" in _one_line(info)


def test_time_reversal_asked_of_a_model_that_breaks_it_is_refused_with_the_size():
    with pytest.raises(SymmetryBreakingError) as info:
        ct.classify(haldane(), group="3", filling=1, time_reversal=True)
    assert "time" in _one_line(info)


def test_a_non_hermitian_callable_is_refused_with_the_k_point():
    f = ct.BlochFunction(lambda k: np.broadcast_to(np.array([[1.0, 0.3], [0.0, -1.0]], complex),
                                                   k.shape[:-1] + (2, 2)),
                         lattice=np.eye(2), positions=np.zeros((2, 2)))
    with pytest.raises(NonHermitianError) as info:
        ct.classify(f, group="1", filling=1)
    assert "k=" in _one_line(info)


def test_a_callable_with_the_wrong_output_shape_is_refused():
    f = ct.BlochFunction(lambda k: np.zeros(k.shape[:-1] + (3, 3)), lattice=np.eye(2), positions=np.zeros((2, 2)))
    with pytest.raises(ShapeError) as info:
        ct.classify(f, group="1", filling=1)
    assert "(..., 2, 2)" in _one_line(info) or "2, 2" in _one_line(info)


def test_a_plugin_that_raises_is_recorded_and_the_rest_still_run():
    import types

    from crystaltop.dispatch import InvariantRegistry
    from crystaltop.plugin import Invariant, Requirements, hookimpl

    class Broken(Invariant):
        name, title, requires = "broken", "always raises", Requirements()

        def compute(self, context):
            raise ZeroDivisionError("division by zero in a user plugin")

    reg = InvariantRegistry()
    reg.register(types.SimpleNamespace(crystaltop_invariants=hookimpl(lambda: [Broken()])), name="broken-plugin")
    report = ct.classify(su_schrieffer_heeger(), group="-1", filling=1, registry=reg)
    assert report["broken"].status == "failed" and "ZeroDivisionError" in report["broken"].message
    assert report["polarization"].status == "ok"


def test_the_group_is_read_from_the_model_when_none_is_given():
    # SSH chain with the origin on a bond centre: the site group of the chain (mmm, with inversion) survives
    report = ct.classify(su_schrieffer_heeger(v=0.5, w=1.0), filling=1)
    assert report.model["group"] == "mmm"
    assert report["polarization"].value == (0.5,)
    # Haldane (Phys. Rev. Lett. 61, 2015 (1988)): the honeycomb's 6/mmm loses its vertical mirrors to the
    # complex second-neighbour hopping (6/m); the sublattice mass M also removes the six-fold axis and inversion
    assert ct.classify(haldane(mass=0.0), filling=1).model["group"] == "6/m"
    assert ct.classify(haldane(mass=0.2), filling=1).model["group"] == "-6"


def test_a_three_dimensional_report_shares_one_set_of_diagonalisations():
    from crystaltop.examples import fu_kane_mele

    report = ct.classify(fu_kane_mele(dt=0.4, frame="bond"), group="-3m", filling=2, invariants=["chern", "polarization"])
    hits = report.band_stats["cache_hits"]
    assert hits > 0
    assert report["chern"].value == (0, 0, 0)


def _essentials(report):
    return {r.name: (r.status, r.value, r.message, tuple((c.method, c.value, c.agree) for c in r.cross_checks))
            for r in report}


@pytest.mark.parametrize("entry", [e for e in __import__("crystaltop.examples.published", fromlist=["CATALOGUE"]).CATALOGUE
                                   if e.time_reversal], ids=lambda e: e.name)
def test_taking_the_states_at_minus_k_by_time_reversal_changes_no_value_status_or_message(entry):
    # the same report whether H(−k) is diagonalised or its states are U_T V(k)* (BandData's time_reversal), on
    # the gapped point of every time-reversal-symmetric catalogue model and on its gapless point, with a random gauge
    builds = [entry.build] + ([entry.gapless] if entry.gapless is not None else [])
    for i, build in enumerate(builds):
        model = build()
        halved = ct.classify(model, group=entry.group, filling=entry.filling, gauge_seed=2)
        whole = ct.classify(model, group=entry.group, filling=entry.filling, gauge_seed=2, halve_by_time_reversal=False)
        assert _essentials(halved) == _essentials(whole)
        assert whole.band_stats["time_reversed"] == 0
        assert halved.band_stats["k_points"] == whole.band_stats["k_points"]
        if i == 0:  # the gapped point: its meshes are (about) halved
            assert halved.band_stats["time_reversed"] > 0.3 * halved.band_stats["k_points"]


def test_a_report_survives_pickling_with_its_lazy_details_and_figures(tmp_path):
    # to another process (an executor) or to disk: the read-only views, z2's lazily made texts and its figure
    # functions all pickle, and the copy reads and renders as the original
    import pickle

    report = ct.classify(kane_mele(), group="6/mmm", filling=2)
    copy = pickle.loads(pickle.dumps(report))
    assert copy.to_dict() == report.to_dict() and str(copy) == str(report)
    assert copy["z2"].value == report["z2"].value == 1 and copy["z2"].figures.keys() == report["z2"].figures.keys()
    pytest.importorskip("matplotlib")
    assert sorted(copy.save_figures(tmp_path)) == [f"z2/{name}" for name in sorted(report["z2"].figures)]
