"""verify_defects: build the finite samples that the defect predictions of a report speak of, measure them, and
set each prediction beside its measurement.

What is checked, per record of the report (only records with status "ok" predict anything):

* ``dislocation_response`` in 2D -- per Burgers vector ``b``, a periodic supercell with a dislocation dipole ``±b``
  (no open edge, so the helical edge states of a Z2 insulator cannot pass for bound states): the in-gap states
  bound to the two cores (middle half of the gap, more than half their weight within 4 cells of a core; the
  partners at the two cores may hybridise, so they are counted together) and the charge bound to the ``+b``
  core mod e.
* ``dislocation_response`` in 3D -- per Burgers vector ``B``, a screw dislocation line along ``B`` (its primitive
  part), a dipole of lines in a periodic box, ``length`` cells along the line (4: k = 0 and π on the mesh, where a
  helical pair crosses): modes on each line, or none.
* ``disclination_charge`` -- per (core, Frank angle) the record lists, a disclination flake with the same ions
  (the record's own background when none is given); the charge in discs about the core, converged in the
  radius, against the predicted value mod e.
* ``corner_charge`` -- one open flake of whole cells about each C_n centre the record values
  (``details["by_centre"]``): a triangle for C3, the Wigner–Seitz square or hexagon for C4 and C6. The charge of
  the sector of angle 2π/n about one corner (ions on its boundary rays counted ½, at the centre 1/n), at five
  Fermi levels in the middle half of the gap: defined only if they agree mod e.

A prediction and a measurement agree when the numbers of bound states match, or when the charges agree mod e
within ``tolerance`` and the charge is converged in the disc radius to ``tolerance``. A charge that is not
converged is "undetermined", never "agrees"; a disagreement is reported as "NO" and listed in
:attr:`Report.disagreements`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from functools import partial
from typing import Any, Callable

import numpy as np

from .errors import CrystaltopError
from .progress import progress_bar

__all__ = ["verify_defects", "DEFAULT_SIZES"]

#: Linear sizes of the samples, in cells (override any with ``sizes={...}``).
DEFAULT_SIZES = {"dislocation": 20, "disclination": 16, "flake": 16, "line": 12, "line_length": 4}

#: The prediction records verify_defects knows how to measure.
PREDICTIONS = ("dislocation_response", "disclination_charge", "corner_charge")


@dataclass
class _Job:
    """One sample to build, and the comparisons to make on it."""

    prediction: str
    case: str
    build: Callable[[], Any]
    comparisons: list  # [(predicted text, measure(sample, cache) -> dict)]


def _mod1(x: float) -> float:
    """Distance of ``x`` from the nearest integer."""
    return abs((x + 0.5) % 1.0 - 0.5)


def _fraction_text(q: float, tol: float = 1e-6) -> str:
    """``q`` mod 1 as the nearest fraction with denominator 2, 3, 4, 6, 8 or 12 within ``tol``."""
    q = q % 1.0
    if min(q, 1.0 - q) <= tol:
        return "0"
    for n in (2, 3, 4, 6, 8, 12):
        if abs(q * n - round(q * n)) <= tol * n:
            return f"{round(q * n)}/{n}"
    return f"{q:.4g}"


def _charge_text(q: float, tol: float) -> str:
    near = _fraction_text(q, tol)
    return f"{q:+.4f} e ({'' if near == _fraction_text(q) else '≈ '}{near} mod e)"


def _describe(sample) -> str:
    """``"edge dislocation, 20 cells, 1560 states, periodic"``."""
    size = sample.spec.size
    size = "×".join(map(str, size)) if isinstance(size, tuple) else str(size)
    edge = "periodic" if all(sample.periodic) else ("open" if not any(sample.periodic) else "periodic along the line")
    return f"{sample.spec.kind.replace('_', ' ')}, size {size}, {sample.n_states} states, {edge}"


# ---------------------------------------------------------------------------------------------- measurements
#: largest sample (states) whose whole spectrum is formed once and shared by its states near the gap, every core's
#: charge and the charge map; above the solvers' own DENSE_LIMIT on purpose (one dense eigh of 4000 states takes a
#: few seconds, against one Chebyshev estimate per core); beyond it each measurement is left to the solvers' choice
SHARED_DENSITY_LIMIT = 4000


def _spectrum(sample, cache):
    """The sample's dense spectrum, formed once per sample and shared, or None for a sample too large for it."""
    from .defects import dense_spectrum
    from .defects.solvers import dense_wanted

    if "spectrum" not in cache:
        cache["spectrum"] = dense_spectrum(sample) if dense_wanted(sample, limit=SHARED_DENSITY_LIMIT) else None
    return cache["spectrum"]


