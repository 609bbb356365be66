"""Measurements on a sample: states near the gap centre, their localisation, the occupied density and the charge
bound to a core (or held by any region), with its dependence on the disc radius.

Charges are numbers of electrons (an electron counts +1): the bound charge of a region is the number of
electrons counted with its ions minus the ions' charge, ``Q = Σ_{i ∈ region} ρ_i − Σ_{ions ∈ region} q``. A
region is always a set of whole ions with the states counted with them (:attr:`Sample.state_ion`), so the
disc edge never cuts a unit cell's charge in two.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as sla

from ..errors import DefectGeometryError
from .kpm import chebyshev_expansion, local_occupation, spectral_bounds
from .realspace import BulkGap
from .samples import Sample

__all__ = ["NearStates", "states_near", "local_density", "localisation", "OccupiedDensity", "occupied_density",
           "occupied_densities_at", "dense_spectrum", "dense_wanted",
           "BoundCharge", "bound_charge", "region_charge", "DefectMeasurement", "measure_defect"]

#: Largest sample diagonalised densely by ``method="auto"``.
DENSE_LIMIT = 2500
#: Distance (lattice constants) a disc keeps from the open boundary.
DISC_MARGIN = 3.0


# ---------------------------------------------------------------------------------------------- states near E
@dataclass(frozen=True, eq=False)
class NearStates:
    """The eigenstates of a sample nearest an energy, and where they live."""

    energies: np.ndarray
    """(m,) eigenvalues, ascending."""
    vectors: np.ndarray
    """(n, m) eigenvectors (columns)."""
    target: float
    """The energy searched around (default the centre of the bulk gap)."""
    core_weight: np.ndarray
    """(n_cores, m) weight of each state within ``core_radius`` of each core."""
    edge_weight: np.ndarray
    """(m,) weight within ``edge_width`` of the open boundary (0 for a periodic sample)."""
    core_radius: float
    edge_width: float
    in_gap: np.ndarray
    """(m,) bool: strictly inside the bulk gap of the model."""
    gap: BulkGap
    method: str
    """How they were found."""

    def bound(self, threshold: float = 0.5, window: float = 1.0) -> np.ndarray:
        """(m,) bool: states with more than ``threshold`` of their weight near the cores, within ``window`` × half
        the bulk gap of its centre (``window = 1``: anywhere in the gap; ``0.5``: its middle half)."""
        half = 0.5 * self.gap.width
        deep = np.abs(self.energies - self.gap.centre) < window * half
        return self.in_gap & deep & (self.core_weight.sum(axis=0) > threshold)

    def count_bound(self, threshold: float = 0.5, window: float = 1.0) -> int:
        return int(self.bound(threshold, window).sum())


def states_near(sample: Sample, energy: float | None = None, count: int = 20, *, core_radius: float = 4.0,
                edge_width: float = 2.0, tol: float = 1e-10, spectrum=None) -> NearStates:
    """The ``count`` eigenstates nearest ``energy`` (default the gap centre), by shift and invert.

    ``H − σ`` is factorised once (sparse LU) and ARPACK iterates with its inverse, whose largest eigenvalues
    belong to the states nearest σ (see ``_shift_invert``). σ is moved off ``energy`` by
    1e-7 of the bandwidth so that an exactly degenerate level (a chiral zero mode) does not make the
    factorisation singular. Samples of fewer than 600 states are diagonalised densely, and so is none whose
    whole ``spectrum`` (:func:`dense_spectrum`) is passed: the states are picked from it.
    """
    h = sample.hamiltonian
    n = h.shape[0]
    target = sample.fermi_energy if energy is None else float(energy)
    count = int(count)
    if not 0 < count < n:
        raise DefectGeometryError(f"count must be between 1 and {n - 1} for a sample of {n} states, got {count}")
    if spectrum is not None or n < 600:
        e, v = dense_spectrum(sample) if spectrum is None else spectrum
        pick = np.argsort(np.abs(e - target), kind="stable")[:count]
        pick = pick[np.argsort(e[pick])]
        energies, vectors = e[pick], v[:, pick]
        method = "dense diagonalisation (numpy.linalg.eigh)"
    else:
        lo, hi = spectral_bounds(h)
        sigma = target + 1e-7 * (hi - lo) * np.sqrt(2.0)
        energies, vectors = _shift_invert(h, count, sigma, tol, sample.positions)
        driver = "eigs (Arnoldi)" if np.iscomplexobj(h.data) else "eigsh (Lanczos)"
        method = (f"shift-invert {driver} of scipy.sparse.linalg, sigma = {sigma:.6g}; sparse LU of H − sigma in "
                  "nested-dissection order; Rayleigh–Ritz with H on the converged vectors")
    energies, vectors = _separate_degenerate(sample, energies, vectors, core_radius, tol=1e-3 * sample.gap.width)
    core_w, edge_w = localisation(sample, vectors, core_radius=core_radius, edge_width=edge_width)
    gap = sample.gap
    in_gap = (energies > gap.valence_top) & (energies < gap.conduction_bottom)
    return NearStates(_ro(energies), _ro(vectors), target, _ro(core_w), _ro(edge_w), float(core_radius),
                      float(edge_width), _ro(in_gap), gap, method)


def _separate_degenerate(sample: Sample, energies, vectors, core_radius: float, tol: float):
    """Within each (quasi-)degenerate level, the basis that diagonalises the weight near the cores.

    A core state and a boundary state at the same energy (zero modes of each, say) hybridise in a finite sample
    and come out as 50/50 mixtures split by their tunnelling ``δ``; within a cluster of levels closer than ``tol``
    (1e-3 of the bulk gap) this rotates to the states that are as much at one core, or as little, as the cluster
    allows, with their mean energies (exact eigenstates up to ``δ``).
    """
    if not sample.cores:
        return energies, vectors
    # weight 1, 2, ... on the states near core 0, 1, ... (each state to its nearest core): the eigenvectors of this
    # operator within a cluster separate the cores from each other as well as from the rest
    nearest = np.argmin(sample.core_distance, axis=0)
    near = sample.distance_to_cores() < core_radius
    label = np.where(near, nearest + 1.0, 0.0)
    out = np.array(vectors, dtype=complex)
    e_out = np.array(energies, dtype=float)
    start = 0
    while start < len(energies):
        stop = start + 1
        while stop < len(energies) and energies[stop] - energies[stop - 1] < tol:
            stop += 1
        if stop - start > 1:
            block = out[:, start:stop]
            weight = block.conj().T @ (label[:, None] * block)
            _, rot = np.linalg.eigh(0.5 * (weight + weight.conj().T))
            out[:, start:stop] = block @ rot[:, ::-1]
            e_out[start:stop] = np.real(np.einsum("ij,ij->j", out[:, start:stop].conj(),
                                                  sample.hamiltonian @ out[:, start:stop]))
        start = stop
    return e_out, out


def _shift_invert(h, count: int, sigma: float, tol: float, positions: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The ``count`` eigenpairs nearest ``sigma``.

    ``H − σ`` is factorised once (SuperLU, no pivoting) in a geometric nested-dissection order of the sample's
    positions: the fill of a two-dimensional lattice then grows like n log n, where a column ordering blind to the
    geometry fills like n^1.5 (20 s instead of 0.5 s for 40,000 states). A real H goes to ARPACK's Lanczos driver
    (``eigsh``), a complex Hermitian one to its Arnoldi driver (``eigs``, which scipy's ``eigsh`` calls for it
    anyway), both with that factorisation as the inverse; a Rayleigh–Ritz step with H on the returned span makes
    the vectors of a degenerate level orthonormal and the energies exact to rounding.
    """
    n = h.shape[0]
    complex_h = np.iscomplexobj(h.data) and np.abs(h.data.imag).max(initial=0.0) > 0.0
    hh = h.tocsr() if complex_h else h.real.tocsr()
    shifted = (hh - sigma * sp.identity(n, format="csr")).tocsr()
    perm = _nested_dissection(shifted, positions)
    lu = sla.splu(shifted[perm][:, perm].tocsc(), permc_spec="NATURAL", diag_pivot_thresh=0.0,
                  options={"SymmetricMode": True})

    def solve(x):
        y = np.empty_like(x)
        y[perm] = lu.solve(x[perm])
        return y

    op = sla.LinearOperator((n, n), matvec=solve, dtype=complex if complex_h else float)
    if complex_h:
        _, x = sla.eigs(hh, k=count, sigma=sigma, which="LM", tol=tol, OPinv=op)
    else:
        _, x = sla.eigsh(hh, k=count, sigma=sigma, which="LM", tol=tol, OPinv=op)
    u, sv, _ = np.linalg.svd(x.astype(complex), full_matrices=False)
    basis = u[:, sv > 1e-8 * sv.max()]
    small = basis.conj().T @ (hh @ basis)
    w, c = np.linalg.eigh(0.5 * (small + small.conj().T))
    return w, basis @ c


