"""In-gap states bound to dislocations, measured on finite samples, against the papers that predicted them.

Sources beside each check. The criterion for "binds": eigenstates in the middle half of the bulk gap with more
than half their weight within 4 lattice constants of the cores (shallow states near a band edge, which a
defect potential binds in any phase, are not counted).
"""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.defects import dislocation_line, edge_dislocation, local_density, states_near
from crystaltop.examples import bernevig_hughes_zhang, stacked_layers


# ---------------------------------------------------------------------------------------------- 2D: BHZ
@pytest.mark.parametrize("m_over_b, pairs", [(6.0, 1), (2.0, 0)], ids=["inversion at (π, π)", "inversion at Γ"])
def test_an_edge_dislocation_in_bhz_binds_a_kramers_pair_only_with_the_inversion_at_the_zone_corner(m_over_b, pairs):
    """Juričić, Mesaros, Slager, Zaanen, Phys. Rev. Lett. 108, 106403 (2012) (PHYSICS.md §8, from memory): a
    Kramers pair at a dislocation with b = a x̂ iff K_inv·b = π: yes for 4 < M/B < 8, no for 0 < M/B < 4.

    Measured on a periodic 24 × 24 supercell with a dislocation dipole (b = ±x̂, 12 cells apart), so there is
    no edge: a pair at each core, split only by their tunnelling.
    """
    sample = edge_dislocation(bernevig_hughes_zhang(m=m_over_b), (1, 0), 24, separation=12)
    near = states_near(sample, count=4)
    bound = near.bound(window=0.5)
    assert bound.sum() == 2 * pairs * len(sample.cores)
    if pairs:
        assert np.abs(near.energies[bound]).max() < 1e-2  # at the gap centre
        for c in range(len(sample.cores)):  # a Kramers pair (two states) on each core
            assert int((near.core_weight[c][bound] > 0.9).sum()) == 2


def test_the_dislocation_pair_sits_at_the_core_of_an_open_flake_not_at_its_edge():
    """Same source. On an open flake the helical edge states fill the gap; the bound pair is told apart by its
    weight: within 4 cells of the core and none within 2 cells of the edge."""
    sample = edge_dislocation(bernevig_hughes_zhang(m=6.0), (1, 0), 26)
    near = states_near(sample, count=12)
    at_core = near.core_weight[0] > 0.9
    assert at_core.sum() == 2
    assert np.all(near.edge_weight[at_core] < 0.01)
    assert np.all(near.edge_weight[~at_core] > 0.8)  # the rest are edge states
    assert np.abs(near.energies[at_core]).max() < 1e-3
    density = local_density(sample, near.vectors[:, at_core]).sum(axis=1)
    assert density.sum() == pytest.approx(2.0)


# ---------------------------------------------------------------------------------------------- 3D: weak stacks
@pytest.fixture(scope="module")
def weak_stack():
    """BHZ layers in the Γ-inversion phase (Z2 = 1), coupled by t_z = 0.05: the weak phase 0;(001), M_ν = (0, 0, π)
    (PHYSICS.md §4, §8)."""
    return stacked_layers(bernevig_hughes_zhang(m=2.0), 0.05)


@pytest.mark.parametrize("burgers, line, kind, modes", [
    ((0, 0, 1), (0, 0, 1), "screw", True),
    ((0, 0, 1), (1, 0, 0), "edge", True),
    ((1, 0, 0), (0, 0, 1), "edge", False),
], ids=["screw b = z", "edge b = z along x", "edge b = x along z"])
def test_a_dislocation_line_carries_modes_iff_its_burgers_vector_is_odd_along_the_stacking(weak_stack, burgers,
                                                                                           line, kind, modes):
    """Ran, Zhang, Vishwanath, Nat. Phys. 5, 298 (2009): a Kramers pair of modes along the line iff B·M_ν = π mod
    2π (PHYSICS.md §8). Here B·M_ν = π·b_z.

    Periodic in all three directions (a dipole of lines 6 apart in a 12 × 12 cross-section, 4 cells along the
    line, so that k = π along it is on the mesh, where the modes of a line with B·M_ν = π cross). The modes are
    the in-gap states at the lines; the in-plane Burgers vector binds only shallow states near the band edges.
    """
    sample = dislocation_line(weak_stack, burgers, line, 12, kind, length=4, separation=6)
    near = states_near(sample, count=4)
    found = near.count_bound(window=0.5)
    if modes:
        assert found == 4  # a Kramers pair on each of the two lines at k = π
        assert np.all(near.core_weight.sum(axis=0)[near.bound(window=0.5)] > 0.9)
    else:
        assert found == 0
