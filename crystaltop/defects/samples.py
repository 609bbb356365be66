"""Finite samples with defects: what was asked for (:class:`DefectSpec`), the cores (:class:`Core`) and the sample
itself (:class:`Sample`: sparse Hamiltonian, positions, ions, distances to the cores and to the open boundary).

Units: lengths are Cartesian, in the units of the model's lattice vectors; charges are numbers of electrons
(an electron counts +1), so an ionic background is a positive number of electrons that neutralises the bulk.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp

from .realspace import BulkGap

__all__ = ["DefectSpec", "Core", "Sample"]


@dataclass(frozen=True)
class DefectSpec:
    """A defect to build, in the terms of the builders (:func:`crystaltop.defects.build_sample` takes one).

    Only the fields the kind needs are read; the rest stay None.
    """

    kind: str
    """``"flake"``, ``"supercell"``, ``"edge_dislocation"``, ``"dislocation_line"``, ``"disclination"`` or
    ``"disclination_dipole"``."""
    size: int | tuple[int, ...]
    """Linear size in cells (see each builder)."""
    burgers: tuple[int, ...] | None = None
    """Burgers vector, integer components in the lattice basis."""
    frank_angle: float | None = None
    """Frank angle Ω in radians (positive: a wedge removed)."""
    core: str | tuple[float, ...] | None = None
    """Rotation centre (Wyckoff-style label, ``"site"``, ``"plaquette"`` or reduced coordinates), or the core
    point of a dislocation."""
    separation: float | tuple[float, ...] | None = None
    """Distance between the two cores of a dipole (a reduced vector for a disclination dipole)."""
    line_direction: tuple[int, ...] | None = None
    """Direction of a dislocation line, a primitive lattice vector (integer components)."""
    line_kind: str | None = None
    """``"edge"`` or ``"screw"`` for a dislocation line."""
    length: int | None = None
    """Cells along a dislocation line (periodic)."""
    shape: str | None = None
    """Shape of a flake: ``"parallelogram"`` or ``"polygon"``."""
    filling: int | None = None
    """Occupied bands per cell (default: half the bands)."""
    ions: tuple | None = None
    """Ionic background: None (on the sites, ``filling / n_states`` per state) or ``((reduced position, charge),
    ...)`` per cell."""


@dataclass(frozen=True, eq=False)
class Core:
    """One defect core of a sample."""

    label: str
    """Human-readable description, e.g. ``"disclination Ω = +π/2 at (0, 0)"``."""
    kind: str
    """``"disclination"``, ``"dislocation"`` or ``"dislocation line"``."""
    position: np.ndarray
    """(dim,) Cartesian position (for a line: a point on it)."""
    images: np.ndarray
    """(k, dim) Cartesian points of the perfect lattice identified with the core by the gluing; distances to the
    core are taken to the nearest image."""
    frank_angle: float
    """Ω in radians (0 for a dislocation)."""
    burgers: np.ndarray
    """(dim,) int Burgers vector in the model's lattice basis (zeros for a disclination): the sum of the lattice
    steps of a counter-clockwise circuit that closes in the sample (about the line direction for a line)."""
    reduced: np.ndarray
    """(dim,) reduced coordinates of the core in the model's lattice basis."""
    line_direction: np.ndarray | None = None
    """(dim,) Cartesian unit vector of a dislocation line, else None."""


