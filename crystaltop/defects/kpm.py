"""Occupied density near a core without diagonalising: a Chebyshev expansion of the Fermi projector applied to
local vectors (the kernel polynomial method; A. Weiße, G. Wellein, A. Alvermann, H. Fehske, Rev. Mod. Phys. 78,
275 (2006)).

With ``H̃ = (H − b)/a`` scaled into [−1, 1] and the smoothed step ``f(E) = ½ erfc((E − E_F)/w)``,
``ρ_i = ⟨i|f(H)|i⟩ = Σ_n c_n μ_n``, ``μ_n = ⟨i|T_n(H̃)|i⟩``. The moments come in pairs from one recursion
``v_{n+1} = 2H̃ v_n − v_{n−1}``: ``μ_{2n} = 2⟨v_n|v_n⟩ − μ_0``, ``μ_{2n+1} = 2⟨v_{n+1}|v_n⟩ − μ_1`` (Weiße et al.,
§II.D), so N moments need N/2 products with H̃.

Exactness of the truncation to a neighbourhood: ``v_n`` lives on the sites within ``n`` hops of ``|i⟩``, so the
recursion is carried out on the sites within N/2 + 1 hops of the local vectors only (states sorted by their
hop distance, the product at step n restricted to the first rows). The result is then *identical* to the same
expansion on the whole sample, and the cost no longer grows with the sample once it is larger than that reach.

Error figure, per state (a bound on ``|ρ_i − ⟨i|θ(E_F − H)|i⟩|``):

* truncation: ``Σ_{n ≥ N} |c_n|`` (``|μ_n| ≤ 1``), and the same for the window below;
* smoothing: ``|f(E) − θ(E_F − E)| ≤ ½ exp(−(E − E_F)²/w²)``, whose expectation ``⟨i|½ exp(−(H − E_F)²/w²)|i⟩`` is
  expanded with the same moments. It is tiny when no state lies within a few ``w`` of ``E_F`` and large (up to
  ½) when one does: a state at the Fermi level makes the charge ill-defined, and the bound says so.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from numpy.polynomial import chebyshev
from scipy.special import erfc

from ..errors import DefectGeometryError
from ..progress import progress_bar, wanted

#: Work (stored matrix entries × recursion steps × local vectors) above which a terminal shows a progress bar.
PROGRESS_MIN_WORK = 2e9

__all__ = ["ChebyshevExpansion", "chebyshev_expansion", "local_occupation", "spectral_bounds", "hop_levels"]


def spectral_bounds(h: sp.csr_matrix) -> tuple[float, float]:
    """Gershgorin bounds ``(E_min, E_max)`` of a Hermitian sparse matrix (safe, cheap)."""
    diag = h.diagonal().real
    radius = np.asarray(abs(h).sum(axis=1)).reshape(-1) - np.abs(diag)
    return float((diag - radius).min()), float((diag + radius).max())


@dataclass(frozen=True)
class ChebyshevExpansion:
    """Coefficients of the smoothed Fermi step and of its error window on the scaled spectrum."""

    centre: float
    """``b`` of ``H̃ = (H − b)/a``."""
    half_width: float
    """``a``."""
    fermi_energy: float
    smoothing: float
    """``w`` of ``½ erfc((E − E_F)/w)``."""
    step: np.ndarray
    """(N,) Chebyshev coefficients of the step."""
    window: np.ndarray
    """(N,) Chebyshev coefficients of ``½ exp(−(E − E_F)²/w²)``."""
    truncation: float
    """``Σ_{n ≥ N} (|c_n| + |g_n|)``: bound of the truncation error per state."""

    @property
    def moments(self) -> int:
        return len(self.step)


def chebyshev_expansion(bounds: tuple[float, float], fermi_energy: float, smoothing: float, *, tol: float = 1e-10,
                        max_moments: int = 20000) -> ChebyshevExpansion:
    """Expand the smoothed step at ``fermi_energy`` on ``bounds``, keeping moments until the tail is below ``tol``."""
    lo, hi = bounds
    a = 0.5 * (hi - lo) * 1.01 + 1e-12
    b = 0.5 * (hi + lo)
    w = float(smoothing)
    if not w > 0:
        raise DefectGeometryError("the smoothing width of the Fermi step must be positive")
    deg = 64
    while True:
        def step(x):
            return 0.5 * erfc((a * x + b - fermi_energy) / w)

        def window(x):
            return 0.5 * np.exp(-((a * x + b - fermi_energy) / w) ** 2)

        c = chebyshev.chebinterpolate(step, deg)
        g = chebyshev.chebinterpolate(window, deg)
        mags = np.abs(c) + np.abs(g)
        floor = mags < 1e-12  # the interpolation's rounding floor, which would otherwise add up over the tail
        mags[floor] = 0.0
        tail = np.cumsum(mags[::-1])[::-1]  # tail[n] = Σ_{j ≥ n}
        below = np.flatnonzero(tail < tol)
        if below.size and below[0] < deg // 2:
            n = int(below[0])
            bound = float(tail[n]) + 1e-12 * int(floor[n:].sum())  # the dropped floor counted at its ceiling
            return ChebyshevExpansion(b, a, float(fermi_energy), w, c[:n].copy(), g[:n].copy(), bound)
        if deg >= max_moments:
            raise DefectGeometryError(f"the Fermi step of width {w:.3g} needs more than {max_moments} Chebyshev "
                                      "moments on this spectrum: widen the smoothing or shrink the bandwidth")
        deg *= 2


def hop_levels(h: sp.csr_matrix, seeds: np.ndarray, depth: int) -> np.ndarray:
    """Hop distance of every state from the seed states (−1 beyond ``depth``)."""
    n = h.shape[0]
    level = np.full(n, -1, dtype=np.int64)
    level[seeds] = 0
    frontier = np.zeros(n, dtype=bool)
    frontier[seeds] = True
    graph = (h != 0).astype(np.int8).tocsr()
    for d in range(1, depth + 1):
        reached = graph @ frontier.astype(np.int8) > 0
        new = reached & (level < 0)
        if not np.any(new):
            break
        level[new] = d
        frontier = new
    return level


def local_occupation(h: sp.csr_matrix, states: np.ndarray, expansion: ChebyshevExpansion, *, batch: int = 64,
                     progress: bool | None = None):
    """``⟨i|f(H)|i⟩`` and its error bound for each state index in ``states``.

    ``progress``: a bar over the recursion steps (batches × moments/2), by default only on a terminal and only
    when the recursion is long (more than :data:`PROGRESS_MIN_WORK` stored entries × steps).

    Returns
    -------
    density, error : (len(states),) float arrays
    reach : int
        Number of states the recursion touched (the neighbourhood of the local vectors).
    """
    states = np.asarray(states, dtype=np.int64)
    n_mom = expansion.moments
    half = (n_mom + 1) // 2
    level = hop_levels(h, states, half + 1)
    region = np.flatnonzero(level >= 0)
    order = region[np.argsort(level[region], kind="stable")]
    lv = level[order]
    sub = h[order][:, order].tocsr()
    sub = (sub - expansion.centre * sp.identity(len(order), format="csr")) / expansion.half_width
    sub = sub.tocsr()
    sub.sort_indices()
    real = not np.iscomplexobj(sub.data) or np.abs(sub.data.imag).max(initial=0.0) == 0.0
    dtype = float if real else complex
    if real:
        sub = sub.real.tocsr() if np.iscomplexobj(sub.data) else sub
    data, indices, indptr = sub.data, sub.indices, sub.indptr
    prefix = np.searchsorted(lv, np.arange(half + 3), side="right")  # states with level <= j
    position = np.empty(len(h.diagonal()), dtype=np.int64)
    position[order] = np.arange(len(order))
    density = np.zeros(len(states))
    error = np.zeros(len(states))
    batches = -(-len(states) // batch)
    if progress is None and wanted(None):
        progress = sub.nnz * half * len(states) > PROGRESS_MIN_WORK
    bar = progress_bar(batches * half, "Chebyshev recursion", "step", bool(progress))
    for start in range(0, len(states), batch):
        cols = position[states[start:start + batch]]
        width = len(cols)
        mu = np.zeros((n_mom + 2, width))
        v_prev = np.zeros((len(order), width), dtype=dtype)
        v_prev[cols, np.arange(width)] = 1.0
        v = np.zeros_like(v_prev)
        rows1 = prefix[1]
        v[:rows1] = _product(data, indices, indptr, rows1, prefix[2], v_prev)
        mu[0] = 1.0
        mu[1] = np.real(np.conj(v_prev[cols, np.arange(width)]) * v[cols, np.arange(width)])
        # pairs: mu_{2n} = 2<v_n|v_n> - mu_0, mu_{2n+1} = 2<v_{n+1}|v_n> - mu_1
        for j in range(1, half + 1):
            rows = prefix[min(j, half + 2)]  # support of v_j
            if 2 * j < n_mom + 2:
                mu[2 * j] = 2.0 * np.real(np.einsum("ij,ij->j", np.conj(v[:rows]), v[:rows])) - mu[0]
            nxt_rows = prefix[min(j + 1, half + 2)]
            nxt = np.zeros((nxt_rows, width), dtype=dtype)
            nxt[:] = 2.0 * _product(data, indices, indptr, nxt_rows, prefix[min(j + 2, half + 2)], v) \
                - v_prev[:nxt_rows]
            if 2 * j + 1 < n_mom + 2:
                mu[2 * j + 1] = 2.0 * np.real(np.einsum("ij,ij->j", np.conj(nxt[:rows]), v[:rows])) - mu[1]
            v_prev[:nxt_rows] = v[:nxt_rows]
            v[:nxt_rows] = nxt
            bar.update(1)
        mu = mu[:n_mom]
        density[start:start + width] = expansion.step @ mu
        error[start:start + width] = np.abs(expansion.window @ mu) + expansion.truncation
    bar.close()
    return density, error, len(order)


def _product(data, indices, indptr, rows: int, cols: int, v: np.ndarray) -> np.ndarray:
    """``H[:rows] @ v[:cols]`` for a CSR matrix whose first ``rows`` rows only reach the first ``cols`` columns."""
    end = indptr[rows]
    block = sp.csr_matrix((data[:end], indices[:end], indptr[:rows + 1]), shape=(rows, cols), copy=False)
    return block @ v[:cols]
