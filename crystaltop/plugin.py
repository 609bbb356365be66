"""The plugin contract: everything an invariant plugin needs, and nothing else.

An invariant plugin is a module (or any object) with a function marked ``@hookimpl`` named
``crystaltop_invariants`` that returns the :class:`Invariant` objects it provides. It is installed under the
entry-point group ``crystaltop.invariants`` (see ``ENTRY_POINT_GROUP``); the built-in plugins in
``crystaltop_plugins`` are registered through the very same entry point.

Rules of an invariant (each backed by a check in :mod:`crystaltop.testing`):

1. ``name`` is a unique lower-case identifier; it is the report key.
2. ``requires`` is a :class:`Requirements` record: applicability is decided from it alone, without a model.
3. ``compute(context)`` reads bands only through ``context.bands`` (shared, cached), results of other
   invariants only through ``context.result(name)`` for names it declared in ``uses``/``optional_uses``,
   and returns an :class:`Outcome`. It raises :class:`~crystaltop.errors.NotApplicable` when, on closer look,
   it does not apply, and any other exception (best a :class:`~crystaltop.errors.CrystaltopError` with a
   one-line message) when it cannot give a trustworthy value. It never returns a value it does not trust.
4. The value is gauge-, basis- and origin-safe: unchanged under a unitary change of the orbital basis and
   under k-dependent phases of the Bloch states.
5. The value and ``details`` are plain data (numbers, strings, tuples, lists, dicts, numpy arrays).
6. Optionally, ``planned_grids(context)`` names the grids (and arrays of k-points) that ``compute`` will ask
   ``context.bands`` for on its first pass. It is called before any invariant runs; the dispatcher has the new
   points of every plan diagonalised in one batch. A plan never changes a result, only when points are
   diagonalised: ``compute`` still asks for (and checks the gap of) everything it uses.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any, Callable, Iterable, Mapping

import numpy as np
import pluggy

from .bands import BandData, batched_det, hermitian_eigh, link_determinants, link_matrices, link_minors
from .errors import GapClosedError, NotApplicable, SymmetryBreakingError
from .kspace import Grid, line, plane, trims, uniform_mesh
from .kspace import high_symmetry as _high_symmetry
from .kspace.high_symmetry import *  # noqa: F401,F403 (high-symmetry momenta, mirror planes, C_n sectors)

__all__ = [
    "PROJECT",
    "ENTRY_POINT_GROUP",
    "hookimpl",
    "hookspec",
    "Requirements",
    "Invariant",
    "Outcome",
    "CrossCheck",
    "Context",
    "NotApplicable",
    "BandData",
    "batched_det",
    "hermitian_eigh",
    "link_determinants",
    "link_matrices",
    "link_minors",
    "Grid",
    "uniform_mesh",
    "plane",
    "line",
    "trims",
    "trim_label",
    "occupied_eigenvalues",
    "occupied_eigenvalues_at",
    "inversion_parities",
    "DeferredMapping",
    "ELEMENTS",
] + _high_symmetry.__all__

PROJECT = "crystaltop"
ENTRY_POINT_GROUP = "crystaltop.invariants"

hookspec = pluggy.HookspecMarker(PROJECT)
hookimpl = pluggy.HookimplMarker(PROJECT)

#: The vocabulary of symmetry elements a requirement may name (see PointGroup.elements).
ELEMENTS = frozenset({"inversion", "C2", "C3", "C4", "C6", "mirror", "mirror_z"})


@dataclass(frozen=True)
class Requirements:
    """What an invariant needs, as data.

    Attributes
    ----------
    dims : frozenset of int
        Dimensions of models it applies to.
    elements : frozenset of str
        Symmetry elements that must all be present in the group (vocabulary :data:`ELEMENTS`).
    any_elements : frozenset of str
        If not empty, at least one of these must be present.
    time_reversal : bool or None
        True: needs time-reversal symmetry; False: applies only when it is absent; None: either.
    spinful : bool or None
        True: needs spin-1/2 (T² = −1 when time reversal is present); False: spinless only; None: either.
    uses : tuple of str
        Invariants whose results it reads; each must have succeeded, or this one is skipped.
    optional_uses : tuple of str
        Invariants it reads when they succeeded (cross-checks); they run before it when present.
    elements_by_dim : mapping of int to str collection
        Elements needed only in one dimension, e.g. ``{2: {"mirror_z"}, 3: {"mirror"}}`` (a mirror Chern number
        needs the mirror with normal z of a 2D model, and any mirror of a 3D one). Stored as sorted pairs.
    """

    dims: frozenset = frozenset({1, 2, 3})
    elements: frozenset = frozenset()
    any_elements: frozenset = frozenset()
    time_reversal: bool | None = None
    spinful: bool | None = None
    uses: tuple = ()
    optional_uses: tuple = ()
    elements_by_dim: tuple = ()

    def __post_init__(self):
        object.__setattr__(self, "dims", frozenset(int(d) for d in self.dims))
        object.__setattr__(self, "elements", frozenset(self.elements))
        object.__setattr__(self, "any_elements", frozenset(self.any_elements))
        object.__setattr__(self, "uses", tuple(self.uses))
        object.__setattr__(self, "optional_uses", tuple(self.optional_uses))
        by_dim = dict(self.elements_by_dim)
        object.__setattr__(self, "elements_by_dim", tuple(sorted(
            (int(d), frozenset({e} if isinstance(e, str) else e)) for d, e in by_dim.items())))
        unknown = (self.elements | self.any_elements | frozenset().union(*(e for _, e in self.elements_by_dim))) - ELEMENTS
        if unknown:
            raise ValueError(f"unknown symmetry element(s) {sorted(unknown)}; known: {sorted(ELEMENTS)}")

    def why_not(self, *, elements, dim: int, time_reversal: bool, spinful: bool | None = None) -> str | None:
        """The reason this does not apply, or None if it applies (decided without a Hamiltonian)."""
        if dim not in self.dims:
            return f"needs a model of dimension {' or '.join(str(d) for d in sorted(self.dims))}"
        missing = sorted(self.elements - set(elements))
        missing += sorted(dict(self.elements_by_dim).get(dim, frozenset()) - set(elements) - set(missing))
        if missing:
            return "needs " + ", ".join(missing) + " in the point group"
        if self.any_elements and not (self.any_elements & set(elements)):
            return "needs one of " + ", ".join(sorted(self.any_elements)) + " in the point group"
        if self.time_reversal is True and not time_reversal:
            return "needs time-reversal symmetry"
        if self.time_reversal is False and time_reversal:
            return "applies only without time-reversal symmetry"
        if self.spinful is not None and spinful is not None and self.spinful != spinful:
            return "needs a spinful model" if self.spinful else "needs a spinless model"
        return None


@dataclass(frozen=True)
class CrossCheck:
    """A second, independent determination of an invariant."""

    #: name of the second method (with its reference)
    method: str
    #: the value it gave (in the form it determines, e.g. the Chern number mod 4)
    value: Any
    #: whether it agrees with the main value
    agree: bool
    #: what exactly was compared
    note: str = ""


@dataclass(frozen=True)
class Outcome:
    """What an invariant's ``compute`` returns; the dispatcher turns it into a report record."""

    #: the value of the invariant (plain data)
    value: Any
    #: the method, with its reference
    method: str
    #: the mesh or k-points used, as text
    mesh: str = ""
    #: convergence figure (e.g. largest plaquette phase / π); smaller is better
    convergence: float | None = None
    #: what the convergence figure is
    convergence_label: str = ""
    #: the cross-check against a second method, if the symmetry allows one
    cross_check: CrossCheck | None = None
    #: cross-checks this invariant provides for *other* invariants it uses, keyed by their names
    checks_for: Mapping[str, CrossCheck] = field(default_factory=dict)
    #: further plain-data details (per-plane values, eigenvalue counts, ...)
    details: Mapping[str, Any] = field(default_factory=dict)
    #: notes for the reader, e.g. "quantised to 0 or 1/2 by inversion"
    notes: tuple = ()
    #: figures: name -> function drawing on a matplotlib Axes (called only if matplotlib is installed, by
    #: Report.save_figures); put a plain-text summary of the same data in ``details`` for readers without it
    figures: Mapping[str, Any] = field(default_factory=dict)


