"""What a dislocation binds, predicted from the bulk invariants, for each primitive Burgers vector.

Rules (b = Σ nᵢ aᵢ, nᵢ integers; reciprocal vectors Gⱼ with aᵢ·Gⱼ = 2π δᵢⱼ):

* 3D with time reversal: a Kramers pair of counter-propagating (helical) modes runs along the dislocation line
  exactly when B·M_ν = π mod 2π, M_ν = ½ Σ νⱼ Gⱼ the weak vector, i.e. when Σ nᵢ νᵢ is odd
  (Ran, Zhang, Vishwanath, Nat. Phys. 5, 298 (2009)).
* 3D without time reversal: the line carries Σ nᵢ Cᵢ chiral modes, Cᵢ the Chern number of the planes kᵢ = const
  (B·G_C / 2π with G_C = Σ Cᵢ Gᵢ; the layered quantum Hall case of the same paper, from memory).
* 2D with time reversal (T² = −1) and Z2 = 1: a Kramers pair of bound states when b·K = π mod 2π, K the momentum
  of the band inversion (Juričić, Mesaros, Slager, Zaanen, Phys. Rev. Lett. 108, 106403 (2012)); none when Z2 = 0.
* 2D with vanishing Chern number: the charge bound to the core is Q = e (ẑ × b)·P mod e, P the polarization
  (dipole per cell); in reduced units Q/e = n₁P₂ − n₂P₁ mod 1 for a right-handed lattice. Orientation: the
  Burgers vector is the closure failure of a counter-clockwise circuit around the core (docs/defects.md).
"""

from __future__ import annotations

import numpy as np

from crystaltop.errors import DefectGeometryError, NotApplicable
from crystaltop.plugin import Invariant, Outcome, Requirements, hookimpl


def burgers_vectors(dim: int, extra=()) -> list[tuple[int, ...]]:
    """The primitive lattice vectors, then any the user gives (checked to be lattice vectors)."""
    out = [tuple(int(i == j) for j in range(dim)) for i in range(dim)]
    for b in extra:
        arr = np.asarray(b, dtype=float).reshape(-1)
        if arr.shape != (dim,) or np.max(np.abs(arr - np.round(arr))) > 1e-9 or not np.any(np.round(arr)):
            raise DefectGeometryError(
                f"Burgers vector {tuple(arr.tolist())} is not a non-zero lattice vector (give {dim} integers in the "
                "basis of the lattice vectors)")
        t = tuple(int(v) for v in np.round(arr))
        if t not in out:
            out.append(t)
    return out


def _label(b) -> str:
    return "b=(" + ", ".join(str(v) for v in b) + ")"


def _per_burgers_vector(vectors, indices, describe, record):
    """For each Burgers vector b (integers nᵢ), ``s = Σ nᵢ indicesᵢ``: the value text ``describe(s)`` by label and the
    record ``{"burgers": b, **record(s)}``."""
    value, records = {}, []
    for b in vectors:
        s = int(np.dot(b, indices))
        value[_label(b)] = describe(s)
        records.append({"burgers": b, **record(s)})
    return value, records


def _why(context, name: str) -> str:
    rec = context.record(name)
    return "not installed" if rec is None else f"{rec.status}: {rec.message}"


