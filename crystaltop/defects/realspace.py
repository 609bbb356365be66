"""A model's real-space hopping form, its rotations about a centre, and its bulk gap: what every sample needs.

The Bloch convention of docs/conventions.md, ``H(k) = Σ_R exp(2πi k·R) h(R)`` with ``|k, a⟩ = Σ_R e^{ik·R}
|R, a⟩``, means ``h(R)[a, b] = ⟨0, a|H|R, b⟩``: the amplitude of the hop from state ``b`` in cell ``R`` to state
``a`` in the home cell. A finite sample puts ``h(d)[a, b]`` between ``(n, a)`` and ``(n + d, b)``.

A point operation ``g`` acts on the real-space states as ``Ĝ|n, b⟩ = Σ_{b'} D_g(0)[b', b] |W n + n_b, b'⟩``
(``g x_b = x_{b'} + n_b``), which is the real-space form of ``D_g(k) H(k) D_g(k)† = H(g k)``; a rotation
about another centre ``c`` differs from the one about the origin by the lattice translation ``c − W c``.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from ..errors import CrystaltopError, DefectGeometryError, LatticeMismatchError, UnknownOperationError
from ..models import symmetry_violations
from ..symmetry import point_group

__all__ = ["RealSpaceForm", "real_space_form", "rotation_operation", "BulkGap", "bulk_gap"]

#: Two reduced positions closer than this are the same point.
POSITION_TOL = 1e-6
#: Largest relative violation of a rotation accepted as "the model respects it".
SYMMETRY_TOL = 1e-8


@dataclass(frozen=True, eq=False)
class RealSpaceForm:
    """The hopping blocks of a model in its site-localised basis, with the positions of the states."""

    lattice: np.ndarray
    """(dim, dim) lattice vectors as rows (Cartesian)."""
    positions: np.ndarray
    """(n, dim) reduced position of every basis state."""
    cells: np.ndarray
    """(m, dim) int lattice vectors ``R`` of the blocks, home cell first."""
    blocks: np.ndarray
    """(m, n, n) complex ``h(R)``."""
    site_of_state: np.ndarray
    """(n,) int: states at the same position share a site index (0, 1, ... in order of first appearance)."""
    spinful: bool
    model: object
    """The model it came from (its symmetry matrices are read from it)."""
    basis: np.ndarray | None
    """The model's basis ``U`` (None: the identity); blocks and symmetry matrices here are ``U X U†``."""
    name: str

    @property
    def dim(self) -> int:
        return int(self.lattice.shape[0])

    @property
    def n_states(self) -> int:
        return int(self.positions.shape[0])

    def in_basis(self, unimodular: np.ndarray) -> "RealSpaceForm":
        """The same model written with the lattice vectors ``M @ lattice`` (``M`` integer, det ±1)."""
        m = np.asarray(unimodular, dtype=int)
        inv = np.rint(np.linalg.inv(m)).astype(int)
        lattice = m @ self.lattice
        positions = self.positions @ inv  # f = f' M  =>  f' = f M^-1
        cells = self.cells @ inv
        return RealSpaceForm(_frozen(lattice), _frozen(positions), _frozen(cells), self.blocks, self.site_of_state,
                             self.spinful, self.model, self.basis, self.name)

    def hamiltonian(self, k: np.ndarray) -> np.ndarray:
        """``H(k)`` from the blocks, for reduced momenta ``(..., dim)`` in this form's lattice basis."""
        phases = np.exp(2j * np.pi * (np.asarray(k, dtype=float) @ self.cells.T.astype(float)))
        n = self.n_states
        return (phases @ self.blocks.reshape(len(self.cells), n * n)).reshape(phases.shape[:-1] + (n, n))

    def rotation_block(self, op) -> np.ndarray:
        """``D_g(0)`` of a rotation about the model's origin, on the site-localised states.

        Raises
        ------
        DefectGeometryError
            If the model has no representation of ``op`` or the representation does not send each state to the
            states at the rotated position.
        """
        try:
            d = np.asarray(self.model.symmetry_matrix(op, np.zeros(self.model.dim)), dtype=complex)
        except UnknownOperationError:
            raise DefectGeometryError(f"model {self.name!r} has no representation of the rotation {op.label}: "
                                      "give one (BlochFunction(..., representations=...)) to glue a disclination") from None
        if self.basis is not None:
            d = self.basis @ d @ self.basis.conj().T
        # every column must land on states sitting at the rotated position (mod the lattice)
        w = np.asarray(op.in_basis(self.model.lattice), dtype=float)
        image = self.positions @ w.T
        rows, cols = np.nonzero(np.abs(d) > 1e-12)
        diff = self.positions[rows] - image[cols]
        if rows.size and np.abs(diff - np.rint(diff)).max() > POSITION_TOL:
            raise DefectGeometryError(f"the representation of {op.label} of model {self.name!r} mixes states at "
                                      "positions the rotation does not relate; check the model's positions")
        return d