def _nested_dissection(h, positions: np.ndarray, leaf: int = 64) -> np.ndarray:
    """A fill-reducing order: recursive bisection at the median of the longest extent, separators last."""
    graph = (h != 0).astype(np.int8).tocsr()
    n = h.shape[0]
    side = np.zeros(n, dtype=np.int8)
    out: list[np.ndarray] = []
    stack = [(np.arange(n), False)]
    while stack:
        idx, done = stack.pop()
        if done:
            out.append(idx)
            continue
        if len(idx) <= leaf:
            out.append(idx)
            continue
        p = positions[idx]
        axis = int(np.argmax(p.max(axis=0) - p.min(axis=0)))
        cut = np.median(p[:, axis])
        left, right = idx[p[:, axis] < cut], idx[p[:, axis] >= cut]
        if len(left) == 0 or len(right) == 0:
            out.append(idx)
            continue
        side[left] = 1
        touch = (graph[right] @ side) > 0
        side[left] = 0
        sep, right = right[touch], right[~touch]
        stack.append((sep, True))
        stack.append((right, False))
        stack.append((left, False))
    return np.concatenate(out)


def local_density(sample: Sample, vectors: np.ndarray) -> np.ndarray:
    """(n_sites, m) density of each state on each site (orbitals and spin of a site summed)."""
    v = np.asarray(vectors)
    v = v[:, None] if v.ndim == 1 else v
    weight = np.abs(v) ** 2
    out = np.zeros((int(sample.site_of_state.max()) + 1, weight.shape[1]))
    np.add.at(out, sample.site_of_state, weight)
    return out


