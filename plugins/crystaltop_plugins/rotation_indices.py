"""Rotation invariants [Π_p^(n)] and their reduced sets χ^(n) of a two-dimensional spinless insulator.

W. A. Benalcazar, T. Li, T. L. Hughes, Phys. Rev. B 99, 245151 (2019) (PHYSICS.md §6, index sets from memory):
with Π_p^(n) = e^{2πi(p−1)/n} the eigenvalues of a rotation C_n, C_n^n = +1, at a momentum Π it fixes,

    [Π_p^(n)] = #Π_p^(n) − #Γ_p^(n)          (numbers of occupied states),

and with time reversal the independent ones are

    χ^(2) = ([X1], [Y1], [M1]),   χ^(4) = ([X1^(2)], [M1^(4)], [M2^(4)]),
    χ^(3) = ([K1^(3)], [K2^(3)]),  χ^(6) = ([M1^(2)], [K1^(3)]).

On a hexagonal lattice the three C2-fixed momenta are M, M′, M″ and χ^(2) lists them in that order.
Without time reversal the conjugate sectors are no longer tied (T maps Π_p to its conjugate at −Π, which is Π
itself at a TRIM, and K to K′), so the sets grow; the rule used here (derived, not from the paper) keeps the
sectors p = 1 … n−1 that time reversal would have identified:

    χ^(4) = ([X1^(2)], [M1^(4)], [M2^(4)], [M3^(4)]),  χ^(3) = ([K1], [K2], [K′1], [K′2]),
    χ^(6) = ([M1^(2)], [K1^(3)], [K2^(3)]),  χ^(2) unchanged

(Σ_p [Π_p] = 0 removes one sector everywhere; with C6 the rotation maps K to K′, so K′ adds nothing).

The formula needs C_n^n = +1. A spinless model can carry a projective representation with C_n^n = −1 (π flux per
plaquette, as the quadrupole model of Benalcazar, Bernevig, Hughes, Science 357, 61 (2017)); there the eigenvalues
are e^{iπ(2p−1)/n}, the index formula does not apply and its value is not given. Instead the entry says whether
the occupied eigenvalues at each momentum coincide with those at Γ (for the quadrupole model: they differ at Γ
and M in the quadrupole phase, and coincide for |γ/λ| > 1).
"""

from __future__ import annotations

import numpy as np

from crystaltop.errors import SymmetryBreakingError
from crystaltop.plugin import (Invariant, Outcome, Requirements, count_sectors, high_symmetry_momenta, hookimpl,
                               occupied_eigenvalues_at, planar_rotations, rotation_power, sector_counts, sector_names)

BLH = "Benalcazar, Li, Hughes, PRB 99, 245151 (2019)"