class Invariant:
    """Base class of an invariant plugin object (subclassing is optional; the attributes are the contract)."""

    #: report key, e.g. "chern"
    name: str = ""
    #: human-readable title, e.g. "Chern number"
    title: str = ""
    #: what it needs
    requires: Requirements = Requirements()

    def compute(self, context: "Context") -> Outcome:  # pragma: no cover - abstract
        raise NotImplementedError

    def planned_grids(self, context: "Context") -> Iterable:
        """The grids (:class:`Grid`) and arrays of reduced k-points ``(m, dim)`` that :meth:`compute` will ask
        ``context.bands`` for on its first pass (before any refinement). Optional.

        Called by the dispatcher once per report, before any invariant runs, with the same context as
        ``compute`` except that no results of other invariants are there yet (``context.result`` must not be
        called). The new points of every invariant's plan are diagonalised together, in one batch, so that no
        mesh is diagonalised in pieces. Name only what ``compute`` is sure to use on models where it applies: a
        point planned but never used is a wasted diagonalisation, never a wrong result. Gaps are not checked
        here; ``compute`` checks them when it asks, as it would without a plan. An exception raised here only
        leaves this invariant out of the plan. The default plans nothing.
        """
        return ()


class Context:
    """What an invariant sees while it computes.

    Attributes
    ----------
    model : BlochModel
    group : PointGroup
        The group the model was checked against.
    dim, filling : int
    time_reversal : bool
        Whether the model is treated as time-reversal symmetric (checked).
    spinful : bool
    bands : BandData
        Shared, lazily filled band data; use it for every eigensystem.
    options : Mapping
        Options given by the user for this invariant (e.g. ``{"mesh": 60}``).
    """

    def __init__(self, *, model, group, filling, time_reversal, bands, results, options, allowed):
        self.model = model
        self.group = group
        self.dim = int(model.dim)
        self.filling = int(filling)
        self.time_reversal = bool(time_reversal)
        self.spinful = bool(getattr(model, "spinful", False))
        self.bands = bands
        self.options = MappingProxyType(dict(options or {}))
        self._results = results
        self._allowed = frozenset(allowed)

    @property
    def lattice(self):
        return self.model.lattice

    @property
    def elements(self) -> frozenset:
        return self.group.elements(self.dim)

    def result(self, name: str):
        """The successful result of an invariant declared in ``uses``/``optional_uses``, or None."""
        if name not in self._allowed:
            raise KeyError(f"invariant result '{name}' was not declared in uses/optional_uses")
        res = self._results.get(name)
        return res if res is not None and res.status == "ok" else None

    def record(self, name: str):
        """The record of a declared invariant whatever its status (to explain why it cannot be used), or None."""
        if name not in self._allowed:
            raise KeyError(f"invariant result '{name}' was not declared in uses/optional_uses")
        return self._results.get(name)

    def option(self, key: str, default=None):
        return self.options.get(key, default)


