"""Fractional corner charge and filling anomaly of a C_n-symmetric flake from the rotation indices.

W. A. Benalcazar, T. Li, T. L. Hughes, Phys. Rev. B 99, 245151 (2019), with the indices χ^(n) of the
`rotation_indices` plugin (PHYSICS.md §6 — these formulas are FROM MEMORY, not read in the paper; a finite-flake
measurement is the judge):

    Q^(4) = (e/4) ([X1^(2)] + 2 [M1^(4)] + 3 [M2^(4)])   mod e
    Q^(3) = (e/3) [K2^(3)]                              mod e
    Q^(6) = (e/4) [M1^(2)] + (e/6) [K1^(3)]             mod e

in units of the electron charge counted positive (the sign convention of PHYSICS.md §6, whose check values are
magnitudes). The C2 formula is marked unsure there and is not offered. The filling anomaly is η = n Q/e mod n: a
flake with n equivalent corners is η electrons (mod n) away from the count that would make it neutral while keeping
the bulk filling (from memory).

Conditions: the Chern number vanishes (`chern`); C_n^n = +1 (the spinless formula; the Benalcazar–Bernevig–Hughes
quadrupole, with C4^4 = −1, is outside it — its corner charge e/2 is measured on a finite flake by the defects
layer). When the polarization is not zero the corner charge depends on how the flake is cut (Takahashi, Zhang,
Murakami, Phys. Rev. B 103, 205123 (2021), from memory); the value then refers to a flake of whole unit cells
centred on the rotation centre at the origin and a note says so.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np

from crystaltop.errors import NotApplicable
from crystaltop.plugin import Invariant, Outcome, Requirements, high_symmetry_momenta, hookimpl

BLH = "Benalcazar, Li, Hughes, PRB 99, 245151 (2019)"
FORMULAS = {4: "Q = (e/4)([X1^(2)] + 2[M1^(4)] + 3[M2^(4)]) mod e",
            3: "Q = (e/3)[K2^(3)] mod e",
            6: "Q = (e/4)[M1^(2)] + (e/6)[K1^(3)] mod e"}


def corner_fraction(n: int, chi) -> Fraction:
    """Q/e mod 1 from the reduced indices χ^(n) (first entries as listed in `rotation_indices`)."""
    if n == 4:
        q = Fraction(chi[0] + 2 * chi[1] + 3 * chi[2], 4)
    elif n == 3:
        q = Fraction(chi[1], 3)
    elif n == 6:
        q = Fraction(chi[0], 4) + Fraction(chi[1], 6)
    else:  # pragma: no cover - guarded by the requirements
        raise NotApplicable(f"no corner-charge formula for C{n}")
    return q - (q.numerator // q.denominator)


def _why(context, name):
    rec = context.record(name)
    return f"{name} {rec.status}: {rec.message}" if rec is not None else f"{name} is not installed"


class CornerCharge(Invariant):
    name = "corner_charge"
    title = "Corner charge and filling anomaly (from rotation indices)"
    requires = Requirements(dims={2}, any_elements={"C3", "C4", "C6"}, spinful=False,
                            optional_uses=("chern", "rotation_indices", "polarization"))

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
        q = corner_fraction(n, chi)
        notes = [f"{FORMULAS[n]} ({BLH}; FROM MEMORY per PHYSICS.md §6 — to be judged by a finite-flake measurement)",
                 "charge in units of e, electrons counted positive, mod e"]
        if not context.time_reversal:
            notes.append("the formula is derived with time reversal; here it is applied to a model without it (unverified)")
        pol = context.result("polarization")
        if pol is not None and np.any(np.abs(np.asarray(pol.value, dtype=float)) > 1e-6):
            notes.append(f"polarization {tuple(pol.value)} ≠ 0: the corner charge depends on how the flake is cut "
                         "(Takahashi, Zhang, Murakami, PRB 103, 205123 (2021), from memory); the value is for a flake of "
                         "whole unit cells centred on the rotation centre at the origin")
        eta = (n * q.numerator // q.denominator) % n if (n * q).denominator == 1 else None
        details = {"n": n, "indices": tuple(chi), "fraction": f"{q.numerator}/{q.denominator}" if q else "0",
                   "filling_anomaly": eta, "formula": FORMULAS[n], "status": "formula from memory (PHYSICS.md §6)"}
        return Outcome(value=float(q), method=f"rotation indices χ^({n}) ({BLH})", mesh="high-symmetry momenta",
                       details=details, notes=tuple(notes))


@hookimpl
def crystaltop_invariants():
    return [CornerCharge()]
