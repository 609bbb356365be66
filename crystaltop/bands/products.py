"""Ordered products of link matrices: Wilson loops without a Python loop over k-points."""

from __future__ import annotations

from itertools import combinations
from math import comb

import numpy as np

__all__ = ["ordered_product", "link_matrices", "link_determinants", "link_minors", "minor_links", "subset_phases",
           "diagonal_of", "plucker_coordinates", "unitary_part", "batched_det", "hermitian_eigh"]

#: largest number of minors for which link determinants are formed from Plücker coordinates (one or two
#: occupied bands only: their minors have closed forms; larger ones would need a determinant each)
PLUCKER_LIMIT = 64


def _plucker_pays(n: int, m: int) -> bool:
    return m <= 2 and comb(n, m) <= PLUCKER_LIMIT


def ordered_product(mats: np.ndarray, axis: int) -> np.ndarray:
    """Product ``M_0 @ M_1 @ ... @ M_{N-1}`` of the matrices stacked along ``axis``.

    Parameters
    ----------
    mats : ndarray, shape (..., N, ..., m, m)
        Square matrices in the last two dimensions; ``axis`` indexes the factors and must not be one of them.
    axis : int
        The batch axis holding the ordered factors.

    Returns
    -------
    ndarray
        The products, with ``axis`` removed. Computed by pairwise reduction in ``ceil(log2 N)`` batched
        matrix multiplications, so the order of the factors is kept exactly.
    """
    m = np.moveaxis(mats, axis, 0)
    while m.shape[0] > 1:
        if m.shape[0] % 2:
            eye = np.broadcast_to(np.eye(m.shape[-1], dtype=m.dtype), (1,) + m.shape[1:])
            m = np.concatenate([m, eye], axis=0)
        m = m[0::2] @ m[1::2]
    return m[0]


def link_matrices(vectors: np.ndarray, axis: int, phase: np.ndarray | None = None) -> np.ndarray:
    """Overlap matrices ``<u(k)| P |u(k + dk)>`` between neighbours along a periodic grid axis.

    Parameters
    ----------
    vectors : ndarray, shape (*grid, n, m)
        The ``m`` chosen eigenvectors at every grid point.
    axis : int
        Grid axis (counted among the leading grid dimensions) along which neighbours are taken; the last
        point is linked to the first (periodic gauge, ``H(k + G) = H(k)``).
    phase : ndarray, shape (n, n) or (..., n, n), optional
        The position phase ``exp(-2πi dk·X)`` of one step, which makes the links those of the
        position-gauge Bloch functions (so that Wilson-loop phases are true Wannier centres). A stack of
        phases broadcasts against the grid dimensions (several grids stacked along a leading axis).

    Returns
    -------
    ndarray, shape (*grid, m, m)
    """
    axis = axis + vectors.ndim if axis < 0 else axis  # as numpy counts it (a negative axis from the end)
    ket = vectors
    if phase is not None:
        diagonal = diagonal_of(phase)
        # P is diagonal in a site basis: a scaling of the rows instead of a product per k-point
        ket = diagonal[..., :, None] * vectors if diagonal is not None else np.asarray(phase) @ vectors
    bra = np.conj(np.swapaxes(vectors, -1, -2))
    m = vectors.shape[-1]
    out = np.empty(vectors.shape[:-2] + (m, m), dtype=np.result_type(vectors, ket))
    n = vectors.shape[axis]

    def part(start, stop):
        return (slice(None),) * axis + (slice(start, stop),)

    # <u(k)| with P|u(k + dk)>, the last point linked to the first, without a rolled copy of the states
    np.matmul(bra[part(0, n - 1)], ket[part(1, n)], out=out[part(0, n - 1)])
    np.matmul(bra[part(n - 1, n)], ket[part(0, 1)], out=out[part(n - 1, n)])
    return out


def diagonal_of(phase) -> np.ndarray | None:
    """The diagonal of ``phase`` (a matrix or a stack of them) if every matrix is diagonal, else None."""
    phase = np.asarray(phase)
    off = ~np.eye(phase.shape[-1], dtype=bool)
    return None if np.any(phase[..., off]) else np.diagonal(phase, axis1=-2, axis2=-1)


def plucker_coordinates(vectors: np.ndarray) -> np.ndarray:
    """The ``m x m`` minors of each ``(n, m)`` matrix, one per set of ``m`` rows in lexicographic order.

    Returns an array of shape ``(..., C(n, m))``: the Plücker coordinates of the span of the columns.
    """
    n, m = vectors.shape[-2:]
    if m == 1:
        return vectors[..., :, 0].copy()
    subsets = list(combinations(range(n), m))
    if m == 2:
        out = np.empty(vectors.shape[:-2] + (len(subsets),), dtype=vectors.dtype)
        first, second = vectors[..., 0], vectors[..., 1]  # (..., n) each
        for s, (i, j) in enumerate(subsets):
            out[..., s] = first[..., i] * second[..., j] - first[..., j] * second[..., i]
        return out
    return batched_det(vectors[..., np.array(subsets), :])


def link_minors(vectors: np.ndarray) -> np.ndarray | None:
    """The Plücker coordinates :func:`link_determinants` would form, to be shared between axes, or None
    when it would use the link matrices instead (more than two occupied bands or :data:`PLUCKER_LIMIT` minors)."""
    return plucker_coordinates(vectors) if _plucker_pays(*vectors.shape[-2:]) else None


def subset_phases(diagonal: np.ndarray, m: int) -> np.ndarray:
    """``φ_S``, the product of ``diagonal`` over each set ``S`` of ``m`` rows (lexicographic, as the minors)."""
    n = diagonal.shape[-1]
    return np.array([np.prod(diagonal[list(rows)]) for rows in combinations(range(n), m)])


