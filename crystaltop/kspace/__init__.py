"""Reduced-coordinate k-space: meshes, planes, lines and time-reversal-invariant momenta."""

from .grids import Grid, line, plane, trims, uniform_mesh
from .high_symmetry import *  # noqa: F401,F403 (high-symmetry momenta, little co-groups, mirror planes, C_n sectors)

__all__ = ["Grid", "uniform_mesh", "plane", "line", "trims"] + high_symmetry.__all__  # noqa: F405
