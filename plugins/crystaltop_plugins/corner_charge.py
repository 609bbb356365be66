"""Fractional corner charge and filling anomaly of a C_n-symmetric flake from the rotation indices.

W. A. Benalcazar, T. Li, T. L. Hughes, Phys. Rev. B 99, 245151 (2019), with the indices χ^(n) of the
`rotation_indices` plugin (PHYSICS.md §6 — the C4 and C6 formulas are FROM MEMORY, not read in the paper; a
finite-flake measurement is the judge):

    Q^(4) = (e/4) ([X1^(2)] + 2 [M1^(4)] + 3 [M2^(4)])   mod e
    Q^(6) = (e/4) [M1^(2)] + (e/6) [K1^(3)]             mod e

in units of the electron charge counted positive, ions at 1a. The C2 formula is marked unsure there and is not
offered. The filling anomaly is η = n Q/e mod n: a flake with n equivalent corners is η electrons (mod n) away
from the count that would make it neutral while keeping the bulk filling (from memory).

C3 (derived here, checked on triangular flakes in tests/defects/test_corner_flakes.py). The corner charge of a
C_n-symmetric flake of whole cells is the net charge per cell at its centre, divided by n (common practice:
off-centre Wannier functions and ions come in orbits of n). With the occupied Wannier functions at a C3 centre w
of site eigenvalue ρ, the C3 eigenvalue at K is ρ e^{i(C3 K − K)·w}, so counting them at each centre gives, with
time reversal,

    Q^(3)(w) = (e/3) [K_p^(3)]   mod e,   e^{2πi(p−1)/3} = e^{i(C3 K − K)·w},

for a triangle of whole cells about w: (e/3)[K1^(3)] about the origin (1a), and (e/3)[K2^(3)] about (2/3, 2/3)
of the 60° hexagonal basis (K = (2/3, 1/3)) — the formula (e/3)[K2^(3)] recalled from BLH. Without time reversal,
Q^(3)(w) = −(e/3)([K_p] + [K′_p′]) with p′ the sector of e^{i(C3 K′ − K′)·w} (both valid for a Chern number 0,
which the plugin requires). When the polarization vanishes the three agree; when it does not (Wannier functions
at one of the two other centres, as in the breathing kagome), the value depends on where the flake is centred
(Takahashi, Zhang, Murakami, Phys. Rev. B 103, 205123 (2021), from memory). The C4 formula gives, by the same
counting, the value for a flake centred at the plaquette centre (1/2, 1/2) (e.g. an even L × L parallelogram of
whole cells); about the origin it is (e/4)(3[X1] + 2[M1] + 3[M2]) (derived here). The value of the record is
for the flake centred at ``details["centre"]`` — the origin for C3 and C6, the plaquette centre for C4 — and
``details["by_centre"]`` lists every C_n centre.

Second method: the Wannier content. The same counting says that a flake centred at w has the charge q_w/n per
corner sector, q_w the Wannier centres minus ions per cell at w; that is the charge the `disclination_charge`
plugin predicts at a disclination of Frank angle +2π/n about w (its counting rule δN ≡ (Ω/2π) q_w, with the
Wannier content read off the band representations). With time reversal it is shown as the cross-check of every
centre; without time reversal, where the C4 and C6 formulas are not established (the counting gives other
values, e.g. 1/2 instead of 1/4 for a single p₊ orbital at 1b), the value is taken from the Wannier content, and
the formula's value is only recorded. Without that content (disclination_charge not applicable) a model without
time reversal gets no C4 or C6 corner charge.

Conditions: the Chern number vanishes (`chern`); C_n^n = +1 (the spinless formula; the Benalcazar–Bernevig–Hughes
quadrupole, with C4^4 = −1, is outside it — its corner charge e/2 is measured on a finite flake by the defects
layer).
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np

from crystaltop.errors import NotApplicable
from crystaltop.plugin import (CrossCheck, Invariant, Outcome, Requirements, fraction_mod1, fraction_text,
                               high_symmetry_momenta, hookimpl, planar_rotations)

BLH = "Benalcazar, Li, Hughes, PRB 99, 245151 (2019)"
FORMULAS = {4: "Q = (e/4)([X1^(2)] + 2[M1^(4)] + 3[M2^(4)]) mod e, flake centred at the plaquette centre",
            3: "Q = (e/3)[K_p^(3)] mod e, p the sector of e^{i(C3 K − K)·w} at the flake's centre w: "
               "(e/3)[K1^(3)] about the origin",
            6: "Q = (e/4)[M1^(2)] + (e/6)[K1^(3)] mod e"}
FORMULAS_NO_TR = {3: "Q = −(e/3)([K_p] + [K′_p′]) mod e, p, p′ the sectors of e^{i(C3 K − K)·w}, "
                     "e^{i(C3 K′ − K′)·w} at the flake's centre w: −(e/3)([K1] + [K′1]) about the origin"}
SOURCES = {3: "derived here by counting Wannier centres and ions (common practice), checked on triangular flakes; "
              f"with time reversal and P = 0 it is the (e/3)[K2^(3)] of {BLH}, from memory",
           4: f"{BLH}; FROM MEMORY per PHYSICS.md §6 — to be judged by a finite-flake measurement",
           6: f"{BLH}; FROM MEMORY per PHYSICS.md §6 — to be judged by a finite-flake measurement"}


def corner_fraction(n: int, chi) -> Fraction:
    """Q/e mod 1 from the reduced indices χ^(n) (first entries as listed in `rotation_indices`), for the flake
    the record's value refers to: C4 about the plaquette centre, C3 and C6 about the origin."""
    if n == 4:
        q = Fraction(chi[0] + 2 * chi[1] + 3 * chi[2], 4)
    elif n == 3:
        q = _c3_fraction(chi, 1, 1)
    elif n == 6:
        q = Fraction(chi[0], 4) + Fraction(chi[1], 6)
    else:  # pragma: no cover - guarded by the requirements
        raise NotApplicable(f"no corner-charge formula for C{n}")
    return fraction_mod1(q)


