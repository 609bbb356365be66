"""Symmetry indicator of inversion-symmetric, time-reversal-symmetric insulators (T² = −1) in 3D.

H. C. Po, A. Vishwanath, H. Watanabe, Nat. Commun. 8, 50 (2017); E. Khalaf, H. C. Po, A. Vishwanath,
H. Watanabe, Phys. Rev. X 8, 031070 (2018); PHYSICS.md §5. With n^±(Γ_i) the numbers of occupied states (both
Kramers partners) of inversion eigenvalue ±1 at the eight TRIMs,

    κ₁      = ¼ Σ_{8 TRIMs} (n⁺ − n⁻)            mod 4     (the Z4 strong index),
    z_{2,i} = ¼ Σ_{TRIMs with k_i = 1/2} (n⁺ − n⁻) mod 2     (the weak indices, equal to the Fu–Kane ν_i).

Sign form: this is the form with n⁺ − n⁻; the other common form Σ n⁻/2 mod 4 equals −κ₁ (1 and 3 swap, 0 and
2 stay). κ₁ odd is a strong topological insulator (κ₁ mod 2 = ν₀); κ₁ = 2 with vanishing weak indices is the
inversion-protected second-order phase (helical hinge modes), invisible to the Z2 indices. Moving the inversion
centre by a_j/2 swaps n⁺ and n⁻ at the four TRIMs with k_j = 1/2 and so changes κ₁ by 2 z_{2,j}: with a non-zero
weak index the value of κ₁ mod 2 is all that does not depend on the centre, and κ₁ = 2 is then not flagged.

Cross-check: κ₁ mod 2 and z_{2,i} against the Wannier-centre values of ``z2`` and ``weak_indices`` when they ran.
"""

from __future__ import annotations

import numpy as np

from crystaltop.errors import CrystaltopError, SymmetryBreakingError
from crystaltop.plugin import (CrossCheck, Invariant, Outcome, Requirements, hookimpl, inversion_parities, trim_label,
                               trims)

METHOD = ("parity counts at the TRIMs (Po, Vishwanath, Watanabe, Nat. Commun. 8, 50 (2017); "
          "Khalaf, Po, Vishwanath, Watanabe, PRX 8, 031070 (2018))")
PARITY_TOL = 1e-6


def parity_differences(bands, group) -> tuple[np.ndarray, np.ndarray]:
    """The eight TRIMs and n⁺ − n⁻ of the occupied states at each (inversion about the model's origin)."""
    op = next((g for g in group.operations if g.kind == "inversion"), None)
    if op is None:
        raise CrystaltopError(f"point group {group.symbol} has no inversion")
    points = trims(3)
    sign = inversion_parities(bands, op, points, tol=PARITY_TOL)  # the eight TRIMs in one batch
    return points, sign.sum(axis=1)


def indicator(points: np.ndarray, diff: np.ndarray) -> tuple[int, tuple[int, int, int]]:
    """(κ₁, (z_{2,1}, z_{2,2}, z_{2,3})) from n⁺ − n⁻ at the eight TRIMs."""
    total = int(diff.sum())
    if total % 4:
        raise SymmetryBreakingError(f"Σ (n⁺ − n⁻) = {total} over the TRIMs is not a multiple of 4: the occupied "
                                    "parities are not Kramers-paired")
    weak = []
    for i in range(3):
        part = int(diff[np.abs(points[:, i] - 0.5) < 1e-9].sum())
        if part % 4:
            raise SymmetryBreakingError(f"Σ (n⁺ − n⁻) = {part} over the TRIMs with k{i + 1} = 1/2 is not a "
                                        "multiple of 4: the occupied parities are not Kramers-paired")
        weak.append((part // 4) % 2)
    return (total // 4) % 4, tuple(weak)


class InversionIndicator(Invariant):
    name = "inversion_indicator"
    title = "Inversion symmetry indicator (Z4 × Z2³)"
    requires = Requirements(dims={3}, elements={"inversion"}, time_reversal=True, spinful=True,
                            optional_uses=("z2", "weak_indices"))

    def compute(self, context):
        points, diff = parity_differences(context.bands, context.group)
        kappa, weak = indicator(points, diff)
        second_order = kappa == 2 and not any(weak)
        details = {
            "n_plus_minus_n_minus": {trim_label(k): int(d) for k, d in zip(points, diff)},
            "kappa1": kappa,
            "weak": weak,
            "second_order": second_order,
            "sign_form": "κ₁ = ¼ Σ (n⁺ − n⁻) mod 4; the form Σ n⁻/2 mod 4 equals −κ₁",
        }
        notes = ["κ₁ = ¼ Σ (n⁺ − n⁻) mod 4 (Σ n⁻/2 mod 4 would give −κ₁)"]
        if kappa % 2:
            details["phase"] = "strong topological insulator"
        elif second_order:
            details["phase"] = "second-order topological insulator (inversion-protected, helical hinge modes)"
            notes.append("κ₁ = 2 with vanishing weak indices: second-order (inversion-protected) topological phase")
        elif any(weak):
            details["phase"] = "weak topological insulator"
            if kappa == 2:
                notes.append("κ₁ = 2 but a weak index is non-zero: the even part of κ₁ depends on the inversion "
                             "centre here, so no second-order phase is claimed")
        else:
            details["phase"] = "trivial by this indicator"
        if any(weak):
            notes.append("with a non-zero weak index only κ₁ mod 2 is independent of the inversion centre")
        return Outcome(value=(kappa, weak), method=METHOD, mesh="8 TRIMs", cross_check=self._check(context, kappa, weak),
                       details=details, notes=tuple(notes))

    @staticmethod
    def _check(context, kappa, weak):
        z2, w = context.result("z2"), context.result("weak_indices")
        if z2 is None:
            return None
        if w is None:
            return CrossCheck(method="Wannier-centre flow (z2)", value=z2.value, agree=z2.value == kappa % 2,
                              note="κ₁ mod 2 against ν₀")
        theirs = (z2.value, tuple(w.value))
        return CrossCheck(method="Wannier-centre flow (z2, weak_indices)", value=theirs,
                          agree=theirs == (kappa % 2, tuple(weak)), note="(κ₁ mod 2, z₂) against (ν₀, ν)")


@hookimpl
def crystaltop_invariants():
    return [InversionIndicator()]
