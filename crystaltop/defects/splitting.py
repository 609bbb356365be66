"""A dislocation split into a disclination dipole: where its bound states and its charge go as the cores separate.

A disclination ``+Ω`` at ``c₁`` and ``−Ω`` at ``c₂ = c₁ + s`` is, seen from far away, a dislocation with the
net Burgers vector ``b = R_{−Ω} s − s`` (:func:`~crystaltop.defects.disclination_dipole`). For a crystallographic
rotation ``1 − R_{−Ω}`` is invertible, so the separation *fixes* ``b``: a sweep of the separation is a sweep of
dislocations whose Burgers vector grows with it. What stays fixed along a sweep is the class of ``b`` that the
predictions read: with the first core at 1a of a square lattice and ``Ω = π/2``, every second core at 1b gives an
odd ``b`` (``n₁ − n₂`` and ``n₁ + n₂`` odd: ``K·b = π`` for ``K = (π, π)``, ``(ẑ × b)·P = ½`` for
``P = (½, ½)``), every second core at 1a an even one. The table lists ``b`` for each separation.

At each separation :func:`split_dislocation` measures, on one open flake:

* the charge bound at each core (:func:`~crystaltop.defects.bound_charge` in discs of radius below half the
  separation, so the two discs never overlap) and in the union of the two discs (the total);
* the in-gap states near the gap centre (:func:`~crystaltop.defects.states_near`) with more than half their weight
  within that radius of the cores, recombined to separate the two cores (a level at each core, split by tunnelling
  into bonding and antibonding states, is taken apart again), and their weight at each core;

and gives a verdict for each: the states (or the charge) follow the +Ω core, follow the −Ω core, split between
them (with the fractions), sit at both cores, or none is bound. A model that binds nothing is not refused: its
verdicts say "none bound" (the question is answered by the measurement, not by a prediction made beforehand).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import DefectGeometryError
from .builders import (MIN_MARGIN, _frank, _lattice_fold, _same_point, _step_matrix, disclination_dipole, frank_angle_label,
                       rotation_centre_names)
from .geometry import polygon_distance, relevant_directions
from .realspace import RealSpaceForm, real_space_form
from .samples import Sample
from .solvers import (DISC_MARGIN, BoundCharge, NearStates, _ro, bound_charge, dense_spectrum, dense_wanted,
                      occupied_density, states_near)

__all__ = ["split_dislocation", "DislocationSplitting", "SplittingStep", "SplitCore", "SplitVerdict",
           "FOLLOWS_PLUS", "FOLLOWS_MINUS", "SPLITS", "BOTH_CORES", "NONE_BOUND", "OPPOSITE", "UNDETERMINED",
           "NOT_MEASURED"]

FOLLOWS_PLUS = "follows the +Ω core"
FOLLOWS_MINUS = "follows the −Ω core"
SPLITS = "splits between them"
#: States only: some bound states sit at one core, the others at the other (e.g. a Kramers pair at each).
BOTH_CORES = "bound at both cores"
NONE_BOUND = "none bound"
#: Charge only: each core holds a fraction, the two cancel mod e (a dislocation that binds nothing, split into two
#: charged disclinations).
OPPOSITE = "opposite charges, none net"
#: Charge only: a core's charge is not converged in the disc radius, or its error bound exceeds the tolerance (a
#: state at the Fermi level, half filled by the Chebyshev step).
UNDETERMINED = "undetermined"
#: Charge only, with ``charge=False``.
NOT_MEASURED = "not measured"

#: Smallest disc radius (lattice constants) around each core; two such discs must fit between the cores.
MIN_RADIUS = 2.5
#: Largest disc radius used (the charges of gapped models converge within a few correlation lengths).
MAX_RADIUS = 4.0
#: Step between disc radii.
RADIUS_STEP = 0.5


# ---------------------------------------------------------------------------------------------- results
@dataclass(frozen=True)
class SplitVerdict:
    """Where the bound states or the charge sit, at one separation."""

    kind: str
    """One of :data:`FOLLOWS_PLUS`, :data:`FOLLOWS_MINUS`, :data:`SPLITS`, :data:`BOTH_CORES`, :data:`NONE_BOUND`,
    :data:`OPPOSITE`, :data:`UNDETERMINED`, :data:`NOT_MEASURED`."""
    fractions: tuple[float, float] | None
    """Share of the +Ω and the −Ω core (summing to 1), when something is bound and a share is defined."""
    what: str
    """``"states"`` or ``"charge"``."""

    def __str__(self) -> str:
        if self.kind in (SPLITS, BOTH_CORES) and self.fractions is not None:
            return f"{self.kind} (+Ω {self.fractions[0]:.2f}, −Ω {self.fractions[1]:.2f})"
        return self.kind


@dataclass(frozen=True, eq=False)
class SplitCore:
    """One disclination of the dipole, and what it holds."""

    frank_angle: float
    """Ω in radians (+Ω for the first core, −Ω for the second)."""
    position: np.ndarray
    """(2,) Cartesian position."""
    reduced: np.ndarray
    """(2,) reduced coordinates in the model's lattice basis."""
    wyckoff: str | None
    """Wyckoff-style name of the rotation centre (:func:`~crystaltop.defects.rotation_centre_names`), e.g. "1b"."""
    charge: BoundCharge | None
    """Charge in discs about this core against the radius (all radii below half the separation); None with
    ``charge=False``."""
    state_weight: np.ndarray
    """(m,) weight within the largest disc radius of this core of each of the ``m`` bound states, taken in the
    basis of the bound subspace that separates the two cores (:attr:`SplittingStep.localised`)."""

    @property
    def states_held(self) -> float:
        """Sum of :attr:`state_weight`: the number of bound states' worth of weight at this core."""
        return float(np.sum(self.state_weight))