def _c3_fraction(chi, p: int, p_prime: int) -> Fraction:
    """Q/e mod 1 about a C3 centre whose phase e^{i(C3 K − K)·w} is sector p at K and p′ at K′.

    χ^(3) = ([K1], [K2]) with time reversal, ([K1], [K2], [K′1], [K′2]) without; Σ_p [K_p] = 0 gives [K3]."""
    k = (chi[0], chi[1], -chi[0] - chi[1])
    if len(chi) == 2:
        return fraction_mod1(Fraction(k[p - 1], 3))
    kp = (chi[2], chi[3], -chi[2] - chi[3])
    return fraction_mod1(Fraction(-(k[p - 1] + kp[p_prime - 1]), 3))


def _reduced_text(w) -> str:
    return "(" + ", ".join(fraction_text(Fraction(float(x)).limit_denominator(12)) for x in w) + ")"


def rotation_centres(op, lattice) -> list[np.ndarray]:
    """The points (reduced, in [0, 1)) fixed by the rotation ``op`` modulo the lattice, the origin first."""
    w = np.asarray(op.in_basis(lattice), dtype=float)
    grid = np.stack(np.meshgrid(np.arange(12), np.arange(12), indexing="ij"), axis=-1).reshape(-1, 2) / 12.0
    shift = grid @ w.T - grid
    fixed = grid[np.all(np.abs(shift - np.rint(shift)) < 1e-9, axis=1)]
    return sorted(fixed, key=lambda f: (bool(np.any(f)), tuple(f)))


def centre_values(n: int, chi, group, lattice, momenta) -> dict:
    """{centre text: Q/e mod 1 for a flake of whole cells centred there} over the C_n centres of the lattice."""
    op = next(op for op in planar_rotations(group, 2) if op.fold == n and op.angle > 0)
    centres = rotation_centres(op, lattice)
    if n == 6:
        return {_reduced_text(centres[0]): corner_fraction(6, chi)}
    if n == 4:  # the origin, and the plaquette centre the formula refers to
        origin = fraction_mod1(Fraction(3 * chi[0] + 2 * chi[1] + 3 * chi[2], 4))
        return {_reduced_text(w): (corner_fraction(4, chi) if np.any(w) else origin) for w in centres}
    by_label = {m.label: np.asarray(m.k, dtype=float) for m in momenta}
    out = {}
    for w in centres:
        sectors = []
        for label in ("K", "K′"):
            g = np.asarray(op.acts_on_k(by_label[label], lattice)) - by_label[label]  # a reciprocal vector
            sectors.append(int(np.rint(3.0 * float(np.rint(g) @ w))) % 3 + 1)
        out[_reduced_text(w)] = _c3_fraction(chi, *sectors)
    return out


def _why(context, name):
    rec = context.record(name)
    return f"{name} {rec.status}: {rec.message}" if rec is not None else f"{name} is not installed"


def wannier_content_values(record, n: int, filling: int, by_centre) -> dict | None:
    """Per C_n centre of ``by_centre`` (keys like "(1/2, 1/2)"), the charge q_w/n mod 1 that the Wannier content
    gives: the ``disclination_charge`` prediction at Ω = +2π/n about w. None if that record is missing, or its
    ionic background is not the one the formulas assume (the whole filling at 1a)."""
    if record is None or record.details.get("n") != n:
        return None
    background = [(tuple(float(x) for x in p), float(c)) for p, c in record.details.get("ion_background", ())]
    if background != [((0.0, 0.0), float(filling))]:
        return None
    out = {}
    for w in by_centre:
        point = np.array([float(Fraction(x.strip())) for x in w.strip("()").split(",")])
        found = [c for c in record.details.get("per_case", ())
                 if abs(float(c["frank_angle"]) - 2 * np.pi / n) < 1e-9
                 and np.abs((np.asarray(c["core"], dtype=float) - point + 0.5) % 1.0 - 0.5).max() < 1e-9]
        if not found:
            return None
        out[w] = Fraction(found[0]["fraction"])
    return out


