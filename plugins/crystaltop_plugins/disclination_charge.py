"""Fractional charge bound to a disclination, per core type and Frank angle, from the occupied Wannier content.

T. Li, P. Zhu, W. A. Benalcazar, T. L. Hughes, Phys. Rev. B 101, 115115 (2020) show that the charge bound to a
disclination of a C_n-symmetric insulator is fixed mod e by the rotation invariants, the polarization and the
Chern number, and state it in units of e/n. Their index formula is not reproduced here (PHYSICS.md §8 marks it
unsure). What is implemented is derived below from a counting rule and the band representations, and is judged
by real-space samples (tests/plugins/test_disclination_charge.py: C2, C3, C4 and C6 atomic limits, every core
type and Frank angle; tests/plugins/test_disclination_charge_chern.py: C4 Chern insulators, item 4).

1. Counting rule (PHYSICS.md §8; the measurements of tests/defects/test_charges.py agree with it). In an atomic
   limit (occupied Wannier centres, charge +1 each, and the ionic background, as point charges), a disclination
   of Frank angle Ω = 2πk/m about a rotation centre c of site-symmetry order m binds

       δN ≡ (Ω/2π) q_c = (k/m) q_c   (mod 1),   q_c = (Wannier centres − ions) sitting exactly at c.

   Why (derived here): every point other than c has an orbit of m points under the rotation about c, so the m
   sectors of the perfect crystal carry equal charges s, with q_c + m s = 0 (a neutral bulk); the sample keeps
   m − k of them: q_c + (m − k) s = (k/m) q_c. Ω and Ω ± 2π give the same value mod 1 when q_c is an integer, so
   the Frank angles listed are 2πk/m in (−π, π]. In units of e/n (n the highest rotation order of the group) the
   charge is n k q_c / m mod n.

2. Wannier content from the rotation eigenvalues (derived here by inducing band representations; Benalcazar,
   Li, Hughes, Phys. Rev. B 99, 245151 (2019) relate the indices [Π_p] to the Wyckoff multiplicities in the
   same way — that their tables agree with the one below is FROM MEMORY). An orbital at a rotation centre x with
   eigenvalue λ of its site rotation (C_m^m = +1) induces, on the orbit x_j = W^j x of the generator g (W its
   integer matrix in the lattice basis), the Bloch matrices D_g(k)[j+1, j] = e^{−2πi (W^{−T}k)·t_j}, times λ on
   the step back to x_0, with t_j = W x_j − x_{j+1}: the convention D_g(k) H(k) D_g(k)† = H(g k) of
   docs/conventions.md. D_{g^p}(k) is the product along k, W^{−T}k, ... Their eigenvalues at the momenta each
   rotation fixes give one column per (Wyckoff position, λ). The occupied counts from `rotation_eigenvalues`
   (every rotation, every momentum it fixes, Γ included) are then split into non-negative integer multiplicities
   by exact enumeration. All the splittings are kept, and a prediction is made only if every one of them binds
   the same charges. That held for every count vector of up to five bands of p2, p3, p4 and p6 that the derivation
   enumerated. The indices [Π_p] = #Π_p − #Γ_p of each band representation (one orbital per site) are:

       C4 (p4; 1a, 1b = (½, ½), 2c = (0, ½), (½, 0)), ([X1^(2)], [M1^(4)], [M2^(4)], [M3^(4)]):
           1a any λ: (0, 0, 0, 0);  1b λ = 1: (−1, −1, 0, 1);  1b λ = −1: (−1, 1, 0, −1);  1b λ = ±i: (1, 0, ∓1, 0);
           2c λ = 1: (−1, −1, 1, −1);  2c λ = −1: (1, 1, −1, 1)
       C6 (p6; 1a, 2b = (⅓, ⅓), (⅔, ⅔) on 60° axes, 3c = (0, ½), (½, ½), (½, 0)), ([M1^(2)], [K1^(3)], [K2^(3)]):
           1a any λ: (0, 0, 0);  2b λ = 1: (0, −2, 1);  2b λ = e^{2πi/3}: (0, 1, −2);  2b λ = e^{−2πi/3}: (0, 1, 1);
           3c λ = 1: (−2, 0, 0);  3c λ = −1: (2, 0, 0)

   The 2b and 3c s rows reproduce χ^(6) = (0, −2) and (−2, 0) of PHYSICS.md §6, and 1b s gives χ^(4) = (−1, −1, 0).
   With time reversal (complex λ in conjugate pairs) these relations invert over the integers to closed forms,
   derived here, which are the cross-check attached to this record:

       C4: N(1b) ≡ −[X1^(2)] − [M2^(4)]  (mod 4),   N(2c) ≡ [M2^(4)]  (mod 2)
       C6: N(2b) ≡ [K1^(3)]  (mod 3),              N(3c) ≡ [M1^(2)]/2  (mod 2)

   with N(1a) = ν − Σ_{w ≠ 1a} |w| N(w), where ν is the filling and N(w) the number of Wannier centres per site of w.

3. Polarization and the translation part of the holonomy. The holonomy of a disclination of angle Ω about c is
   the operation {W^k | T}, T = c − W^k c: T = 0 for the origin (1a), and T ≠ 0 for a core at another rotation
   centre (a plaquette or bond centre). Eliminating q_c with neutrality (derived here, and checked on hundreds of
   random integer contents of p2, p3, p4 and p6 on right- and left-handed axes) gives

       δN(c, Ω) ≡ δN(1a, Ω) − (ẑ × T)·P = δN(1a, Ω) − h (T₁P₂ − T₂P₁)   (mod 1),

   where P is the total dipole per cell (electrons minus ions; reduced components in units of e·aᵢ) and
   h = sign det(lattice). The added term is the dislocation charge (ẑ × b)·P of `dislocation_response` for
   b = −T: this is the "e T·P" term of PHYSICS.md §8, in the form this derivation fixes. It is the second method
   attached to this record, with P from `polarization` (Wilson loops) and δN(1a, Ω) from the content. It needs
   integer ionic charges at rotation centres (otherwise P is not defined mod 1 and the check is left out).

4. Chern bands (C ≠ 0), p4 on right-handed axes only. The rule, checked on every C4 Chern sample built for it
   (tests/plugins/test_disclination_charge_chern.py, docs/defects.md: C = ±1 and −2, with the orbitals' angular
   momenta turned through all four values, d-wave form factors, pairs of such bands coupled by random C4 bonds,
   16- and 24-cell samples, every core and Frank angle):

       δN(c, Ω) ≡ (k/m) (q_c + C S_c)   (mod 1),   S_1a = 1/2,  S_1b = −1/2,  S_2c = 3/2,

   where q_c = N_c − ions at c, and N_c are the per-site contents of an integer (possibly negative) combination of
   the induced band representations of item 2 whose occupied counts are those of the bands minus C copies of the
   reference band B: the s band at 1a with its Γ eigenvalues turned from 1 to i (C4) and to −1 (C2), C = +1 (the
   lower band of `qi_wu_zhang(m=−1)`). Charges come in units of e/2n (a half-integer number of e/n when C is odd).
   Why, step by step:
   (a) derived: charges of decoupled stacks add (the seam matrix is block diagonal), and adding bands that are an
       atomic limit adds the counting rule of item 1. Every integer kernel vector of the band-representation table
       of p4 binds 0 (tested), so any integer combination gives the same charges.
   (b) FROM MEMORY, not derived here: for p4 without time reversal (spinless, C4^4 = +1) the occupied rotation
       eigenvalues and C determine a band structure up to stable equivalence (the symmetry indicator group is Z4,
       C mod 4, the Fang–Gilbert–Bernevig relation). Then [bands] = [X] + C [B] with X a formal combination of band
       representations, and δN(bands) = δN(X) + C δN(B).
   (c) δN(B) = (k/m) S_c. Derived up to e/2: the complex conjugate B̄ (C = −1, Γ eigenvalue −i) has the same
       disclination density (the sample Hamiltonian is conjugated), and B ⊕ B̄ is the integer combination with
       N_1a = 1, N_1b = −1, N_2c = 1, so 2 S_c ≡ N_c (mod m): S_1a ∈ {1/2, 5/2}, S_1b ∈ {−1/2, 3/2}, S_2c ∈ {1/2, 3/2}.
       Measured: S = (1/2, −1/2, 3/2), which makes the Γ-point band inversion from the trivial s band to B change
       the charge by the same −(Ω/2π)/2 at all three cores (Γ does not see the core's translation), i.e.
       −ΔC s̄ Ω/2π with s̄ = 1/2 the mean angular momentum of the two states that invert. This is the form of the
       "discrete shift" term (Ω/2π) S of Zhang, Manjunath, Nambiar, Barkeshli, PRL 129, 275301 (2022) (FROM
       MEMORY); no term quadratic in Ω was seen.
   (d) derived, and a consequence of the rule: multiplying the rotation representation by i^j (the same bands,
       other angular momenta) shifts every charge by −C j k/4 e, as a flux 2πjk/4 threaded through the core
       would (Středa: C e per flux quantum; the sign is the builders' seam convention, measured).
   Li, Zhu, Benalcazar, Hughes (2020) give an index formula with a Chern term; it is not used or compared here.
   Outside p4 with right-handed axes a Chern insulator is still skipped (no reference band was measured there).

Ionic background: option ``ions``. The default, ``"1a"``, puts the whole background of a cell (ν electrons) at
the origin, the convention of the defect builders called with ``ions=[((0, 0), ν)]``. Also accepted: another
Wyckoff name ("1b", ...; the background spread equally over its sites), ``"sites"`` (ν/N on each of the N basis
states, the builders' default), or ``[((x₁, x₂), charge), ...]`` in reduced coordinates, which must be symmetric
and sum to ν.

Domain (otherwise NotApplicable, with the reason):
- spinless models with C_n^n = +1; `rotation_eigenvalues` reports C_n^n = −1 for π flux, and the spinful
  double-group case is not handled;
- Chern number 0, or a Chern insulator of p4 on right-handed axes (item 4); other Chern insulators have no
  Wannier representation and no measured reference band;
- occupied rotation eigenvalues that belong to an atomic limit with its Wannier centres at rotation centres:
  fragile or non-Wannierisable bands have no non-negative integer splitting;
- a gapped model: a gap closing at a high-symmetry momentum makes `rotation_eigenvalues` fail.

The Wyckoff letters follow the sorted coordinates in the model's own lattice basis, for the group's own rotations
(p2, p3, p4 or p6), as `crystaltop.defects.rotation_centre_names` does when the group's highest rotation is also
the lattice's. They are the International Tables letters only in the Tables' setting, so the reduced coordinates
of every core are always reported too.
"""

