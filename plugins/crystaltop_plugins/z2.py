"""Z2 index of a time-reversal-symmetric insulator (T² = −1) from the flow of hybrid Wannier charge centres.

A. A. Soluyanov, D. Vanderbilt, Phys. Rev. B 83, 235401 (2011); R. Yu, X.-L. Qi, A. Bernevig, Z. Fang, X. Dai,
Phys. Rev. B 84, 075119 (2011). On a time-reversal-invariant plane, the centres x_n(k_p) (eigenphases of the
Wilson loops along one axis, x = −arg λ / 2π) are Kramers-degenerate at k_p = 0 and 1/2. Z2 is the parity of the
number of times the centres cross a line that runs through the largest gap between them as k_p goes from 0 to 1/2
(the pumping direction). Between two pumping steps k_j and k_{j+1} the midpoint z of the largest gap moves from z_j
to z_{j+1}; the centres x_n(k_{j+1}) lying on the arc from z_j to z_{j+1} are the crossings of that step (Soluyanov
& Vanderbilt, §IV; the parity does not depend on the arc's orientation because the number of centres is even, and
the shorter arc is taken so that the count itself does not depend on rounding).

The count is exact when no centre comes close to z_j within the step. Robustness is by refinement: a step is
halved wherever a centre at k_{j+1} lies closer to z_j than ``GAP_CHECK`` times the half-gap at k_j, or the set of
centres moves by more than ``MOVE_CHECK`` times that half-gap (fast flow, a jumping largest gap); the loop mesh is
doubled when the Wilson loops lose norm (eigenvalue moduli below ``NORM_CHECK``: neighbouring occupied subspaces
too far apart). All Wilson loops of one plane and one refinement level are computed in one batch.

In 3D: ν₀ = Z2(k_i = 0) + Z2(k_i = 1/2) mod 2 for each i (checked to agree for i = 1, 2, 3), and the Z2 of the
planes k_i = 1/2 are the weak indices ν_i (Fu, Kane, Mele, Phys. Rev. Lett. 98, 106803 (2007); PHYSICS.md §4),
read by the ``weak_indices`` plugin from ``details["planes"]``.

Meshes: the planes k_i = 0 are taken as the half (0 <= k_p <= 1/2) of the n x n planes that ``chern`` uses
(n = 24 in 3D; the 48 x 48 mesh in 2D), so that they are sliced from its cache; the planes k_i = 1/2 use the same
half mesh. Every TRIM is a point of these half planes, so the parity plugins find their states in the cache.
"""

from __future__ import annotations

from functools import partial

import numpy as np

from crystaltop.errors import CrystaltopError, GapClosedError, MeshTooCoarseError
from crystaltop.plugin import DeferredMapping, Grid, Invariant, Outcome, Requirements, hookimpl

#: a centre at k_{j+1} must stay farther than this fraction of the half-gap at k_j from the tracked midpoint z_j
GAP_CHECK = 0.3
#: the centres may move by at most this fraction of the half-gap at k_j between two pumping steps
MOVE_CHECK = 0.5
#: smallest Wilson-loop eigenvalue modulus accepted before the loop mesh is doubled
NORM_CHECK = 0.5
#: largest number of step halvings in the pumping direction
MAX_REFINE = 10

METHOD = ("flow of hybrid Wannier charge centres over half the zone (Soluyanov & Vanderbilt, PRB 83, 235401 "
          "(2011); Yu, Qi, Bernevig, Fang, Dai, PRB 84, 075119 (2011))")


# ---------------------------------------------------------------------------------------------- the planes
def invariant_planes(dim: int) -> list[dict]:
    """The time-reversal-invariant planes: label, fixed axis and value, pumping axis, loop axis.

    2D: the whole zone, pumped along k1, Wilson loops along k2. 3D: k_i = 0 and k_i = 1/2 for i = 1, 2, 3,
    pumped along k_{i+1}, loops along k_{i+2}.
    """
    if dim == 2:
        return [{"label": "zone", "where": "the zone", "key": "zone", "fixed": None, "value": None, "pump": 0,
                 "loop": 1}]
    out = []
    for f in range(3):
        for v in (0.0, 0.5):
            out.append({"label": f"k{f + 1}={v:g}", "where": f"the time-reversal-invariant plane k{f + 1}={v:g}",
                        "key": f"k{f + 1}={v:g}", "fixed": f, "value": v, "pump": (f + 1) % 3, "loop": (f + 2) % 3})
    return out


