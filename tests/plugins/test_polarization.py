"""Polarization: the Su–Schrieffer–Heeger chain and quantisation by symmetry."""

from __future__ import annotations

import numpy as np
import pytest

import crystaltop as ct
from crystaltop.examples import c4_breathing_square, qi_wu_zhang, su_schrieffer_heeger


# Su, Schrieffer, Heeger, Phys. Rev. Lett. 42, 1698 (1979): the lower band's Wannier centre sits on the bond
# centre of the stronger bond: polarization 1/2 for |w| > |v| and 0 for |w| < |v| (sites at -1/4, +1/4).
@pytest.mark.parametrize("v, w, expected", [(0.5, 1.0, 0.5), (1.0, 0.5, 0.0), (-0.3, 1.0, 0.5), (0.9, -0.2, 0.0)])
def test_ssh_polarization_is_zero_or_one_half_on_either_side_of_v_equals_w(v, w, expected):
    res = ct.classify(su_schrieffer_heeger(v=v, w=w), group="-1", filling=1)["polarization"]
    assert res.status == "ok"
    assert res.value == (expected,)
    assert res.details["quantised_by"] == "-1"


def test_ssh_without_declared_inversion_gives_the_measured_value():
    res = ct.classify(su_schrieffer_heeger(v=0.5, w=1.0), group="1", filling=1)["polarization"]
    assert abs(res.value[0] - 0.5) < 1e-8 and "quantised_by" not in res.details


def test_ssh_at_v_equals_w_is_gapless_and_fails():
    res = ct.classify(su_schrieffer_heeger(v=1.0, w=1.0), group="-1", filling=1)["polarization"]
    assert res.status == "failed" and "gap" in res.message


def test_polarization_is_skipped_for_a_chern_insulator():
    res = ct.classify(qi_wu_zhang(m=1.0), group="4/m", filling=1)["polarization"]
    assert res.status == "skipped" and "Chern number -1" in res.message


def test_c4_breathing_square_at_quarter_filling_has_its_wannier_centre_at_the_plaquette_centre():
    # Benalcazar, Li, Hughes, Phys. Rev. B 99, 245151 (2019): for gamma < lambda the occupied Wannier function
    # sits at the plaquette centre, the 1b position (1/2, 1/2) of the origin-centred cell.
    res = ct.classify(c4_breathing_square(gamma=0.5, lam=1.0), group="4mm", filling=1)["polarization"]
    assert res.status == "ok" and res.value == (0.5, 0.5)