@dataclass(frozen=True, eq=False)
class Sample:
    """A finite (or periodic) sample of a model, with or without defects.

    Built by :func:`flake`, :func:`supercell`, :func:`edge_dislocation`, :func:`dislocation_line`,
    :func:`disclination`, :func:`disclination_dipole` (or :func:`build_sample` from a :class:`DefectSpec`).
    Arrays are read-only.
    """

    hamiltonian: sp.csr_matrix
    """(n, n) Hermitian sparse Hamiltonian; basis order is that of the other per-state arrays."""
    positions: np.ndarray
    """(n, dim) Cartesian position of each basis state. For a disclination the sectors are spread over 2π
    (angles rescaled by n/N_s, radii kept), for display; distances are measured in the glued geometry instead
    (:attr:`core_distance`, :attr:`edge_distance`)."""
    site_of_state: np.ndarray
    """(n,) int: the site (orbital → site map) of each state; spin partners and orbitals of one site share it."""
    ion_positions: np.ndarray
    """(n_ions, dim) Cartesian positions of the ionic background charges (same display convention)."""
    ion_charges: np.ndarray
    """(n_ions,) charge of each ion, in electrons."""
    state_ion: np.ndarray
    """(n,) int: the ion each state is counted with (the nearest in the glued geometry; −1: none). A region is a
    set of whole ions with their states, so that a cut through a unit cell never splits its charge."""
    cores: tuple[Core, ...]
    core_distance: np.ndarray
    """(n_cores, n) distance of each state from each core in the glued geometry."""
    ion_core_distance: np.ndarray
    """(n_cores, n_ions) distance of each ion from each core."""
    edge_distance: np.ndarray
    """(n,) distance of each state from the open boundary (inf for a periodic sample)."""
    ion_edge_distance: np.ndarray
    """(n_ions,) distance of each ion from the open boundary."""
    filling: int
    """Occupied bulk bands per cell."""
    gap: BulkGap
    """The bulk gap at this filling (the default Fermi level is its centre)."""
    spec: DefectSpec
    model_name: str
    periodic: tuple[bool, ...]
    """Periodic axes (in the sample's lattice basis)."""
    cut_bonds: int
    """Bonds dropped at cut faces with no partner or through a core."""
    unpaired_bonds: int
    """Bonds dropped at a core because the reverse bond was glued differently."""
    sectors: int | None = None
    """For a disclination: the number ``N_s`` of sectors of angle 2π/n glued around the core."""
    fold: int | None = None
    """For a disclination (dipole): the order n of the rotation used for the gluing."""
    chart: np.ndarray = field(default=None, repr=False)
    """(n,) int chart (copy of a region of the perfect lattice) of each state; the core's chart is ``sectors``."""
    cell: np.ndarray = field(default=None, repr=False)
    """(n, dim) int perfect-lattice cell of each state (in the sample's lattice basis)."""
    label: np.ndarray = field(default=None, repr=False)
    """(n,) int basis state of the model that each state is a copy of."""

    @property
    def n_states(self) -> int:
        return int(self.hamiltonian.shape[0])

    @property
    def fermi_energy(self) -> float:
        """The centre of the bulk gap."""
        return self.gap.centre

    @property
    def background(self) -> np.ndarray:
        """(n,) the ionic background per state: each ion's charge shared equally by the states counted with it."""
        counts = np.bincount(self.state_ion[self.state_ion >= 0], minlength=len(self.ion_charges))
        share = np.where(counts > 0, self.ion_charges / np.maximum(counts, 1), 0.0)
        out = np.zeros(self.n_states)
        ok = self.state_ion >= 0
        out[ok] = share[self.state_ion[ok]]
        return out

    def boundary(self, width: float = 2.0) -> np.ndarray:
        """(n,) bool: states within ``width`` of the open boundary."""
        return self.edge_distance < width

    def distance_to_cores(self, which=None) -> np.ndarray:
        """(n,) distance of each state to the nearest of the cores ``which`` (indices; default all)."""
        sel = range(len(self.cores)) if which is None else np.atleast_1d(which)
        return np.min(self.core_distance[list(sel)], axis=0)

    def ion_distance_to_cores(self, which=None) -> np.ndarray:
        """(n_ions,) distance of each ion to the nearest of the cores ``which``."""
        sel = range(len(self.cores)) if which is None else np.atleast_1d(which)
        return np.min(self.ion_core_distance[list(sel)], axis=0)

    def __repr__(self) -> str:
        cores = ", ".join(c.label for c in self.cores) or "no defect"
        return f"Sample({self.spec.kind}, {self.n_states} states, {cores}, model {self.model_name!r})"