def _states(sample, cache, count, share: bool = False):
    """The states near the gap centre; ``share``: the sample's charge is measured too, so both read one dense
    spectrum (:func:`_spectrum`) where the sample is small enough; otherwise one already formed is used."""
    from .defects import states_near

    if "states" not in cache:
        spectrum = _spectrum(sample, cache) if share else cache.get("spectrum")
        cache["states"] = states_near(sample, count=min(count, sample.n_states - 2), spectrum=spectrum)
    return cache["states"]


def _charge(sample, cache, core=0):
    from .defects import bound_charge, occupied_density

    key = ("charge", core)
    if key not in cache:
        spectrum = _spectrum(sample, cache)
        if "density" not in cache and spectrum is not None:
            cache["density"] = occupied_density(sample, method="exact", spectrum=spectrum)
        cache[key] = bound_charge(sample, core, density=cache.get("density"))
    return cache[key]


def _net_charge_per_ion(sample, density) -> tuple[np.ndarray, np.ndarray]:
    """(charge per ion = electrons counted with it minus its charge, mask of ions whose density is known)."""
    ok = sample.state_ion >= 0
    rho = np.nan_to_num(np.asarray(density.density, dtype=float))
    electrons = np.bincount(sample.state_ion[ok], weights=rho[ok], minlength=len(sample.ion_charges))
    known = np.bincount(sample.state_ion[ok], weights=np.asarray(density.computed, dtype=float)[ok],
                        minlength=len(sample.ion_charges)) > 0
    return electrons - sample.ion_charges, known


def _map(positions, values, mark, title, label):
    """A drawing function: ``values`` at ``positions`` on a diverging colour scale, cores marked (a partial of
    :func:`_draw_map`, so that a report holding it can be pickled)."""
    positions = np.asarray(positions, dtype=float)[:, :2]
    values = np.asarray(values, dtype=float)
    mark = np.asarray(mark, dtype=float).reshape(-1, 2)
    return partial(_draw_map, positions, values, mark, title, label)


def _draw_map(positions, values, mark, title, label, ax) -> None:
    lim = float(np.max(np.abs(values))) or 1.0
    art = ax.scatter(positions[:, 0], positions[:, 1], c=values, s=12, cmap="RdBu_r", vmin=-lim, vmax=lim)
    ax.scatter(mark[:, 0], mark[:, 1], marker="x", c="k", s=40)
    ax.set_aspect("equal")
    ax.set_title(title, fontsize=9)
    ax.figure.colorbar(art, ax=ax, label=label)


def _charge_figure(sample, cache, title):
    density = cache.get("density")
    if density is None:
        return {}
    net, known = _net_charge_per_ion(sample, density)
    return {"charge-map": _map(sample.ion_positions[known], net[known], [c.position[:2] for c in sample.cores],
                               title, "electrons − ions per ion")}