from __future__ import annotations

from fractions import Fraction
from itertools import product

import numpy as np

from crystaltop.errors import CrystaltopError, NotApplicable
from crystaltop.plugin import (CrossCheck, Invariant, Outcome, Requirements, count_sectors, fraction_mod1,
                               fraction_text, hookimpl, planar_rotations, rotation_sectors, wrap_reduced)

LZBH = "Li, Zhu, Benalcazar, Hughes, PRB 101, 115115 (2020)"
BLH = "Benalcazar, Li, Hughes, PRB 99, 245151 (2019)"
ZMNB = "Zhang, Manjunath, Nambiar, Barkeshli, PRL 129, 275301 (2022)"
#: largest number of partial assignments the enumeration of Wannier contents may visit
MAX_NODES = 400_000
_TOL = 1e-6


# ---------------------------------------------------------------------------------------------- geometry
def _snapped(x) -> np.ndarray:
    """A rotation centre on the exact 1/12 grid its coordinates lie on (every 2D crystallographic one does)."""
    return np.array([float(Fraction(float(v)).limit_denominator(12)) for v in wrap_reduced(x)]) % 1.0


def _same_point(a, b) -> bool:
    d = np.asarray(a, dtype=float) - np.asarray(b, dtype=float)
    return bool(np.all(np.abs(d - np.rint(d)) < _TOL))


