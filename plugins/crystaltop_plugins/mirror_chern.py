"""Mirror Chern numbers: the Chern numbers of the two mirror sectors of the occupied states on a mirror-invariant plane.

J. C. Y. Teo, L. Fu, C. L. Kane, Phys. Rev. B 78, 045426 (2008): on a plane of the zone that a mirror M maps onto
itself, M commutes with H(k) and splits the occupied states into its two eigenvalue sectors (±i with spin ½, where
M² = −1; ±1 spinless). With C₊, C₋ their Chern numbers, C_M = (C₊ − C₋)/2 (with time reversal C₋ = −C₊, so
C_M = C₊). PHYSICS.md §7.

Planes (crystaltop.plugin.mirror_planes): in 2D the whole zone, for the mirror whose normal is z; in 3D the plane
normal to the mirror through Γ ("0") and the zone-boundary plane ("π") where it is a different plane.

Sign convention (stated because published signs depend on it): C₊ belongs to the eigenvalue +i (spin ½) or +1
(spinless) of the mirror's matrix D_M of docs/conventions.md — a mirror is inversion times the two-fold rotation about
its normal n̂, with spin image exp(−iπ n̂·σ/2) = −i n̂·σ, so for spin along n̂ the spin-up states have eigenvalue −i
times their orbital parity; each plane is oriented by n̂ = the mirror's canonical axis (``op.axis``), so every
Chern number refers to the orientation +n̂ (the Berry convention of docs/conventions.md).

Gauge safety: at every k of the plane the mirror is diagonalised on the occupied subspace, S = V† D_M V (batched);
S/λ₀, λ₀ the mirror eigenvalue (1 or i), is Hermitian with eigenvalues ±1, and its eigenvectors give an orthonormal
basis of each sector whatever the gauge of V; the Fukui–Hatsugai–Suzuki method (J. Phys. Soc. Jpn. 74, 1674 (2005))
then uses only determinants of sector overlaps.
"""

from __future__ import annotations

import numpy as np

from crystaltop.errors import CrystaltopError, MeshTooCoarseError, NotApplicable, SymmetryBreakingError
from crystaltop.plugin import (CrossCheck, Invariant, Outcome, Requirements, hermitian_eigh, hookimpl,
                               link_determinants, link_minors, mirror_planes, plane, uniform_mesh)

#: largest plaquette phase accepted, in units of π (as for the Chern number)
CONVERGED = 0.35
TEO_FU_KANE = "Teo, Fu, Kane, PRB 78, 045426 (2008)"


def fhs_cherns(states: np.ndarray) -> tuple[list, list, list]:
    """Chern number (Berry convention) of the span of ``states`` on each of a stack of periodic plane meshes
    ``(planes, n1, n2, N, m)`` by the Fukui–Hatsugai–Suzuki method: per plane the integer, its distance from the
    raw sum and the largest plaquette phase / π."""
    count = states.shape[0]
    if states.shape[-1] == 0:
        return [0] * count, [0.0] * count, [0.0] * count
    minors = link_minors(states)

    def link(axis):
        u = link_determinants(states, axis, minors=minors)
        return u / np.abs(u)
    u1, u2 = link(1), link(2)
    f = np.angle(u1 * np.roll(u2, -1, axis=1) * np.conj(np.roll(u1, -1, axis=2)) * np.conj(u2))
    raw = [-float(fi.sum()) / (2 * np.pi) for fi in f]  # the literal FHS sum is −C (docs/conventions.md)
    return ([int(round(r)) for r in raw], [abs(r - round(r)) for r in raw],
            [float(np.abs(fi).max() / np.pi) for fi in f])


def _k_text(k) -> str:
    return "(" + ", ".join(f"{float(x):.3f}" for x in np.mod(np.asarray(k, dtype=float), 1.0)) + ")"


def _plain(x: float):
    return int(round(x)) if abs(x - round(x)) < 1e-9 else float(x)


