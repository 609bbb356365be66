"""The model interface every layer above relies on: :class:`BlochModel`.

A model gives, for a whole batch of reduced momenta at once, the Bloch Hamiltonian ``H(k)``, the matrices
``D_g(k)`` of point operations and the unitary part ``U_T`` of time reversal, together with the reduced
position of every basis state (for Wilson loops and polarisation). Conventions (docs/conventions.md,
PHYSICS.md §1):

* ``k`` is in reduced coordinates (units of the reciprocal basis, ``a_i·b_j = 2π δ_ij``), shape ``(..., dim)``;
* periodic gauge, ``H(k + G) = H(k)``;
* ``D_g(k) H(k) D_g(k)^† = H(g k)``;
* a symmetric model under time reversal has ``U_T H(k)^* U_T^† = H(−k)``;
* a spinful basis is orbital-major, spin-minor (index ``2 * orbital + spin``, spin up first).

Every input array passes through one choke point (:func:`as_momenta`), which converts it to float and
raises :class:`~crystaltop.errors.ShapeError` naming the expected shape.
"""

from __future__ import annotations

import abc

import numpy as np

from ..errors import CrystaltopError, ShapeError
from .phases import slab_points

__all__ = ["BlochModel", "as_momenta", "as_lattice", "format_k"]

_UNITARY_TOL = 1e-8


def format_k(k) -> str:
    """A reduced momentum as text with three decimals, e.g. ``'(0.125, 0.700)'``."""
    return "(" + ", ".join(f"{float(x):.3f}" for x in np.atleast_1d(np.asarray(k, dtype=float))) + ")"