def occupied_eigenvalues(bands: BandData, op, momentum) -> np.ndarray:
    """Eigenvalues of ``op`` on the occupied states at a high-symmetry momentum (a ``HighSymmetryMomentum``).

    The same as ``bands.symmetry_eigenvalues(op, momentum.k)``, with errors that name the momentum by its label.

    Raises
    ------
    GapClosedError
        If the occupied bands are degenerate with the empty ones at that momentum.
    SymmetryBreakingError
        If the occupied subspace is not invariant under the matrix given for ``op`` there.
    """
    try:
        return bands.symmetry_eigenvalues(op, np.asarray(momentum.k))
    except GapClosedError as exc:
        raise GapClosedError(f"{exc}, at the high-symmetry momentum {momentum.label}: the occupied bands are "
                             "degenerate with the empty ones there") from None
    except SymmetryBreakingError as exc:
        raise SymmetryBreakingError(f"{exc} (at {momentum.label}); check that the matrix given for {op.label} is a "
                                    "symmetry of the model") from None


def occupied_eigenvalues_at(bands: BandData, op, momenta) -> list[np.ndarray]:
    """:func:`occupied_eigenvalues` at several high-symmetry momenta in one batch; on a failure the momenta are
    taken one by one, so the error names the first momentum where it occurs."""
    try:
        return bands.symmetry_eigenvalues_at(op, np.array([m.k for m in momenta], dtype=float))
    except (GapClosedError, SymmetryBreakingError):
        return [occupied_eigenvalues(bands, op, m) for m in momenta]