def _frozen(array: np.ndarray) -> np.ndarray:
    out = np.array(array)
    out.setflags(write=False)
    return out


def real_space_form(model, *, fft_mesh: int = 8) -> RealSpaceForm:
    """The real-space form of a model, from ``model.real_space_blocks()`` or, failing that, from H(k).

    A model given only as a callable ``H(k)`` is Fourier transformed on a ``fft_mesh``^dim mesh; the result is
    accepted only if it reproduces ``H(k)`` at random momenta (a finite-range model).

    Raises
    ------
    DefectGeometryError
        If the model has no finite-range real-space form.
    """
    name = getattr(model, "name", None) or type(model).__name__
    try:
        cells, blocks = model.real_space_blocks()
    except CrystaltopError:
        cells, blocks = _fourier_blocks(model, fft_mesh, name)
    cells = np.asarray(cells, dtype=int).reshape(-1, model.dim)
    blocks = np.asarray(blocks, dtype=complex)
    basis = None if getattr(model, "basis", None) is None else np.asarray(model.basis, dtype=complex)
    if basis is not None:  # write everything on the site-localised states
        blocks = basis @ blocks @ basis.conj().T
    positions = np.asarray(model.positions, dtype=float).reshape(-1, model.dim)
    sites = np.zeros(len(positions), dtype=int)
    seen: list[np.ndarray] = []
    for index, x in enumerate(positions):  # a handful of states per cell
        for s, y in enumerate(seen):
            if np.abs(x - y).max() < POSITION_TOL:
                sites[index] = s
                break
        else:
            sites[index] = len(seen)
            seen.append(x)
    keep = np.abs(blocks).max(axis=(1, 2)) > 0
    keep[np.all(cells == 0, axis=1)] = True
    cells, blocks = cells[keep], blocks[keep]
    order = np.argsort(np.any(cells != 0, axis=1), kind="stable")
    return RealSpaceForm(_frozen(np.asarray(model.lattice, dtype=float)), _frozen(positions), _frozen(cells[order]),
                         _frozen(blocks[order]), _frozen(sites), bool(model.spinful), model, basis, name)