def centre_orbits(w: np.ndarray, n: int) -> list[dict]:
    """The rotation centres of the cyclic group generated by ``w`` (order ``n``), one record per orbit.

    Each record: ``name`` (Wyckoff style: multiplicity and letter, letters ordered by site-symmetry order, then
    multiplicity, then coordinates, as the International Tables order p2, p3, p4, p6), ``fold`` (site-symmetry
    order m), ``sites`` ((r, 2) reduced, ``sites[j] = W^j sites[0]`` mod 1, the first the smallest).
    """
    w = np.asarray(w, dtype=int)
    points: list[np.ndarray] = []
    for j in range(1, n):
        a = np.eye(2, dtype=int) - np.linalg.matrix_power(w, j)
        d = int(round(abs(np.linalg.det(a))))
        inv = np.linalg.inv(a)
        for m in product(range(d), repeat=2):  # Z²/aZ² has d elements, all in the box [0, d)²
            x = _snapped(inv @ np.array(m, dtype=float))
            if not any(_same_point(x, p) for p in points):
                points.append(x)
    orbits, done = [], []
    for x in sorted(points, key=lambda p: tuple(np.round(p, 6))):
        if any(_same_point(x, d) for d in done):
            continue
        sites = [x]
        while True:
            nxt = _snapped(w @ sites[-1])
            if _same_point(nxt, sites[0]):
                break
            sites.append(nxt)
        done.extend(sites)
        orbits.append({"fold": n // len(sites), "sites": np.array(sites)})
    orbits.sort(key=lambda o: (-o["fold"], len(o["sites"]), tuple(np.round(o["sites"][0], 6))))
    for i, o in enumerate(orbits):
        o["name"] = f"{len(o['sites'])}{chr(ord('a') + i)}"
    return orbits


def induced_rotation(w: np.ndarray, sites: np.ndarray, lam: complex, k, steps: int) -> np.ndarray:
    """``D_{g^steps}(k)`` of the band representation induced from an orbital with site eigenvalue ``lam``.

    ``sites[j] = W^j sites[0]`` mod 1; the convention is D_g(k) H(k) D_g(k)† = H(g k), |k, j⟩ = Σ_R e^{2πik·R} |R, j⟩.
    """
    w = np.asarray(w, dtype=float)
    r = len(sites)
    w_k = np.linalg.inv(w).T  # action on reduced momenta
    total = np.eye(r, dtype=complex)
    kk = np.asarray(k, dtype=float)
    for _ in range(steps):
        kp = w_k @ kk
        d = np.zeros((r, r), dtype=complex)
        for j in range(r):
            nxt = (j + 1) % r
            t = np.rint(w @ sites[j] - sites[nxt])
            d[nxt, j] = np.exp(-2j * np.pi * float(kp @ t)) * (lam if j == r - 1 else 1.0)
        total = d @ total
        kk = kp
    return total


def holonomy_translation(w: np.ndarray, centre, k: int) -> tuple[int, int]:
    """T of the holonomy {W^k | T} of a rotation by 2πk/n about ``centre``: T = c − W^k c (an integer vector)."""
    c = np.asarray(centre, dtype=float)
    t = c - np.linalg.matrix_power(np.asarray(w, dtype=int), k % _order(w)) @ c
    if np.abs(t - np.rint(t)).max() > _TOL:  # pragma: no cover - guarded by the choice of centres
        raise CrystaltopError(f"{tuple(c)} is not a centre of the rotation W^{k}")
    return tuple(int(x) for x in np.rint(t))


def _order(w) -> int:
    w = np.asarray(w, dtype=int)
    m = np.eye(2, dtype=int)
    for n in range(1, 13):
        m = m @ w
        if np.array_equal(m, np.eye(2, dtype=int)):
            return n
    raise CrystaltopError("the rotation's integer matrix has no finite order")  # pragma: no cover


def frank_steps(fold: int) -> list[int]:
    """k of the Frank angles Ω = 2πk/m in (−π, π] at a centre of site-symmetry order m (k ≠ 0)."""
    return [k for k in range(-((fold - 1) // 2), fold // 2 + 1) if k != 0]


def angle_label(k: int, fold: int) -> str:
    """Ω = 2πk/m as text, e.g. ``"π/2"``, ``"-π/3"``, ``"2π/3"``, ``"π"``."""
    f = Fraction(2 * k, fold)
    num = abs(f.numerator)
    text = ("" if num == 1 else str(num)) + "π" + ("" if f.denominator == 1 else f"/{f.denominator}")
    return ("-" if f < 0 else "") + text


# ---------------------------------------------------------------------------------------------- content
def band_representation_table(orbits, w, n, rotations) -> tuple[np.ndarray, list[tuple[int, int]], list[tuple]]:
    """Columns: occupied-count vectors of each induced band representation (orbit, site eigenvalue index).

    ``rotations``: [(op label, fold f, steps p = n/f, {momentum label: k})]. Rows are (op, momentum, sector).
    """
    rows = [(label, m, p) for label, f, _, momenta in rotations for m in momenta for p in range(f)]
    columns, data = [], []
    for o_index, orbit in enumerate(orbits):
        for s, lam in enumerate(rotation_sectors(orbit["fold"], 1)):
            col = []
            for label, f, steps, momenta in rotations:
                for k in momenta.values():
                    eig = np.linalg.eigvals(induced_rotation(w, orbit["sites"], lam, k, steps))
                    col.extend(count_sectors(eig, f, 1).tolist())
            columns.append((o_index, s))
            data.append(col)
    return np.array(data, dtype=int).T, columns, rows


class _TooMany(Exception):
    pass


def decompositions(a: np.ndarray, b: np.ndarray, limit: int = MAX_NODES) -> list[np.ndarray]:
    """Every non-negative integer x with a x = b (a, b non-negative integers), by a pruned exhaustive search."""
    a = np.asarray(a, dtype=int)
    b = np.asarray(b, dtype=int)
    ncol = a.shape[1]
    covered = [(a[:, j:] > 0).any(axis=1) for j in range(ncol)] + [np.zeros(a.shape[0], dtype=bool)]
    found: list[np.ndarray] = []
    x = np.zeros(ncol, dtype=int)
    nodes = 0

    def visit(j, rest):
        nonlocal nodes
        nodes += 1
        if nodes > limit:
            raise _TooMany
        if np.any(rest[~covered[j]] != 0):
            return
        if j == ncol:
            found.append(x.copy())
            return
        col = a[:, j]
        nz = col > 0
        top = int(np.min(rest[nz] // col[nz])) if nz.any() else 0
        for c in range(top, -1, -1):
            x[j] = c
            visit(j + 1, rest - c * col)
        x[j] = 0

    visit(0, b.copy())
    return found


def _fraction(x) -> Fraction:
    return Fraction(float(x)).limit_denominator(1000)


def parse_ions(spec, orbits, filling: int, model, w) -> tuple[list[tuple[np.ndarray, Fraction]], str]:
    """The ionic background as [(reduced position in [0, 1)², charge)] and a description of it."""
    names = {o["name"]: o for o in orbits}
    if spec is None or isinstance(spec, str):
        key = "1a" if spec is None else spec
        if key == "sites":
            pos = np.asarray(model.positions, dtype=float).reshape(-1, 2)
            q = Fraction(filling, len(pos))
            ions = [(wrap_reduced(p), q) for p in pos]
            text = f"{fraction_text(q)} e on each of the {len(pos)} basis states (the builders' default)"
        elif key in names:
            sites = names[key]["sites"]
            q = Fraction(filling, len(sites))
            ions = [(s, q) for s in sites]
            text = (f"{filling} e per cell at {key}" + (f" ({fraction_text(q)} e on each of its {len(sites)} sites)"
                                                        if len(sites) > 1 else ""))
            if spec is None:
                text += " (default; the builders' ions=[((0, 0), filling)])"
        else:
            raise CrystaltopError(f"ions={spec!r}: give 'sites', a Wyckoff name ({', '.join(names)}) or "
                                  "[((x1, x2), charge), ...] in reduced coordinates")
    else:
        try:
            ions = [(wrap_reduced(np.asarray(p, dtype=float).reshape(2)), _fraction(q)) for p, q in spec]
        except (TypeError, ValueError):
            raise CrystaltopError("ions must be 'sites', a Wyckoff name or [((x1, x2), charge), ...] in reduced "
                                  "coordinates") from None
        text = "given: " + ", ".join(f"{fraction_text(q)} e at {tuple(float(v) for v in np.round(p, 4))}" for p, q in ions)
    merged: list[list] = []
    for p, q in ions:
        for entry in merged:
            if _same_point(entry[0], p):
                entry[1] += q
                break
        else:
            merged.append([p, q])
    total = sum(q for _, q in merged)
    if abs(float(total) - filling) > 1e-9:
        raise CrystaltopError(f"the ions carry {float(total):g} e per cell but the filling is {filling}: the bulk "
                              "would not be neutral")
    for p, q in merged:
        image = wrap_reduced(np.asarray(w, dtype=float) @ p)
        if not any(_same_point(image, p2) and q2 == q for p2, q2 in merged):
            raise CrystaltopError(f"the ions are not symmetric: {fraction_text(q)} e at {tuple(np.round(p, 4).tolist())} "
                                  f"has no partner at its rotated position {tuple(np.round(image, 4).tolist())}")
    return [(p, q) for p, q in merged], text


def ions_at(ions, point) -> Fraction:
    return sum((q for p, q in ions if _same_point(p, point)), Fraction(0))


# ---------------------------------------------------------------------------------------------- Chern bands
#: S_c of module docstring item 4 (per unit Chern number, electrons, per site of the orbit), p4 on right-handed axes
CHERN_SHIFT = {"1a": Fraction(1, 2), "1b": Fraction(-1, 2), "2c": Fraction(3, 2)}
REFERENCE_BAND = ("C = +1: the s band at 1a with its Γ eigenvalues turned to i (C4) and −1 (C2), the lower band "
                  "of qi_wu_zhang(m=−1)")


def reference_chern_counts(table, columns, rows, rotations) -> np.ndarray:
    """Occupied counts of the reference band: the column of (1a, λ = 1) with its Γ entries moved to sector 1."""
    col = table[:, columns.index((0, 0))].copy()
    at_gamma = {label: m for label, _, _, momenta in rotations for m, k in momenta.items() if np.allclose(k, 0.0)}
    if len(at_gamma) != len(rotations):  # pragma: no cover - Γ is fixed by every rotation
        raise CrystaltopError("Γ is missing among the momenta of the rotation eigenvalues")
    for label, m in at_gamma.items():
        i0, i1 = rows.index((label, m, 0)), rows.index((label, m, 1))
        col[i0], col[i1] = col[i0] - 1, col[i1] + 1  # eigenvalue 1 → e^{2πi/f}: i for C4, −1 for C2
    return col


def integer_solution(a, b) -> np.ndarray | None:
    """An integer x with a x = b (exact, Python integers), or None: column-style Hermite reduction of ``a``."""
    a = [[int(v) for v in row] for row in np.asarray(a)]
    m, p = len(a), len(a[0])
    u = [[int(i == j) for j in range(p)] for i in range(p)]

    def combine(j, i, q):  # column j −= q column i, in a and u
        for r in a:
            r[j] -= q * r[i]
        for r in u:
            r[j] -= q * r[i]

    def swap(i, j):
        for r in a + u:
            r[i], r[j] = r[j], r[i]

    pivots, col = [], 0
    for row in range(m):
        if col == p:
            break
        while any(a[row][j] for j in range(col + 1, p)):
            j0 = min((j for j in range(col, p) if a[row][j]), key=lambda j: abs(a[row][j]))
            swap(col, j0)
            for j in range(col + 1, p):
                combine(j, col, a[row][j] // a[row][col])
        if a[row][col]:
            pivots.append((row, col))
            col += 1
    y = [0] * p
    target = [int(v) for v in np.asarray(b)]
    for row, c in pivots:
        rest = target[row] - sum(a[row][j] * y[j] for j in range(c))
        if rest % a[row][c]:
            return None
        y[c] = rest // a[row][c]
    if any(sum(a[r][j] * y[j] for j in range(p)) != target[r] for r in range(m)):
        return None
    return np.array([sum(u[i][j] * y[j] for j in range(p)) for i in range(p)], dtype=int)


# ---------------------------------------------------------------------------------------------- the plugin
class DisclinationCharge(Invariant):
    name = "disclination_charge"
    title = "Disclination charge (prediction, per core type and Frank angle)"
    requires = Requirements(dims={2}, any_elements={"C2", "C3", "C4", "C6"}, spinful=False,
                            uses=("rotation_eigenvalues", "chern"), optional_uses=("rotation_indices", "polarization"))

    def compute(self, context):
        chern = context.result("chern")
        eig = context.result("rotation_eigenvalues")
        powers = eig.details["powers"]
        by_label = {op.label: op for op in context.group.operations}
        for label in sorted(powers, key=lambda lab: -by_label[lab].fold):  # name the highest rotation first
            if powers[label] != 1:
                raise NotApplicable(f"{label}^{by_label[label].fold} = −1 on this spinless model (π flux): outside "
                                    "the atomic limits with C_n^n = +1 that the counting rule is derived for")
        rot = [op for op in planar_rotations(context.group, 2) if op.fold == 2 or op.angle > 0]
        gen = max(rot, key=lambda op: op.fold)
        n = int(gen.fold)
        w = np.asarray(gen.in_basis(context.lattice), dtype=int)
        c_number = int(chern.value)
        if c_number != 0 and (n != 4 or np.linalg.det(np.asarray(context.lattice, dtype=float)) <= 0):
            raise NotApplicable(f"Chern number {c_number} ≠ 0 with C{n}" + (" on left-handed axes" if n == 4 else "")
                                + ": no Wannier representation, and the Chern rule of this record (module docstring, "
                                "item 4) was measured and fixed on right-handed C4 samples only. What C4 samples show "
                                "(docs/defects.md): charges in units of e/2n, linear in the Frank angle, and a rotation "
                                "representation multiplied by e^{2πij/n} shifts them by −C·j·Ω/2π")
        rotations = []
        for label in powers:
            op = by_label[label]
            steps = n // int(op.fold)
            if not np.array_equal(np.asarray(op.in_basis(context.lattice), dtype=int),
                                  np.linalg.matrix_power(w, steps)):
                raise CrystaltopError(f"{label} is not {gen.label} to the power {steps} in the lattice basis")
            rotations.append((label, int(op.fold), steps, dict(eig.details[label]["momenta"])))
        orbits = centre_orbits(w, n)
        ions, ions_text = parse_ions(context.option("ions"), orbits, context.filling, context.model, w)
        table, columns, rows = band_representation_table(orbits, w, n, rotations)
        observed = np.array([eig.details[label]["counts"][m][p] for label, m, p in rows], dtype=int)
        if c_number != 0:
            return self._chern_outcome(context, eig, powers, gen, n, w, orbits, ions, ions_text, table, columns, rows,
                                       rotations, observed, c_number)
        try:
            found = decompositions(table, observed)
        except _TooMany:
            raise NotApplicable(f"{context.filling} occupied bands: too many Wannier contents to enumerate "
                                f"(more than {MAX_NODES} partial assignments)") from None
        if not found:
            raise NotApplicable("the occupied rotation eigenvalues are those of no atomic limit with Wannier centres "
                                "at the rotation centres (no non-negative integer decomposition into induced band "
                                "representations: fragile or non-Wannierisable bands)")

        def per_site(x):
            counts = [0] * len(orbits)
            for (o, _), c in zip(columns, x):
                counts[o] += int(c)
            return tuple(counts)

        contents = sorted({per_site(x) for x in found})
        predictions = {c: self._predict(orbits, c, ions, n, w) for c in contents}
        first = predictions[contents[0]]
        if any(p != first for p in predictions.values()):
            differ = [f"{dict((o['name'], c[i]) for i, o in enumerate(orbits))}" for c in contents]
            raise NotApplicable("the rotation eigenvalues allow Wannier contents that bind different charges ("
                                + "; ".join(differ[:3]) + "): the disclination charge is not fixed by them")
        value = {core: {omega: {f"e/{n}": entry["units"], "mod 1": entry["fraction"]} for omega, entry in cases.items()}
                 for core, cases in first.items()}
        content = contents[0]
        cores = {o["name"]: {"position": tuple(float(v) for v in o["sites"][0]), "site_symmetry": f"C{o['fold']}",
                             "sites": [tuple(float(v) for v in x) for x in o["sites"]],
                             "wannier_centres_per_site": content[i] if len(contents) == 1 else
                             sorted({c[i] for c in contents}),
                             "ions_per_site": fraction_text(ions_at(ions, o["sites"][0])),
                             "q_core": fraction_text(content[i] - ions_at(ions, o["sites"][0])) if len(contents) == 1 else
                             "varies with the decomposition (the charges do not)",
                             "frank_angles": {omega: {"radians": 2 * np.pi * e["k"] / o["fold"],
                                                      "holonomy_translation": e["T"]}
                                              for omega, e in first[o["name"]].items()}}
                 for i, o in enumerate(orbits)}
        multiplicities = [{f"{orbits[o]['name']} λ={_sector_text(orbits[o]['fold'], s)}": int(c)
                           for (o, s), c in zip(columns, x) if c} for x in found]
        notes = [f"counting rule δN ≡ (Ω/2π) q_core mod 1 (PHYSICS.md §8; the form of {LZBH} is not used), q_core "
                 "from the Wannier content the occupied rotation eigenvalues fix (induced band representations, "
                 f"relations as in {BLH})",
                 f"charges in units of e/{n} (mod {n}) and as a fraction of e mod 1; electrons count positive",
                 f"ionic background: {ions_text}"]
        if len(found) > 1:
            notes.append(f"{len(found)} decompositions into band representations fit the eigenvalues; all bind the "
                         "same charges")
        # one entry per (core, Ω) for the samples that verify it; the core by its coordinates, which the defect
        # builders read unambiguously (their Wyckoff names follow the lattice's rotations, not the group's)
        per_case = [{"core": cores[name]["position"], "core_name": name, "frank_angle": angle["radians"],
                     "charge": float(Fraction(first[name][omega]["fraction"])),
                     "fraction": first[name][omega]["fraction"], f"e/{n}": first[name][omega]["units"],
                     "holonomy_translation": angle["holonomy_translation"]}
                    for name in cores for omega, angle in cores[name]["frank_angles"].items()]
        details = {"n": n, "unit": f"e/{n}", "cores": cores, "per_case": per_case, "ions": ions_text,
                   "ion_background": [(tuple(float(v) for v in p), float(q)) for p, q in ions],
                   "filling": context.filling, "chern": int(chern.value),
                   "decompositions": multiplicities[:8], "number_of_decompositions": len(found),
                   "rotation_eigenvalue_counts": {label: eig.details[label]["counts"] for label in powers},
                   "generator": gen.label}
        indices = context.result("rotation_indices")
        if indices is not None:
            details["rotation_indices"] = dict(indices.value)
        pol = context.result("polarization")
        if pol is not None:
            details["polarization"] = tuple(float(v) for v in pol.value)
        checks = []
        cross = self._closed_form_check(context, indices, orbits, ions, n, w, first)
        if cross is not None:
            checks.append(cross)
        tp = self._polarization_check(context, pol, orbits, ions, n, contents, first, details)
        if tp is not None:
            checks.append(tp)
        cross_check = None
        if checks:
            cross_check = CrossCheck(method="; ".join(c[0] for c in checks), value={c[0]: c[1] for c in checks},
                                     agree=all(c[2] for c in checks), note="; ".join(c[3] for c in checks))
        return Outcome(value=value, method=f"counting rule on the Wannier content fixed by the occupied rotation "
                                           f"eigenvalues (PHYSICS.md §8; {BLH}; {LZBH})",
                       mesh="high-symmetry momenta", details=details, notes=tuple(notes), cross_check=cross_check)

    # ------------------------------------------------------------------ Chern bands (module docstring, item 4)
    @staticmethod
    def _chern_outcome(context, eig, powers, gen, n, w, orbits, ions, ions_text, table, columns, rows, rotations,
                       observed, c_number):
        names = [o["name"] for o in orbits]
        if names != list(CHERN_SHIFT):  # pragma: no cover - p4 always has these three orbits
            raise NotApplicable(f"rotation centres {names}: the Chern rule is fixed for 1a, 1b, 2c of p4 only")
        reference = reference_chern_counts(table, columns, rows, rotations)
        x = integer_solution(table, observed - c_number * reference)
        if x is None:
            raise NotApplicable(f"the occupied rotation eigenvalues minus {c_number} reference Chern band(s) are no "
                                "integer combination of band representations (the Fang–Gilbert–Bernevig relation "
                                "fails?)")
        content = [0] * len(orbits)
        for (o, _), c in zip(columns, x):
            content[o] += int(c)
        first = {}
        for i, o in enumerate(orbits):
            q = Fraction(content[i]) - ions_at(ions, o["sites"][0])
            shift = CHERN_SHIFT[o["name"]]
            cases = {}
            for k in frank_steps(o["fold"]):
                frac = fraction_mod1(Fraction(k, o["fold"]) * (q + c_number * shift))
                units = frac * n
                cases[angle_label(k, o["fold"])] = {
                    "k": k, "fraction": fraction_text(frac), "units": int(units) if units.denominator == 1 else fraction_text(units),
                    "T": holonomy_translation(w, o["sites"][0], k * (n // o["fold"]))}
            first[o["name"]] = cases
        value = {core: {omega: {f"e/{n}": entry["units"], "mod 1": entry["fraction"]} for omega, entry in cases.items()}
                 for core, cases in first.items()}
        cores = {o["name"]: {"position": tuple(float(v) for v in o["sites"][0]), "site_symmetry": f"C{o['fold']}",
                             "sites": [tuple(float(v) for v in x) for x in o["sites"]],
                             "integer_content_per_site": content[i], "chern_shift_per_site": fraction_text(CHERN_SHIFT[o["name"]]),
                             "ions_per_site": fraction_text(ions_at(ions, o["sites"][0])),
                             "frank_angles": {omega: {"radians": 2 * np.pi * e["k"] / o["fold"],
                                                      "holonomy_translation": e["T"]}
                                              for omega, e in first[o["name"]].items()}}
                 for i, o in enumerate(orbits)}
        per_case = [{"core": cores[name]["position"], "core_name": name, "frank_angle": angle["radians"],
                     "charge": float(Fraction(first[name][omega]["fraction"])),
                     "fraction": first[name][omega]["fraction"], f"e/{n}": first[name][omega]["units"],
                     "holonomy_translation": angle["holonomy_translation"]}
                    for name in cores for omega, angle in cores[name]["frank_angles"].items()]
        combination = {f"{orbits[o]['name']} λ={_sector_text(orbits[o]['fold'], s)}": int(c)
                       for (o, s), c in zip(columns, x) if c}
        details = {"n": n, "unit": f"e/{n}", "cores": cores, "per_case": per_case, "ions": ions_text,
                   "ion_background": [(tuple(float(v) for v in p), float(q)) for p, q in ions],
                   "filling": context.filling, "chern": c_number,
                   "chern_rule": {"reference_band": REFERENCE_BAND, "shift_per_unit_chern":
                                  {k: fraction_text(v) for k, v in CHERN_SHIFT.items()},
                                  "band_representations_of_the_rest": combination},
                   "rotation_eigenvalue_counts": {label: eig.details[label]["counts"] for label in powers},
                   "generator": gen.label}
        notes = [f"Chern rule (module docstring, item 4): δN ≡ (Ω/2π)(q_core + C·S_core) mod 1, S = 1/2, −1/2, 3/2 at "
                 f"1a, 1b, 2c; q_core from the band representations of the bands minus C reference bands "
                 f"({REFERENCE_BAND}); the half-integer part was measured on real-space samples",
                 f"charges in units of e/{n} (mod {n}; halves occur) and as a fraction of e mod 1; electrons count "
                 "positive", f"ionic background: {ions_text}"]
        return Outcome(value=value, method=f"band representations and C reference Chern bands, measured shift "
                                           f"(module docstring, item 4; {LZBH}; {ZMNB} from memory)",
                       mesh="high-symmetry momenta", details=details, notes=tuple(notes))

    # ------------------------------------------------------------------ predictions
    @staticmethod
    def _predict(orbits, content, ions, n, w) -> dict:
        out = {}
        for i, o in enumerate(orbits):
            q = Fraction(content[i]) - ions_at(ions, o["sites"][0])
            cases = {}
            for k in frank_steps(o["fold"]):
                frac = fraction_mod1(Fraction(k, o["fold"]) * q)
                units = frac * n
                cases[angle_label(k, o["fold"])] = {
                    "k": k, "fraction": fraction_text(frac), "units": int(units) if units.denominator == 1 else fraction_text(units),
                    "T": holonomy_translation(w, o["sites"][0], k * (n // o["fold"]))}
            out[o["name"]] = cases
        return out

    # ------------------------------------------------------------------ second methods
    @staticmethod
    def _closed_form_check(context, indices, orbits, ions, n, w, first):
        """The C4 / C6 closed forms of the module docstring (time reversal) from χ^(n), against the enumeration."""
        if indices is None or not context.time_reversal or n not in (4, 6):
            return None
        chi = indices.value.get(f"C{n}")
        if not isinstance(chi, tuple):
            return None
        names = [o["name"] for o in orbits]
        if n == 4:
            x1, m1, m2 = chi[:3]
            content = {"1b": (-x1 - m2) % 4, "2c": m2 % 2}
        else:
            m1, k1 = chi[:2]
            if m1 % 2:
                return ("closed form from χ^(6)", "odd [M1^(2)]", False, f"χ^(6) = {chi}: [M1^(2)] odd is no atomic "
                        "limit")
            content = {"2b": k1 % 3, "3c": (m1 // 2) % 2}
        if set(content) | {"1a"} != set(names):
            return None
        sizes = {o["name"]: len(o["sites"]) for o in orbits}
        content["1a"] = context.filling - sum(sizes[k] * v for k, v in content.items())
        vec = tuple(content[name] for name in names)
        predicted = DisclinationCharge._predict(orbits, vec, ions, n, w)
        agree = predicted == first
        shown = {core: {omega: e["units"] for omega, e in cases.items()} for core, cases in predicted.items()}
        return (f"closed form from χ^({n}) with time reversal (derived here; relations as in {BLH})", shown, agree,
                f"N(w) mod m from χ^({n}) = {tuple(chi)}: " + ", ".join(f"{k} {v}" for k, v in content.items()))

    @staticmethod
    def _polarization_check(context, pol, orbits, ions, n, contents, first, details):
        """δN(c, Ω) = δN(1a, Ω) − (ẑ × T)·P with the measured polarization (module docstring, item 3)."""
        if pol is None:
            return None
        at_centres = all(any(_same_point(p, s) for o in orbits for s in o["sites"]) for p, _ in ions)
        if not at_centres or any(q.denominator != 1 for _, q in ions):
            details["polarization_term"] = "not used: the ions are not integer charges at rotation centres"
            return None
        p_el = np.asarray(pol.value, dtype=float)
        p_tot = p_el - sum((float(q) * p for p, q in ions), np.zeros(2))
        handed = 1 if np.linalg.det(np.asarray(context.lattice, dtype=float)) > 0 else -1
        # the Wannier-centre sum of the content, against the measured P
        p_content = sorted({tuple(float(v) for v in np.round(wrap_reduced(sum(
            (c[i] * o["sites"].sum(axis=0) for i, o in enumerate(orbits)), np.zeros(2))), 6)) for c in contents})
        agree = all(_same_point(pc, p_el) for pc in p_content)
        origin = first[orbits[0]["name"]]
        shown = {}
        for o in orbits:
            shown[o["name"]] = {}
            for omega, e in first[o["name"]].items():
                t = e["T"]
                base = Fraction(origin[angle_label(e["k"] * (n // o["fold"]), n)]["fraction"])
                value = (float(base) - handed * (t[0] * p_tot[1] - t[1] * p_tot[0])) * n % n
                units = int(round(value)) % n
                shown[o["name"]][omega] = units if abs(value - round(value)) < 1e-4 else round(value, 6)
                agree &= isinstance(shown[o["name"]][omega], int) and units == e["units"]
        details["polarization_term"] = {"P_measured": tuple(float(v) for v in p_el), "P_of_the_content": p_content,
                                        "P_total": tuple(float(v) for v in p_tot)}
        return ("δN(1a, Ω) − (ẑ × T)·P with P from polarization (derived here; the T·P term of PHYSICS.md §8)",
                shown, bool(agree), f"P = {tuple(float(v) for v in p_el)} measured (electrons), {p_content} from the "
                                    "content")


def _sector_text(fold: int, s: int) -> str:
    f = Fraction(2 * s, fold)
    if f == 0:
        return "1"
    if f == 1:
        return "-1"
    return f"e^(2πi·{s}/{fold})"



@hookimpl
def crystaltop_invariants():
    return [DisclinationCharge()]