def localisation(sample: Sample, vectors: np.ndarray, *, core_radius: float = 4.0,
                 edge_width: float = 2.0) -> tuple[np.ndarray, np.ndarray]:
    """Weight of each state within ``core_radius`` of each core, and within ``edge_width`` of the boundary."""
    v = np.asarray(vectors)
    v = v[:, None] if v.ndim == 1 else v
    weight = np.abs(v) ** 2
    core = np.array([(weight[d < core_radius]).sum(axis=0) for d in sample.core_distance]).reshape(
        len(sample.cores), weight.shape[1])
    edge = weight[sample.edge_distance < edge_width].sum(axis=0)
    return core, edge


# ---------------------------------------------------------------------------------------------- occupied density
@dataclass(frozen=True, eq=False)
class OccupiedDensity:
    """Electron density of the occupied states, per basis state."""

    density: np.ndarray
    """(n,) ⟨i|P|i⟩; NaN where not computed."""
    error: np.ndarray
    """(n,) bound on the error of each entry (rounding only for diagonalisation; NaN where not computed)."""
    computed: np.ndarray
    """(n,) bool."""
    fermi_energy: float
    method: str
    """The method, named with its parameters."""
    near_fermi: int
    """States found within the degeneracy tolerance of the Fermi level (diagonalisation only)."""
    filled_near_fermi: bool
    """Whether those states were filled (all of them) or left empty (all of them)."""
    moments: int | None = None
    """Chebyshev moments used (Chebyshev method)."""
    reach: int | None = None
    """States the Chebyshev recursion touched."""


def dense_wanted(sample: Sample, method: str = "auto", limit: int | None = None) -> bool:
    """Whether the occupied density of ``sample`` is formed exactly for ``method``: asked for, or ``"auto"`` up to
    ``limit`` states (default :data:`DENSE_LIMIT`)."""
    return method == "exact" or (method == "auto" and sample.n_states <= (DENSE_LIMIT if limit is None else limit))


