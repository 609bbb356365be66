"""Hypothesis strategies shared by the symmetry tests."""

from __future__ import annotations

import numpy as np
from hypothesis import strategies as st

from crystaltop.symmetry import CLASS_SYMBOLS

ALL_SETTINGS = (*CLASS_SYMBOLS, "-4m2", "312", "31m", "-31m", "-62m")

symbols = st.sampled_from(ALL_SETTINGS)


def quaternion_rotation(q: np.ndarray) -> np.ndarray:
    """Rotation matrix of a (not necessarily normalised) quaternion (w, x, y, z)."""
    w, x, y, z = q / np.linalg.norm(q)
    return np.array(
        [
            [1 - 2 * (y * y + z * z), 2 * (x * y - w * z), 2 * (x * z + w * y)],
            [2 * (x * y + w * z), 1 - 2 * (x * x + z * z), 2 * (y * z - w * x)],
            [2 * (x * z - w * y), 2 * (y * z + w * x), 1 - 2 * (x * x + y * y)],
        ]
    )


rotations = (
    st.lists(st.floats(-1.0, 1.0, allow_nan=False), min_size=4, max_size=4)
    .map(np.array)
    .filter(lambda q: np.linalg.norm(q) > 0.2)
    .map(quaternion_rotation)
)
