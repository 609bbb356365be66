"""The Chebyshev (kernel polynomial) density: against exact diagonalisation, its error bound, and its reach.

Method: Weiße, Wellein, Alvermann, Fehske, Rev. Mod. Phys. 78, 275 (2006). No published values are used; the
exact diagonalisation of the same sample is the reference.
"""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.defects import bound_charge, disclination, edge_dislocation, occupied_density
from crystaltop.defects.kpm import chebyshev_expansion
from crystaltop.examples import c4_breathing_square

ONE_AT_1A = [((0.0, 0.0), 1.0)]


@pytest.fixture(scope="module")
def sample():
    return disclination(c4_breathing_square(gamma=0.3), np.pi / 2, 20, core="1b", filling=1, ions=ONE_AT_1A)


def test_the_chebyshev_charge_agrees_with_diagonalisation_within_its_error_bound(sample):
    radii = [2.5, 3.5, 4.5, 5.5]
    exact = bound_charge(sample, radii=radii, method="exact")
    cheb = bound_charge(sample, radii=radii, method="chebyshev")
    assert np.all(np.abs(cheb.charge - exact.charge) <= cheb.error + 1e-9)
    assert cheb.error.max() < 1e-4  # the boundary states of this small flake are 4.5 cells from the disc
    assert "Chebyshev" in cheb.method and "moments" in cheb.method


def test_the_density_is_the_same_on_a_sample_larger_than_the_expansion_reaches(sample):
    """The recursion touches only sites within N/2 hops of the local vectors, so beyond that the sample size is
    irrelevant: the disc charge of a 20-cell and a 60-cell sample agree to the error bound."""
    big = disclination(c4_breathing_square(gamma=0.3), np.pi / 2, 60, core="1b", filling=1, ions=ONE_AT_1A)
    small = bound_charge(sample, radii=[3.5, 4.5], method="chebyshev")
    large = bound_charge(big, radii=[3.5, 4.5], method="chebyshev")
    assert np.abs(small.charge - large.charge).max() < 1e-6


def test_an_in_gap_state_near_the_fermi_level_shows_in_the_error_bound():
    """A dislocation of the C4 SSH limit binds a state 0.12 below the gap centre: a wide smoothed step
    (w = 0.2) half-occupies it and the bound says so; the default narrows the step until the bound is small."""
    sample = edge_dislocation(c4_breathing_square(gamma=0.3), (1, 0), 20, filling=1, ions=ONE_AT_1A)
    near = sample.distance_to_cores() < 4.0
    wide = occupied_density(sample, method="chebyshev", region=near, smoothing=0.2)
    exact = occupied_density(sample, method="exact")
    assert wide.error[near].sum() > 1e-2
    assert np.all(np.abs(wide.density[near] - exact.density[near]) <= wide.error[near] + 1e-9)
    narrow = occupied_density(sample, method="chebyshev", region=near)
    assert narrow.error[near].sum() < 1e-3


def test_the_expansion_keeps_moments_until_its_tail_is_negligible():
    expansion = chebyshev_expansion((-3.0, 3.0), -1.0, 0.1, tol=1e-10)
    assert expansion.truncation < 1e-8  # the tail, plus the rounding floor of the dropped coefficients
    x = np.linspace(-1, 1, 401)
    energies = expansion.centre + expansion.half_width * x
    approx = np.polynomial.chebyshev.chebval(x, expansion.step)
    from scipy.special import erfc
    assert np.abs(approx - 0.5 * erfc((energies + 1.0) / 0.1)).max() < 1e-9