def occupied_density(sample: Sample, *, fermi_energy: float | None = None, electrons: int | None = None,
                     method: str = "auto", region: np.ndarray | None = None, near_fermi: str = "empty",
                     degeneracy_tol: float | None = None, smoothing: float | None = None,
                     tol: float = 1e-10, progress: bool | None = None, spectrum=None) -> OccupiedDensity:
    """The occupied density, by dense diagonalisation or by the Chebyshev expansion on local vectors.

    Parameters
    ----------
    fermi_energy : float, optional
        Default: the centre of the bulk gap.
    electrons : int, optional
        Instead of a Fermi level, fill the lowest ``electrons`` states (diagonalisation only).
    method : {"auto", "exact", "chebyshev"}
        ``"auto"``: exact up to :data:`DENSE_LIMIT` states, Chebyshev beyond.
    region : (n,) bool, optional
        States whose density is needed (Chebyshev: the local vectors); default all.
    near_fermi : {"empty", "fill"}
        States within ``degeneracy_tol`` of the Fermi level (e.g. degenerate zero modes at corners) are all left
        empty or all filled: filling part of a degenerate set gives a meaningless answer.
    degeneracy_tol : float, optional
        Default ``1e-3`` of the bulk gap (corner modes of a flake split by e^{−L/ξ}, far below it).
    smoothing : float, optional
        Chebyshev: width ``w`` of the smoothed step. Default: 1/8 of the bulk gap, halved (at most twice) while the
        error bound summed over the region exceeds 1e-3, i.e. while an in-gap state lies within a few ``w`` of E_F.
    progress : bool, optional
        Chebyshev: a progress bar over the recursion (default: on a terminal, for long recursions only).
    spectrum : (energies, vectors), optional
        The sample's whole spectrum (:func:`dense_spectrum`), when the caller has it: the exact method reads it
        instead of diagonalising again.
    """
    h = sample.hamiltonian
    n = h.shape[0]
    e_f = sample.fermi_energy if fermi_energy is None else float(fermi_energy)
    if near_fermi not in ("empty", "fill"):
        raise DefectGeometryError(f"near_fermi must be 'empty' or 'fill', got {near_fermi!r}")
    if method == "auto":
        method = "exact" if n <= DENSE_LIMIT or electrons is not None else "chebyshev"
    mask = np.ones(n, dtype=bool) if region is None else np.asarray(region, dtype=bool)
    if method == "exact":
        e, v = dense_spectrum(sample) if spectrum is None else spectrum
        if electrons is not None:
            electrons = int(electrons)
            if not 0 <= electrons <= n:
                raise DefectGeometryError(f"electrons must be between 0 and {n}")
            e_f = float(0.5 * (e[electrons - 1] + e[electrons])) if 0 < electrons < n else e_f
        return _filled(sample, e, v, e_f, near_fermi, degeneracy_tol)
    if method != "chebyshev":
        raise DefectGeometryError(f"unknown method {method!r}: expected 'auto', 'exact' or 'chebyshev'")
    if electrons is not None:
        raise DefectGeometryError("electrons= needs the exact method; give a fermi_energy for the Chebyshev method")
    w = sample.gap.width / 8.0 if smoothing is None else float(smoothing)
    idx = np.flatnonzero(mask)
    bounds = spectral_bounds(h)
    for attempt in range(3):
        expansion = chebyshev_expansion(bounds, e_f, w, tol=tol)
        rho, err, reach = local_occupation(h, idx, expansion, progress=progress)
        # an in-gap state within a few w of E_F is partly occupied by the smoothed step: narrow it (unless given)
        if smoothing is not None or err.sum() < 1e-3 or attempt == 2:
            break
        w /= 2.0
    density = np.full(n, np.nan)
    error = np.full(n, np.nan)
    density[idx], error[idx] = rho, err
    name = (f"Chebyshev expansion of the Fermi step ½erfc((E − E_F)/w), w = {w:.4g}, on local vectors "
            f"(kernel polynomial method), {expansion.moments} moments; error bound = coefficient tail + "
            "⟨½exp(−(H − E_F)²/w²)⟩")
    return OccupiedDensity(_ro(density), _ro(error), _ro(mask), e_f, name, 0, False, expansion.moments, reach)


def occupied_densities_at(sample: Sample, fermi_energies, *, near_fermi: str = "empty",
                          degeneracy_tol: float | None = None, spectrum=None) -> list[OccupiedDensity]:
    """The exact occupied density at several Fermi levels from one dense diagonalisation (as
    :func:`occupied_density` with ``method="exact"`` at each level; ``spectrum`` as there)."""
    if near_fermi not in ("empty", "fill"):
        raise DefectGeometryError(f"near_fermi must be 'empty' or 'fill', got {near_fermi!r}")
    e, v = dense_spectrum(sample) if spectrum is None else spectrum
    return [_filled(sample, e, v, float(level), near_fermi, degeneracy_tol) for level in np.atleast_1d(fermi_energies)]