class DeferredMapping(Mapping):
    """A read-only mapping whose values are made when first read, for details that only a rendered report reads
    (plain-text summaries): ``DeferredMapping(keys, make)`` holds ``make(key)`` under each key.

    It is a Mapping like a dict of the same items (``==``, ``dict(...)`` and JSON export read every value), and
    each value is made once.
    """

    def __init__(self, keys: Iterable, make: Callable[[Any], Any]):
        self._keys = tuple(keys)
        self._make = make
        self._made: dict = {}

    def __getitem__(self, key):
        if key not in self._made:
            if key not in self._keys:
                raise KeyError(key)
            self._made[key] = self._make(key)
        return self._made[key]

    def __iter__(self):
        return iter(self._keys)

    def __len__(self) -> int:
        return len(self._keys)

    def __repr__(self) -> str:
        return repr(dict(self))

    def __reduce__(self):
        return (dict, (dict(self),))  # pickled as the plain dict it reads as (its maker need not pickle)


def trim_label(k) -> str:
    """A time-reversal-invariant momentum in reduced coordinates as text, e.g. ``'(0, 1/2, 1/2)'``."""
    return "(" + ", ".join("1/2" if abs(v - 0.5) < 1e-9 else "0" for v in k) + ")"


def _parity_signs(lam: np.ndarray, points: np.ndarray, tol: float) -> np.ndarray:
    sign = np.where(lam.real > 0, 1, -1)
    off = np.abs(lam - sign).max(axis=-1)
    bad = np.nonzero(off > tol)[0]
    if bad.size:
        raise SymmetryBreakingError(f"inversion eigenvalues at k={trim_label(points[bad[0]])} are not ±1 "
                                    f"(off by {float(off[bad[0]]):.1e})")
    return sign


def inversion_parities(bands: BandData, op, points, *, tol: float = 1e-6) -> np.ndarray:
    """Signs ±1 ``(m, filling)`` of the eigenvalues of the inversion ``op`` on the occupied states at the TRIMs
    ``points`` ``(m, dim)``, formed in one batch.

    Raises
    ------
    SymmetryBreakingError
        Naming the first TRIM (in order) where an eigenvalue is farther than ``tol`` from ±1, or where the
        occupied subspace is not invariant.
    GapClosedError
        If the occupied bands are degenerate with the empty ones at a TRIM. Failures are those of a loop over
        the TRIMs in order: the first TRIM where any check fails is the one named.
    """
    points = np.asarray(points, dtype=float).reshape(-1, bands.model.dim)
    try:
        return _parity_signs(np.array(bands.symmetry_eigenvalues_at(op, points)), points, tol)
    except (GapClosedError, SymmetryBreakingError):  # again one TRIM after the other, to raise the first failure
        return np.array([_parity_signs(bands.symmetry_eigenvalues(op, k)[None], k[None], tol)[0] for k in points])


class _HookSpecs:
    """Hook specifications of crystaltop (one hook)."""

    @hookspec
    def crystaltop_invariants(self):
        """Return the invariants this plugin provides.

        Called once when the registry is built (after entry points are loaded). Takes no arguments.
        Must return a list (or tuple) of :class:`Invariant`-like objects, each with ``name``, ``title``,
        ``requires`` (a :class:`Requirements`) and ``compute(context) -> Outcome``.
        """