class CornerCharge(Invariant):
    name = "corner_charge"
    title = "Corner charge and filling anomaly (from rotation indices)"
    requires = Requirements(dims={2}, any_elements={"C3", "C4", "C6"}, spinful=False,
                            optional_uses=("chern", "rotation_indices", "polarization", "disclination_charge"))

    def compute(self, context):
        # a gapless model fails here, naming the momentum, before anything else is read
        momenta = high_symmetry_momenta(context.group, context.lattice)
        context.bands.check_gap_at(np.array([m.k for m in momenta]))
        chern = context.result("chern")
        if chern is None:
            raise NotApplicable(f"needs a vanishing Chern number, which is not known ({_why(context, 'chern')})")
        if chern.value != 0:
            raise NotApplicable(f"Chern number {chern.value} is not zero: a corner charge is defined only for a "
                                f"Chern number 0 ({BLH})")
        indices = context.result("rotation_indices")
        if indices is None:
            raise NotApplicable(f"needs the rotation indices, which are not known ({_why(context, 'rotation_indices')})")
        n = max(f for f in (3, 4, 6) if f"C{f}" in indices.value)
        chi = indices.value[f"C{n}"]
        if isinstance(chi, dict):
            raise NotApplicable(f"C{n}^{n} = −1 (π flux): the spinless corner-charge formula of {BLH} does not apply; "
                                "the corner charge of such a model is measured on a finite flake (defects layer)")
        by_centre = centre_values(n, chi, context.group, context.lattice, momenta)
        origin = next(iter(by_centre))
        centre = next(w for w in by_centre if w != origin) if n == 4 else origin  # where each formula's flake sits
        q = by_centre[centre]  # corner_fraction(n, chi): centre_values gives it at that centre
        formula = FORMULAS_NO_TR[3] if n == 3 and not context.time_reversal else FORMULAS[n]
        notes = [f"{formula} ({SOURCES[n]})", "charge in units of e, electrons counted positive, ions at 1a, mod e"]
        content = wannier_content_values(context.result("disclination_charge"), n, context.filling, by_centre)
        method = f"rotation indices χ^({n}) ({BLH})"
        cross_check = None
        formula_values = None
        if not context.time_reversal and n != 3:
            if content is None:
                raise NotApplicable(f"without time reversal the C{n} corner-charge formula is not established, and the "
                                    f"Wannier content that would give the value is unknown "
                                    f"({_why(context, 'disclination_charge')})")
            formula_values = {w: fraction_text(v) for w, v in by_centre.items()}
            by_centre = content
            q = by_centre[centre]
            method = f"Wannier content of the occupied bands, q_w/{n} per corner sector (disclination_charge)"
            notes.append(f"without time reversal the formula is not used (its values {formula_values} are recorded); "
                         "the value counts the Wannier centres and ions at the flake's centre")
        elif content is not None:
            agree = all(content[w] == v for w, v in by_centre.items())
            shown = {w: fraction_text(v) for w, v in content.items()}
            cross_check = CrossCheck(f"Wannier content, q_w/{n} per corner sector (disclination_charge at Ω = +2π/{n})",
                                     shown[centre], agree, f"every centre: {shown}")
        if len(set(by_centre.values())) > 1:
            pol = context.result("polarization")
            shown = f" {tuple(pol.value)}" if pol is not None else ""
            others = ", ".join(f"{fraction_text(v)} about {w}" for w, v in by_centre.items() if w != centre)
            notes.append(f"polarization{shown} ≠ 0: the corner charge depends on where the flake is centred (Takahashi, "
                         f"Zhang, Murakami, PRB 103, 205123 (2021), from memory); the value is for a flake of whole "
                         f"unit cells centred at {centre}; {others}")
        eta = (n * q.numerator // q.denominator) % n if (n * q).denominator == 1 else None
        details = {"n": n, "indices": tuple(chi), "fraction": fraction_text(q), "filling_anomaly": eta, "formula": formula,
                   "centre": centre, "by_centre": {w: fraction_text(v) for w, v in by_centre.items()},
                   "formula_by_centre": formula_values,
                   "status": ("derived (counting), checked on triangular flakes" if n == 3
                              else "formula from memory (PHYSICS.md §6)")}
        return Outcome(value=float(q), method=method, mesh="high-symmetry momenta", details=details,
                       notes=tuple(notes), cross_check=cross_check)


@hookimpl
def crystaltop_invariants():
    return [CornerCharge()]