@dataclass(frozen=True, eq=False)
class SplittingStep:
    """The measurement at one separation."""

    separation: np.ndarray
    """(2,) reduced vector from the +Ω core to the −Ω core."""
    distance: float
    """Cartesian distance between the cores (lattice units)."""
    burgers: tuple[int, int]
    """Net Burgers vector of the pair, ``R_{−Ω} s − s``, in the lattice basis (counter-clockwise circuit)."""
    sample: Sample
    cores: tuple[SplitCore, SplitCore]
    """The +Ω core, then the −Ω core."""
    total: BoundCharge | None
    """Charge in the union of the two discs (the same radii as each core's); None with ``charge=False``."""
    states: NearStates
    """The states nearest the gap centre; weights within the largest disc radius of each core."""
    bound: np.ndarray
    """(count,) bool: in the middle half of the bulk gap with more than half the weight at the cores."""
    localised: np.ndarray
    """(m, m) unitary: the combinations of the bound states (columns of ``states.vectors[:, bound]``) that
    diagonalise the weight at the +Ω core minus the weight at the −Ω core. A level at each core split by tunnelling
    into bonding and antibonding states is separated again; a state shared by the cores stays shared."""
    charge_verdict: SplitVerdict
    state_verdict: SplitVerdict
    radii: np.ndarray
    """(r,) disc radii about each core, ascending; the largest is also the radius of the state weights."""

    @property
    def n_bound(self) -> int:
        return int(np.sum(self.bound))

    @property
    def radius(self) -> float:
        """Largest disc radius about each core."""
        return float(self.radii[-1])


