"""Fu–Kane parity criterion: Z2 indices of an inversion-symmetric, time-reversal-symmetric insulator (T² = −1).

L. Fu, C. L. Kane, Phys. Rev. B 76, 045302 (2007); PHYSICS.md §4. At each time-reversal-invariant momentum Γ_i
the inversion eigenvalues ξ = ±1 of the occupied states come in equal Kramers pairs; δ_i is the product of one ξ
per pair, δ_i = (−1)^{n⁻(Γ_i)/2} with n⁻ the number of occupied states of parity −1 (both partners counted). Then

    2D:  (−1)^{Z2} = Π_{4 TRIMs} δ_i;
    3D:  (−1)^{ν₀} = Π_{8 TRIMs} δ_i,   (−1)^{ν_k} = Π_{Γ_i with n_k = 1/2} δ_i   (reduced coordinates).

The eigenvalues are those of the inversion matrix on the whole occupied subspace (degenerate-safe,
``bands.symmetry_eigenvalues``). The δ_i depend on which inversion centre the group is taken about; the products
do not (a centre moved by a_j/2 flips every parity at the TRIMs with n_j = 1/2, an even number of them in each
product).

This is the cross-check of the Wannier-centre values: the result is attached to ``z2`` and ``weak_indices``
(``Outcome.checks_for``), and a disagreement turns them into failures that name both values.

Band-inversion momentum (2D, Z2 = 1): four signs with product −1 always have exactly one that differs from the
other three. An atomic insulator whose occupied Wannier centres sit at the inversion centre (the origin) has the
same δ at every TRIM, so that TRIM is where the bands are inverted relative to such an atomic limit:
``details["band_inversion_trim"]`` (for the Bernevig–Hughes–Zhang model, Γ for 0 < M/B < 4 and (1/2, 1/2) for
4 < M/B < 8, PHYSICS.md §4). It refers to the origin of the model; an atomic limit centred elsewhere moves it
(it is what the dislocation rule K_inv·b = π mod 2π of Juričić, Mesaros, Slager, Zaanen, PRL 108, 106403 (2012)
uses). In 3D the TRIM is given only when a single δ differs from the seven others.
"""

from __future__ import annotations

import numpy as np

from crystaltop.errors import CrystaltopError, SymmetryBreakingError
from crystaltop.plugin import (CrossCheck, Invariant, Outcome, Requirements, hookimpl, inversion_parities, trim_label,
                               trims)

METHOD = "Fu–Kane parity criterion (PRB 76, 045302 (2007))"
#: largest distance of an inversion eigenvalue from ±1 accepted
PARITY_TOL = 1e-6


def inversion_of(group):
    """The inversion operation of the group (about the model's origin)."""
    for op in group.operations:
        if op.kind == "inversion":
            return op
    raise CrystaltopError(f"point group {group.symbol} has no inversion")


