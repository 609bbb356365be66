"""A user's callable ``H(k)`` made into a model: :class:`BlochFunction`.

The representations of point operations are given explicitly, for all of a group or for a generating set;
the rest follow from the composition law of symmetry matrices,

    D_{gh}(k) = D_g(h k) D_h(k),

which holds whenever both sides satisfy ``D H(k) D^† = H(g k)`` (apply ``h`` first, then ``g``).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

import numpy as np

from ..errors import CrystaltopError, NonHermitianError, ShapeError, UnknownOperationError
from ..symmetry import PointGroup
from ..symmetry import time_reversal_matrix as _standard_time_reversal
from .base import BlochModel, _as_unitary, as_lattice
from .phases import MeshSum, bloch_sum

__all__ = ["BlochFunction"]

def _matrix_key(matrix) -> bytes:
    """Hashable key of a Cartesian operation matrix (entries rounded; -0 folded into 0)."""
    return (np.round(np.asarray(matrix, dtype=float), 6) + 0.0).tobytes()


class BlochFunction(BlochModel):
    """A model given by a callable ``H(k)`` and explicit symmetry matrices.

    Parameters
    ----------
    h : callable or BlochModel
        ``h(k)`` maps reduced momenta ``(..., dim)`` to ``(..., n, n)`` (batched numpy). A :class:`BlochModel`
        is accepted too: its Hamiltonian, lattice, positions, spin and basis are taken over (and its real-space
        form, :meth:`real_space_blocks`), while the representations given here replace its own.
    lattice : (dim, dim) array_like
        Lattice vectors as rows. Taken from ``h`` if it is a model.
    positions : (n, dim) array_like
        Reduced position of each site-localised basis state; ``n`` fixes the size of ``H``.
    spinful : bool, optional
        Whether the basis is orbital-major, spin-minor with a spin-1/2 per orbital (default: that of ``h`` if it
        is a model, else False).
    representations : mapping, optional
        ``{operation or label: D}`` with ``D`` a constant ``(n, n)`` unitary or a callable ``k -> (..., n, n)``
        giving ``D_g(k)``. Labels need ``group``. A generating set is enough: the other elements are composed
        along the shortest word in the given ones. For a spinful model the composed matrix is given the sign
        for which its spin part lifts to ``op.spin`` (assuming each given ``D_h`` does).
    time_reversal : (n, n) array_like or bool, optional
        ``U_T`` of ``T = U_T K``; True means the standard one for real orbitals (``1``, or ``1 ⊗ iσ_y`` spinful);
        None or False: the model defines no time reversal.
    group : PointGroup, optional
        The group the representations belong to (resolves labels; the given ones must generate it).
    basis : (n, n) array_like, optional
        Unitary ``U`` relating the basis of ``H`` to the site-localised states (see :class:`BlochModel`).
    name : str, optional

    Raises
    ------
    ShapeError
        When called, if ``h(k)`` does not return shape ``(..., n, n)``; at construction, for a wrongly shaped
        position array, representation or ``U_T``.
    UnknownOperationError
        If a label is not in ``group``, or the given representations do not generate ``group``.

    Examples
    --------
    >>> import numpy as np
    >>> sz = np.diag([1.0, -1.0])
    >>> f = BlochFunction(lambda k: np.cos(2 * np.pi * k[..., 0])[..., None, None] * sz,
    ...                   lattice=[[1.0]], positions=[[0.0], [0.0]], time_reversal=True)
    >>> f.hamiltonian([[0.0]])[0].real
    array([[ 1.,  0.],
           [ 0., -1.]])
    """

    def __init__(self, h, *, lattice=None, positions=None, spinful: bool | None = None, representations=None,
                 time_reversal=None, group: PointGroup | None = None, basis=None, name: str | None = None):
        source = h if isinstance(h, BlochModel) else None
        if source is None and not callable(h):
            raise CrystaltopError(f"h must be a callable k -> H(k) or a BlochModel, got {type(h).__name__}")
        self._source = source
        self._h: Callable = source.hamiltonian if source is not None else h
        if lattice is None:
            if source is None:
                raise ShapeError("lattice is required: the lattice vectors as rows, shape (dim, dim)")
            lattice = source.lattice
        self.lattice = as_lattice(lattice)
        self.dim = int(self.lattice.shape[0])
        if positions is None:
            if source is None:
                raise ShapeError(f"positions is required: the reduced position of each basis state, shape (n, {self.dim})")
            positions = source.positions
        pos = np.array(positions, dtype=float)
        if pos.ndim != 2 or pos.shape[1] != self.dim or not np.all(np.isfinite(pos)):
            raise ShapeError(f"positions must have shape (n, {self.dim}) (one reduced position per basis state), "
                             f"got {np.shape(positions)}")
        pos.setflags(write=False)
        self.positions = pos
        self.n_states = int(pos.shape[0])
        self.spinful = bool(source.spinful if spinful is None and source is not None else spinful)
        if self.spinful and self.n_states % 2:
            raise ShapeError(f"a spinful model needs an even number of basis states, got {self.n_states}")
        if basis is None and source is not None:
            basis = source.basis
        self.basis = None if basis is None else _as_unitary(basis, self.n_states, "basis")
        self.name = name if name is not None else (source.name if source is not None else None)
        self.group = group
        self._time_reversal = self._resolve_time_reversal(time_reversal)
        self._given = self._resolve_representations(representations or {}, group)
        self._words: dict[bytes, tuple[int, ...]] | None = None  # filled by _close on first need
        self._closure_matrices: dict[bytes, np.ndarray] = {}
        if group is not None:
            missing = [op.label for op in group.operations if self._word_for(op) is None]
            if missing:
                known = ", ".join(op.label for op, _ in self._given) or "none"
                raise UnknownOperationError(
                    f"the representations given ({known}) do not generate group {group.symbol}: "
                    f"no product of them gives {', '.join(missing)}")

    # ------------------------------------------------------------------ alternative constructor
    @classmethod
    def from_real_space(cls, cells, blocks, *, lattice, positions, **options) -> "BlochFunction":
        """A model from its real-space form ``H(k) = Σ_m exp(2πi k·cells[m]) blocks[m]``.

        Parameters
        ----------
        cells : (m, dim) array_like of int
            Lattice vectors (reduced); ``-R`` must be present for every ``R``.
        blocks : (m, n, n) array_like
            ``h(R)``, with ``h(−R) = h(R)^†`` (checked).
        lattice, positions, **options
            As for :class:`BlochFunction`.

        Raises
        ------
        NonHermitianError
            If ``h(−R) ≠ h(R)^†`` for some ``R`` (or ``−R`` is missing).
        """
        lat = as_lattice(lattice)
        dim = lat.shape[0]
        c = np.array(cells, dtype=float)
        if c.ndim != 2 or c.shape[1] != dim or np.abs(c - np.rint(c)).max(initial=0) > 0:
            raise ShapeError(f"cells must be integer lattice vectors of shape (m, {dim}), got {np.shape(cells)}")
        c = np.rint(c).astype(int)
        b = np.array(blocks, dtype=complex)
        n = len(np.asarray(positions))
        if b.shape != (len(c), n, n):
            raise ShapeError(f"blocks must have shape ({len(c)}, {n}, {n}), got {b.shape}")
        lookup = {tuple(r): m for m, r in enumerate(c)}
        if len(lookup) != len(c):
            raise ShapeError("cells must be distinct lattice vectors")
        for m, r in enumerate(c):
            partner = lookup.get(tuple(-r))
            dev = np.inf if partner is None else float(np.abs(b[partner] - b[m].conj().T).max())
            if dev > 1e-12 * max(1.0, float(np.abs(b[m]).max())):
                raise NonHermitianError(f"h(R) and h(−R) are not Hermitian conjugates for R = {tuple(int(x) for x in r)}"
                                        + ("" if partner is not None else " (−R is missing)"))
        c.setflags(write=False)
        b.setflags(write=False)

        def h(k):
            return bloch_sum(k, c, b)

        model = cls(h, lattice=lat, positions=positions, **options)
        model._blocks = (c, b)
        model.hermitian_by_construction = True  # h(−R) = h(R)† was checked above
        return model

    # ------------------------------------------------------------------ interface
    @property
    def operations(self) -> tuple:
        """The operations whose representations were given (not the composed ones)."""
        return tuple(op for op, _ in self._given)

    def generated_group(self) -> PointGroup | None:
        """The group of the representations: ``group`` if given, else the one the given operations generate.

        Returns None when no representation was given.
        """
        if self.group is not None:
            return self.group
        if not self._given:
            return None
        if self._words is None:
            self._words = self._close()
        return PointGroup.from_matrices(list(self._closure_matrices.values()))

    def time_reversal_matrix(self) -> np.ndarray | None:
        return None if self._time_reversal is None else self._time_reversal.copy()

    def real_space_blocks(self) -> tuple[np.ndarray, np.ndarray]:
        blocks = getattr(self, "_blocks", None)
        if blocks is not None:
            return blocks[0].copy(), blocks[1].copy()
        if self._source is not None:
            return self._source.real_space_blocks()
        return super().real_space_blocks()

    def _hamiltonian(self, k: np.ndarray) -> np.ndarray:
        out = np.asarray(self._h(k))
        expected = k.shape[:-1] + (self.n_states, self.n_states)
        if out.shape != expected:
            raise ShapeError(f"the callable H(k) returned shape {out.shape} for k of shape {k.shape}; expected "
                             f"(..., n, n) = {expected} with n = {self.n_states} basis states")
        return out.astype(complex, copy=False)

    def _mesh_slabs(self, shape: tuple[int, ...]):
        blocks = getattr(self, "_blocks", None)
        if blocks is None:  # a callable: evaluated at the mesh points
            return super()._mesh_slabs(shape)
        return MeshSum(shape, *blocks).slab

    def _symmetry_matrix(self, op, k: np.ndarray) -> np.ndarray:
        word = self._word_for(op)
        if word is None:
            known = ", ".join(g.label for g, _ in self._given) or "none"
            raise UnknownOperationError(
                f"{self._describe()} has no representation of operation {op.label}: give D for it or for a "
                f"generating set of its group (given: {known})")
        n = self.n_states
        matrix = None
        current = k
        spin = np.eye(2, dtype=complex)
        for index in reversed(word):  # the word g1 g2 ... gm acts with gm first
            gen, provider = self._given[index]
            step = provider(current)
            matrix = step if matrix is None else step @ matrix  # the first factor alone: no product with 1
            current = np.asarray(gen.acts_on_k(current, self.lattice), dtype=float)
            spin = np.asarray(gen.spin, dtype=complex) @ spin
        if len(word) == 0:
            np.asarray(op.acts_on_k(k, self.lattice))  # LatticeMismatchError if the lattice refuses the operation
            matrix = np.broadcast_to(np.eye(n, dtype=complex), k.shape[:-1] + (n, n))
        if self.spinful and len(word) > 1:
            overlap = np.trace(np.asarray(op.spin, dtype=complex).conj().T @ spin).real
            if overlap < 0:
                matrix = -matrix
        return np.array(matrix, dtype=complex)

    # ------------------------------------------------------------------ construction helpers
    def _resolve_time_reversal(self, time_reversal) -> np.ndarray | None:
        if time_reversal is None or time_reversal is False:
            return None
        if time_reversal is True:
            n_orb = self.n_states // 2 if self.spinful else self.n_states
            return np.asarray(_standard_time_reversal(n_orb, self.spinful), dtype=complex)
        return _as_unitary(time_reversal, self.n_states, "time_reversal (U_T)")

    def _resolve_representations(self, representations, group) -> list[tuple[object, Callable]]:
        if not isinstance(representations, Mapping):
            raise CrystaltopError("representations must be a mapping {operation or label: D or callable k -> D(k)}")
        given = []
        for key, value in representations.items():
            if isinstance(key, str):
                if group is None:
                    raise UnknownOperationError(f"representation keyed by label {key!r} needs group=... to resolve it")
                if key not in group:
                    raise UnknownOperationError(f"operation {key!r} is not an element of group {group.symbol}")
                op = group[key]
            else:
                op = key
            if not all(hasattr(op, a) for a in ("label", "matrix", "acts_on_k")):
                raise CrystaltopError(f"representation key {key!r} is neither an operation nor a label")
            given.append((op, self._provider(op, value)))
        return given

    def _provider(self, op, value) -> Callable:
        n = self.n_states
        if callable(value):
            def provider(k, _f=value, _label=op.label):
                out = np.asarray(_f(k), dtype=complex)
                expected = k.shape[:-1] + (n, n)
                if out.shape != expected:
                    if out.shape == (n, n):
                        return np.broadcast_to(out, expected)
                    raise ShapeError(f"the representation of {_label} returned shape {out.shape} for k of shape "
                                     f"{k.shape}; expected (..., n, n) = {expected}")
                return out
            return provider
        fixed = _as_unitary(value, n, f"representation of {op.label}")
        fixed.setflags(write=False)
        return lambda k, _d=fixed: np.broadcast_to(_d, k.shape[:-1] + (n, n))

    def _word_for(self, op) -> tuple[int, ...] | None:
        """Shortest word (indices into the given operations) whose product is ``op``; () for the identity."""
        if self._words is None:
            self._words = self._close()
        target = np.asarray(op.matrix, dtype=float)
        word = self._words.get(_matrix_key(target))
        if word is None:  # a rounding boundary between equal matrices: compare with a tolerance
            for key, candidate in self._words.items():
                if np.abs(self._closure_matrices[key] - target).max() < 1e-6:
                    return candidate
        return word

    def _close(self) -> dict[bytes, tuple[int, ...]]:
        """Breadth-first closure of the given operations: matrix key -> shortest word (a given one: itself)."""
        words: dict[bytes, tuple[int, ...]] = {_matrix_key(np.eye(3)): ()}
        self._closure_matrices = {_matrix_key(np.eye(3)): np.eye(3)}
        frontier = [np.eye(3)]
        generators = [np.asarray(gen.matrix, dtype=float) for gen, _ in self._given]
        while frontier:
            grown = []
            for matrix in frontier:
                word = words[_matrix_key(matrix)]
                for index, gen in enumerate(generators):
                    product = gen @ matrix
                    key = _matrix_key(product)
                    if key not in words:
                        words[key] = (index,) + word
                        self._closure_matrices[key] = product
                        grown.append(product)
            frontier = grown
            if len(words) > 48:
                raise CrystaltopError("the operations given generate more than 48 elements: "
                                      "they do not belong to one crystallographic point group")
        return words

    def __repr__(self) -> str:
        name = f"{self.name!r}, " if self.name else ""
        spin = ", spinful" if self.spinful else ""
        ops = ", ".join(op.label for op, _ in self._given)
        return f"BlochFunction({name}{self.dim}D, {self.n_states} states{spin}, representations: {ops or 'none'})"