@dataclass(frozen=True, eq=False)
class DislocationSplitting:
    """A sweep of the separation of a disclination dipole: charges, bound states and verdicts per separation."""

    model_name: str
    frank_angle: float
    """Ω of the first core (the second has −Ω)."""
    core: str | tuple[float, ...]
    """The first core as asked for."""
    track: str
    """``"states"`` or ``"charge"``: which verdict :attr:`verdicts` and :attr:`summary` report."""
    steps: tuple[SplittingStep, ...]
    """One per separation, in the order given."""

    @property
    def distances(self) -> np.ndarray:
        return np.array([s.distance for s in self.steps])

    @property
    def charges(self) -> np.ndarray:
        """(m, 2) converged charge at the +Ω and the −Ω core (NaN where not measured)."""
        return np.array([[np.nan if c.charge is None else c.charge.value for c in s.cores] for s in self.steps])

    @property
    def totals(self) -> np.ndarray:
        """(m,) charge in the union of the two discs (NaN where not measured)."""
        return np.array([np.nan if s.total is None else s.total.value for s in self.steps])

    @property
    def state_weights(self) -> np.ndarray:
        """(m, 2) bound states' worth of weight at the +Ω and the −Ω core."""
        return np.array([[c.states_held for c in s.cores] for s in self.steps])

    @property
    def verdicts(self) -> tuple[SplitVerdict, ...]:
        return tuple(s.state_verdict if self.track == "states" else s.charge_verdict for s in self.steps)

    @property
    def summary(self) -> str:
        """One line: the tracked quantity's verdict along the sweep, grouped over consecutive separations."""
        what = "the bound states" if self.track == "states" else "the charge"
        groups: list[tuple[str, list[float]]] = []
        for verdict, d in zip(self.verdicts, self.distances):
            text = verdict.kind
            if groups and groups[-1][0] == text:
                groups[-1][1].append(d)
            else:
                groups.append((text, [d]))
        parts = [f"{text} at |s| = {_span(ds)}" for text, ds in groups]
        if len(groups) == 1:
            parts = [f"{groups[0][0]} at every separation (|s| = {_span(groups[0][1])})"]
        return f"{what}: " + "; ".join(parts)

    def table(self) -> str:
        """A text table: one row per separation."""
        plus, minus = frank_angle_label(self.frank_angle), frank_angle_label(-self.frank_angle)
        head = ["s (reduced)", "|s|", "b", "states", f"core {plus}", f"Q {plus}", f"core {minus}", f"Q {minus}",
                "Q total", "bound", f"weight {plus}/{minus}", "charge", "bound states"]
        rows = []
        for st in self.steps:
            p, m = st.cores
            rows.append([
                "(" + ", ".join(f"{x:g}" for x in st.separation) + ")", f"{st.distance:.2f}",
                "(" + ", ".join(str(x) for x in st.burgers) + ")", str(st.sample.n_states),
                p.wyckoff or "-", _charge_text(p.charge), m.wyckoff or "-", _charge_text(m.charge),
                _charge_text(st.total), str(st.n_bound), f"{p.states_held:.2f}/{m.states_held:.2f}",
                str(st.charge_verdict), str(st.state_verdict)])
        widths = [max(len(h), *(len(r[i]) for r in rows)) for i, h in enumerate(head)]
        lines = [f"Split dislocation of {self.model_name}: {plus} at {self.core!s}, {minus} at core + s",
                 "  ".join(h.ljust(w) for h, w in zip(head, widths)),
                 "  ".join("-" * w for w in widths)]
        lines += ["  ".join(c.ljust(w) for c, w in zip(r, widths)) for r in rows]
        lines.append(f"Summary ({self.track}): {self.summary}")
        return "\n".join(lines)

    def __str__(self) -> str:
        return self.table()

    def to_dict(self) -> dict:
        """Plain numbers and strings (JSON-ready)."""
        out = []
        for st in self.steps:
            out.append({
                "separation": [float(x) for x in st.separation], "distance": st.distance,
                "burgers": list(st.burgers), "n_states": st.sample.n_states, "radius": st.radius,
                "cores": [{"frank_angle": c.frank_angle, "reduced": [float(x) for x in c.reduced],
                           "wyckoff": c.wyckoff, "charge": None if c.charge is None else c.charge.value,
                           "spread": None if c.charge is None else c.charge.spread,
                           "states_held": c.states_held} for c in st.cores],
                "total": None if st.total is None else st.total.value,
                "total_spread": None if st.total is None else st.total.spread, "n_bound": st.n_bound,
                "bound_energies": [float(e) for e in st.states.energies[st.bound]],
                "charge_verdict": str(st.charge_verdict), "state_verdict": str(st.state_verdict)})
        return {"model": self.model_name, "frank_angle": self.frank_angle, "core": self.core, "track": self.track,
                "summary": self.summary, "steps": out}

    def draw(self, ax) -> None:
        """Draw the tracked quantity per core against the separation on a matplotlib Axes."""
        d = self.distances
        plus, minus = frank_angle_label(self.frank_angle), frank_angle_label(-self.frank_angle)
        if self.track == "states":
            w = self.state_weights
            ax.plot(d, w[:, 0], "o-", label=f"{plus} core")
            ax.plot(d, w[:, 1], "s-", label=f"{minus} core")
            ax.set_ylabel("bound states' weight at the core")
        else:
            q = self.charges
            ax.plot(d, q[:, 0], "o-", label=f"{plus} core")
            ax.plot(d, q[:, 1], "s-", label=f"{minus} core")
            ax.plot(d, self.totals, "k--", label="both discs")
            ax.set_ylabel("bound charge (e)")
        ax.set_xlabel("separation |s| (lattice constants)")
        ax.set_title(self.model_name, fontsize="small")
        ax.legend(fontsize="small", loc="best")

    def plot(self, ax=None, path=None):
        """The figure of :meth:`draw` (matplotlib); returns the Axes, or None when matplotlib is not installed."""
        try:
            import matplotlib

            matplotlib.use("Agg", force=False)
            import matplotlib.pyplot as plt
        except ImportError:
            return None
        own = ax is None
        if own:
            _, ax = plt.subplots(figsize=(5, 3.6))
        self.draw(ax)
        if path is not None:
            ax.figure.tight_layout()
            ax.figure.savefig(path, dpi=120)
            if own:
                plt.close(ax.figure)
        return ax