def minor_links(minors: np.ndarray, axis: int, phases: np.ndarray | None = None, *,
                conj_minors: np.ndarray | None = None) -> np.ndarray:
    """``Σ_S conj(μ_S(k)) φ_S μ_S(k + dk)`` between neighbours along a periodic grid ``axis`` of the Plücker
    coordinates ``minors`` ``(*grid, C)``: the link determinants of :func:`link_determinants`, ``(*grid,)``.

    ``phases`` is ``φ_S`` (:func:`subset_phases` of the diagonal of the position phase; None: all 1), and
    ``conj_minors`` the conjugate of ``minors`` when it is kept for several axes.
    """
    axis = axis + minors.ndim - 1 if axis < 0 else axis
    bra = np.conj(minors) if conj_minors is None else conj_minors
    count = minors.shape[axis]

    def part(start, stop):
        return (slice(None),) * axis + (slice(start, stop),)

    # products per set, the last point linked to the first, without a rolled copy; then one sum over the sets
    terms = np.empty(np.broadcast_shapes(bra.shape, minors.shape), dtype=np.result_type(bra, minors))
    np.multiply(bra[part(0, count - 1)], minors[part(1, count)], out=terms[part(0, count - 1)])
    np.multiply(bra[part(count - 1, count)], minors[part(0, 1)], out=terms[part(count - 1, count)])
    return terms.sum(axis=-1) if phases is None else terms @ phases


def link_determinants(vectors: np.ndarray, axis: int, phase: np.ndarray | None = None, *,
                      minors: np.ndarray | None = None, conj_minors: np.ndarray | None = None) -> np.ndarray:
    """``det <u(k)| P |u(k + dk)>`` between neighbours along a periodic grid axis, shape ``(*grid,)``.

    By the Cauchy–Binet formula the determinant of ``V(k)^† P V(k + dk)`` is ``Σ_S conj(μ_S(k)) φ_S μ_S(k + dk)``
    over the sets ``S`` of ``m`` rows, with ``μ`` the Plücker coordinates (:func:`plucker_coordinates`) and
    ``φ_S`` the product of the diagonal of ``P`` over ``S`` (:func:`minor_links`). That is a few multiplications
    per k-point instead of a matrix product and a determinant, and ``μ`` serves every axis (pass it as
    ``minors``). Used when ``P`` is diagonal (or absent), m <= 2 and there are at most :data:`PLUCKER_LIMIT` sets;
    otherwise the determinants of :func:`link_matrices`. Equal to those up to rounding. ``conj_minors``, the
    conjugate of ``minors``, may be passed too when it is kept for several axes.
    """
    axis = axis + vectors.ndim if axis < 0 else axis
    n, m = vectors.shape[-2:]
    diagonal = None if phase is None else diagonal_of(phase)
    if not _plucker_pays(n, m) or (phase is not None and diagonal is None):
        return batched_det(link_matrices(vectors, axis, phase))
    mu = plucker_coordinates(vectors) if minors is None else minors
    phases = None if diagonal is None else subset_phases(diagonal, m)
    return minor_links(mu, axis, phases, conj_minors=None if minors is None else conj_minors)


def unitary_part(mats: np.ndarray) -> np.ndarray:
    """The closest unitary matrix to each matrix (polar decomposition via SVD), batched."""
    u, _, vh = np.linalg.svd(mats)
    return u @ vh


def batched_det(mats: np.ndarray) -> np.ndarray:
    """Determinants of a stack of small matrices (closed forms for 1x1 and 2x2, LU otherwise)."""
    m = mats.shape[-1]
    if m == 1:
        return mats[..., 0, 0].copy()
    if m == 2:
        return mats[..., 0, 0] * mats[..., 1, 1] - mats[..., 0, 1] * mats[..., 1, 0]
    return np.linalg.det(mats)


def hermitian_eigh(mats: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Eigenvalues (ascending) and orthonormal eigenvectors (columns) of a stack of Hermitian matrices.

    Closed form for 2x2 (LAPACK's per-matrix overhead is most of the cost of a batch of tiny matrices),
    ``numpy.linalg.eigh`` otherwise. The phase of each eigenvector is arbitrary (it may differ from eigh's).
    """
    if mats.shape[-1] != 2:
        return np.linalg.eigh(mats)
    p, r = mats[..., 0, 0].real, mats[..., 1, 1].real
    q = 0.5 * (mats[..., 0, 1] + np.conj(mats[..., 1, 0]))
    mean, half = 0.5 * (p + r), 0.5 * (p - r)
    root = np.hypot(half, np.abs(q))
    values = np.stack([mean - root, mean + root], axis=-1)
    # eigenvector of the lower eigenvalue from the better-conditioned row of (a - λ) x = 0
    first = half >= 0
    x1 = np.where(first, q, half - root)
    x2 = np.where(first, -(half + root), np.conj(q))
    norm = np.sqrt(np.abs(x1) ** 2 + np.abs(x2) ** 2)
    flat = norm <= 1e-300  # a multiple of the identity: any basis
    norm = np.where(flat, 1.0, norm)
    x1, x2 = np.where(flat, 1.0, x1 / norm), np.where(flat, 0.0, x2 / norm)
    vectors = np.empty(mats.shape, dtype=complex)
    vectors[..., 0, 0], vectors[..., 1, 0] = x1, x2
    vectors[..., 0, 1], vectors[..., 1, 1] = -np.conj(x2), np.conj(x1)  # the orthogonal complement
    return values, vectors