def _compare_charge(predicted: float, tolerance: float, core: int = 0):
    def measure(sample, cache):
        q = _charge(sample, cache, core)
        off = _mod1(q.value - predicted)
        converged = q.spread <= tolerance
        agree = (off <= tolerance) if converged else None
        text = _charge_text(q.value, tolerance)
        if not converged:
            text += f", not converged in the radius (spread {q.spread:.2g} e)"
        if q.near_fermi:
            text += (f"; {q.near_fermi} states at the Fermi level {'filled' if q.filled_near_fermi else 'left empty'} "
                     "(their charge is an integer)")
        return {"measured": text, "agree": agree,
                "method": f"{q.method}; discs r = {q.radii[0]:g}–{q.radii[-1]:g}, spread {q.spread:.1e} e",
                "details": {"charge": q.value, "spread": q.spread, "radii": q.radii, "charge_vs_radius": q.charge,
                            "error_bound": q.error, "predicted_mod_1": predicted % 1.0, "off_mod_1": off},
                "figures": _charge_figure(sample, cache, f"{sample.cores[core].label}: Q = {q.value:+.3f}")}
    return measure


def _compare_bound_states(expected_per_core: int | None, wants: bool, count: int, what="states", share=False):
    """In-gap states bound to the cores of a sample whose cores all carry the same prediction.

    ``expected_per_core``: the exact number per core; or None with ``wants`` (True: at least two per core, i.e.
    a Kramers pair of modes; False: none). States are counted over all cores together: the partners at the two
    cores of a dipole hybridise (bonding and antibonding combinations) and need not sit at one core each.
    """
    def measure(sample, cache):
        from .defects import local_density

        near = _states(sample, cache, count, share)
        bound = near.bound(window=0.5)
        cores = len(sample.cores)
        found = int(bound.sum())
        if expected_per_core is not None:
            agree = found == expected_per_core * cores
        else:
            agree = found >= 2 * cores if wants else found == 0
        if found == len(near.energies) and agree is False:
            agree = None  # all the states searched are bound: there may be more
        energies = near.energies[bound]
        text = f"{found} {what} bound at the {cores} core{'s' if cores > 1 else ''}"
        if len(energies):
            text += f" (|E − E_mid| ≤ {np.max(np.abs(energies - near.gap.centre)):.2g}, gap {near.gap.width:.3g})"
        figures = {}
        if bound.any():
            dens = local_density(sample, near.vectors[:, bound]).sum(axis=1)
            figures["bound-state-density"] = _map(sample.positions, dens, [c.position[:2] for c in sample.cores],
                                                  f"{found} bound states", "density")
        return {"measured": text, "agree": agree,
                "method": f"{near.method}; {len(near.energies)} states nearest the gap centre, bound = middle half "
                          f"of the gap and > 1/2 of the weight within {near.core_radius:g} of the cores",
                "details": {"bound": found, "cores": cores, "energies": energies, "gap": near.gap.width},
                "figures": figures}
    return measure