# ---------------------------------------------------------------------------------------------- the sweep
def split_dislocation(model, frank_angle: float, separations, size=None, *, core="1a", filling: int | None = None,
                      ions=None, track: str = "charge", count: int = 12, charge: bool = True,
                      min_radius: float = MIN_RADIUS, max_radius: float = MAX_RADIUS, method: str = "auto",
                      tol: float = 0.02, decisive: float = 0.9, **options) -> DislocationSplitting:
    """Split a dislocation into a disclination dipole and follow its bound states and charge as the cores separate.

    Parameters
    ----------
    model : BlochModel or RealSpaceForm
        Any model with a real-space form that respects the rotation by ``frank_angle``.
    frank_angle : float
        Ω of the first core, ``0 < Ω < π`` (π/3, π/2, 2π/3); the second core carries −Ω.
    separations : (2,) or (m, 2) reduced vectors
        From the first core to the second; each end must be a rotation centre of the order used.
    size : int, optional
        Linear size of every flake in cells (the Wigner–Seitz polygon of inradius ``size / 2`` about the midpoint).
        Default: per separation, the smallest that keeps the discs ``DISC_MARGIN + 2`` cells from the open
        boundary (:func:`bound_charge`'s rule).
    core : str or (2,) reduced coordinates
        The first (+Ω) core, as for :func:`~crystaltop.defects.disclination`.
    filling, ions
        As for the builders.
    track : {"charge", "states"}
        Which verdict :attr:`DislocationSplitting.verdicts` and the summary report (both are measured unless
        ``charge=False``). With ``"states"``, a model that binds nothing is reported "none bound" at every
        separation, not refused.
    count : int
        Eigenstates nearest the gap centre to compute (an open flake of a Z2 insulator has edge states there too).
    charge : bool
        Measure the charges (the occupied density: by far the costliest step). ``False`` needs ``track="states"``.
    min_radius, max_radius : float
        Disc radii about each core run in steps of 0.5 up to ``min(max_radius, half the separation, the room left
        by the boundary)``, which must reach ``min_radius``.
    method : {"auto", "exact", "chebyshev"}
        For the occupied density (:func:`~crystaltop.defects.occupied_density`), computed once per flake.
    tol : float
        Charge tolerance (e): a core's charge counts as zero mod e, or as converged, within it.
    decisive : float
        Share of its core weight that a (recombined) bound state must have at one core to count as there, and share
        of the fractional charge at one core for "follows".
    **options
        Passed to :func:`~crystaltop.defects.occupied_density` (``near_fermi``, ``smoothing``...).

    Returns
    -------
    DislocationSplitting

    Raises
    ------
    DefectGeometryError
        A separation too small for two discs of radius ``min_radius`` (``|s| ≤ 2 min_radius``), a flake of the
        given ``size`` too small for the separation, an end that is not a rotation centre, a Frank angle outside
        ``(0, π)`` or one the model breaks, an unknown ``track``. All before any diagonalisation.

    Examples
    --------
    >>> import numpy as np
    >>> from crystaltop.examples import c4_breathing_square
    >>> from crystaltop.defects import split_dislocation
    >>> sweep = split_dislocation(c4_breathing_square(gamma=0.3), np.pi / 2, [(5.5, 0.5)], filling=1,
    ...                           ions=[((0.0, 0.0), 1.0)])
    >>> [round(float(q), 2) for q in sweep.charges[0]]
    [-0.25, -0.25]
    >>> str(sweep.verdicts[0])
    'splits between them (+Ω 0.50, −Ω 0.50)'
    """
    if track not in ("charge", "states"):
        raise DefectGeometryError(f"track must be 'charge' or 'states', got {track!r}")
    if track == "charge" and not charge:
        raise DefectGeometryError("track='charge' needs charge=True")
    if not 0.0 < min_radius <= max_radius:
        raise DefectGeometryError(f"need 0 < min_radius <= max_radius, got {min_radius:g} and {max_radius:g}")
    if not 0.5 < decisive <= 1.0:
        raise DefectGeometryError(f"decisive must lie in (0.5, 1], got {decisive!r}")
    form = model if isinstance(model, RealSpaceForm) else real_space_form(model)
    if form.dim != 2:
        raise DefectGeometryError(f"split_dislocation needs a two-dimensional model; {form.name!r} is {form.dim}D")
    seps = _separations(separations)
    omega = _frank(frank_angle)
    # every flake is built (and every refusal raised) before any diagonalisation
    plans = []
    for s in seps:
        dist = float(np.linalg.norm(s @ form.lattice))
        if 0.5 * dist <= min_radius:
            raise DefectGeometryError(f"separation {_vec(s)} puts the cores {dist:.3g} apart: two discs of radius "
                                      f"{min_radius:g} do not fit between them (need |s| > {2 * min_radius:g})")
        sample, radii = _build(form, omega, s, size, core, filling, ions, min_radius, max_radius)
        plans.append((s, dist, sample, radii))
    steps = tuple(_measure(s, dist, sample, radii, form.lattice, count=count, charge=charge, method=method,
                           tol=tol, decisive=decisive, options=options) for s, dist, sample, radii in plans)
    core_key = core if isinstance(core, str) else tuple(float(x) for x in np.asarray(core, dtype=float).reshape(-1))
    return DislocationSplitting(form.name, float(plans[0][2].cores[0].frank_angle), core_key, track, steps)