class RotationIndices(Invariant):
    name = "rotation_indices"
    title = "Rotation invariants [Π_p] and χ^(n)"
    requires = Requirements(dims={2}, any_elements={"C2", "C3", "C4", "C6"}, spinful=False)

    def compute(self, context):
        group, lattice, bands = context.group, context.lattice, context.bands
        momenta = high_symmetry_momenta(group, lattice)
        ops = {op.fold: op for op in planar_rotations(group, 2) if op.fold == 2 or op.angle > 0}
        brackets, powers, counts_at, raw = {}, {}, {}, {}
        for n, op in sorted(ops.items()):
            fixed = [m for m in momenta if op.label in m.rotations]
            lam = dict(zip([m.label for m in fixed], occupied_eigenvalues_at(bands, op, fixed)))
            power, counts = sector_counts(list(lam.values()), n)
            if counts is None:  # some momentum fails a check: one by one, for the error that names it
                power = {rotation_power(v, n, what=f"{op.label} at {label}") for label, v in lam.items()}
                if len(power) != 1:
                    raise SymmetryBreakingError(f"{op.label}^{n} is +1 at some momenta and −1 at others: its matrix "
                                                "is not a consistent representation")
                power = power.pop()
                counts = [count_sectors(v, n, power) for v in lam.values()]
            powers[n] = power
            counts_at[n] = dict(zip(lam, counts))
            raw[f"C{n}"] = {"rotation": op.label, "eigenvalues": list(sector_names(n, powers[n])),
                            "counts": {label: c.tolist() for label, c in counts_at[n].items()}, "power": powers[n]}
            if powers[n] == 1:
                gamma = counts_at[n]["Γ"]
                brackets[n] = {label: (c - gamma).tolist() for label, c in counts_at[n].items() if label != "Γ"}
                raw[f"C{n}"]["brackets"] = brackets[n]

        value, notes = {}, []
        time_reversal = context.time_reversal
        for n in sorted(ops):
            if powers[n] == -1:
                differ = {label: ("coincide" if np.array_equal(c, counts_at[n]["Γ"]) else "differ")
                          for label, c in counts_at[n].items() if label != "Γ"}
                value[f"C{n}"] = {
                    "refused": f"C{n}^{n} = −1 on this spinless model (π flux): outside the spinless index formula "
                               f"of {BLH}",
                    "compared with Γ": differ}
                notes.append(f"C{n}^{n} = −1: the index formula is not applied; the occupied C{n} eigenvalues at "
                             + ", ".join(f"{label} {d} with those at Γ" for label, d in differ.items()))
                continue
            value[f"C{n}"] = self._reduced_set(n, brackets, ops, momenta, time_reversal)
        details = {"rotations": raw, "time_reversal": time_reversal,
                   "sets": self._describe_sets(ops, momenta, time_reversal)}
        notes.append(f"[Π_p] = #Π_p − #Γ_p over the occupied states ({BLH}; index sets from memory, PHYSICS.md §6)")
        if not time_reversal:
            notes.append("without time reversal the reduced sets keep the sectors time reversal would tie "
                         "(rule derived here, not from the paper)")
        return Outcome(value=value, method=f"rotation eigenvalues on the occupied subspace ({BLH})",
                       mesh=", ".join(m.label for m in momenta if m.rotations), details=details, notes=tuple(notes))

    # ------------------------------------------------------------------ the reduced sets
    @staticmethod
    def _points(n, ops, momenta):
        """Non-Γ momenta fixed by the n-fold rotation, in label order."""
        op = ops.get(n)
        return [] if op is None else [m.label for m in momenta if op.label in m.rotations and m.label != "Γ"]

    def _labels(self, n, ops, momenta, time_reversal):
        """[(momentum, fold, sector p)] of the reduced set χ^(n)."""
        two, three, four = (self._points(f, ops, momenta) for f in (2, 3, 4))
        if n == 2:
            return [(m, 2, 1) for m in two]
        if n == 4:
            x = [m for m in two if m not in four][0]
            m = four[0]
            return [(x, 2, 1), (m, 4, 1), (m, 4, 2)] + ([] if time_reversal else [(m, 4, 3)])
        if n == 3:
            k, kp = three[0], three[1]
            return [(k, 3, 1), (k, 3, 2)] + ([] if time_reversal else [(kp, 3, 1), (kp, 3, 2)])
        m, k = two[0], three[0]
        return [(m, 2, 1), (k, 3, 1)] + ([] if time_reversal else [(k, 3, 2)])

    def _reduced_set(self, n, brackets, ops, momenta, time_reversal):
        return tuple(int(brackets[fold][label][p - 1]) for label, fold, p in self._labels(n, ops, momenta, time_reversal))

    def _describe_sets(self, ops, momenta, time_reversal):
        return {f"χ({n})": ", ".join(f"[{label}{p}^({fold})]" for label, fold, p in
                                      self._labels(n, ops, momenta, time_reversal)) for n in sorted(ops)}


@hookimpl
def crystaltop_invariants():
    return [RotationIndices()]
