"""The tight-binding builder: sites with real orbitals, onsite terms and bonds, spin.

``H(k)`` is assembled once into stacked real-space blocks ``h(R)`` (one per lattice vector ``R`` that occurs)
and evaluated for a whole batch of momenta as one matrix product with ``exp(2πi k·R)``; no loop over k.
The symmetry matrices follow from the sites and their orbital kinds alone (PHYSICS.md §1): for ``g x_s =
x_{s'} + n_s``, ``D_{(s', ·), (s, ·)}(k) = exp(−2πi (g k)·n_s) × (orbital block ⊗ spin image)``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import numpy as np

from ..errors import CrystaltopError, LatticeMismatchError, NonHermitianError, ShapeError
from ..symmetry import expand_kinds, orbital_block, time_reversal_matrix
from .base import BlochModel, as_lattice
from .phases import MeshSum, bloch_sum

__all__ = ["LatticeModel", "Site", "Bond"]

#: Two reduced positions closer than this (modulo the lattice) are the same point.
POSITION_TOL = 1e-6
_HERMITIAN_TOL = 1e-12


@dataclass(frozen=True, eq=False)
class Site:
    """One site of a :class:`LatticeModel`."""

    index: int
    """Position of the site in the order of :meth:`LatticeModel.add_site` calls."""
    position: np.ndarray
    """(dim,) reduced position, read-only."""
    kinds: tuple[str, ...]
    """Real orbital kinds at the site, expanded (``"p"`` -> ``("px", "py", "pz")``)."""
    label: str | None
    """Species label; sites are equivalent under an operation only if labels and kinds agree."""
    orbitals: tuple[int, ...]
    """Spatial orbital indices of the site (not spin-doubled)."""


@dataclass(frozen=True, eq=False)
class Bond:
    """One bond term ``value · c†_{target, R=0} c_{source, R=cell}`` (its Hermitian conjugate is implied)."""

    target: int
    """Orbital index ``i``."""
    source: int
    """Orbital index ``j``."""
    cell: tuple[int, ...]
    """Lattice vector (reduced, integer) of the cell holding the source orbital."""
    value: complex | np.ndarray
    """Complex amplitude, or a (2, 2) spin matrix (spin up first) for a spinful model."""


def _split_kinds(orbitals) -> list[str]:
    if isinstance(orbitals, str):
        tokens = [t for t in re.split(r"[\s,;]+", orbitals.strip()) if t]
    else:
        tokens = [str(t).strip() for t in orbitals]
    if not tokens:
        raise CrystaltopError("a site needs at least one orbital, e.g. orbitals='s' or orbitals='px py'")
    kinds = list(expand_kinds(tokens))
    return kinds


class LatticeModel(BlochModel):
    """A tight-binding model built from sites, real orbitals, onsite terms and bonds.

    Parameters
    ----------
    lattice : (dim, dim) array_like
        Lattice vectors as rows (Cartesian), dim 1, 2 or 3; a 1D model lies along x, a 2D one in the xy plane.
    spinful : bool
        Give every orbital a spin-1/2 (basis index ``2 * orbital + spin``, spin up first).
    name : str, optional
        Name used in reports.

    Examples
    --------
    An SSH chain with inversion about the origin:

    >>> m = LatticeModel([[1.0]], name="SSH")
    >>> a, = m.add_site([-0.25], "s", label="A")
    >>> b, = m.add_site([0.25], "s", label="B")
    >>> m.add_hopping(0.5, a, b)
    >>> m.add_hopping(1.0, b, a, cell=[1])
    >>> m.hamiltonian([[0.0], [0.5]]).shape
    (2, 2, 2)
    """

    #: H(k) is Hermitian by construction (Hermitian onsite terms, every bond with its conjugate), so band data
    #: need not test it again on every mesh
    hermitian_by_construction = True

    def __init__(self, lattice, *, spinful: bool = False, name: str | None = None):
        self.lattice = as_lattice(lattice)
        self.dim = int(self.lattice.shape[0])
        self.spinful = bool(spinful)
        self.name = name
        self.basis = None
        self._sites: list[Site] = []
        self._bonds: list[Bond] = []
        self._onsite: dict[int, np.ndarray] = {}
        self._orbital_kinds: list[str] = []
        self._orbital_site: list[int] = []
        self._reset_caches()

    # ------------------------------------------------------------------ building
    def add_site(self, position, orbitals="s", *, label: str | None = None) -> list[int]:
        """Add a site with real orbitals.

        Parameters
        ----------
        position : (dim,) array_like
            Reduced coordinates of the site.
        orbitals : str or sequence of str
            Orbital kinds: ``"s"``, ``"p"`` (px, py, pz), ``"d"`` (dxy, dyz, dzx, dx2-y2, dz2) or any subset such
            as ``"px py"`` or ``["s", "px", "py"]``.
        label : str, optional
            Species label. Under a point operation a site can only map onto a site with the same label and
            the same orbital kinds.

        Returns
        -------
        list of int
            The spatial orbital indices of the new site (in the order of its expanded kinds).

        Raises
        ------
        ShapeError
            If the position does not have shape ``(dim,)``.
        CrystaltopError
            If an equivalent site (same label and kinds) already sits at the same position modulo the lattice.
        """
        try:
            pos = np.array(position, dtype=float).reshape(-1)
        except (TypeError, ValueError):
            raise ShapeError(f"site position must be {self.dim} real reduced coordinates, got {position!r}") from None
        if pos.shape != (self.dim,) or not np.all(np.isfinite(pos)):
            raise ShapeError(f"site position must have shape ({self.dim},) in reduced coordinates, "
                             f"got {np.shape(position)}")
        kinds = tuple(_split_kinds(orbitals))
        for site in self._sites:
            d = site.position - pos
            if site.label == label and site.kinds == kinds and np.abs(d - np.rint(d)).max() < POSITION_TOL:
                raise CrystaltopError(f"site {site.index} ({' '.join(kinds)}, label {label!r}) already sits at "
                                      f"{tuple(float(x) for x in pos)} modulo the lattice")
        pos.setflags(write=False)
        start = len(self._orbital_kinds)
        indices = list(range(start, start + len(kinds)))
        self._sites.append(Site(len(self._sites), pos, kinds, label, tuple(indices)))
        self._orbital_kinds.extend(kinds)
        self._orbital_site.extend([len(self._sites) - 1] * len(kinds))
        self._reset_caches()
        return indices

    def set_onsite(self, orbital: int, value) -> None:
        """Set the onsite term of one orbital (replacing an earlier value).

        Parameters
        ----------
        orbital : int
            Spatial orbital index.
        value : float or (2, 2) array_like
            Real energy, or for a spinful model a Hermitian (2, 2) spin matrix (a number means ``value · 1``).

        Raises
        ------
        NonHermitianError
            If the value is not Hermitian (a complex number, a non-Hermitian spin matrix).
        ShapeError
            If a matrix is given for a spinless model or has the wrong shape.
        """
        o = self._orbital(orbital)
        block = self._spin_block(value, f"onsite term of orbital {o}")
        dev = float(np.abs(block - block.conj().T).max())
        if dev > _HERMITIAN_TOL * max(1.0, float(np.abs(block).max())):
            shown = block[0, 0] if block.shape == (1, 1) else block.tolist()
            raise NonHermitianError(f"onsite term of orbital {o} is not Hermitian: {shown} (|h − h†| = {dev:.1e})")
        self._onsite[o] = block
        self._reset_caches()

    def add_hopping(self, value, i: int, j: int, cell=None) -> None:
        """Add the bond term ``value · c†_{i, R=0} c_{j, R=cell}`` and its Hermitian conjugate.

        Parameters
        ----------
        value : complex or (2, 2) array_like
            Amplitude of the hop from orbital ``j`` in cell ``cell`` to orbital ``i`` in the home cell; for a
            spinful model a number means ``value · 1`` and a (2, 2) matrix acts on spin (up first).
        i, j : int
            Spatial orbital indices.
        cell : (dim,) array_like of int, optional
            Lattice vector (reduced) of the source cell; default the home cell.

        Notes
        -----
        ``H(k)`` receives ``value · exp(2πi k·cell)`` at ``(i, j)`` and the conjugate at ``(j, i)``. Adding the
        same bond twice (or its reverse) adds the amplitudes.

        Raises
        ------
        CrystaltopError
            If ``i == j`` in the home cell (that is an onsite term: :meth:`set_onsite`), or an index is out of range.
        ShapeError
            If ``cell`` is not ``dim`` integers, or ``value`` has the wrong shape.
        """
        oi, oj = self._orbital(i), self._orbital(j)
        shift = self._cell(cell)
        if oi == oj and not any(shift):
            raise CrystaltopError(f"a hop from orbital {oi} to itself in the home cell is an onsite term: use set_onsite")
        block = self._spin_block(value, f"hopping {oi} <- {oj}")
        stored = block[0, 0] if not self.spinful else block
        self._bonds.append(Bond(oi, oj, shift, stored))
        self._reset_caches()

    # ------------------------------------------------------------------ accessors
    @property
    def sites(self) -> tuple[Site, ...]:
        """The sites, in the order they were added."""
        return tuple(self._sites)

    @property
    def labels(self) -> tuple[str | None, ...]:
        """Species label of each site."""
        return tuple(s.label for s in self._sites)

    @property
    def orbital_kinds(self) -> tuple[str, ...]:
        """Kind of each spatial orbital (``"s"``, ``"px"``, ...)."""
        return tuple(self._orbital_kinds)

    @property
    def orbital_sites(self) -> np.ndarray:
        """Site index of each spatial orbital, shape ``(n_orbitals,)``."""
        return np.array(self._orbital_site, dtype=int)

    @property
    def n_orbitals(self) -> int:
        """Number of spatial orbitals (``n_states`` is twice this when spinful)."""
        return len(self._orbital_kinds)

    @property
    def n_states(self) -> int:
        return self.n_orbitals * (2 if self.spinful else 1)

    @property
    def bonds(self) -> tuple[Bond, ...]:
        """The bond terms as added (Hermitian conjugates implied)."""
        return tuple(self._bonds)

    @property
    def onsite_terms(self) -> dict[int, np.ndarray]:
        """Onsite term of each orbital that has one: a (1, 1) or (2, 2) Hermitian block."""
        return {o: b.copy() for o, b in self._onsite.items()}

    @property
    def positions(self) -> np.ndarray:
        """Reduced position of each basis state, shape ``(n_states, dim)`` (spin partners share one)."""
        if self._positions is None:
            if self._sites:
                per_orbital = np.array([self._sites[s].position for s in self._orbital_site], dtype=float)
            else:
                per_orbital = np.zeros((0, self.dim))
            pos = np.repeat(per_orbital, 2 if self.spinful else 1, axis=0)
            pos.setflags(write=False)
            self._positions = pos
        return self._positions

    def real_space_blocks(self) -> tuple[np.ndarray, np.ndarray]:
        """Real-space blocks: ``H(k) = Σ_m exp(2πi k·cells[m]) blocks[m]`` (Hermitian conjugates included).

        Returns
        -------
        cells : (m, dim) int ndarray
            Distinct lattice vectors, the home cell first.
        blocks : (m, n_states, n_states) complex ndarray
        """
        cells, blocks = self._stacked()
        return cells.copy(), blocks.copy()

    def time_reversal_matrix(self) -> np.ndarray:
        """``U_T`` for real orbitals: ``1`` spinless (T² = +1), ``1_orb ⊗ iσ_y`` spinful (T² = −1)."""
        return np.asarray(time_reversal_matrix(self.n_orbitals, self.spinful), dtype=complex)

    # ------------------------------------------------------------------ numerics
    def _hamiltonian(self, k: np.ndarray) -> np.ndarray:
        cells, blocks = self._stacked()
        return bloch_sum(k, cells, blocks)

    def _mesh_slabs(self, shape: tuple[int, ...]):
        cells, blocks = self._stacked()
        return MeshSum(shape, cells, blocks).slab

    def _symmetry_matrix(self, op, k: np.ndarray) -> np.ndarray:
        fixed, shifts = self._symmetry_data(op)
        gk = np.asarray(op.acts_on_k(k, self.lattice), dtype=float)
        phase = np.exp(-2j * np.pi * (gk @ shifts.T.astype(float)))  # (..., n): one per column (source state)
        return fixed * phase[..., None, :]

    def _stacked(self) -> tuple[np.ndarray, np.ndarray]:
        if self._stack is not None:
            return self._stack
        n, s, dim = self.n_states, (2 if self.spinful else 1), self.dim
        home = np.zeros((1, dim), dtype=int)
        if self._bonds:
            tgt = np.array([h.target for h in self._bonds], dtype=int)
            src = np.array([h.source for h in self._bonds], dtype=int)
            cell = np.array([h.cell for h in self._bonds], dtype=int).reshape(-1, dim)
            val = np.array([np.asarray(h.value, dtype=complex).reshape(s, s) for h in self._bonds])
        else:
            tgt = src = np.zeros(0, dtype=int)
            cell = np.zeros((0, dim), dtype=int)
            val = np.zeros((0, s, s), dtype=complex)
        cells, index = np.unique(np.concatenate([home, cell, -cell]), axis=0, return_inverse=True)
        index = index.reshape(-1)
        order = np.argsort(np.any(cells != 0, axis=1), kind="stable")  # home cell first
        cells = cells[order]
        index = np.argsort(order)[index]
        blocks = np.zeros((len(cells), n, n), dtype=complex)
        spin = np.arange(s)
        t = len(self._bonds)
        if t:
            rows = (tgt[:, None] * s + spin)  # (t, s)
            cols = (src[:, None] * s + spin)
            fwd, bwd = index[1:1 + t], index[1 + t:]
            np.add.at(blocks, (fwd[:, None, None], rows[:, :, None], cols[:, None, :]), val)
            np.add.at(blocks, (bwd[:, None, None], cols[:, :, None], rows[:, None, :]), np.conj(val.transpose(0, 2, 1)))
        if self._onsite:
            orb = np.array(list(self._onsite), dtype=int)
            val = np.array(list(self._onsite.values()))
            rows = orb[:, None] * s + spin
            np.add.at(blocks, (index[0], rows[:, :, None], rows[:, None, :]), val)
        cells.setflags(write=False)
        blocks.setflags(write=False)
        self._stack = (cells, blocks)
        return self._stack

    def _symmetry_data(self, op) -> tuple[np.ndarray, np.ndarray]:
        """Constant part of ``D_g`` and the lattice shift ``n`` (per source state) of operation ``op``."""
        matrix = np.asarray(op.matrix, dtype=float)
        key = (op.label, np.round(matrix, 9).tobytes())
        if key in self._symmetry_cache:
            return self._symmetry_cache[key]
        w = np.asarray(op.in_basis(self.lattice), dtype=float)  # LatticeMismatchError names the operation
        n, s, dim = self.n_states, (2 if self.spinful else 1), self.dim
        if not self._sites:
            out = (np.zeros((0, 0), dtype=complex), np.zeros((0, dim), dtype=int))
            self._symmetry_cache[key] = out
            return out
        pos = np.array([site.position for site in self._sites])
        image = pos @ w.T  # g x_s for each site (rows)
        diff = image[:, None, :] - pos[None, :, :]  # [s, s'] = g x_s - x_s'
        integral = np.all(np.abs(diff - np.rint(diff)) < POSITION_TOL, axis=-1)
        species = [(site.label, site.kinds) for site in self._sites]
        codes = {sp: c for c, sp in enumerate(dict.fromkeys(species))}
        code = np.array([codes[sp] for sp in species])
        match = integral & (code[:, None] == code[None, :])
        lost = np.flatnonzero(~match.any(axis=1))
        if lost.size:
            site = self._sites[int(lost[0])]
            where = tuple(round(float(x), 6) for x in image[lost[0]])
            raise LatticeMismatchError(
                f"operation {op.label} maps site {site.index} (label {site.label!r}, orbitals {' '.join(site.kinds)}, "
                f"at {tuple(float(x) for x in site.position)}) to {where}, where the model has no equivalent site")
        target = np.argmax(match, axis=1)  # s -> s'
        site_shift = np.rint(diff[np.arange(len(pos)), target]).astype(int)  # n_s
        spin = np.asarray(op.spin, dtype=complex) if self.spinful else np.ones((1, 1), dtype=complex)
        fixed = np.zeros((n, n), dtype=complex)
        starts = np.array([site.orbitals[0] for site in self._sites]) * s
        for kinds in dict.fromkeys(site.kinds for site in self._sites):  # one block per distinct orbital set
            block = np.kron(np.asarray(orbital_block(list(kinds), matrix), dtype=complex), spin)
            members = np.array([site.index for site in self._sites if site.kinds == kinds])
            width = np.arange(block.shape[0])
            cols = starts[members][:, None] + width
            rows = starts[target[members]][:, None] + width
            fixed[rows[:, :, None], cols[:, None, :]] = block
        state_site = np.repeat(np.array(self._orbital_site, dtype=int), s)
        shifts = site_shift[state_site]
        fixed.setflags(write=False)
        shifts.setflags(write=False)
        self._symmetry_cache[key] = (fixed, shifts)
        return fixed, shifts

    # ------------------------------------------------------------------ helpers
    def _reset_caches(self) -> None:
        self._stack = None
        self._positions = None
        self._symmetry_cache: dict = {}

    def _orbital(self, index) -> int:
        if isinstance(index, bool) or not isinstance(index, (int, np.integer)):
            raise CrystaltopError(f"orbital index must be an integer, got {index!r}")
        if not 0 <= int(index) < self.n_orbitals:
            raise CrystaltopError(f"orbital index {index} is out of range: the model has {self.n_orbitals} orbitals")
        return int(index)

    def _cell(self, cell) -> tuple[int, ...]:
        if cell is None:
            return (0,) * self.dim
        try:
            arr = np.array(cell, dtype=float).reshape(-1)
        except (TypeError, ValueError):
            raise ShapeError(f"cell must be {self.dim} integers (a lattice vector in reduced units), got {cell!r}") from None
        if arr.shape != (self.dim,) or not np.all(np.isfinite(arr)) or np.abs(arr - np.rint(arr)).max() > 0:
            raise ShapeError(f"cell must be {self.dim} integers (a lattice vector in reduced units), got {cell!r}")
        return tuple(int(x) for x in np.rint(arr))

    def _spin_block(self, value, what: str) -> np.ndarray:
        arr = np.asarray(value)
        if arr.ndim == 0:
            try:
                number = complex(arr)
            except (TypeError, ValueError):
                raise ShapeError(f"{what} must be a number{' or a (2, 2) spin matrix' if self.spinful else ''}") from None
            if not np.isfinite(number):
                raise ShapeError(f"{what} is not finite")
            return number * np.eye(2 if self.spinful else 1, dtype=complex)
        if not self.spinful:
            raise ShapeError(f"{what} must be a number for a spinless model, got an array of shape {arr.shape}")
        if arr.shape != (2, 2):
            raise ShapeError(f"{what} must be a number or a (2, 2) spin matrix, got shape {arr.shape}")
        block = arr.astype(complex)
        if not np.all(np.isfinite(block)):
            raise ShapeError(f"{what} is not finite")
        return block

    def __repr__(self) -> str:
        name = f"{self.name!r}, " if self.name else ""
        spin = ", spinful" if self.spinful else ""
        return (f"LatticeModel({name}{self.dim}D, {len(self._sites)} sites, {self.n_orbitals} orbitals, "
                f"{len(self._bonds)} bonds{spin})")