def _separations(separations) -> np.ndarray:
    try:
        arr = np.asarray(separations, dtype=float)
    except (TypeError, ValueError):
        raise DefectGeometryError(f"separations must be reduced vectors (pairs of numbers), got {separations!r}") \
            from None
    if arr.ndim == 1:
        arr = arr[None, :]
    if arr.ndim != 2 or arr.shape[1] != 2 or len(arr) == 0:
        raise DefectGeometryError(f"separations must be one or more reduced vectors of 2 numbers, got shape "
                                  f"{arr.shape}")
    return arr


def _build(form, omega, s, size, core, filling, ions, min_radius, max_radius):
    """The flake for one separation and its disc radii; a too-small flake is refused (or, with size=None, grown)."""
    dist = float(np.linalg.norm(s @ form.lattice))
    # room for discs of max_radius whatever the separation: a state bound at a core of an open flake of a Z2
    # insulator must also stay clear of the edge states
    n = _auto_size(form, omega, s, max_radius) if size is None else size
    for _ in range(4 if size is None else 1):
        sample = disclination_dipole(form, omega, s, n, core=core, filling=filling, ions=ions)
        room = min(_room(sample, c) for c in (0, 1))
        top = min(max_radius, 0.5 * dist - 1e-6, room - 1e-6)
        if top >= min_radius:
            radii = np.arange(top, min(1.0, top) - 1e-9, -RADIUS_STEP)[::-1]  # down to 1 lattice constant
            return sample, radii
        if size is not None:
            need = _auto_size(form, omega, s, min_radius)
            raise DefectGeometryError(f"a flake of size {size} leaves discs of radius {max(room, 0.0):.3g} < "
                                      f"{min_radius:g} about the cores {dist:.3g} apart (the discs keep "
                                      f"{DISC_MARGIN + 2:g} cells from the boundary): give size >= {need} or "
                                      "size=None")
        n += 2
    raise DefectGeometryError(f"no flake up to size {n} leaves discs of radius {min_radius:g} about cores {dist:.3g} "
                              "apart")  # pragma: no cover