def dense_spectrum(sample: Sample) -> tuple[np.ndarray, np.ndarray]:
    """Every eigenvalue (ascending) and eigenvector of the sample's Hamiltonian, by one dense diagonalisation (a
    real symmetric one when H is real): to be shared by :func:`states_near` and :func:`occupied_density` when
    both measure one sample."""
    dense = sample.hamiltonian.toarray()
    if np.abs(dense.imag).max(initial=0.0) == 0.0:
        dense = dense.real  # a real symmetric eigenproblem is several times cheaper
    return np.linalg.eigh(dense)


def _filled(sample: Sample, e, v, e_f: float, near_fermi: str, degeneracy_tol) -> OccupiedDensity:
    """The density of the states below ``e_f``; those within the degeneracy tolerance all empty or all filled."""
    n = len(e)
    tol_e = (1e-3 * sample.gap.width) if degeneracy_tol is None else float(degeneracy_tol)
    near = np.abs(e - e_f) <= tol_e
    occ = (e < e_f) & ~near
    if near_fermi == "fill":
        occ |= near
    density = (np.abs(v[:, occ]) ** 2).sum(axis=1)
    return OccupiedDensity(_ro(density), _ro(np.full(n, 1e-12)), _ro(np.ones(n, dtype=bool)), e_f,
                           "exact diagonalisation (numpy.linalg.eigh)", int(near.sum()), near_fermi == "fill")


# ---------------------------------------------------------------------------------------------- charges
def region_charge(sample: Sample, ions: np.ndarray, density: OccupiedDensity) -> tuple[float, float]:
    """Bound charge of a region given as a boolean mask over the ions: (charge, error bound)."""
    ions = np.asarray(ions, dtype=bool)
    states = (sample.state_ion >= 0) & ions[np.maximum(sample.state_ion, 0)]
    if np.any(states & ~density.computed):
        raise DefectGeometryError("the density was not computed on every state of the region")
    q = float(density.density[states].sum() - sample.ion_charges[ions].sum())
    return q, float(density.error[states].sum())


@dataclass(frozen=True, eq=False)
class BoundCharge:
    """The charge in discs around one or more cores, minus the ionic background, against the disc radius."""

    cores: tuple[int, ...]
    """Indices of the cores the discs surround (a union of discs for several)."""
    radii: np.ndarray
    """(r,) disc radii (Cartesian, glued geometry), ascending."""
    charge: np.ndarray
    """(r,) bound charge ``Q(r)`` in electrons."""
    error: np.ndarray
    """(r,) error bound of each ``Q(r)`` from the method (not the radius dependence)."""
    value: float
    """The converged charge: mean of ``Q(r)`` over the outer half of the radii (at least the outer two)."""
    spread: float
    """Convergence figure: ``max − min`` of ``Q(r)`` over those radii."""
    fermi_energy: float
    method: str
    near_fermi: int
    filled_near_fermi: bool

    def fraction(self) -> float:
        """``value`` mod 1, in [0, 1) (1 − 1e-6 and above fold to 0)."""
        f = self.value % 1.0
        return 0.0 if f > 1.0 - 1e-6 else f

    def in_units(self, n: int) -> float:
        """``value`` in units of ``e/n`` (mod n)."""
        return (self.value * n) % n

    def quantised(self, n: int, tol: float = 0.05) -> int | None:
        """The integer ``p`` with ``value ≡ p e/n (mod e)`` within ``tol`` (in units of e/n), else None."""
        x = self.in_units(n)
        p = int(round(x)) % n
        return p if abs(((x - round(x)) + 0.5) % 1.0 - 0.5) < tol else None


def _default_radii(sample: Sample, cores: tuple[int, ...]) -> np.ndarray:
    dist = sample.ion_distance_to_cores(cores)
    limit = np.inf
    near_edge = sample.ion_edge_distance < DISC_MARGIN + 2.0  # boundary states reach a few cells in
    if np.any(near_edge):
        limit = float(dist[near_edge].min())
    others = [i for i in range(len(sample.cores)) if i not in cores]
    for o in others:
        limit = min(limit, 0.5 * _core_gap(sample, cores, o))
    limit = min(limit, 10.0)
    if not np.isfinite(limit) or limit < 3.0:
        raise DefectGeometryError(f"the sample is too small for a disc around core(s) {list(cores)}: the largest "
                                  f"disc that keeps {DISC_MARGIN:g} cells from the edge and clear of the other cores "
                                  f"has radius {limit:.3g} < 3; enlarge the sample")
    radii = np.arange(2.5, limit, 1.0)
    return radii if len(radii) >= 2 else np.array([2.5, min(3.0, limit - 1e-6)])