def parity_counts(bands, group, dim: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """TRIMs ``(2^dim, dim)`` and the occupied counts n⁺, n⁻ of inversion eigenvalue ±1 at each.

    Raises if an eigenvalue is not ±1 or a parity sector has an odd count (Kramers partners must share parity).
    """
    op = inversion_of(group)
    points = trims(dim)
    sign = inversion_parities(bands, op, points, tol=PARITY_TOL)  # all TRIMs in one batch
    plus, minus = np.sum(sign > 0, axis=1), np.sum(sign < 0, axis=1)
    odd = np.nonzero((plus % 2) | (minus % 2))[0]
    if odd.size:
        k = points[odd[0]]
        raise SymmetryBreakingError(
            f"at k={trim_label(k)} the occupied states have {plus[odd[0]]} even and {minus[odd[0]]} odd parities: "
            "Kramers partners must share the parity (time reversal and inversion do not fit together)")
    return points, plus, minus


def fu_kane_indices(points: np.ndarray, minus: np.ndarray):
    """δ_i per TRIM and the indices: Z2 (2D) or (ν₀, (ν₁, ν₂, ν₃)) (3D)."""
    delta = np.where((minus // 2) % 2 == 0, 1, -1)
    strong = int(np.prod(delta) < 0)
    if points.shape[1] == 2:
        return delta, strong
    weak = tuple(int(np.prod(delta[np.abs(points[:, i] - 0.5) < 1e-9]) < 0) for i in range(3))
    return delta, (strong, weak)


def band_inversion_trim(points: np.ndarray, delta: np.ndarray):
    """The TRIM whose δ differs from all the others, or None if there is no single one."""
    for sign in (1, -1):
        lone = np.nonzero(delta == sign)[0]
        if lone.size == 1 and delta.size > 2:
            return points[lone[0]]
    return None


class ParityIndices(Invariant):
    name = "parity_indices"
    title = "Z2 indices from inversion parities (Fu–Kane)"
    requires = Requirements(dims={2, 3}, elements={"inversion"}, time_reversal=True, spinful=True,
                            optional_uses=("z2", "weak_indices"))

    def compute(self, context):
        dim = context.dim
        points, plus, minus = parity_counts(context.bands, context.group, dim)
        delta, value = fu_kane_indices(points, minus)
        labels = [trim_label(k) for k in points]
        details = {
            "parities": {lab: {"n_plus": int(p), "n_minus": int(m), "delta": int(d)}
                         for lab, p, m, d in zip(labels, plus, minus, delta)},
            "odd_trims": [lab for lab, d in zip(labels, delta) if d < 0],
        }
        inverted = band_inversion_trim(points, delta)
        if (dim == 2 and value == 1) or (dim == 3 and inverted is not None):
            details["band_inversion_trim"] = trim_label(inverted)
            details["band_inversion_k"] = tuple(float(v) for v in inverted)
        notes = ["δ_i = product of one inversion eigenvalue per occupied Kramers pair; δ_i depend on the inversion "
                 "centre (the origin), the indices do not"]
        if dim == 3:
            strong, weak = value
            details["label"] = f"{strong};(" + "".join(map(str, weak)) + ")"
        checks, own = self._cross_checks(context, value, details.get("band_inversion_trim"))
        if "band_inversion_trim" in details:
            notes.append(f"band inversion at {details['band_inversion_trim']} relative to an atomic limit "
                         "centred at the origin")
        return Outcome(value=value, method=METHOD, mesh=f"{len(points)} TRIMs", checks_for=checks, cross_check=own,
                       details=details, notes=tuple(notes))

    def _cross_checks(self, context, value, inverted=None):
        """This value as a check of z2/weak_indices, and theirs as a check of this one."""
        z2, weak = context.result("z2"), context.result("weak_indices")
        checks, own = {}, None
        strong, weak_value = (value, None) if context.dim == 2 else value
        note = f"inversion eigenvalues at the {2 ** context.dim} TRIMs"
        if inverted is not None:
            note += f"; band inversion at {inverted}"
        if z2 is not None:
            checks["z2"] = CrossCheck(method=METHOD, value=strong, agree=z2.value == strong, note=note)
        if weak is not None and weak_value is not None:
            checks["weak_indices"] = CrossCheck(method=METHOD, value=weak_value,
                                                agree=tuple(weak.value) == tuple(weak_value), note=note)
        if z2 is not None:
            if context.dim == 2:
                own = CrossCheck(method="Wannier-centre flow (z2)", value=z2.value, agree=z2.value == value)
            elif weak is not None:
                theirs = (z2.value, tuple(weak.value))
                own = CrossCheck(method="Wannier-centre flow (z2, weak_indices)", value=theirs,
                                 agree=theirs == (strong, tuple(weak_value)))
            else:
                own = CrossCheck(method="Wannier-centre flow (z2)", value=z2.value, agree=z2.value == strong,
                                 note="strong index only")
        return checks, own


@hookimpl
def crystaltop_invariants():
    return [ParityIndices()]