class MirrorChern(Invariant):
    name = "mirror_chern"
    title = "Mirror Chern numbers"
    requires = Requirements(dims={2, 3}, elements_by_dim={2: {"mirror_z"}, 3: {"mirror"}}, optional_uses=("chern",))

    @staticmethod
    def _mirrors(context):
        dim = context.dim
        mirrors = [op for op in context.group.mirrors() if dim == 3 or abs(op.axis[2]) > 1 - 1e-8]
        wanted = context.option("mirrors")
        if wanted is not None:
            unknown = sorted(set(wanted) - {op.label for op in mirrors})
            if unknown:
                raise CrystaltopError(f"no mirror {', '.join(unknown)} in the group; its mirrors are "
                                      f"{', '.join(op.label for op in mirrors)}")
            mirrors = [op for op in mirrors if op.label in set(wanted)]
        if not mirrors:
            raise NotApplicable("no mirror leaves a plane of the zone invariant")
        return mirrors

    @staticmethod
    def _mesh(context) -> int:
        """Points per axis of each plane's first mesh (the plan and the first pass use the same)."""
        return int(context.option("mesh", 48 if context.dim == 2 else 24))

    def planned_grids(self, context):
        dim = context.dim
        n = self._mesh(context)
        mirrors = self._mirrors(context)
        if dim == 2:
            return [uniform_mesh((n, n))]
        out = []
        for op in mirrors:
            for pl in mirror_planes(op, context.lattice):
                if pl.axes is not None:
                    out.append(plane(3, 3 - pl.axes[0] - pl.axes[1], pl.level, (n, n)))
                else:
                    out.append(pl.points(n).reshape(-1, 3))
        return out

    def compute(self, context):
        dim = context.dim
        mirrors = self._mirrors(context)
        start = self._mesh(context)
        largest = int(context.option("max_mesh", 192 if dim == 2 else 96))
        chern = context.result("chern")
        value, details, worst, mesh_used, checks = {}, {}, 0.0, set(), []
        first = self._planes_at_once(context, mirrors, start)
        for op in mirrors:
            per_plane = {}
            for pl in mirror_planes(op, context.lattice):
                n = start
                while True:
                    res = first.pop((op.label, pl.name), None) if n == start else None
                    if res is None:
                        res = self._plane(context, op, pl, n)
                    consistent = res["total"] == res["C+"] + res["C-"]
                    if res["largest_plaquette_phase"] < CONVERGED and consistent:
                        break
                    if 2 * n > largest:
                        raise MeshTooCoarseError(
                            f"mirror Chern number of {op.label} on its plane {pl.name} not converged on a {n}x{n} mesh: "
                            f"largest plaquette phase {res['largest_plaquette_phase']:.2f}π, C₊ + C₋ = "
                            f"{res['C+'] + res['C-']} against {res['total']} for all occupied bands; raise max_mesh")
                    n *= 2
                worst = max(worst, res["largest_plaquette_phase"])
                mesh_used.add(n)
                c_plus, c_minus = res["C+"], res["C-"]
                per_plane[pl.name] = {"C+": c_plus, "C-": c_minus, "C_M": _plain((c_plus - c_minus) / 2)}
                reference = self._reference_chern(context, chern, pl)
                if reference is not None:
                    checks.append((f"{op.label} plane {pl.name}", c_plus + c_minus, reference))
                details[f"{op.label} {pl.name}"] = {
                    **res, "plane": {"normal u": pl.normal, "k·u": pl.level, "origin": pl.origin, "basis": pl.basis}}
            value[op.label] = per_plane[pl.name] if dim == 2 else per_plane
        cross = None
        if checks:
            agree = all(a == b for _, a, b in checks)
            cross = CrossCheck(method="Chern number of the same plane (chern)", value={k: b for k, _, b in checks},
                               agree=agree, note="C₊ + C₋ must equal the plane's Chern number; C₊ + C₋ = "
                               + ", ".join(f"{a} ({k})" for k, a, _ in checks))
        notes = (f"C_M = (C₊ − C₋)/2 ({TEO_FU_KANE}); C₊ is the sector of mirror eigenvalue +i (spin ½) or +1 "
                 "(spinless) of D_M (docs/conventions.md), each plane oriented by the mirror normal n̂ = op.axis",
                 "sectors from the mirror diagonalised on the occupied subspace at each k, then FHS per sector")
        return Outcome(value=value, method=f"mirror-sector Fukui–Hatsugai–Suzuki ({TEO_FU_KANE})",
                       mesh=", ".join(f"{n}x{n}" for n in sorted(mesh_used)) + " per plane", convergence=worst,
                       convergence_label="largest plaquette phase/π", cross_check=cross, details=details, notes=notes)

    def _planes_at_once(self, context, mirrors, n) -> dict:
        """The first pass of :meth:`_plane` on every mirror plane at once: the states of all planes in one lookup,
        the mirror matrices in one call per mirror, the sector algebra and the Fukui–Hatsugai–Suzuki sums stacked
        over the planes: ``(mirror label, plane name) -> result``. Empty when any plane fails a check, or when the
        planes' sectors differ in size: then :meth:`_plane` goes through them one by one and raises, or refines,
        exactly as without this pass."""
        try:
            planes = [(op, pl) for op in mirrors for pl in mirror_planes(op, context.lattice)]
            if len(planes) < 2:
                return {}
            pts = np.stack([self._plane_points(context, pl, n) for _, pl in planes])  # (planes, n, n, dim)
            bands = context.bands
            occ = bands.occupied_at(pts.reshape(-1, context.dim))  # the gap is checked on the same lookup
            occ = occ.reshape(pts.shape[:3] + occ.shape[-2:])
            d = np.empty(pts.shape[:3] + (occ.shape[-2],) * 2, dtype=complex)
            first = 0
            for op in mirrors:  # one call per mirror for all its planes
                count = sum(1 for o, _ in planes if o is op)
                d[first:first + count] = context.model.symmetry_matrix(op, pts[first:first + count])
                first += count
        except Exception:  # met again, for the plane concerned, by the loop over the planes
            return {}
        found = self._sector_cherns(planes, occ, d, pts, n, strict=False)
        return {} if found is None else {(op.label, pl.name): r for (op, pl), r in zip(planes, found)}

    def _sector_cherns(self, planes, occ, d, pts, n, *, strict: bool) -> list | None:
        """The mirror sectors and their Chern numbers on a stack of planes: occupied states ``occ``
        ``(planes, n, n, N, m)``, mirror matrices ``d`` ``(planes, n, n, N, N)`` and momenta ``pts``; one result
        dict per plane. A failed check raises the error naming the plane (``strict``, one plane) or gives None."""
        s = np.conj(np.swapaxes(occ, -1, -2)) @ d @ occ
        m, count = s.shape[-1], len(planes)
        dev = np.abs(np.conj(np.swapaxes(s, -1, -2)) @ s - np.eye(m)).reshape(count, -1).max(axis=1)
        if dev.max() > 1e-6:
            if not strict:
                return None
            op, pl = planes[0]
            raise SymmetryBreakingError(
                f"mirror {op.label} does not map the occupied states of its plane {pl.name} onto themselves "
                f"(deviation {dev[0]:.1e}): the model breaks it, or bands are degenerate across the filling there")
        square = np.einsum("...ii->...", s @ s).reshape(count, -1) / m
        mean = square.mean(axis=1)
        # per plane, as np.allclose(square, ±1, atol=1e-6) (rtol 1e-5) in one pass: all +1 (spinless) or all −1
        plus_one = (np.abs(mean - 1) < 1e-6) & (np.abs(square - 1).max(axis=1) <= 1e-6 + 1e-5)
        minus_one = (np.abs(mean + 1) < 1e-6) & (np.abs(square + 1).max(axis=1) <= 1e-6 + 1e-5)
        if not np.all(plus_one | minus_one):
            if not strict:
                return None
            raise SymmetryBreakingError(f"mirror {planes[0][0].label} squares to {complex(mean[0]):.3f}, not ±1, "
                                        "on the occupied states")
        names = [("+1", "-1") if p else ("+i", "-i") for p in plus_one]
        a = s / np.where(plus_one, 1.0 + 0j, 1j).reshape(-1, 1, 1, 1, 1)
        a = 0.5 * (a + np.conj(np.swapaxes(a, -1, -2)))
        w, u = hermitian_eigh(a)  # closed form for two occupied states (one Kramers pair, the common case)
        n_minus = np.count_nonzero(w < 0, axis=-1)
        if n_minus.min() != n_minus.max():
            if not strict:
                return None
            op, pl = planes[0]
            lo = np.unravel_index(int(np.argmin(n_minus[0])), n_minus.shape[1:])
            hi = np.unravel_index(int(np.argmax(n_minus[0])), n_minus.shape[1:])
            raise CrystaltopError(
                f"the number of occupied states of mirror eigenvalue {names[0][1]} changes across the plane {pl.name} "
                f"of {op.label} (from {n_minus[0][lo]} at k={_k_text(pts[0][lo])} to {n_minus[0][hi]} at "
                f"k={_k_text(pts[0][hi])}): bands of the two mirror sectors cross at the filling, the gap closes "
                "between these mesh points")
        k = int(n_minus.flat[0])
        minus, plus = occ @ u[..., :k], occ @ u[..., k:]
        if k == m - k:  # sectors of one size: both in one stacked sum
            c, e, f = fhs_cherns(np.concatenate([plus, minus]))
            c_plus, e1, f1, c_minus, e2, f2 = c[:count], e[:count], f[:count], c[count:], e[count:], f[count:]
        else:
            c_plus, e1, f1 = fhs_cherns(plus)
            c_minus, e2, f2 = fhs_cherns(minus)
        total, _, f3 = fhs_cherns(occ)
        return [{"C+": c_plus[i], "C-": c_minus[i], "total": total[i], "sector_eigenvalues": names[i],
                 "sector_sizes": (m - k, k), "mesh": f"{n}x{n}", "integer_deviation": max(e1[i], e2[i]),
                 "largest_plaquette_phase": max(f1[i], f2[i], f3[i])} for i in range(count)]

    @staticmethod
    def _plane_points(context, pl, n) -> np.ndarray:
        """The momenta of a plane's ``n x n`` mesh ``(n, n, dim)``, in the order of :meth:`_occupied_on_plane`."""
        dim, axes = context.dim, pl.axes
        if dim == 2:
            pts = uniform_mesh((n, n)).points
            return pts if axes == (0, 1) else np.swapaxes(pts, 0, 1)
        if axes is not None:  # the points of plane(3, fixed, level, (n, n)), the two in-plane axes in pl's order
            pts = np.empty((n, n, 3))
            step = np.arange(n) / n
            pts[..., axes[0]] = step[:, None]
            pts[..., axes[1]] = step[None, :]
            pts[..., 3 - axes[0] - axes[1]] = np.mod(pl.level, 1.0)
            return pts
        return pl.points(n)

    # ------------------------------------------------------------------ one plane
    def _occupied_on_plane(self, context, pl, n):
        """The occupied states of a plane's ``n x n`` mesh (its gap checked on the plane's own grid, so that an
        error names it) and its momenta (:meth:`_plane_points`), in the plane's axis order."""
        bands, dim = context.bands, context.dim
        axes, pts = pl.axes, self._plane_points(context, pl, n)
        if dim == 2:
            occ = bands.occupied(uniform_mesh((n, n)))
            return (np.swapaxes(occ, 0, 1) if axes == (1, 0) else occ), pts
        if axes is not None:
            fixed = 3 - axes[0] - axes[1]
            occ = np.squeeze(bands.occupied(plane(3, fixed, pl.level, (n, n))), axis=fixed)
            return (np.swapaxes(occ, 0, 1) if axes[0] > axes[1] else occ), pts
        occ = bands.occupied_at(pts.reshape(-1, dim))  # the gap is checked on the same lookup
        return occ.reshape(n, n, occ.shape[-2], bands.filling), pts

    def _plane(self, context, op, pl, n) -> dict:
        occ, pts = self._occupied_on_plane(context, pl, n)
        d = np.asarray(context.model.symmetry_matrix(op, pts))
        return self._sector_cherns([(op, pl)], occ[None], d[None], pts[None], n, strict=True)[0]

    @staticmethod
    def _reference_chern(context, chern, pl):
        """The `chern` value of the same plane, oriented by the mirror normal, where `chern` computed it."""
        if chern is None:
            return None
        if context.dim == 2:
            return int(chern.value)
        axes = pl.axes
        if axes is None or pl.level != 0.0:
            return None
        i = 3 - axes[0] - axes[1]
        return int(chern.value[i]) * int(np.sign(pl.normal[i]))


@hookimpl
def crystaltop_invariants():
    return [MirrorChern()]