def plane_grid(dim: int, spec: dict, pump_values, n_loop: int) -> Grid:
    """The product grid: the given pumping values, the full loop mesh j/n_loop, the fixed coordinate."""
    axes, periodic = [None] * dim, [False] * dim
    axes[spec["pump"]] = tuple(float(v) % 1.0 for v in pump_values)
    axes[spec["loop"]] = tuple(float(j) / n_loop for j in range(n_loop))
    periodic[spec["loop"]] = True
    if spec["fixed"] is not None:
        axes[spec["fixed"]] = (float(spec["value"]),)
    return Grid(tuple(axes), tuple(periodic))


def small_eigvals(w: np.ndarray) -> np.ndarray:
    """Eigenvalues of a stack of square matrices; closed form for 2 x 2 (one Kramers pair, the common case)."""
    if w.shape[-1] != 2:
        return np.linalg.eigvals(w)
    half_trace = 0.5 * (w[:, 0, 0] + w[:, 1, 1])
    root = np.sqrt((0.5 * (w[:, 0, 0] - w[:, 1, 1])) ** 2 + w[:, 0, 1] * w[:, 1, 0])
    return np.stack([half_trace + root, half_trace - root], axis=-1)


def centres_on(bands, dim: int, spec: dict, pump_values, n_loop: int) -> tuple[np.ndarray, float, tuple]:
    """Sorted Wannier centres along the loop axis at each pumping value ``(K, m)``, the smallest |λ|, and the
    smallest direct gap on these k-points with where it is."""
    return centres_on_planes(bands, dim, [spec], [pump_values], n_loop)[0]