class DislocationResponse(Invariant):
    name = "dislocation_response"
    title = "What a dislocation binds"
    requires = Requirements(dims={2, 3}, optional_uses=("chern", "polarization", "z2", "weak_indices",
                                                        "parity_indices"))

    def compute(self, context):
        dim = context.dim
        vectors = burgers_vectors(dim, context.option("burgers", ()))
        if dim == 3:
            return self._three_d(context, vectors)
        return self._two_d(context, vectors)

    # ------------------------------------------------------------------ 3D
    def _three_d(self, context, vectors):
        if context.time_reversal:
            weak = context.result("weak_indices")
            if weak is None:
                raise NotApplicable(f"needs the weak indices ({_why(context, 'weak_indices')})")
            nu = np.asarray(weak.value, dtype=int)
            value, records = _per_burgers_vector(
                vectors, nu, lambda s: "helical Kramers pair along the line" if s % 2 else "nothing protected",
                lambda s: {"binds": s % 2 == 1, "B.M_nu/pi": s})
            return Outcome(
                value=value, method="B·M_ν = π mod 2π (Ran, Zhang, Vishwanath, Nat. Phys. 5, 298 (2009))",
                mesh="from weak_indices", details={"weak_indices": tuple(int(v) for v in nu),
                                                    "weak_vector": weak.details.get("weak_vector"),
                                                    "per_burgers_vector": records},
                notes=("rule: a Kramers pair of counter-propagating modes along the line iff Σ nᵢ νᵢ is odd, "
                       f"with ν = {tuple(int(v) for v in nu)} from weak_indices",))
        chern = context.result("chern")
        if chern is None:
            raise NotApplicable(f"needs the Chern numbers of the three plane families ({_why(context, 'chern')})")
        c = np.asarray(chern.value, dtype=int)
        value, records = _per_burgers_vector(
            vectors, c, lambda s: f"{abs(s)} chiral mode(s)" if s else "nothing protected",
            lambda s: {"chiral_modes": s})
        return Outcome(value=value, method="B·G_C / 2π chiral modes (Ran, Zhang, Vishwanath 2009; from memory)",
                       mesh="from chern", details={"chern": tuple(int(v) for v in c), "per_burgers_vector": records},
                       notes=(f"rule: Σ nᵢ Cᵢ chiral modes along the line, C = {tuple(int(v) for v in c)} from chern",))

    # ------------------------------------------------------------------ 2D
    def _two_d(self, context, vectors):
        value, records, notes, methods = {}, [], [], []
        details = {}
        kramers = context.time_reversal and context.spinful
        if kramers:
            z2 = context.result("z2")
            if z2 is None:
                raise NotApplicable(f"needs the Z2 index ({_why(context, 'z2')})")
            details["z2"] = int(z2.value)
            k_inv = context.option("inversion_momentum")
            source = "given"
            if k_inv is None and int(z2.value) == 1:
                parity = context.result("parity_indices")
                if parity is not None and parity.details.get("band_inversion_k") is not None:
                    k_inv, source = parity.details["band_inversion_k"], "parity_indices"
            methods.append("b·K = π mod 2π (Juričić, Mesaros, Slager, Zaanen, PRL 108, 106403 (2012))")
            if k_inv is not None:
                details["band_inversion_k"] = tuple(float(x) for x in k_inv)
                notes.append(f"band-inversion momentum K = {details['band_inversion_k']} (reduced) from {source}")
            elif int(z2.value) == 1:
                notes.append("Z2 = 1 but the band-inversion momentum is unknown (no inversion symmetry to locate it; "
                             "give options={'dislocation_response': {'inversion_momentum': (k1, k2)}})")
        chern = context.result("chern")
        polarization = context.result("polarization")
        if chern is not None and int(chern.value) == 0 and polarization is not None:
            p = np.asarray(polarization.value, dtype=float)
            handed = 1 if np.linalg.det(np.asarray(context.lattice, dtype=float)) > 0 else -1
            details["polarization"] = tuple(float(x) for x in p)
            methods.append("Q = e (ẑ × b)·P mod e (dislocation charge from the polarization)")
            notes.append(f"charge rule: Q/e = n₁P₂ − n₂P₁ mod 1 with P = {details['polarization']} from polarization")
        else:
            p = None
            reason = (f"Chern number {chern.value} ≠ 0: P is not defined, so no charge is predicted" if chern is not None
                      and int(chern.value) != 0 else f"polarization unavailable ({_why(context, 'polarization')})")
            notes.append(reason)
        for b in vectors:
            rec = {"burgers": b}
            parts = []
            if kramers:
                if details["z2"] == 0:
                    rec["kramers_pair"] = False
                elif "band_inversion_k" in details:
                    phase = 2 * float(np.dot(b, details["band_inversion_k"]))  # b·K / π
                    rec["kramers_pair"] = abs(phase - np.round(phase)) < 1e-9 and int(np.round(phase)) % 2 == 1
                else:
                    rec["kramers_pair"] = None
                parts.append({True: "Kramers pair of bound states", False: "no protected bound states",
                              None: "Kramers pair undetermined"}[rec["kramers_pair"]])
            if p is not None:
                q = (handed * (b[0] * p[1] - b[1] * p[0])) % 1.0
                q = 0.0 if min(q, 1 - q) < 1e-6 else float(q)
                rec["charge"] = q
                parts.append(f"charge {q:g} e mod e")
            records.append(rec)
            value[_label(b)] = "; ".join(parts) if parts else "nothing predicted"
        if not methods:
            raise NotApplicable("; ".join(notes))
        details["per_burgers_vector"] = records
        return Outcome(value=value, method="; ".join(methods), mesh="from the invariants it uses",
                       details=details, notes=tuple(notes))


@hookimpl
def crystaltop_invariants():
    return [DislocationResponse()]
