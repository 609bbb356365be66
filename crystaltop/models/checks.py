"""Checks of a model against what it claims: Hermiticity, point-group symmetry, time reversal.

Every check evaluates the whole sample of random momenta in one batch per operation.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import NonHermitianError, SymmetryBreakingError
from .base import as_momenta, format_k

__all__ = ["check_hermitian", "symmetry_violations", "check_symmetric", "Violation", "violation_details"]


@dataclass(frozen=True)
class Violation:
    """How badly one operation is broken on a sample of momenta."""

    label: str
    """Operation label, or ``"T"`` for time reversal."""
    value: float
    """Largest relative violation ``||D H(k) D† − H(g k)||_F / max(||H(k)||_F, ||H(g k)||_F)`` on the sample."""
    k: np.ndarray
    """(dim,) reduced momentum where the largest violation occurs."""


def _sample(model, samples, seed) -> np.ndarray:
    if isinstance(samples, (int, np.integer)) and not isinstance(samples, bool):
        rng = np.random.default_rng(seed)
        return rng.random((int(samples), model.dim))
    return as_momenta(samples, model.dim, what="samples").reshape(-1, model.dim)


def _operations(group):
    return tuple(group.operations) if hasattr(group, "operations") else tuple(group)


def _relative(diff: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    scale = np.maximum(np.linalg.norm(a, axis=(-1, -2)), np.linalg.norm(b, axis=(-1, -2)))
    num = np.linalg.norm(diff, axis=(-1, -2))
    return np.where(num == 0.0, 0.0, num / np.maximum(scale, np.finfo(float).tiny))


def check_hermitian(model, k=None, tol: float = 1e-10, *, samples: int = 16, seed: int = 0) -> float:
    """Largest ``||H(k) − H(k)^†||_F / max(1, ||H(k)||_F)`` on a sample of momenta.

    Parameters
    ----------
    model : BlochModel
    k : array_like (..., dim), optional
        Momenta to test; default ``samples`` random points (seeded).
    tol : float
        Largest deviation accepted.
    samples, seed : int
        Size and seed of the random sample when ``k`` is not given.

    Returns
    -------
    float
        The largest relative deviation.

    Raises
    ------
    NonHermitianError
        Naming the momentum of the largest deviation and its size, if it exceeds ``tol``.
    """
    ks = _sample(model, samples, seed) if k is None else as_momenta(k, model.dim).reshape(-1, model.dim)
    h = model.hamiltonian(ks)
    dev = np.linalg.norm(h - np.conj(np.swapaxes(h, -1, -2)), axis=(-1, -2))
    rel = dev / np.maximum(1.0, np.linalg.norm(h, axis=(-1, -2)))
    worst = int(np.argmax(rel)) if len(rel) else 0
    value = float(rel[worst]) if len(rel) else 0.0
    if value > tol:
        raise NonHermitianError(f"H(k) is not Hermitian at k={format_k(ks[worst])}: |H - H†| = {dev[worst]:.1e}")
    return value


def violation_details(model, group, *, time_reversal: bool = False, samples=16, seed: int = 0) -> dict[str, Violation]:
    """Like :func:`symmetry_violations`, with the momentum of the largest violation of each operation."""
    ks = _sample(model, samples, seed)
    h = model.hamiltonian(ks)
    ops = _operations(group)
    mats, images = [], []
    for op in ops:
        mats.append(model.symmetry_matrix(op, ks))
        images.append(np.asarray(op.acts_on_k(ks, model.lattice), dtype=float))
    u_t = None
    if time_reversal:
        u_t = model.time_reversal_matrix()
        if u_t is None:
            raise SymmetryBreakingError("time reversal was asked for, but the model defines no time-reversal matrix")
        images.append(-ks)
    # H at every image momentum in one batch (one call per operation costs more than the sample itself)
    h_images = model.hamiltonian(np.concatenate(images)).reshape((len(images),) + h.shape) if images else h[None]
    out: dict[str, Violation] = {}
    step = max(1, (1 << 23) // max(1, h.nbytes))  # operations per stacked product (ops, samples, n, n), ~8 MB
    for start in range(0, len(ops), step):
        d = np.stack([np.broadcast_to(m, h.shape) for m in mats[start:start + step]])
        h_g = h_images[start:start + d.shape[0]]
        lhs = d @ h @ np.conj(np.swapaxes(d, -1, -2))
        rel = _relative(lhs - h_g, h, h_g)
        worst = np.argmax(rel, axis=-1)
        for i, op in enumerate(ops[start:start + step]):
            out[op.label] = Violation(op.label, float(rel[i, worst[i]]), ks[worst[i]])
    if time_reversal:
        u_t = np.asarray(u_t, dtype=complex)
        h_minus = h_images[-1]
        lhs = u_t @ np.conj(h) @ u_t.conj().T
        rel = _relative(lhs - h_minus, h, h_minus)
        worst = int(np.argmax(rel))
        out["T"] = Violation("T", float(rel[worst]), ks[worst])
    return out


def symmetry_violations(model, group, *, time_reversal: bool = False, samples=16, seed: int = 0) -> dict[str, float]:
    """Relative violation of each operation of a group, the largest over a random sample of momenta.

    Parameters
    ----------
    model : BlochModel
    group : PointGroup or iterable of Operation
    time_reversal : bool
        Also check ``U_T H(k)^* U_T^† = H(−k)`` (key ``"T"``).
    samples : int or array_like (m, dim)
        Number of random momenta (seeded), or the momenta themselves.
    seed : int

    Returns
    -------
    dict
        ``{label: max_k ||D_g H(k) D_g† − H(g k)||_F / max(||H(k)||_F, ||H(g k)||_F)}``, and ``"T"``.

    Raises
    ------
    SymmetryBreakingError
        If ``time_reversal`` is asked but the model defines no ``U_T``.
    LatticeMismatchError
        If an operation does not fit the lattice or maps a site onto no equivalent site.

    Examples
    --------
    >>> from crystaltop.examples import su_schrieffer_heeger
    >>> from crystaltop.symmetry import point_group
    >>> v = symmetry_violations(su_schrieffer_heeger(), point_group("-1"), time_reversal=True)
    >>> max(v.values()) < 1e-12
    True
    """
    details = violation_details(model, group, time_reversal=time_reversal, samples=samples, seed=seed)
    return {label: v.value for label, v in details.items()}


def check_symmetric(model, group, time_reversal: bool = False, tol: float = 1e-8, *, samples=16,
                    seed: int = 0) -> dict[str, float]:
    """Refuse a model that breaks an operation of ``group`` (or time reversal) by more than ``tol``.

    Returns
    -------
    dict
        The violations (as :func:`symmetry_violations`) when all pass.

    Raises
    ------
    SymmetryBreakingError
        ``"the model breaks 4z+ of group 4mm: ||D H(k) D† − H(gk)|| = 0.31 ||H|| at k=(0.125, 0.700)"``, naming
        the worst operation, the size of its violation (relative to ``||H||``) and where it occurs.
    """
    details = violation_details(model, group, time_reversal=time_reversal, samples=samples, seed=seed)
    symbol = getattr(group, "symbol", None)
    of_group = f" of group {symbol}" if symbol else ""
    spatial = {label: v for label, v in details.items() if label != "T"}
    if spatial:
        worst = max(spatial.values(), key=lambda v: v.value)
        if worst.value > tol:
            raise SymmetryBreakingError(
                f"the model breaks {worst.label}{of_group}: ||D H(k) D† − H(gk)|| = {worst.value:.2g} ||H|| "
                f"at k={format_k(worst.k)}")
    if "T" in details and details["T"].value > tol:
        v = details["T"]
        raise SymmetryBreakingError(
            f"the model breaks time reversal: ||U_T H(k)* U_T† − H(−k)|| = {v.value:.2g} ||H|| at k={format_k(v.k)}")
    return {label: v.value for label, v in details.items()}