def centres_on_planes(bands, dim: int, specs, pumps, n_loop: int) -> list[tuple[np.ndarray, float, tuple]]:
    """:func:`centres_on` for several planes at once: their new k-points diagonalised in one batch, their Wilson
    loops formed in one stacked product and their eigenvalues in one call (the gap checked plane by plane)."""
    grids = [plane_grid(dim, spec, pump, n_loop) for spec, pump in zip(specs, pumps)]
    loops = bands.wilson_loops_on(grids, [spec["loop"] for spec in specs])  # checks the gap on each grid first
    m = loops[0].shape[-1]
    counts = [w.size // (m * m) for w in loops]
    lam = small_eigvals(np.concatenate([w.reshape(-1, m, m) for w in loops]))
    x = np.sort(np.mod(-np.angle(lam) / (2 * np.pi), 1.0), axis=-1)
    size = np.abs(lam).min(axis=-1)
    out, start = [], 0
    for grid, count in zip(grids, counts):
        out.append((x[start:start + count], float(size[start:start + count].min()), bands.gap(grid)))
        start += count
    return out


def _k_text(k) -> str:
    return "(" + ", ".join(f"{float(v):.3f}" for v in np.atleast_1d(k)) + ")"


# ---------------------------------------------------------------------------------------------- flow analysis
def torus_distance(a, b) -> np.ndarray:
    """Distance on the circle of circumference 1."""
    return np.abs(np.mod(np.asarray(a) - np.asarray(b) + 0.5, 1.0) - 0.5)


def largest_gap(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Midpoint and size of the largest gap between sorted centres ``x`` (..., K, m) on the circle."""
    gaps = np.diff(np.concatenate([x, x[..., :1] + 1.0], axis=-1), axis=-1)
    j = np.argmax(gaps, axis=-1)[..., None]
    size = np.take_along_axis(gaps, j, axis=-1)[..., 0]
    return np.mod(np.take_along_axis(x, j, axis=-1)[..., 0] + size / 2.0, 1.0), size


def step_crossings(z: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Per step j: number of centres x(k_{j+1}) on the shorter arc between z_j and z_{j+1}.

    Either arc gives the same parity (the number of centres is even), so Z2 does not depend on the choice; the
    shorter one makes the count itself stable: a midpoint that stays put up to rounding (the arc 1e-16 one way or
    1 − 1e-16 the other) is crossed 0 times, not by every centre.
    """
    arc = np.mod(z[..., 1:] - z[..., :-1], 1.0)
    ahead = np.sum(np.mod(x[..., 1:, :] - z[..., :-1, None], 1.0) < arc[..., None], axis=-1)
    behind = np.sum(np.mod(z[..., :-1, None] - x[..., 1:, :], 1.0) < (1.0 - arc)[..., None], axis=-1)
    return np.where(arc <= 0.5, ahead, behind)


def step_checks(z: np.ndarray, size: np.ndarray, x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per step j: closest approach of a centre at k_{j+1} to z_j, and how far the set of centres moved
    (Hausdorff distance on the circle), both relative to the half-gap at k_j. Leading axes (planes) broadcast."""
    half = size[..., :-1] / 2.0
    approach = torus_distance(x[..., 1:, :], z[..., :-1, None]).min(axis=-1) / half
    d = torus_distance(x[..., 1:, :, None], x[..., :-1, None, :])
    move = np.maximum(d.min(axis=-2).max(axis=-1), d.min(axis=-1).max(axis=-1)) / half
    return approach, move


def _flow(z, size, x, pump, approach, move, added: int, norm: float, gap) -> dict:
    """The record of a resolved flow: the plane's Z2 and its figures of merit."""
    crossings = step_crossings(z, x)
    return {"z2": int(crossings.sum() % 2), "crossings": int(crossings.sum()), "pump": pump, "centres": x,
            "midpoints": z, "gaps": size, "added": added, "norm": norm, "gap": gap,
            "closest": float(torus_distance(x[1:], z[:-1, None]).min()),
            "approach": float(max(0.0, 1.0 - approach.min())), "move": float(move.max())}


def first_pass(bands, dim: int, planes: list, n: int) -> tuple[list, list]:
    """The flow of every plane from one batch on the n-point loops and n/2 + 1 pumping values: the record of
    each plane whose flow needs no refinement and no finer loops (None for the others), and per plane its centres,
    smallest loop norm and gap on those values (the start of :func:`track_plane` for a plane left to it)."""
    pump = np.arange(n // 2 + 1) / n
    found = centres_on_planes(bands, dim, planes, [pump] * len(planes), n)
    x = np.stack([c[0] for c in found])
    z, size = largest_gap(x)
    approach, move = step_checks(z, size, x)
    bad = ((approach < GAP_CHECK) | (move > MOVE_CHECK)).any(axis=-1)
    records = [None if norm < NORM_CHECK or bad[i] else
               _flow(z[i], size[i], x[i], pump, approach[i], move[i], 0, norm, gap)
               for i, (_, norm, gap) in enumerate(found)]
    return records, found


def track_plane(bands, dim: int, spec: dict, n: int, max_refine: int, start=None) -> dict:
    """Wannier-centre flow of one plane with adaptive pumping steps; the plane's Z2 and its figures of merit.
    ``start``: the plane's centres, loop norm and gap on the first n/2 + 1 pumping values, when known already."""
    pump = np.arange(n // 2 + 1) / n
    x, norm, gap = centres_on(bands, dim, spec, pump, n) if start is None else start
    added = 0
    for level in range(max_refine + 1):
        if norm < NORM_CHECK:  # loops too coarse to trust the centres: the caller doubles the loop mesh first
            return {"norm": norm, "gap": gap}
        z, size = largest_gap(x)
        approach, move = step_checks(z, size, x)
        bad = (approach < GAP_CHECK) | (move > MOVE_CHECK)
        if not bad.any():
            break
        if level == max_refine:
            j = int(np.argmax(bad))
            raise MeshTooCoarseError(
                f"Wannier-centre flow on {spec['where']} not resolved after {max_refine} halvings of the "
                f"pumping step near k{spec['pump'] + 1}={pump[j]:.4f} (a centre comes within {approach[j]:.2f} of "
                f"the half-gap of the tracked midpoint, or the centres move by {move[j]:.2f} of it): the gap is "
                f"probably tiny (smallest direct gap on the plane {gap[0]:.1e} at k={_k_text(gap[1])}); "
                "raise 'refine' or the mesh")
        new = 0.5 * (pump[:-1][bad] + pump[1:][bad])
        xn, nn, gn = centres_on(bands, dim, spec, new, n)
        norm, gap = min(norm, nn), min(gap, gn, key=lambda g: g[0])
        added += new.size
        pump = np.concatenate([pump, new])
        order = np.argsort(pump, kind="stable")
        pump, x = pump[order], np.concatenate([x, xn])[order]
    return _flow(z, size, x, pump, approach, move, added, norm, gap)


def flow_text(spec: dict, flow: dict) -> str:
    """Plain-text summary of one plane's flow (for readers without matplotlib)."""
    p = spec["pump"] + 1
    pump, x = flow["pump"], flow["centres"]
    marks = [0.0, 0.125, 0.25, 0.375, 0.5]
    rows = []
    for v in marks:
        j = int(np.argmin(np.abs(pump - v)))
        rows.append(f"k{p}={pump[j]:.3f}: " + " ".join(f"{c:.3f}" for c in x[j]))
    return (f"{spec['label']}: k{p} from 0 to 1/2 at {pump.size} values ({flow['added']} added by refinement), "
            f"centres along a{spec['loop'] + 1}; the largest-gap midpoint is crossed {flow['crossings']} time(s) "
            f"-> Z2 = {flow['z2']}; closest approach {flow['closest']:.3f}. Centres " + "; ".join(rows))


def flow_figure(spec: dict, flow: dict):
    """A function drawing the flow of one plane on a matplotlib Axes (a partial of :func:`draw_flow`, so that a
    report holding it can be pickled)."""
    return partial(draw_flow, flow["pump"].copy(), flow["centres"].copy(), flow["midpoints"].copy(),
                   spec["pump"] + 1, spec["loop"] + 1, spec["label"], flow["z2"])


def draw_flow(pump, x, z, p, loop, label, z2, ax) -> None:
    """The Wannier-centre flow of one plane (centres, and the largest-gap midpoint) on ``ax``."""
    ax.plot(np.repeat(pump, x.shape[1]), x.ravel(), ".", ms=3, color="tab:blue", label="Wannier centres")
    ax.plot(pump, z, "x", ms=3, color="tab:red", label="largest-gap midpoint")
    ax.set_xlim(0.0, 0.5)
    ax.set_ylim(0.0, 1.0)
    ax.set_xlabel(f"k{p} (reduced)")
    ax.set_ylabel(f"centre along a{loop} (reduced)")
    ax.set_title(f"{label}: Z2 = {z2}")
    ax.legend(loc="upper right", fontsize="x-small")


# ---------------------------------------------------------------------------------------------- the plugin
class Z2Index(Invariant):
    name = "z2"
    title = "Z2 index (time reversal, T² = −1)"
    requires = Requirements(dims={2, 3}, time_reversal=True, spinful=True)

    @staticmethod
    def _mesh(context) -> int:
        """Points per axis of the first pass (the plan uses the same); even: the TRIMs k_p = 1/2 and the half-zone
        endpoints lie on the mesh."""
        n = int(context.option("mesh", 48 if context.dim == 2 else 24))
        return n + n % 2

    def planned_grids(self, context):
        n = self._mesh(context)
        pump = np.arange(n // 2 + 1) / n
        return [plane_grid(context.dim, spec, pump, n) for spec in invariant_planes(context.dim)]

    def compute(self, context):
        dim, bands = context.dim, context.bands
        n = self._mesh(context)
        largest = int(context.option("max_mesh", 4 * n))
        max_refine = int(context.option("refine", MAX_REFINE))
        planes, flows, meshes = invariant_planes(dim), {}, {}
        try:  # every plane in one batch; a plane that needs refinement or finer loops is tracked on its own below
            done, starts = first_pass(bands, dim, planes, n)
        except GapClosedError:  # found again, with the plane named, plane by plane below
            done, starts = [None] * len(planes), [None] * len(planes)
        for spec, flow, start in zip(planes, done, starts):
            if flow is not None:
                flows[spec["key"]], meshes[spec["key"]] = flow, n
                continue
            m = n
            while True:
                try:  # the first pass's centres start the tracking on its mesh
                    flow = track_plane(bands, dim, spec, m, max_refine, start=start if m == n else None)
                except GapClosedError as exc:
                    raise GapClosedError(f"on {spec['where']}: {exc}") from None
                if flow["norm"] >= NORM_CHECK:
                    break
                if 2 * m > largest:
                    raise MeshTooCoarseError(
                        f"Wilson loops on {spec['where']} not converged: an eigenvalue modulus "
                        f"{flow['norm']:.2f} < {NORM_CHECK} on a {m}-point loop (the gap is probably tiny: smallest "
                        f"direct gap on the plane {flow['gap'][0]:.1e} at k={_k_text(flow['gap'][1])}); "
                        f"raise max_mesh above {largest}")
                m *= 2
            flows[spec["key"]], meshes[spec["key"]] = flow, m
        values = {key: f["z2"] for key, f in flows.items()}
        by_key = {spec["key"]: spec for spec in planes}
        if dim == 2:
            value = values["zone"]
        else:
            strong = [(values[f"k{i}=0"] + values[f"k{i}=0.5"]) % 2 for i in (1, 2, 3)]
            if len(set(strong)) != 1:
                raise CrystaltopError(
                    "the strong index differs between the three families of planes "
                    f"(Z2(k_i=0) + Z2(k_i=1/2) = {strong} for i = 1, 2, 3; plane values {values}): "
                    "the flow is not resolved or the model is not gapped between the planes")
            value = strong[0]
        approach = max(f["approach"] for f in flows.values())
        sizes = sorted(set(meshes.values()))
        pump_axis = "k1" if dim == 2 else "k_{i+1}"
        mesh = (f"{'/'.join(map(str, sizes))}-point loops x {pump_axis} in [0, 1/2] "
                f"({sum(f['pump'].size for f in flows.values())} pumping steps in all)")
        details = {
            "planes": values,
            "crossings": {key: f["crossings"] for key, f in flows.items()},
            "smallest_midpoint_distance": min(f["closest"] for f in flows.values()),
            "largest_centre_move": max(f["move"] for f in flows.values()),
            "smallest_wilson_eigenvalue_modulus": min(f["norm"] for f in flows.values()),
            "refined_steps": {key: f["added"] for key, f in flows.items()},
            "loop_mesh": meshes,
            # text and centre lists are read only when a report is rendered or exported: made then
            "flow": DeferredMapping([s["key"] for s in planes], lambda key: flow_text(by_key[key], flows[key])),
            "centres": DeferredMapping(flows, lambda key: {"pump": np.round(flows[key]["pump"], 6).tolist(),
                                                           "centres": np.round(flows[key]["centres"], 5).tolist()}),
        }
        notes = []
        if dim == 3:
            details["weak_from_planes"] = tuple(values[f"k{i}=0.5"] for i in (1, 2, 3))
            notes.append("ν₀ = Z2(k_i=0) + Z2(k_i=1/2) mod 2, the same for i = 1, 2, 3; "
                         "Z2 of each plane in details['planes']")
        notes.append("centres along the loop axis; the pumping direction runs over half the zone, 0 to 1/2")
        figures = {("flow" if dim == 2 else "flow-" + spec["key"].replace("=0.5", "-half").replace("=0", "-0")):
                   flow_figure(spec, flows[spec["key"]]) for spec in planes}
        return Outcome(value=value, method=METHOD, mesh=mesh, convergence=approach,
                       convergence_label="closest approach of a centre to the tracked midpoint (1 − distance/half-gap)",
                       details=details, notes=tuple(notes), figures=figures)


@hookimpl
def crystaltop_invariants():
    return [Z2Index()]
