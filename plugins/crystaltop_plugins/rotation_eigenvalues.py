"""Occupied rotation eigenvalues at the high-symmetry momenta, and the Chern number mod n they fix.

For every rotation C_n (n = 2, 3, 4, 6; in 2D about z; in 3D one per axis, the counter-clockwise one) and every
momentum it fixes (crystaltop.plugin.high_symmetry_momenta), the number of occupied states in each eigenvalue
sector: e^{2πi(p−1)/n} when C_n^n = +1, e^{iπ(2p−1)/n} when C_n^n = −1 (spin ½, or a spinless model with π flux
such as the Benalcazar–Bernevig–Hughes quadrupole, Science 357, 61 (2017)). The eigenvalues are those of the
rotation's matrix on the whole occupied subspace (BandData.symmetry_eigenvalues), so degenerate occupied bands are
handled; C_n^n is read from them and recorded. With time reversal, at momenta with k ≡ −k the conjugate
eigenvalues λ, λ* come in pairs and are reported as pairs (with T² = −1 a real eigenvalue comes in Kramers pairs).

Chern number mod n (Fang, Gilbert, Bernevig, Phys. Rev. B 86, 115112 (2012)), products over the occupied bands,
(−1)^F = C_n^n of the rotation used (PHYSICS.md §3, checked on Qi–Wu–Zhang and Haldane):

    C2: (−1)^C = Π ζ(Γ) ζ(X) ζ(Y) ζ(M)
    C4: i^C = Π (−1)^F ξ(Γ) ξ(M) ζ(X)                 (ξ: C4, ζ: C2 eigenvalues)
    C3: e^{2πiC/3} = Π (−1)^F θ(Γ) θ(K) θ(K′)
    C6: e^{iπC/3} = Π (−1)^F η(Γ) θ(K) ζ(M)            (η: C6 at Γ, θ: C3 at K, ζ: C2 at M)

The rotations are counter-clockwise about +z (2D), so the value refers to the orientation +z like `chern`; in 3D
it is computed on the plane k_i = 0 normal to a rotation axis along the lattice vector a_i, and compared with the
Chern number C_i of `chern` (oriented by +a_i). It is attached to `chern` as a cross-check (a disagreement turns
that record into a failure naming both values).
"""

from __future__ import annotations

import numpy as np

from crystaltop.errors import CrystaltopError, SymmetryBreakingError
from crystaltop.plugin import (CrossCheck, Invariant, Outcome, Requirements, count_sectors, high_symmetry_momenta,
                               hookimpl, occupied_eigenvalues_at, pair_name, planar_rotations, rotation_levels,
                               rotation_power, rotation_sectors, sector_counts, sector_names)

FGB = "rotation eigenvalues (Fang, Gilbert, Bernevig, PRB 86, 115112 (2012))"


def counterclockwise_rotations(group, dim: int) -> list:
    """One rotation per axis and fold: the one by +2π/n about its (canonical) axis."""
    return [op for op in planar_rotations(group, dim) if op.fold in (2, 3, 4, 6) and (op.fold == 2 or op.angle > 0)]


def is_time_reversal_invariant(k) -> bool:
    k2 = 2.0 * np.asarray(k, dtype=float)
    return bool(np.all(np.abs(k2 - np.rint(k2)) < 1e-9))