def _auto_size(form, omega, s, radius) -> int:
    """The flake size that leaves discs of ``radius`` about every image of both cores clear of the boundary."""
    lat = form.lattice
    s_c = s @ lat
    dist = float(np.linalg.norm(s_c))
    r_minus = np.array([[np.cos(omega), np.sin(omega)], [-np.sin(omega), np.cos(omega)]])
    images = np.array([np.zeros(2), s_c, r_minus @ s_c])  # c₁, c₂ and the point of the lower ray glued to c₂
    reach = polygon_distance(images - 0.5 * s_c, relevant_directions(lat)).max()
    inradius = max(reach + radius + DISC_MARGIN + 2.0 + 1.0, 0.5 * dist + MIN_MARGIN + 1.0)
    return int(2 * math.ceil(inradius))


def _room(sample: Sample, c: int) -> float:
    """Largest disc radius about core ``c`` that keeps ``DISC_MARGIN + 2`` from the open boundary."""
    near_edge = sample.ion_edge_distance < DISC_MARGIN + 2.0
    return float(sample.ion_core_distance[c][near_edge].min()) if np.any(near_edge) else np.inf


def _measure(s, dist, sample: Sample, radii, lattice, *, count, charge, method, tol, decisive,
             options) -> SplittingStep:
    top = float(radii[-1])
    spectrum = dense_spectrum(sample) if charge and dense_wanted(sample, method) else None  # shared with the states
    if charge:
        if spectrum is not None:
            density = occupied_density(sample, method="exact", spectrum=spectrum, **options)
        else:
            inside = sample.ion_distance_to_cores() < top
            region = (sample.state_ion >= 0) & inside[np.maximum(sample.state_ion, 0)]
            density = occupied_density(sample, method=method, region=region, **options)
        charges = [bound_charge(sample, c, radii, density=density) for c in (0, 1)]
        total = bound_charge(sample, (0, 1), radii, density=density)
        charge_verdict = _charge_verdict(charges, total, tol, decisive)
    else:
        charges, total, charge_verdict = [None, None], None, SplitVerdict(NOT_MEASURED, None, "charge")
    near = states_near(sample, count=min(int(count), sample.n_states - 1), core_radius=top, spectrum=spectrum)
    bound = near.bound(threshold=0.5, window=0.5)
    rotation, weights = _localise(sample, near.vectors[:, bound], top)
    names = _wyckoff_names(sample, lattice)
    cores = tuple(SplitCore(float(k.frank_angle), k.position, k.reduced, names[i], charges[i], _ro(weights[i]))
                  for i, k in enumerate(sample.cores[:2]))
    return SplittingStep(_ro(np.array(s, dtype=float)), dist, tuple(int(x) for x in sample.spec.burgers), sample,
                         cores, total, near, _ro(bound), _ro(rotation), charge_verdict,
                         _state_verdict(weights, decisive), _ro(np.array(radii, dtype=float)))


def _localise(sample: Sample, vectors: np.ndarray, radius: float) -> tuple[np.ndarray, np.ndarray]:
    """The basis of the bound subspace that diagonalises ``P₊ − P₋`` (weights within ``radius`` of each core), and
    the (2, m) weights of its states at each core."""
    m = vectors.shape[1]
    if m == 0:
        return np.zeros((0, 0), dtype=complex), np.zeros((2, 0))
    weight = [vectors.conj().T @ ((sample.core_distance[c] < radius)[:, None] * vectors) for c in (0, 1)]
    diff = weight[0] - weight[1]
    _, rotation = np.linalg.eigh(0.5 * (diff + diff.conj().T))
    rotation = rotation[:, ::-1]  # the +Ω core's states first
    held = np.array([np.real(np.einsum("ij,ik,kj->j", rotation.conj(), w, rotation)) for w in weight])
    return rotation, held


