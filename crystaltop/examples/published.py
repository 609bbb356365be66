"""Published tight-binding models, with real orbital positions and kinds so the symmetry core can act on them.

Each factory cites its paper and states the sign convention used here, which matters: several published texts
quote Chern numbers or phase boundaries in another convention (PHYSICS.md §1-§6). Models whose basis is not
made of real orbitals (Qi–Wu–Zhang, BHZ: complex p± states; BBH: a π-flux gauge) are :class:`BlochFunction`
objects with explicit representations; the rest are :class:`LatticeModel` builds whose representations follow
from their sites.

:data:`CATALOGUE` lists one parameter point of each model with the point group it respects (standard orientation
of :func:`crystaltop.symmetry.point_group`), whether it is time-reversal symmetric, its filling and a gapless
parameter point; :func:`conformance_probes` hands it to :mod:`crystaltop.testing`.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass, field
from typing import Any, Callable

import numpy as np

from ..errors import CrystaltopError, ShapeError
from ..models import BlochFunction, BlochModel, LatticeModel
from ..symmetry import orbital_block, point_group, time_reversal_matrix

__all__ = [
    "qi_wu_zhang",
    "haldane",
    "su_schrieffer_heeger",
    "kane_mele",
    "bernevig_hughes_zhang",
    "fu_kane_mele",
    "c4_breathing_square",
    "benalcazar_bernevig_hughes",
    "stacked_layers",
    "PublishedModel",
    "CATALOGUE",
    "conformance_probes",
    "HONEYCOMB",
]

_SQ3 = np.sqrt(3.0)

#: Honeycomb (triangular) lattice with unit lattice constant, 60° between the rows; the sites of the two
#: sublattices sit at reduced (1/3, 1/3) and (2/3, 2/3), the origin is a hexagon centre (Wyckoff 1a).
HONEYCOMB = np.array([[1.0, 0.0], [0.5, _SQ3 / 2.0]])

_PAULI = np.array([[[0, 1], [1, 0]], [[0, -1j], [1j, 0]], [[1, 0], [0, -1]]], dtype=complex)
_SX, _SY, _SZ = _PAULI
_ID2 = np.eye(2, dtype=complex)


# ---------------------------------------------------------------------------------------------- geometry helpers
def _bonds_of_length(lattice, positions, distance, *, tol: float = 1e-6, reach: int = 2):
    """Directed bonds of one length: targets ``i``, sources ``j``, source cells and Cartesian vectors ``j -> i``.

    The bond runs from site ``j`` in cell ``cell`` to site ``i`` in the home cell; the vector is
    ``r_i − r_j − cell @ lattice``. Vectorised over sites and a window of cells.
    """
    lat = np.asarray(lattice, dtype=float)
    pos = np.asarray(positions, dtype=float)
    dim = lat.shape[0]
    cells = np.array(list(itertools.product(range(-reach, reach + 1), repeat=dim)), dtype=int)
    frac = pos[:, None, None, :] - pos[None, :, None, :] - cells[None, None, :, :]
    vectors = frac @ lat
    i, j, c = np.nonzero(np.abs(np.linalg.norm(vectors, axis=-1) - distance) < tol)
    return i, j, cells[c], vectors[i, j, c]


def _two_step_paths(lattice, positions, first, second, *, tol: float = 1e-6):
    """Paths ``j -> m -> i`` along two bonds of length ``first`` whose ends are ``second`` apart.

    Returns targets, sources, source cells and the two bond vectors ``d1 = r_m − r_j``, ``d2 = r_i − r_m``.
    """
    t, s, cell, vec = _bonds_of_length(lattice, positions, first, tol=tol)
    a, b = np.nonzero(t[:, None] == s[None, :])  # bond a: m <- j, then bond b: i <- m
    total = vec[a] + vec[b]
    keep = np.abs(np.linalg.norm(total, axis=-1) - second) < tol
    a, b = a[keep], b[keep]
    return t[b], s[a], cell[a] + cell[b], vec[a], vec[b]


def _once(i, j, cells):
    """Mask keeping one of each pair of mutually conjugate directed bonds ``(i, j, R)`` and ``(j, i, −R)``."""
    keep = np.zeros(len(i), dtype=bool)
    for n, (a, b, r) in enumerate(zip(i, j, cells)):
        keep[n] = (int(a), int(b), tuple(int(x) for x in r)) < (int(b), int(a), tuple(-int(x) for x in r))
    return keep


def _pad3(vectors):
    v = np.asarray(vectors, dtype=float)
    out = np.zeros(v.shape[:-1] + (3,))
    out[..., : v.shape[-1]] = v
    return out


def _projected_representations(group, kinds, isometry, spinful):
    """Representations of ``group`` on the span of ``isometry``'s columns in the real orbitals ``kinds``.

    ``isometry`` (N, n) expresses each basis state in the real-orbital states (orbital-major, spin-minor);
    the span must be invariant under every operation (checked).
    """
    reps = {}
    for op in group.operations:
        full = np.asarray(orbital_block(kinds, op.matrix), dtype=complex)
        if spinful:
            full = np.kron(full, np.asarray(op.spin, dtype=complex))
        rep = isometry.conj().T @ full @ isometry
        if np.abs(full @ isometry - isometry @ rep).max() > 1e-12:  # pragma: no cover - a wrong isometry
            raise CrystaltopError(f"the basis does not span a representation of {op.label}")
        reps[op] = rep
    return reps


# ---------------------------------------------------------------------------------------------- two dimensions
def qi_wu_zhang(m: float = 1.0, *, encoding: str = "orbital") -> BlochModel:
    """Qi–Wu–Zhang Chern insulator on the square lattice (X.-L. Qi, Y.-S. Wu, S.-C. Zhang, Phys. Rev. B 74,
    085308 (2006)).

    ``H(k) = sin k_x σ_x + sin k_y σ_y + (m + cos k_x + cos k_y) σ_z`` with ``k = 2π k_reduced``, lattice constant 1.

    Sign convention (PHYSICS.md §2, Berry convention of docs/conventions.md): the lower band has Chern number
    ``C = +1`` for ``−2 < m < 0``, ``−1`` for ``0 < m < 2`` and 0 for ``|m| > 2``; the gap closes at ``m = −2``
    (Γ), 0 (X and Y) and 2 (M). Texts that quote the opposite signs use the other convention.

    Parameters
    ----------
    m : float
        Mass parameter.
    encoding : {"orbital", "spin"}
        ``"orbital"`` (default): the basis is ``(s, (p_x − i p_y)/√2)`` at the origin, spinless, so the four-fold
        rotation acts as ``D(4z+) = diag(1, i)``; a :class:`BlochFunction` with the representations of ``4/m``
        projected from the real s, p orbitals, no time reversal (the basis is not closed under it).
        ``"spin"``: one s orbital with spin-1/2, the σ's acting on spin (``D(4z+) = exp(−iπσ_z/4)``, which is
        ``diag(1, i)`` up to a phase); a spinful :class:`LatticeModel` with the group ``4`` and a ``U_T`` that it
        breaks. Both have the real-space form ``h(0) = m σ_z``, ``h(x̂) = (σ_z − iσ_x)/2``, ``h(ŷ) = (σ_z − iσ_y)/2``.

    Returns
    -------
    BlochModel
        Two states, filling 1.

    Examples
    --------
    >>> import numpy as np
    >>> h = qi_wu_zhang(m=1.0).hamiltonian(np.zeros(2))
    >>> np.linalg.eigvalsh(h)
    array([-3.,  3.])
    """
    m = float(m)
    up_x = (_SZ - 1j * _SX) / 2.0
    up_y = (_SZ - 1j * _SY) / 2.0
    if encoding == "spin":
        model = LatticeModel(np.eye(2), spinful=True, name=f"Qi-Wu-Zhang (spin), m={m:g}")
        s, = model.add_site([0.0, 0.0], "s")
        model.set_onsite(s, m * _SZ)
        model.add_hopping(up_x, s, s, [1, 0])
        model.add_hopping(up_y, s, s, [0, 1])
        return model
    if encoding != "orbital":
        raise CrystaltopError(f"unknown encoding {encoding!r} for the Qi-Wu-Zhang model: expected 'orbital' or 'spin'")
    cells = [(0, 0), (1, 0), (-1, 0), (0, 1), (0, -1)]
    blocks = [m * _SZ, up_x, up_x.conj().T, up_y, up_y.conj().T]
    isometry = np.zeros((3, 2), dtype=complex)  # real orbitals (s, px, py) -> (s, (px − i py)/√2)
    isometry[0, 0] = 1.0
    isometry[1, 1], isometry[2, 1] = 1.0 / np.sqrt(2.0), -1j / np.sqrt(2.0)
    group = point_group("4/m")
    reps = _projected_representations(group, ["s", "px", "py"], isometry, spinful=False)
    return BlochFunction.from_real_space(cells, blocks, lattice=np.eye(2), positions=np.zeros((2, 2)),
                                       representations=reps, group=group, name=f"Qi-Wu-Zhang, m={m:g}")


def _honeycomb_model(spinful: bool, name: str) -> tuple[LatticeModel, int, int]:
    model = LatticeModel(HONEYCOMB, spinful=spinful, name=name)
    a, = model.add_site([1.0 / 3.0, 1.0 / 3.0], "s")
    b, = model.add_site([2.0 / 3.0, 2.0 / 3.0], "s")
    return model, a, b


def _honeycomb_paths(model):
    """Nearest-neighbour bonds and next-nearest-neighbour paths of a honeycomb model, one per conjugate pair.

    ``ν = ±1`` of each path is the sign of ``(d1 × d2)_z``: +1 when the hop turns counter-clockwise.
    """
    pos = model.positions[:: (2 if model.spinful else 1)]
    i, j, cells, vec = _bonds_of_length(model.lattice, pos, 1.0 / _SQ3)
    keep = _once(i, j, cells)
    nn = (i[keep], j[keep], cells[keep], vec[keep])
    i2, j2, cells2, d1, d2 = _two_step_paths(model.lattice, pos, 1.0 / _SQ3, 1.0)
    keep2 = _once(i2, j2, cells2)
    nu = np.sign(np.cross(_pad3(d1[keep2]), _pad3(d2[keep2]))[:, 2]).astype(int)
    return nn, (i2[keep2], j2[keep2], cells2[keep2], nu)


def haldane(t1: float = 1.0, t2: float = 0.1, phi: float = np.pi / 2, mass: float = 0.0) -> LatticeModel:
    """Haldane's honeycomb Chern insulator (F. D. M. Haldane, Phys. Rev. Lett. 61, 2015 (1988)).

    ``H = t1 Σ_<ij> c†_i c_j + t2 Σ_<<ij>> e^{iν_ij φ} c†_i c_j + M Σ_i ξ_i c†_i c_i`` on :data:`HONEYCOMB`, one
    s orbital on each sublattice (A at reduced (1/3, 1/3) with ξ = +1, B at (2/3, 2/3) with ξ = −1).

    Sign convention (PHYSICS.md §2): the hop from j to i carries ``e^{iν_ij φ}`` with ``ν_ij = +1`` when the
    two-bond path j → m → i turns counter-clockwise. With ``t1 = 1``, ``t2 = 0.1``: ``φ = +π/2, M = 0`` gives
    lower-band Chern number −1 (Berry convention); the gap closes at ``|M| = 3√3 |t2 sin φ|`` (at K or K').

    Returns
    -------
    LatticeModel
        Two states, filling 1. Respects ``6/m`` for ``M = 0`` and ``-6`` (3-fold and the trivial ``mz``)
        otherwise; time reversal only for ``sin φ = 0``.
    """
    model, a, b = _honeycomb_model(False, f"Haldane, t2={t2:g}, phi={phi:.4g}, M={mass:g}")
    model.set_onsite(a, float(mass))
    model.set_onsite(b, -float(mass))
    (i, j, cells, _), (i2, j2, cells2, nu) = _honeycomb_paths(model)
    for p, q, r in zip(i, j, cells):
        model.add_hopping(t1, int(p), int(q), r)
    for p, q, r, v in zip(i2, j2, cells2, nu):
        model.add_hopping(t2 * np.exp(1j * v * phi), int(p), int(q), r)
    return model


def kane_mele(t: float = 1.0, soc: float = 0.06, rashba: float = 0.0, stagger: float = 0.0) -> LatticeModel:
    """Kane–Mele quantum spin Hall model of graphene (C. L. Kane, E. J. Mele, Phys. Rev. Lett. 95, 226801 (2005)).

    ``H = t Σ_<ij> c†_i c_j + i λ_SO Σ_<<ij>> ν_ij c†_i s_z c_j + i λ_R Σ_<ij> c†_i (s × d̂_ij)_z c_j
    + λ_v Σ_i ξ_i c†_i c_i`` on :data:`HONEYCOMB`, spinful s orbitals (A: ξ = +1, B: ξ = −1).

    Sign convention: ``ν_ij = +1`` for a counter-clockwise two-bond path j → m → i (as in :func:`haldane`), so the
    spin-up block is Haldane's model with ``t2 = λ_SO``, ``φ = π/2``; ``d̂_ij`` is the unit vector from j to i;
    ``s`` are Pauli matrices (spin up first). With ``t = 1``, ``λ_SO = 0.06`` (PHYSICS.md §4): at ``λ_R = 0`` the
    gap at K is ``2|3√3 λ_SO − λ_v|``, Z2 = 1 for ``λ_v < 3√3 λ_SO``; at ``λ_v = 0``, Z2 = 1 for
    ``λ_R < 2√3 λ_SO``.

    Parameters
    ----------
    t, soc, rashba, stagger : float
        ``t``, ``λ_SO``, ``λ_R``, ``λ_v``.

    Returns
    -------
    LatticeModel
        Four states, filling 2, time-reversal symmetric. Respects ``6/mmm`` at ``λ_R = λ_v = 0``, ``6mm`` with
        ``λ_R`` only, ``-6m2`` with ``λ_v`` only and ``3m`` (mirror normals x, 60°, 120°) with both.
    """
    model, a, b = _honeycomb_model(True, f"Kane-Mele, soc={soc:g}, R={rashba:g}, v={stagger:g}")
    model.set_onsite(a, float(stagger))
    model.set_onsite(b, -float(stagger))
    (i, j, cells, vec), (i2, j2, cells2, nu) = _honeycomb_paths(model)
    unit = vec * _SQ3  # bond vectors have length 1/√3
    for p, q, r, d in zip(i, j, cells, unit):
        model.add_hopping(t * _ID2 + 1j * rashba * (_SX * d[1] - _SY * d[0]), int(p), int(q), r)
    for p, q, r, v in zip(i2, j2, cells2, nu):
        model.add_hopping(1j * soc * v * _SZ, int(p), int(q), r)
    return model


def bernevig_hughes_zhang(a: float = 1.0, b: float = 1.0, m: float = 2.0) -> BlochFunction:
    """Lattice regularisation of the Bernevig–Hughes–Zhang model (B. A. Bernevig, T. L. Hughes, S.-C. Zhang,
    Science 314, 1757 (2006)).

    Spin-up block ``h(k) = d(k)·τ`` with ``d = (A sin k_x, A sin k_y, M − 2B(2 − cos k_x − cos k_y))`` on the
    states ``(E↑, H↑)``; the spin-down block is ``h(−k)^*`` on ``(E↓, H↓)``. Square lattice, all states at the
    origin, basis order ``(E↑, E↓, H↑, H↓)`` (orbital-major, spin-minor) with ``E = s`` and
    ``H↑ = (p_x − i p_y)/√2 ↑``, ``H↓ = (p_x + i p_y)/√2 ↓``.

    Sign convention: with our active rotations (``g f(r) = f(R⁻¹ r)``) the d-vector above, with
    ``d_x − i d_y ∝ k_x − i k_y`` coupling E to H, is symmetric when ``H↑`` carries ``L_z = −1``; the paper's
    heavy holes ``(p_x ± i p_y)`` with ``J_z = ±3/2`` correspond to ``k_y → −k_y``, which flips the sign of the
    spin Chern number but not Z2. Here (PHYSICS.md §4): Z2 = 1 for ``0 < M/B < 8`` (inversion at Γ for
    ``0 < M/B < 4``, at M for ``4 < M/B < 8``); the spin-up Chern number is ``sgn B`` and ``−sgn B`` there.

    Parameters
    ----------
    a, b, m : float
        ``A``, ``B``, ``M``.

    Returns
    -------
    BlochFunction
        Four states, filling 2, ``U_T = 1 ⊗ iσ_y``; representations of ``4/mmm`` projected from the real orbitals
        (s, px, py) with spin, so the occupied parities and rotation eigenvalues are those of real s and p states.
    """
    a, b, m = float(a), float(b), float(m)
    tx, ty, tz = _PAULI
    up = {(0, 0): (m - 4.0 * b) * tz, (1, 0): b * tz - 0.5j * a * tx, (0, 1): b * tz - 0.5j * a * ty}
    up[(-1, 0)] = up[(1, 0)].conj().T
    up[(0, -1)] = up[(0, 1)].conj().T
    cells = list(up)
    blocks = np.zeros((len(cells), 4, 4), dtype=complex)
    for n, cell in enumerate(cells):
        blocks[n][np.ix_([0, 2], [0, 2])] = up[cell]
        blocks[n][np.ix_([1, 3], [1, 3])] = np.conj(up[cell])  # h_down(k) = h_up(−k)^*
    r = 1.0 / np.sqrt(2.0)
    isometry = np.zeros((6, 4), dtype=complex)  # (s, px, py) ⊗ spin -> (E↑, E↓, H↑, H↓)
    isometry[0, 0] = isometry[1, 1] = 1.0
    isometry[2, 2], isometry[4, 2] = 1j * r, r  # H↑ = i (px − i py)/√2 ↑
    isometry[3, 3], isometry[5, 3] = -1j * r, r  # H↓ = −i (px + i py)/√2 ↓ = −T H↑
    group = point_group("4/mmm")
    reps = _projected_representations(group, ["s", "px", "py"], isometry, spinful=True)
    u_t = isometry.conj().T @ time_reversal_matrix(3, True) @ isometry.conj()
    return BlochFunction.from_real_space(cells, blocks, lattice=np.eye(2), positions=np.zeros((4, 2)), spinful=True,
                                       representations=reps, group=group, time_reversal=u_t,
                                       name=f"BHZ, A={a:g}, B={b:g}, M={m:g}")


def _square_corners(model: LatticeModel, order) -> list[int]:
    return [model.add_site(p, "s")[0] for p in order]


def c4_breathing_square(gamma: float = 0.5, lam: float = 1.0) -> LatticeModel:
    """Flux-free C4-symmetric two-dimensional SSH model (W. A. Benalcazar, T. Li, T. L. Hughes, Phys. Rev. B 99,
    245151 (2019)).

    Square lattice, four s sites per cell at reduced ``(±1/4, ±1/4)`` around the cell centre (Wyckoff 1a, the
    origin); nearest neighbours within a cell are coupled by ``−γ``, across the cell boundary by ``−λ``.

    Sign convention: the amplitudes are negative, so for ``λ > |γ|`` the lowest band is the bonding state of the
    four sites around the plaquette centre 1b = (1/2, 1/2); at filling 1/4 it has ``χ^(4) = ([X1], [M1], [M2]) =
    (−1, −1, 0)`` and a corner charge e/4 (PHYSICS.md §6).

    Returns
    -------
    LatticeModel
        Four states, filling 1, time-reversal symmetric, respects ``4/mmm``; gap closes at ``|γ| = |λ|``.
    """
    model = LatticeModel(np.eye(2), name=f"C4 breathing square, gamma={gamma:g}, lambda={lam:g}")
    _square_corners(model, [(0.25, 0.25), (-0.25, 0.25), (-0.25, -0.25), (0.25, -0.25)])
    i, j, cells, _ = _bonds_of_length(model.lattice, model.positions, 0.5)
    keep = _once(i, j, cells)
    for p, q, r in zip(i[keep], j[keep], cells[keep]):
        model.add_hopping(-(lam if np.any(r) else gamma), int(p), int(q), r)
    return model


#: C4 (4z+) and mirror (mx) of the quadrupole model on its sites (0: (+,+), 1: (−,−), 2: (−,+), 3: (+,−)), the
#: site permutation times the gauge signs that move the π flux back; ``_BBH_C4`` to the fourth power is −1.
_BBH_C4 = np.zeros((4, 4))
_BBH_C4[2, 0], _BBH_C4[1, 2], _BBH_C4[3, 1], _BBH_C4[0, 3] = 1.0, -1.0, 1.0, 1.0
_BBH_MX = np.zeros((4, 4))
_BBH_MX[2, 0], _BBH_MX[0, 2], _BBH_MX[3, 1], _BBH_MX[1, 3] = 1.0, 1.0, -1.0, -1.0


def benalcazar_bernevig_hughes(gamma: float = 0.5, lam: float = 1.0) -> BlochFunction:
    """Quadrupole insulator of Benalcazar, Bernevig and Hughes (Science 357, 61 (2017)).

    ``H(k) = (γ + λ cos k_x) Γ4 + λ sin k_x Γ3 + (γ + λ cos k_y) Γ2 + λ sin k_y Γ1`` with ``Γ0 = τ3σ0``,
    ``Γk = −τ2σk``, ``Γ4 = τ1σ0`` (PHYSICS.md §6, from memory), basis index ``2 τ + σ``. In real space: four s
    sites per cell, state 0 at reduced (+1/4, +1/4), 1 at (−1/4, −1/4), 2 at (−1/4, +1/4), 3 at (+1/4, −1/4);
    the bonds 0–2, 1–3, 0–3 carry ``+γ`` inside the cell and ``+λ`` across it, the bond 1–2 carries ``−γ`` and
    ``−λ``: a π flux through every plaquette.

    The four-fold rotation is the site permutation 0 → 2 → 1 → 3 → 0 with the gauge sign −1 on the step 2 → 1,
    so ``D(4z+)^4 = −1``; the mirror ``mx`` swaps 0 ↔ 2 and 1 ↔ 3 with signs (+, −). The rest of ``4mm`` follows
    by composition. Half filling; the gap closes at ``|γ/λ| = 1``; quadrupole phase for ``|γ| < |λ|``.

    Returns
    -------
    BlochFunction
        Four states, filling 2, ``U_T = 1`` (real hoppings), group ``4mm``; wraps the :class:`LatticeModel` of the
        bonds, so :meth:`~BlochFunction.real_space_blocks` gives the real-space form.
    """
    lattice_model = LatticeModel(np.eye(2), name=f"BBH quadrupole, gamma={gamma:g}, lambda={lam:g}")
    _square_corners(lattice_model, [(0.25, 0.25), (-0.25, -0.25), (-0.25, 0.25), (0.25, -0.25)])
    for (p, q, dx), sign in zip(((0, 2, (1, 0)), (1, 3, (-1, 0)), (0, 3, (0, 1)), (1, 2, (0, -1))), (1, 1, 1, -1)):
        lattice_model.add_hopping(sign * gamma, p, q)
        lattice_model.add_hopping(sign * lam, p, q, dx)
    group = point_group("4mm")
    return BlochFunction(lattice_model, representations={group["4z+"]: _BBH_C4, group["mx"]: _BBH_MX},
                         group=group, time_reversal=True)


# ---------------------------------------------------------------------------------------------- one and three dimensions
def su_schrieffer_heeger(v: float = 0.5, w: float = 1.0) -> LatticeModel:
    """Su–Schrieffer–Heeger chain (W. P. Su, J. R. Schrieffer, A. J. Heeger, Phys. Rev. Lett. 42, 1698 (1979)).

    ``H = Σ_R (v c†_{A,R} c_{B,R} + w c†_{B,R} c_{A,R+1} + h.c.)``, s orbitals, A at reduced −1/4 and B at +1/4 so
    that inversion about the origin swaps them (both bonds are centred on inversion centres, 0 and 1/2).

    Sign convention: ``H(k) = [[0, v + w e^{−ik}], [v + w e^{ik}, 0]]``; the lower band's Wannier centre sits at
    the cell boundary 1/2 (polarisation 1/2) for ``|w| > |v|`` and at 0 for ``|w| < |v|``.

    Returns
    -------
    LatticeModel
        Two states, filling 1, time-reversal symmetric, respects ``-1`` (and ``mmm`` of the chain).
    """
    model = LatticeModel([[1.0]], name=f"SSH, v={v:g}, w={w:g}")
    a, = model.add_site([-0.25], "s")
    b, = model.add_site([0.25], "s")
    model.add_hopping(v, a, b)
    model.add_hopping(w, b, a, [1])
    return model


#: Rotation taking the cubic axes of :func:`fu_kane_mele` to the "bond" frame: [111] -> z, [1-10] -> x.
BOND_FRAME = np.array([[1.0, -1.0, 0.0] / np.sqrt(2.0), [1.0, 1.0, -2.0] / np.sqrt(6.0), [1.0, 1.0, 1.0] / _SQ3])


def fu_kane_mele(t: float = 1.0, soc: float = 0.125, dt: float = 0.4, *, frame: str = "cubic") -> LatticeModel:
    """Fu–Kane–Mele diamond-lattice model (L. Fu, C. L. Kane, E. J. Mele, Phys. Rev. Lett. 98, 106803 (2007)).

    ``H = Σ_<ij> t_ij c†_i c_j + (8 i λ_SO / a²) Σ_<<ij>> c†_i s·(d¹_ij × d²_ij) c_j``, spinful s orbitals, cubic
    lattice constant ``a = 1``; fcc vectors ``a1 = (0, 1, 1)/2``, ``a2 = (1, 0, 1)/2``, ``a3 = (1, 1, 0)/2`` (so
    ``b1 = 2π(−1, 1, 1)`` and cyclic). The origin is the centre of the [111] bond: the two sites sit at reduced
    ``∓(1/8, 1/8, 1/8)``. That bond has ``t + δt``, the other three ``t``.

    Sign convention: ``d¹ = r_m − r_j`` and ``d² = r_i − r_m`` are the bond vectors of the two-bond path
    j → m → i. PHYSICS.md §4: with ``t = 1``, ``λ_SO = 0.125``, ``δt = +0.4`` gives the strong phase 1;(111),
    ``δt = −0.4`` gives 0;(111); ``δt = 0`` is a semimetal with the gap closing at the three X points.

    Parameters
    ----------
    t, soc, dt : float
        ``t``, ``λ_SO``, ``δt``.
    frame : {"cubic", "bond"}
        Cartesian frame: the cubic axes, or :data:`BOND_FRAME` with the [111] bond along z and [1-10] along x
        (spin quantised along the new z). Reduced coordinates, and so every index, are the same.

    Returns
    -------
    LatticeModel
        Two sites with spin, four states, filling 2, time-reversal symmetric. Respects ``-3m``
        with its three-fold axis along the [111] bond and the two-fold axes / mirror normals along [1-10] and its
        images (``point_group("-3m", axis=(1, 1, 1), secondary=(1, -1, 0))``; in the bond frame the standard
        ``point_group("-3m")``).
    """
    lattice = 0.5 * np.array([[0.0, 1.0, 1.0], [1.0, 0.0, 1.0], [1.0, 1.0, 0.0]])
    if frame == "bond":
        lattice = lattice @ BOND_FRAME.T
    elif frame != "cubic":
        raise CrystaltopError(f"unknown frame {frame!r} for the Fu-Kane-Mele model: expected 'cubic' or 'bond'")
    model = LatticeModel(lattice, spinful=True, name=f"Fu-Kane-Mele, soc={soc:g}, dt={dt:g}")
    model.add_site([-0.125] * 3, "s")
    model.add_site([0.125] * 3, "s")
    pos = model.positions[::2]
    nn = np.sqrt(3.0) / 4.0
    i, j, cells, vec = _bonds_of_length(lattice, pos, nn)
    keep = _once(i, j, cells)
    for p, q, r, d in zip(i[keep], j[keep], cells[keep], vec[keep]):
        along_bond = not np.any(r)  # the bond inside the cell is the [111] one
        model.add_hopping(t + (dt if along_bond else 0.0), int(p), int(q), r)
    i2, j2, cells2, d1, d2 = _two_step_paths(lattice, pos, nn, 1.0 / np.sqrt(2.0))
    keep2 = _once(i2, j2, cells2)
    for p, q, r, u, w in zip(i2[keep2], j2[keep2], cells2[keep2], d1[keep2], d2[keep2]):
        x = np.cross(u, w)
        model.add_hopping(8j * soc * np.tensordot(x, _PAULI, axes=1), int(p), int(q), r)
    return model


def stacked_layers(layer: BlochModel, tz: float = 0.1, *, spacing: float = 1.0, name: str | None = None) -> BlochModel:
    """Weakly coupled copies of a two-dimensional model stacked along z (a weak-topological construction).

    Layers sit at ``z = n · spacing``; every basis state hops to the same state of the next layer with amplitude
    ``t_z`` (``H_3D(k) = H_2D(k_x, k_y) + 2 t_z cos(2π k_z)`` for a scalar ``t_z``). For a time-reversal-invariant
    Z2 layer (:func:`kane_mele`, :func:`bernevig_hughes_zhang`) this is the weak phase 0;(001) while the gap stays
    open (``4|t_z|`` below the indirect gap of the layer).

    Parameters
    ----------
    layer : LatticeModel or BlochFunction
        A 2D model; a :class:`BlochFunction` must carry a group.
    tz : float
        Interlayer amplitude (for a spinful layer, spin-independent).
    spacing : float
        Interlayer distance (the third lattice vector is ``(0, 0, spacing)``).

    Returns
    -------
    LatticeModel or BlochFunction
        Of the same kind as ``layer``, with the layer's point group (every operation of a planar group keeps the
        z axis, so it fits the stacked lattice) and its time reversal.
    """
    if layer.dim != 2:
        raise ShapeError(f"stacked_layers needs a 2D layer, got a {layer.dim}D model")
    lattice = np.zeros((3, 3))
    lattice[:2, :2] = layer.lattice
    lattice[2, 2] = float(spacing)
    label = name or f"stacked {layer.name or type(layer).__name__}, tz={tz:g}"
    if isinstance(layer, LatticeModel):
        model = LatticeModel(lattice, spinful=layer.spinful, name=label)
        for site in layer.sites:
            model.add_site(np.append(site.position, 0.0), site.kinds, label=site.label)
        for orbital, block in layer.onsite_terms.items():
            model.set_onsite(orbital, block if layer.spinful else block[0, 0].real)
        for bond in layer.bonds:
            model.add_hopping(bond.value, bond.target, bond.source, tuple(bond.cell) + (0,))
        for orbital in range(layer.n_orbitals):
            model.add_hopping(tz, orbital, orbital, (0, 0, 1))
        return model
    group = getattr(layer, "group", None)
    if group is None:
        raise CrystaltopError("stacking a BlochFunction needs its group (BlochFunction(..., group=...))")

    reps = {op: (lambda k, _op=op: layer.symmetry_matrix(_op, k[..., :2])) for op in group.operations}
    positions = np.concatenate([layer.positions, np.zeros((layer.n_states, 1))], axis=1)
    options = dict(spinful=layer.spinful, representations=reps, group=group, time_reversal=layer.time_reversal_matrix(),
                   basis=layer.basis, name=label)
    try:
        cells, blocks = layer.real_space_blocks()
    except CrystaltopError:  # a bare callable: stacked as one
        def h(k):
            return layer.hamiltonian(k[..., :2]) + (2.0 * tz * np.cos(2.0 * np.pi * k[..., 2]))[..., None, None] \
                * np.eye(layer.n_states)
        return BlochFunction(h, lattice=lattice, positions=positions, **options)
    # the real-space form of the layer, each vector in the plane z = 0, and the hop t_z to the next layer and back
    n = layer.n_states
    cells = np.concatenate([np.pad(np.asarray(cells), ((0, 0), (0, 1))), [[0, 0, 1], [0, 0, -1]]])
    blocks = np.concatenate([np.asarray(blocks, dtype=complex), np.broadcast_to(tz * np.eye(n), (2, n, n))])
    return BlochFunction.from_real_space(cells, blocks, lattice=lattice, positions=positions, **options)


# ---------------------------------------------------------------------------------------------- the catalogue
@dataclass(frozen=True)
class PublishedModel:
    """One parameter point of a published model and what it is known to respect.

    The fields ``name, build, group, filling, dim, time_reversal, spinful, gapless`` are those of
    :class:`crystaltop.testing.Probe`, so the conformance suite can use the entries directly.
    """

    name: str
    """Short identifier, e.g. ``"haldane"``."""
    build: Callable[[], Any]
    """Builds the model at this parameter point."""
    group: str
    """Hermann–Mauguin symbol of the point group it respects, in the standard orientation of ``point_group``."""
    filling: int
    """Number of occupied bands (both spins counted) at which it is gapped."""
    dim: int
    time_reversal: bool
    """Whether it is time-reversal symmetric."""
    spinful: bool
    gapless: Callable[[], Any] | None = None
    """Builds the same model at a parameter point where the gap at this filling closes at a TRIM."""
    reference: str = ""
    """The paper."""
    parameters: dict = field(default_factory=dict)
    """Keyword arguments of the factory for this entry."""


def _entry(name, factory, kwargs, group, filling, dim, t, spinful, gapless=None, reference=""):
    build = (lambda: factory(**kwargs))
    return PublishedModel(name, build, group, filling, dim, t, spinful,
                          None if gapless is None else (lambda: factory(**{**kwargs, **gapless})), reference,
                          dict(kwargs))


#: One gapped parameter point of each model, with its group (standard orientation), filling and a gapless point.
CATALOGUE: tuple[PublishedModel, ...] = (
    _entry("qi_wu_zhang", qi_wu_zhang, {"m": 1.0}, "4/m", 1, 2, False, False, {"m": 2.0},
           "Qi, Wu, Zhang, Phys. Rev. B 74, 085308 (2006)"),
    _entry("haldane", haldane, {"t2": 0.1, "phi": np.pi / 2, "mass": 0.0}, "6/m", 1, 2, False, False, None,
           "Haldane, Phys. Rev. Lett. 61, 2015 (1988)"),
    _entry("haldane_massive", haldane, {"t2": 0.1, "phi": np.pi / 4, "mass": 0.2}, "-6", 1, 2, False, False, None,
           "Haldane, Phys. Rev. Lett. 61, 2015 (1988)"),
    _entry("su_schrieffer_heeger", su_schrieffer_heeger, {"v": 0.5, "w": 1.0}, "-1", 1, 1, True, False,
           {"v": 1.0}, "Su, Schrieffer, Heeger, Phys. Rev. Lett. 42, 1698 (1979)"),
    _entry("kane_mele", kane_mele, {"soc": 0.06}, "6/mmm", 2, 2, True, True, None,
           "Kane, Mele, Phys. Rev. Lett. 95, 226801 (2005)"),
    _entry("kane_mele_rashba", kane_mele, {"soc": 0.06, "rashba": 0.05, "stagger": 0.1}, "3m", 2, 2, True, True,
           None, "Kane, Mele, Phys. Rev. Lett. 95, 226801 (2005)"),
    _entry("bernevig_hughes_zhang", bernevig_hughes_zhang, {"a": 1.0, "b": 1.0, "m": 2.0}, "4/mmm", 2, 2, True,
           True, {"m": 0.0}, "Bernevig, Hughes, Zhang, Science 314, 1757 (2006)"),
    _entry("fu_kane_mele", fu_kane_mele, {"dt": 0.4, "frame": "bond"}, "-3m", 2, 3, True, True, {"dt": 0.0},
           "Fu, Kane, Mele, Phys. Rev. Lett. 98, 106803 (2007)"),
    _entry("c4_breathing_square", c4_breathing_square, {"gamma": 0.5, "lam": 1.0}, "4/mmm", 1, 2, True, False,
           {"gamma": 1.0}, "Benalcazar, Li, Hughes, Phys. Rev. B 99, 245151 (2019)"),
    _entry("benalcazar_bernevig_hughes", benalcazar_bernevig_hughes, {"gamma": 0.5, "lam": 1.0}, "4mm", 2, 2, True,
           False, {"gamma": 1.0}, "Benalcazar, Bernevig, Hughes, Science 357, 61 (2017)"),
    PublishedModel("stacked_kane_mele", lambda: stacked_layers(kane_mele(), 0.02), "6/mmm", 2, 3, True, True, None,
                   "Kane, Mele, Phys. Rev. Lett. 95, 226801 (2005), stacked", {"tz": 0.02}),
    PublishedModel("stacked_bernevig_hughes_zhang", lambda: stacked_layers(bernevig_hughes_zhang(), 0.1), "4/mmm", 2,
                   3, True, True, None, "Bernevig, Hughes, Zhang, Science 314, 1757 (2006), stacked", {"tz": 0.1}),
)


def conformance_probes() -> tuple[PublishedModel, ...]:
    """The catalogue, as probe models for :mod:`crystaltop.testing` (same field names as its ``Probe``)."""
    return CATALOGUE