def paired(counts: np.ndarray, n: int, power: int, spinful: bool) -> dict | None:
    """Counts of conjugate pairs {λ, λ*} (and of real eigenvalues) or None if the counts are not conjugate-symmetric."""
    sectors = rotation_sectors(n, power)
    out, done = {}, set()
    for p, lam in enumerate(sectors):
        if p in done:
            continue
        q = int(np.argmin(np.abs(sectors - np.conj(lam))))
        done |= {p, q}
        if q == p:  # a real eigenvalue
            if spinful:
                if counts[p] % 2:
                    return None
                out[f"{pair_name(lam)} (Kramers pair)"] = int(counts[p] // 2)
            else:
                out[pair_name(lam)] = int(counts[p])
        else:
            if counts[p] != counts[q]:
                return None
            out[pair_name(lam)] = int(counts[p])
    return out


def chern_mod_n(n: int, op_by_fold: dict, fixed: dict, eig: dict, power: int) -> tuple[int, str] | None:
    """C mod n from the Fang–Gilbert–Bernevig product, or None if a needed rotation or momentum is missing.

    ``op_by_fold`` maps 2, 3, 4, 6 to the counter-clockwise rotation about the axis; ``fixed[fold]`` lists the
    momenta it fixes (Γ first); ``eig[(op label, momentum label)]`` the occupied eigenvalues; ``power`` is
    C_n^n = (−1)^F of the n-fold rotation.
    """
    def product(fold, momentum):
        return complex(np.prod(eig[(op_by_fold[fold].label, momentum.label)]))

    def others(fold):
        return [m for m in fixed.get(fold, []) if m.label != "Γ"]

    gamma = next(m for m in fixed[n] if m.label == "Γ")
    m_occ = len(eig[(op_by_fold[n].label, gamma.label)])
    sign = power ** m_occ  # Π over the occupied bands of (−1)^F
    if n == 2:
        pts = [gamma] + others(2)
        if len(pts) != 4:
            return None
        value = np.prod([product(2, m) for m in pts])
        used = "2-fold at " + ", ".join(m.label for m in pts)
    elif n == 4:
        m_pt = others(4)
        x_pt = [m for m in others(2) if m.label not in {p.label for p in m_pt}]
        if not m_pt or not x_pt or 2 not in op_by_fold:
            return None
        value = sign * product(4, gamma) * product(4, m_pt[0]) * product(2, x_pt[0])
        used = f"4-fold at Γ, {m_pt[0].label}; 2-fold at {x_pt[0].label}"
    elif n == 3:
        pts = others(3)
        if len(pts) != 2:
            return None
        value = sign * product(3, gamma) * product(3, pts[0]) * product(3, pts[1])
        used = f"3-fold at Γ, {pts[0].label}, {pts[1].label}"
    else:
        k_pt, m_pt = others(3), others(2)
        if not k_pt or not m_pt or 3 not in op_by_fold or 2 not in op_by_fold:
            return None
        value = sign * product(6, gamma) * product(3, k_pt[0]) * product(2, m_pt[0])
        used = f"6-fold at Γ; 3-fold at {k_pt[0].label}; 2-fold at {m_pt[0].label}"
    if abs(abs(value) - 1) > 1e-3:
        raise CrystaltopError(f"the Fang–Gilbert–Bernevig product for C{n} has modulus {abs(value):.3f}, not 1")
    c = np.angle(value) * n / (2 * np.pi)
    if abs(c - np.rint(c)) > 1e-3:
        raise CrystaltopError(f"the Fang–Gilbert–Bernevig product for C{n} is {value:.4f}, not an n-th root of unity")
    return int(np.rint(c)) % n, used


class RotationEigenvalues(Invariant):
    name = "rotation_eigenvalues"
    title = "Occupied rotation eigenvalues at high-symmetry momenta"
    requires = Requirements(dims={2, 3}, any_elements={"C2", "C3", "C4", "C6"}, optional_uses=("chern",))

    def compute(self, context):
        group, lattice, dim, bands = context.group, context.lattice, context.dim, context.bands
        momenta = high_symmetry_momenta(group, lattice)
        rotations = counterclockwise_rotations(group, dim)
        value, powers, eig, notes, details = {}, {}, {}, [], {}
        spinful = context.spinful
        for op in rotations:
            n = op.fold
            entry, raw = {}, {}
            fixed = [m for m in momenta if op.label in m.rotations]
            lams = occupied_eigenvalues_at(bands, op, fixed) if fixed else []
            power, all_counts = sector_counts(lams, n)
            if all_counts is None:  # some momentum fails a check: one by one, for the error that names it
                power, all_counts = None, []
                for m, lam in zip(fixed, lams):
                    here = rotation_power(lam, n, what=f"{op.label} at {m.label}")
                    if power is not None and here != power:
                        raise SymmetryBreakingError(
                            f"{op.label}^{n} is {power:+d} at some momenta and {here:+d} at {m.label}: "
                            "its matrix is not a consistent representation")
                    power = here
                    all_counts.append(count_sectors(lam, n, power))
            for m, lam, counts in zip(fixed, lams, all_counts):
                eig[(op.label, m.label)] = lam
                raw[m.label] = counts.tolist()
                pairs = paired(counts, n, power, spinful) if (
                    context.time_reversal and is_time_reversal_invariant(m.k)) else None
                entry[m.label] = pairs if pairs is not None else dict(zip(sector_names(n, power), counts.tolist()))
            powers[op.label] = power
            value[op.label] = entry
            details[op.label] = {"eigenvalues": list(sector_names(n, power)), "counts": raw, f"{op.label}^{n}": power,
                                 "momenta": {m.label: m.k for m in fixed}}
            if power == -1 and not spinful:
                notes.append(f"{op.label}^{n} = −1 on a spinless model (π flux, as in the Benalcazar–Bernevig–Hughes "
                             f"quadrupole): its eigenvalues are e^{{iπ(2p−1)/{n}}}, outside the spinless index formulas")
            if power == 1 and spinful:
                notes.append(f"{op.label}^{n} = +1 on a spin-½ model: its representation is not the double-group one")
        details["powers"] = powers
        details["time_reversal_pairs"] = bool(context.time_reversal)

        checks_for, fgb = {}, self._chern_mod_n(context, rotations, momenta, eig, powers)
        if fgb:
            details["chern_mod_n"] = {key: {"value": v, "from": used} for key, (v, used, _) in fgb.items()}
            chern = context.result("chern")
            if chern is not None:
                agree, shown = True, {}
                for key, (v, used, target) in fgb.items():
                    c = chern.value if target is None else chern.value[target[0]] * target[1]
                    shown[key] = v
                    agree &= (int(c) - v) % int(key.split()[-1]) == 0
                checks_for["chern"] = CrossCheck(
                    method=FGB, value=shown, agree=bool(agree),
                    note="; ".join(f"C ≡ {v} ({key}) from the occupied eigenvalues of the {used}"
                                   for key, (v, used, _) in fgb.items()))
        notes.append("counts per eigenvalue of the rotation on the occupied subspace"
                     + ("; with time reversal, conjugate pairs at momenta with k ≡ −k" if context.time_reversal else ""))
        return Outcome(value=value, method="eigenvalues of the rotation matrices on the occupied subspace",
                       mesh=", ".join(m.label for m in momenta if m.rotations),
                       details=details, notes=tuple(notes), checks_for=checks_for)

    def _chern_mod_n(self, context, rotations, momenta, eig, powers) -> dict:
        """{"mod n": (value, used, target)}; target None in 2D, (plane index, orientation sign) in 3D."""
        out = {}
        if context.dim == 2:
            by_fold = {op.fold: op for op in rotations}
            fixed = {f: [m for m in momenta if op.label in m.rotations] for f, op in by_fold.items()}
            for n in sorted(by_fold, reverse=True):
                got = chern_mod_n(n, by_fold, fixed, eig, powers[by_fold[n].label])
                if got is not None:
                    out[f"mod {n}"] = (got[0], got[1], None)
            return out
        for i in range(3):  # planes k_i = 0 normal to a rotation axis along a_i
            by_fold, sign = {}, {}
            for op in rotations:
                u, _ = rotation_levels(op, context.lattice)
                if np.count_nonzero(u) == 1 and u[i] != 0:
                    by_fold[op.fold] = op
                    sign[op.fold] = int(np.sign(u[i]))
            if not by_fold or len(set(sign.values())) > 1:
                continue
            fixed = {f: [m for m in momenta if op.label in m.rotations and abs(m.k[i]) < 1e-9]
                     for f, op in by_fold.items()}
            for n in sorted(by_fold, reverse=True):
                got = chern_mod_n(n, by_fold, fixed, eig, powers[by_fold[n].label])
                if got is not None:
                    out[f"C{i + 1} mod {n}"] = (got[0], got[1] + f" on the plane k{i + 1}=0",
                                                (i, next(iter(sign.values()))))
        return out


@hookimpl
def crystaltop_invariants():
    return [RotationEigenvalues()]