def _core_gap(sample: Sample, cores, other: int) -> float:
    return float(min(np.min(np.linalg.norm(sample.cores[c].images[:, None, :] - sample.cores[other].images[None], axis=-1))
                     for c in cores))


def bound_charge(sample: Sample, core=0, radii=None, *, fermi_energy: float | None = None,
                 electrons: int | None = None, method: str = "auto", near_fermi: str = "empty",
                 density: OccupiedDensity | None = None, **options) -> BoundCharge:
    """The charge bound to a core: ``Q(r)`` in discs of radius ``r`` around it, minus the ionic background.

    Parameters
    ----------
    core : int, sequence of int or "all"
        The core(s); with several, the region is the union of the discs around each.
    radii : sequence of float, optional
        Default: 2.5, 3.5, ... up to the largest disc that keeps ``DISC_MARGIN + 2`` from the open boundary and
        half the distance to any other core (at most 10).
    fermi_energy, electrons, method, near_fermi, **options
        As for :func:`occupied_density` (computed on the largest disc only, unless ``density`` is given).

    Raises
    ------
    DefectGeometryError
        If a disc reaches within :data:`DISC_MARGIN` of the open boundary, or the sample has no such core.
    """
    if not sample.cores:
        raise DefectGeometryError("the sample has no defect core: use region_charge on a mask of ions")
    if isinstance(core, str) and core == "all":
        cores = tuple(range(len(sample.cores)))
    else:
        cores = tuple(int(c) for c in np.atleast_1d(core))
    if any(not 0 <= c < len(sample.cores) for c in cores):
        raise DefectGeometryError(f"core index out of range: the sample has {len(sample.cores)} core(s)")
    radii = _default_radii(sample, cores) if radii is None else np.sort(np.asarray(radii, dtype=float))
    dist = sample.ion_distance_to_cores(cores)
    outer = dist < radii[-1]
    if np.any(outer & (sample.ion_edge_distance < DISC_MARGIN)):
        closest = float(sample.ion_edge_distance[outer].min())
        raise DefectGeometryError(f"a disc of radius {radii[-1]:g} around core(s) {list(cores)} comes within "
                                  f"{closest:.3g} of the open boundary (at least {DISC_MARGIN:g} needed): enlarge the "
                                  "sample or shrink the radii")
    if density is None:
        states = (sample.state_ion >= 0) & outer[np.maximum(sample.state_ion, 0)]
        density = occupied_density(sample, fermi_energy=fermi_energy, electrons=electrons, method=method,
                                   region=states if method != "exact" else None, near_fermi=near_fermi, **options)
    charge = np.zeros(len(radii))
    error = np.zeros(len(radii))
    for i, r in enumerate(radii):
        charge[i], error[i] = region_charge(sample, dist < r, density)
    half = charge[min(len(charge) // 2, max(len(charge) - 2, 0)):]  # the outer half, at least two radii
    return BoundCharge(cores, _ro(radii), _ro(charge), _ro(error), float(half.mean()), float(half.max() - half.min()),
                       density.fermi_energy, density.method, density.near_fermi, density.filled_near_fermi)


# ---------------------------------------------------------------------------------------------- all at once
@dataclass(frozen=True, eq=False)
class DefectMeasurement:
    """What a sample's defects bind: the states near the gap centre and the charge at each core."""

    sample: Sample
    states: NearStates
    charges: tuple[BoundCharge, ...]
    """One per core, in the order of :attr:`Sample.cores`."""
    bound_states: tuple[int, ...]
    """Number of in-gap states localised at each core (weight > 1/2 within the core radius)."""


def measure_defect(sample: Sample, *, count: int = 12, core_radius: float = 4.0, radii=None,
                   method: str = "auto", **options) -> DefectMeasurement:
    """States near the gap centre and the bound charge of every core of a sample, with convergence data."""
    spectrum = dense_spectrum(sample) if dense_wanted(sample, method) else None
    near = states_near(sample, count=min(count, sample.n_states - 1), core_radius=core_radius, spectrum=spectrum)
    density = None if spectrum is None else occupied_density(sample, method="exact", spectrum=spectrum, **options)
    charges = tuple(bound_charge(sample, c, radii, method=method, density=density, **options)
                    for c in range(len(sample.cores)))
    bound = tuple(int((near.in_gap & (near.core_weight[c] > 0.5)).sum()) for c in range(len(sample.cores)))
    return DefectMeasurement(sample, near, charges, bound)


def _ro(a):
    a = np.asarray(a)
    a.setflags(write=False)
    return a