# ---------------------------------------------------------------------------------------------- jobs
def _dislocation_jobs(model, record, dim, filling, ions, sizes, tolerance, count):
    from .defects import dislocation_line, edge_dislocation

    jobs = []
    for rec in record.details.get("per_burgers_vector", ()):
        b = tuple(int(x) for x in rec["burgers"])
        label = "b=(" + ", ".join(map(str, b)) + ")"
        comps = []
        if dim == 2:
            size = int(sizes["dislocation"])
            if rec.get("kramers_pair") is not None:
                pair = bool(rec["kramers_pair"])
                comps.append(("Kramers pair bound" if pair else "no bound states",
                              _compare_bound_states(2 if pair else 0, pair, count, share=rec.get("charge") is not None)))
            if rec.get("charge") is not None:
                q = float(rec["charge"])
                comps.append((_charge_text(q, 1e-6), _compare_charge(q, tolerance)))
            build = (lambda b=b, size=size: edge_dislocation(model, b, size, separation=size // 2, filling=filling,
                                                             ions=ions))
        else:
            size, length = int(sizes["line"]), int(sizes["line_length"])
            line = np.asarray(b) // math.gcd(*b)
            if "binds" in rec:
                binds = bool(rec["binds"])
                comps.append(("helical Kramers pair along the line" if binds else "nothing protected",
                              _compare_bound_states(None, binds, count, what="modes")))
            elif rec.get("chiral_modes") is not None:
                modes = int(rec["chiral_modes"])
                comps.append((f"{abs(modes)} chiral mode(s)" if modes else "nothing protected",
                              _compare_bound_states(None, bool(modes), count, what="modes")))
            build = (lambda b=b, line=tuple(line), size=size, length=length: dislocation_line(
                model, b, line, size, "screw", length=length, separation=size // 2, filling=filling, ions=ions))
        if comps:
            jobs.append(_Job("dislocation_response", label, build, comps))
    return jobs


def _disclination_jobs(model, record, filling, ions, sizes, tolerance):
    from .defects import disclination
    from .defects.builders import frank_angle_label

    jobs = []
    size = int(sizes["disclination"])
    if ions is None:  # the background the prediction assumed (its default is at 1a, the builders' on the sites)
        ions = record.details.get("ion_background")
    for rec in record.details.get("per_case", ()):
        core, omega, q = rec["core"], float(rec["frank_angle"]), float(rec["charge"])
        where = ", ".join(f"{float(x):g}" for x in np.atleast_1d(core))
        label = f"Ω={frank_angle_label(omega)} at {rec.get('core_name', '')} ({where})".replace(" at  (", " at (")
        build = (lambda core=core, omega=omega: disclination(model, omega, size, core=core, filling=filling,
                                                             ions=ions))
        jobs.append(_Job("disclination_charge", label, build,
                         [(_charge_text(q, 1e-6), _compare_charge(q, tolerance))]))
    return jobs


def _corner_jobs(model, record, filling, ions, sizes, tolerance):
    """One flake of whole cells about each C_n centre the record gives a value for (``details["by_centre"]``):
    a triangle for C3, the Wigner–Seitz square or hexagon for C4 and C6 (each symmetric about its centre)."""
    from fractions import Fraction

    from .defects import flake

    n = int(record.details.get("n", 0))
    shape = {3: "triangle", 4: "polygon", 6: "polygon"}.get(n)
    values = record.details.get("by_centre") or {str(record.details.get("centre", "(0, 0)")): str(record.value)}
    jobs = []
    size = int(sizes["flake"])
    for where, value in values.items():
        centre = tuple(float(Fraction(x.strip())) for x in where.strip("()").split(","))
        q = float(Fraction(value)) if isinstance(value, str) else float(value)
        if shape is None:
            def build(n=n):
                raise CrystaltopError(f"a C{n} corner is not measured")
        else:
            build = (lambda centre=centre: flake(model, shape, size, filling=filling, ions=ions, centre=centre))
        jobs.append(_Job("corner_charge", f"corner, flake about {where}", build,
                         [(_charge_text(q, 1e-6), _compare_corner(q, n, tolerance))]))
    return jobs


def _symmetric_about(sample, centre, n: int, tol: float = 1e-6) -> bool:
    """Whether the sample's states and ions map onto themselves under the rotation by 2π/n about ``centre``."""
    turn = 2.0 * np.pi / n
    rot = np.array([[np.cos(turn), -np.sin(turn)], [np.sin(turn), np.cos(turn)]])

    def same(points):
        rel = np.asarray(points, dtype=float)[:, :2] - centre[:2]
        key = lambda a: a[np.lexsort(np.round(a / tol).T[::-1])]  # noqa: E731
        return np.allclose(key(rel @ rot.T), key(rel), atol=10 * tol)

    return same(sample.ion_positions) and same(sample.positions)


#: Fermi levels tried for a corner charge, as fractions of the bulk gap about its centre (the middle half).
CORNER_LEVELS = (-0.25, -0.125, 0.0, 0.125, 0.25)


def _compare_corner(predicted: float, n: int, tolerance: float):
    """The corner charge at several Fermi levels in the middle half of the gap: the value is defined only if it is
    the same mod e at all of them. (A flake whose edge has in-gap states that are not spread evenly over the n
    sectors, such as the one-dimensional C_n irreps of an ungapped edge, changes a sector's charge by a fraction
    whenever E_F crosses one of them.)"""
    def measure(sample, cache):
        from .defects.solvers import occupied_densities_at, region_charge

        if sample.n_states > 6000:
            raise CrystaltopError(f"the flake has {sample.n_states} states, too many for the dense check of the "
                                  "corner charge at several Fermi levels (at most 6000): give a smaller sizes['flake']")
        centre = sample.ion_positions.mean(axis=0)
        if not _symmetric_about(sample, centre, n):
            raise CrystaltopError(f"the flake of whole cells is not C{n}-symmetric about its centre (the cells are "
                                  "chosen by the mean position of their orbitals, which this model's cell does not "
                                  "hold fixed), so its corner sectors are not equivalent")
        rel = sample.ion_positions - centre
        corner = int(np.argmax(np.linalg.norm(rel, axis=1)))
        angle = np.angle(rel[:, 0] + 1j * rel[:, 1])
        turn = np.abs(np.angle(np.exp(1j * (angle - angle[corner]))))
        at_centre = np.linalg.norm(rel, axis=1) < 1e-9
        # an ion on a boundary ray is shared by two sectors and one at the centre by all n, so the n sectors tile
        # the flake (triangles and hexagons of whole cells have ions on their mirror lines)
        inside = (turn < np.pi / n - 1e-9) & ~at_centre
        shared = [(inside, 1.0), ((np.abs(turn - np.pi / n) <= 1e-9) & ~at_centre, 0.5), (at_centre, 1.0 / n)]
        levels = sample.gap.centre + sample.gap.width * np.asarray(CORNER_LEVELS)
        densities = occupied_densities_at(sample, levels, spectrum=_spectrum(sample, cache))  # one diagonalisation
        charges = [sum(w * region_charge(sample, mask, dens)[0] for mask, w in shared if mask.any())
                   for dens in densities]
        charges = np.array(charges)
        mid = len(levels) // 2
        q = float(charges[mid])
        spread = float(max(_mod1(c - q) for c in charges))
        off = _mod1(q - predicted)
        robust = spread <= tolerance
        agree = off <= tolerance if robust else None
        text = _charge_text(q, tolerance)
        if not robust:
            shown = ", ".join(_fraction_text(c, tolerance) for c in charges)
            text += (f"; depends on the Fermi level within the gap ({shown} mod e at E_F = centre "
                     f"{'/'.join(f'{x:+g}' for x in CORNER_LEVELS)} × gap): in-gap edge states, so this flake "
                     "defines no corner charge")
        net, known = _net_charge_per_ion(sample, densities[mid])
        return {"measured": text, "agree": agree,
                "method": (f"exact diagonalisation (numpy.linalg.eigh); sector of angle 2π/{n} about a corner, whole "
                           f"ions; E_F at {len(levels)} levels in the middle half of the gap"),
                "details": {"charge": q, "charge_at_levels": charges, "levels": levels, "spread_mod_1": spread,
                            "predicted_mod_1": predicted % 1.0, "off_mod_1": off},
                "figures": {"charge-map": _map(sample.ion_positions[known], net[known], [sample.ion_positions[corner]],
                                               f"corner sector: Q = {q:+.3f}", "electrons − ions per ion")}}
    return measure


# ---------------------------------------------------------------------------------------------- the entry point
def verify_defects(model, group=None, filling=None, *, report=None, ions=None, burgers=(), sizes=None,
                   tolerance: float = 0.02, count: int = 12, progress: bool | None = None, **classify_options):
    """Check a report's defect predictions on finite samples that contain the defects.

    Parameters
    ----------
    model : LatticeModel (or any model with a real-space form)
    group, filling
        As for :func:`crystaltop.classify` (ignored when ``report`` is given).
    report : Report, optional
        The classification to verify. Default: ``classify(model, group, filling, ...)`` with the options below.
    ions : sequence of (reduced position, charge), optional
        Ionic background per cell, the same for the predictions (given to ``disclination_charge`` as its
        ``ions`` option) and for every sample. Default: each plugin's and builder's own default.
    burgers : sequence of integer vectors
        Burgers vectors besides the primitive ones (given to ``dislocation_response``).
    sizes : dict, optional
        Sample sizes in cells, overriding :data:`DEFAULT_SIZES` (``"dislocation"``, ``"disclination"``,
        ``"flake"``, ``"line"``, ``"line_length"``).
    tolerance : float
        Largest difference mod e between a predicted and a measured charge, and largest spread of the charge over
        the disc radii, in units of e.
    count : int
        States searched near the gap centre per sample.
    progress : bool, optional
        Progress bar over the samples (default: only on a terminal).
    **classify_options
        Passed to :func:`crystaltop.classify` (``options``, ``time_reversal``, ``invariants``, ...).

    Returns
    -------
    Report
        ``report`` with its ``verification`` table filled: one :class:`~crystaltop.report.DefectCheck` per
        prediction and case. A sample that cannot be built (no real-space form, too small, metallic) gives a
        check with ``agree=None`` and the reason; a disagreement is ``agree=False``, never dropped.

    Examples
    --------
    >>> import crystaltop as ct
    >>> from crystaltop.examples import c4_breathing_square
    >>> rep = ct.verify_defects(c4_breathing_square(gamma=0.3), "4", 1, ions=[((0.0, 0.0), 1.0)],
    ...                         invariants=["dislocation_response"])
    >>> [(c.case, c.agree) for c in rep.verification]
    [('b=(1, 0)', True), ('b=(0, 1)', True)]
    """
    from .classification import classify

    sizes = {**DEFAULT_SIZES, **(sizes or {})}
    if report is None:
        options = {k: dict(v) if isinstance(v, dict) else v for k, v in (classify_options.pop("options", None) or {}).items()}
        if burgers:
            options.setdefault("dislocation_response", {})["burgers"] = [tuple(b) for b in burgers]
        if ions is not None:
            options.setdefault("disclination_charge", {})["ions"] = [(tuple(p), float(q)) for p, q in ions]
        report = classify(model, group, filling, options=options, **classify_options)
    filling = int(report.model["filling"])
    dim = int(report.model["dim"])
    jobs: list[_Job] = []
    for name in PREDICTIONS:
        if name not in report or not report[name].ok:
            continue
        record = report[name]
        if name == "dislocation_response":
            jobs += _dislocation_jobs(model, record, dim, filling, ions, sizes, tolerance, count)
        elif name == "disclination_charge":
            jobs += _disclination_jobs(model, record, filling, ions, sizes, tolerance)
        elif name == "corner_charge":
            jobs += _corner_jobs(model, record, filling, ions, sizes, tolerance)
    from .report import DefectCheck

    checks = []
    bar = progress_bar(len(jobs), "defect samples", "sample", progress)
    for job in jobs:
        try:
            sample = job.build()
        except CrystaltopError as exc:
            checks += [DefectCheck(job.prediction, job.case, "", predicted, f"not measured: {exc}", None)
                       for predicted, _ in job.comparisons]
            bar.update(1)
            continue
        described = _describe(sample)
        cache: dict = {}
        for predicted, measure in job.comparisons:
            try:
                got = measure(sample, cache)
            except CrystaltopError as exc:
                checks.append(DefectCheck(job.prediction, job.case, described, predicted, f"not measured: {exc}",
                                          None))
                continue
            checks.append(DefectCheck(job.prediction, job.case, described, predicted, got["measured"], got["agree"],
                                      got["method"], got["details"], got["figures"]))
        bar.update(1)
    bar.close()
    return replace(report, verification=report.verification + tuple(checks))
