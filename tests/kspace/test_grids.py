"""Grids in reduced coordinates."""

from __future__ import annotations

import numpy as np
import pytest

from crystaltop.errors import ShapeError
from crystaltop.kspace import line, plane, trims, uniform_mesh


def test_uniform_mesh_covers_the_zone_once():
    g = uniform_mesh((4, 3))
    pts = g.points
    assert pts.shape == (4, 3, 2)
    assert np.allclose(pts[1, 2], [0.25, 2 / 3])
    assert g.periodic == (True, True)


def test_a_plane_is_a_sub_grid_of_the_full_mesh():
    full = uniform_mesh((6, 6, 6))
    idx = plane(3, 2, 0.5, (6, 6)).indices_in(full)
    assert idx is not None and idx[2].tolist() == [3]
    assert plane(3, 2, 0.25, (6, 6)).indices_in(full) is None


def test_trims_are_the_2_to_the_d_half_integer_points():
    t = trims(3)
    assert t.shape == (8, 3) and set(map(tuple, t.tolist())) == {(a, b, c) for a in (0, .5) for b in (0, .5) for c in (0, .5)}


def test_bad_mesh_sizes_are_refused():
    with pytest.raises(ShapeError):
        uniform_mesh((0, 4))
    with pytest.raises(ShapeError):
        plane(3, 1, 0.0, (4,))
    assert line(2, 1, 5).shape == (1, 5)