# ---------------------------------------------------------------------------------------------- verdicts
def _state_verdict(weights: np.ndarray, decisive: float) -> SplitVerdict:
    """From the (2, m) weights of the localised bound states at the +Ω and the −Ω core."""
    held = weights.sum(axis=1)
    if weights.shape[1] == 0 or held.sum() <= 0:
        return SplitVerdict(NONE_BOUND, None, "states")
    share = (float(held[0] / held.sum()), float(held[1] / held.sum()))
    per_state = weights / np.maximum(weights.sum(axis=0), 1e-300)
    at_plus, at_minus = per_state[0] >= decisive, per_state[1] >= decisive
    if np.all(at_plus):
        return SplitVerdict(FOLLOWS_PLUS, share, "states")
    if np.all(at_minus):
        return SplitVerdict(FOLLOWS_MINUS, share, "states")
    if np.all(at_plus | at_minus):
        return SplitVerdict(BOTH_CORES, share, "states")
    return SplitVerdict(SPLITS, share, "states")


def _charge_verdict(charges, total, tol: float, decisive: float) -> SplitVerdict:
    """From the two cores' charges and the total; only values mod e count (the ions fix the integer part)."""
    if any(q.spread > tol or q.error[-1] > tol for q in (*charges, total)):
        return SplitVerdict(UNDETERMINED, None, "charge")
    f = np.array([_fold(q.value) for q in charges])
    charged = np.abs(f) > tol
    if not charged.any():
        return SplitVerdict(NONE_BOUND, None, "charge")
    net = f.sum()
    if abs(_fold(net)) <= tol:
        return SplitVerdict(OPPOSITE, None, "charge")
    share = (float(f[0] / net), float(f[1] / net))
    if not charged.all():
        return SplitVerdict(FOLLOWS_PLUS if charged[0] else FOLLOWS_MINUS, share, "charge")
    return SplitVerdict(_follow(share, decisive), share, "charge")


def _follow(share, decisive: float) -> str:
    if share[0] >= decisive:
        return FOLLOWS_PLUS
    if share[1] >= decisive:
        return FOLLOWS_MINUS
    return SPLITS


def _fold(q: float) -> float:
    """``q`` mod 1 in ``(−½, ½]`` (a value within 1e-6 of −½ counts as +½)."""
    f = (q + 0.5) % 1.0 - 0.5
    return 0.5 if f < -0.5 + 1e-6 else float(f)


# ---------------------------------------------------------------------------------------------- helpers
def _wyckoff_names(sample: Sample, lattice: np.ndarray) -> list[str | None]:
    """The Wyckoff-style name of each core's rotation centre (its orbit under the lattice's rotations)."""
    names = rotation_centre_names(lattice)
    fold = _lattice_fold(lattice)
    w = _step_matrix(fold, lattice)
    out = []
    for k in sample.cores[:2]:
        found = None
        for name, rep in names.items():
            if any(_same_point(np.linalg.matrix_power(w, m) @ rep, k.reduced) for m in range(fold)):
                found = name
                break
        out.append(found)
    return out


def _span(ds) -> str:
    return f"{ds[0]:.2f}" if len(ds) == 1 else f"{min(ds):.2f}–{max(ds):.2f}"


def _charge_text(q: BoundCharge | None) -> str:
    if q is None:
        return "-"
    if q.error[-1] >= 5e-4:
        return f"{q.value:+.3f}(err {q.error[-1]:.1g})"
    return f"{q.value:+.3f}±{q.spread:.0e}" if q.spread >= 5e-4 else f"{q.value:+.3f}"


def _vec(s) -> str:
    return "(" + ", ".join(f"{x:g}" for x in s) + ")"


