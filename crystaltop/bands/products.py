"""Ordered products of link matrices: Wilson loops without a Python loop over k-points."""

from __future__ import annotations

import numpy as np

__all__ = ["ordered_product", "link_matrices", "unitary_part", "batched_det"]


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
    phase : ndarray, shape (n, n), optional
        The position phase ``exp(-2πi dk·X)`` of one step, which makes the links those of the
        position-gauge Bloch functions (so that Wilson-loop phases are true Wannier centres).

    Returns
    -------
    ndarray, shape (*grid, m, m)
    """
    axis = axis + vectors.ndim if axis < 0 else axis  # as numpy counts it (a negative axis from the end)
    ket = vectors
    if phase is not None:
        phase = np.asarray(phase)
        diagonal = np.diagonal(phase)
        # P is diagonal in a site basis: a scaling of the rows instead of a product per k-point
        ket = diagonal[:, None] * vectors if not np.any(phase - np.diag(diagonal)) else phase @ vectors
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