def _fourier_blocks(model, mesh: int, name: str) -> tuple[np.ndarray, np.ndarray]:
    dim, n = model.dim, model.n_states
    axes = [np.arange(mesh) / mesh] * dim
    k = np.stack(np.meshgrid(*axes, indexing="ij"), axis=-1).reshape(-1, dim)
    h = model.hamiltonian(k)
    offsets = np.array(list(itertools.product(range(-(mesh // 2) + 1, mesh // 2), repeat=dim)), dtype=int)
    phases = np.exp(-2j * np.pi * (offsets @ k.T))  # (m, points)
    blocks = (phases @ h.reshape(len(k), n * n)).reshape(len(offsets), n, n) / len(k)
    blocks[np.abs(blocks) < 1e-12] = 0.0
    keep = np.abs(blocks).max(axis=(1, 2)) > 0
    keep[np.all(offsets == 0, axis=1)] = True
    cells, blocks = offsets[keep], blocks[keep]
    probe = np.random.default_rng(0).random((8, dim))
    rebuilt = (np.exp(2j * np.pi * probe @ cells.T) @ blocks.reshape(len(cells), n * n)).reshape(-1, n, n)
    if np.abs(rebuilt - model.hamiltonian(probe)).max() > 1e-8 * max(1.0, float(np.abs(blocks).max())):
        raise DefectGeometryError(f"model {name!r} has no finite-range real-space form (hoppings beyond "
                                  f"{mesh // 2 - 1} cells): give it as a LatticeModel or BlochFunction.from_real_space")
    return cells, blocks


def rotation_operation(fold: int, form: RealSpaceForm, *, check: bool = True):
    """The counter-clockwise rotation by 2π/``fold`` about z, checked against the lattice and the model.

    Raises
    ------
    DefectGeometryError
        If the lattice lacks the rotation or the model breaks it (with the size of the violation).
    """
    if form.dim < 2:
        raise DefectGeometryError("disclinations need a two- or three-dimensional model")
    group = point_group(str(fold))
    op = next(o for o in group.rotations(fold) if abs(o.angle - 2.0 * np.pi / fold) < 1e-9)
    try:
        op.in_basis(form.model.lattice)
    except LatticeMismatchError:
        raise DefectGeometryError(f"a Frank angle that is a multiple of 2π/{fold} needs the {fold}-fold rotation "
                                  f"{op.label}, which the lattice of model {form.name!r} lacks") from None
    if check:
        try:
            violation = symmetry_violations(form.model, [op], samples=12)[op.label]
        except UnknownOperationError:
            raise DefectGeometryError(f"model {form.name!r} has no representation of the rotation {op.label}") from None
        except LatticeMismatchError as exc:
            raise DefectGeometryError(f"model {form.name!r} does not respect {op.label}: {exc}") from None
        if violation > SYMMETRY_TOL:
            raise DefectGeometryError(f"model {form.name!r} breaks the {fold}-fold rotation {op.label} (relative "
                                      f"violation {violation:.2g}), so a disclination of that angle cannot be glued")
    return op


@dataclass(frozen=True)
class BulkGap:
    """The bulk gap at a filling, from the bands on a mesh."""

    filling: int
    """Occupied bands (electrons per cell)."""
    valence_top: float
    """Largest energy of band ``filling`` on the mesh."""
    conduction_bottom: float
    """Smallest energy of band ``filling + 1`` on the mesh."""
    mesh: int
    """Points per axis of the mesh (a multiple of 6, so Γ, X, M, K are on it)."""
    bandwidth: tuple[float, float]
    """Lowest and highest band energy on the mesh."""

    @property
    def width(self) -> float:
        """Indirect gap ``conduction_bottom − valence_top`` (negative for overlapping bands)."""
        return self.conduction_bottom - self.valence_top

    @property
    def centre(self) -> float:
        return 0.5 * (self.valence_top + self.conduction_bottom)


def bulk_gap(form: RealSpaceForm, filling: int, *, mesh: int | None = None, tol: float = 1e-6) -> BulkGap:
    """The indirect gap of the bulk bands above band ``filling``.

    Raises
    ------
    DefectGeometryError
        If the filling is out of range, or the model is metallic at that filling (no gap for the Fermi level).
    """
    n = form.n_states
    if not 0 < filling < n:
        raise DefectGeometryError(f"filling {filling} is out of range: model {form.name!r} has {n} bands")
    mesh = mesh or (24 if form.dim <= 2 else 12)
    axes = [np.arange(mesh) / mesh] * form.dim
    k = np.stack(np.meshgrid(*axes, indexing="ij"), axis=-1).reshape(-1, form.dim)
    energies = np.linalg.eigvalsh(form.hamiltonian(k))
    top, bottom = float(energies[:, filling - 1].max()), float(energies[:, filling].min())
    if bottom - top < tol:
        raise DefectGeometryError(f"model {form.name!r} is metallic at filling {filling}: band {filling} reaches "
                                  f"{top:.4g} and band {filling + 1} starts at {bottom:.4g}, so no Fermi level "
                                  "lies in a gap and no bound charge is defined")
    return BulkGap(int(filling), top, bottom, int(mesh), (float(energies.min()), float(energies.max())))
