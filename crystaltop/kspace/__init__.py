"""Reduced-coordinate k-space: meshes, planes, lines and time-reversal-invariant momenta."""

from .grids import Grid, line, plane, trims, uniform_mesh

__all__ = ["Grid", "uniform_mesh", "plane", "line", "trims"]