def as_lattice(lattice) -> np.ndarray:
    """Validate lattice vectors (rows) of a 1D, 2D or 3D lattice and return them as a float array.

    Raises
    ------
    ShapeError
        If the array is not square ``(dim, dim)`` with ``dim`` in 1, 2, 3, has non-finite entries, or its rows
        are linearly dependent.
    """
    try:
        arr = np.array(lattice, dtype=float)
    except (TypeError, ValueError) as exc:
        raise ShapeError(f"lattice must be a real (dim, dim) array of lattice vectors as rows: {exc}") from None
    if arr.ndim != 2 or arr.shape[0] != arr.shape[1] or arr.shape[0] not in (1, 2, 3):
        raise ShapeError(f"lattice must have shape (dim, dim) with dim in 1, 2, 3 (vectors as rows), got {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise ShapeError("lattice has non-finite entries")
    scale = max(1.0, float(np.abs(arr).max())) ** arr.shape[0]
    if abs(np.linalg.det(arr)) < 1e-12 * scale:
        raise ShapeError("lattice vectors are linearly dependent (det = 0)")
    arr.setflags(write=False)
    return arr


def as_momenta(k, dim: int, *, what: str = "k") -> np.ndarray:
    """The one choke point for momenta: ``k`` as a float array of shape ``(..., dim)``.

    Parameters
    ----------
    k : array_like
        Reduced momenta, last axis of length ``dim``.
    dim : int
        Dimension of the model.
    what : str
        Name used in the error message.

    Raises
    ------
    ShapeError
        If ``k`` is not real, not finite, or its last axis does not have length ``dim``.

    Examples
    --------
    >>> as_momenta([[0.0, 0.5]], 2).shape
    (1, 2)
    """
    arr = np.asarray(k)
    if np.iscomplexobj(arr):
        raise ShapeError(f"{what} must be real reduced coordinates, got a complex array")
    try:
        arr = arr.astype(float, copy=False)
    except (TypeError, ValueError):
        raise ShapeError(f"{what} must be a real array of shape (..., {dim}), got dtype {arr.dtype}") from None
    if arr.ndim == 0 or arr.shape[-1] != dim:
        raise ShapeError(f"{what} must have shape (..., {dim}) in reduced coordinates for a {dim}D model, "
                         f"got shape {arr.shape}")
    if not np.all(np.isfinite(arr)):
        raise ShapeError(f"{what} has non-finite entries")
    return arr


def _as_square(matrix, n: int, what: str) -> np.ndarray:
    arr = np.asarray(matrix)
    if arr.shape != (n, n):
        raise ShapeError(f"{what} must have shape ({n}, {n}), got {arr.shape}")
    return arr.astype(complex)


def _as_unitary(matrix, n: int, what: str) -> np.ndarray:
    arr = _as_square(matrix, n, what)
    dev = float(np.abs(arr.conj().T @ arr - np.eye(n)).max()) if n else 0.0
    if dev > _UNITARY_TOL:
        raise CrystaltopError(f"{what} is not unitary: |U† U − 1| = {dev:.1e}")
    return arr


class BlochModel(abc.ABC):
    """What every model gives the rest of crystaltop.

    Subclasses implement :meth:`_hamiltonian`, :meth:`_symmetry_matrix` and :meth:`time_reversal_matrix`;
    the public methods validate their inputs here, once.

    Attributes
    ----------
    dim : int
        Dimension (1, 2 or 3).
    lattice : (dim, dim) ndarray
        Lattice vectors as rows (Cartesian; 1D along x, 2D in the xy plane).
    n_states : int
        Size of ``H(k)``.
    spinful : bool
        Whether each orbital carries a spin-1/2 (orbital-major, spin-minor ordering).
    positions : (n_states, dim) ndarray
        Reduced position of each site-localised basis state ``|a>``.
    basis : (n_states, n_states) ndarray or None
        Unitary ``U``: ``H`` is written in the rotated basis ``|b> = Σ_a U[a, b] |a>``; None is the identity.
        The position operator is ``X_i = U^† diag(x_i) U``.
    name : str or None
        Human-readable name for reports.
    """

    dim: int
    lattice: np.ndarray
    n_states: int
    spinful: bool
    positions: np.ndarray
    basis: np.ndarray | None
    name: str | None

    # ------------------------------------------------------------------ public, validated
    def hamiltonian(self, k) -> np.ndarray:
        """Bloch Hamiltonian for a batch of reduced momenta.

        Parameters
        ----------
        k : array_like, shape (..., dim)
            Reduced momenta.

        Returns
        -------
        ndarray, shape (..., n_states, n_states), complex

        Raises
        ------
        ShapeError
            If ``k`` does not have shape ``(..., dim)``.
        """
        return self._hamiltonian(as_momenta(k, self.dim))

    def hamiltonian_on_mesh(self, shape) -> np.ndarray:
        """Bloch Hamiltonian at every point ``k = j / N`` of a uniform Γ-centred mesh, in C order.

        The same matrices as :meth:`hamiltonian` at those points, up to rounding; a model with a real-space form
        (:class:`~crystaltop.LatticeModel`) sums it one axis at a time, which is several times faster on a mesh.

        Parameters
        ----------
        shape : sequence of int
            Points per axis, one per dimension (each at least 1).

        Returns
        -------
        ndarray, shape (*shape, n_states, n_states), complex

        Raises
        ------
        ShapeError
            If ``shape`` does not have one positive entry per dimension.
        """
        mesh = self._mesh_shape(shape)
        return self.mesh_slabs(mesh)(0, mesh[0])

    def mesh_slabs(self, shape):
        """A function ``slab(start, stop)`` giving :meth:`hamiltonian_on_mesh` for the points whose first index
        lies in ``start .. stop - 1``, shape ``(stop - start, *shape[1:], n_states, n_states)``: a mesh built slab
        by slab (to bound memory) at the cost of one sum over the whole mesh.

        Raises
        ------
        ShapeError
            If ``shape`` does not have one positive entry per dimension.
        """
        return self._mesh_slabs(self._mesh_shape(shape))

    def _mesh_shape(self, shape) -> tuple[int, ...]:
        try:
            mesh = tuple(int(x) for x in shape)
        except (TypeError, ValueError):
            raise ShapeError(f"mesh shape must be {self.dim} positive integers, got {shape!r}") from None
        if len(mesh) != self.dim or min(mesh) < 1:
            raise ShapeError(f"mesh shape must be {self.dim} positive integers, got {shape!r}")
        return mesh

    def symmetry_matrix(self, op, k) -> np.ndarray:
        """The matrix ``D_g(k)`` with ``D_g(k) H(k) D_g(k)^† = H(g k)`` for a symmetric model.

        It is defined whether or not the model respects ``g`` (the checks compare the two sides).

        Parameters
        ----------
        op : Operation
            A point operation (about the model's origin).
        k : array_like
            Reduced momenta, taken as by :meth:`hamiltonian`.

        Returns
        -------
        ndarray
            One complex ``(n_states, n_states)`` matrix per momentum, stacked as by :meth:`hamiltonian`.

        Raises
        ------
        ShapeError
            If ``k`` is refused, as by :meth:`hamiltonian`.
        LatticeMismatchError
            If the operation does not map the lattice (or the decorated lattice) onto itself.
        """
        return self._symmetry_matrix(op, as_momenta(k, self.dim))

    @abc.abstractmethod
    def time_reversal_matrix(self) -> np.ndarray | None:
        """The unitary ``U_T`` of ``T = U_T K`` on this model's basis, or None if the model defines none."""

    def position_phase(self, dk) -> np.ndarray:
        """The unitary ``exp(−2πi dk·X)`` for a reduced momentum step ``dk`` (shape ``(dim,)``).

        Returns
        -------
        (n_states, n_states) ndarray
            ``U^† diag(exp(−2πi dk·x_a)) U`` with ``U`` the :attr:`basis`.
        """
        step = as_momenta(dk, self.dim, what="dk")
        if step.shape != (self.dim,):
            raise ShapeError(f"dk must have shape ({self.dim},), got {step.shape}")
        phases = np.exp(-2j * np.pi * (self.positions @ step))
        if self.basis is None:
            return np.diag(phases)
        u = self.basis
        return u.conj().T @ (phases[:, None] * u)

    def with_basis(self, unitary) -> "BlochModel":
        """The same physics written in a rotated basis.

        Parameters
        ----------
        unitary : (n_states, n_states) array_like
            ``Q``: the new basis states are ``|b'> = Σ_b Q[b, b'] |b>``.

        Returns
        -------
        BlochModel
            ``H' = Q^† H Q``, ``D' = Q^† D Q``, ``U_T' = Q^† U_T Q^*``, basis ``U Q``, same positions.
        """
        from .transformed import TransformedModel

        return TransformedModel(self, rotation=unitary)

    def rewrapped(self, shifts) -> "BlochModel":
        """Move each site-localised basis state ``a`` into the cell shifted by the integer vector ``shifts[a]``.

        In the periodic gauge this is the k-dependent diagonal phase ``|k, a> -> e^{−2πi k·n_a} |k, a>``:
        spectra, symmetry and every gauge-invariant quantity are unchanged, positions become ``x_a + n_a``.

        Parameters
        ----------
        shifts : (n_states, dim) array_like of int

        Returns
        -------
        BlochModel

        Raises
        ------
        CrystaltopError
            If time reversal would relate states moved into different cells (its matrix would depend on k):
            move Kramers partners together.
        """
        from .transformed import TransformedModel

        return TransformedModel(self, shifts=shifts)

    def real_space_blocks(self) -> tuple[np.ndarray, np.ndarray]:
        """Real-space form ``H(k) = Σ_m exp(2πi k·R_m) h_m`` where the model has one.

        Returns
        -------
        cells : (m, dim) int ndarray
        blocks : (m, n_states, n_states) complex ndarray

        Raises
        ------
        CrystaltopError
            If the model is a bare callable with no known real-space form.
        """
        raise CrystaltopError(f"{self._describe()} has no real-space hopping form (it wraps a callable H(k))")

    # ------------------------------------------------------------------ for subclasses
    @abc.abstractmethod
    def _hamiltonian(self, k: np.ndarray) -> np.ndarray:
        """``H(k)`` for validated momenta ``k`` (..., dim)."""

    def _mesh_slabs(self, shape: tuple[int, ...]):
        """``slab(start, stop)`` for the mesh ``shape`` (validated); by default :meth:`_hamiltonian` at its points."""
        return lambda start, stop: self._hamiltonian(slab_points(shape, start, stop))

    @abc.abstractmethod
    def _symmetry_matrix(self, op, k: np.ndarray) -> np.ndarray:
        """``D_g(k)`` for validated momenta ``k`` (..., dim)."""

    def _describe(self) -> str:
        return f"model {self.name!r}" if self.name else f"this {type(self).__name__}"

    def __repr__(self) -> str:
        extra = f"{self.name!r}, " if self.name else ""
        spin = ", spinful" if self.spinful else ""
        return f"{type(self).__name__}({extra}{self.dim}D, {self.n_states} states{spin})"
