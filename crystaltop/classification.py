"""classify(model, group, filling): validate the model once, build the shared band data, run the invariants."""

from __future__ import annotations

import numpy as np

from .bands import BandData
from .dispatch import run_invariants
from .errors import FillingError, SymmetryBreakingError
from .report import Report

__all__ = ["classify", "resolve_group"]


def resolve_group(model, group):
    """The PointGroup to check a model against: a symbol, a PointGroup, or (None) read from the model itself.

    With no group given, a model that knows its sites and orbital kinds (a LatticeModel) gets the largest group
    of operations about its origin that map its decorated lattice onto itself (spglib) *and* leave its
    Hamiltonian invariant; a bare callable gets the trivial group 1.
    """
    from .models import detect_point_group
    from .symmetry import PointGroup, point_group

    if group is None:
        return detect_point_group(model)
    return group if isinstance(group, PointGroup) else point_group(group)


def classify(model, group=None, filling=None, *, time_reversal=None, invariants=None, options=None,
             registry=None, gap_tol: float = 1e-6, symmetry_tol: float = 1e-8, samples: int = 16,
             seed: int = 0, gauge_seed: int | None = None, progress: bool | None = None,
             halve_by_time_reversal: bool = True) -> Report:
    """Every invariant that the model's symmetry allows, in one report.

    Parameters
    ----------
    model : BlochModel
        A :class:`~crystaltop.LatticeModel` or a :class:`~crystaltop.BlochFunction` wrapping a callable H(k).
    group : str or PointGroup, optional
        Point group the model has (Hermann–Mauguin or Schoenflies symbol). Checked: a model that breaks one of
        its operations is refused (:class:`~crystaltop.errors.SymmetryBreakingError` naming the operation and the
        size of the violation). None: read from the model (see :func:`resolve_group`).
    filling : int, optional
        Number of occupied bands (both spin states counted). Default: half the number of states.
    time_reversal : bool, optional
        True: the model must be time-reversal symmetric (checked, refused otherwise). False: treat it as not.
        None: use time reversal if the model defines it and respects it.
    invariants : sequence of str, optional
        Only these (and what they use); default: every installed invariant that applies.
    options : dict, optional
        ``{"mesh": 48}`` for all, or per invariant ``{"chern": {"mesh": 80}}``.
    gap_tol : float
        Smallest direct gap accepted (energy units of the model).
    symmetry_tol : float
        Largest relative violation ``||D H(k) D† − H(gk)|| / ||H||`` accepted for a declared operation.
    samples, seed : int
        Random k-points used for the symmetry checks.
    gauge_seed : int, optional
        For testing: random phases on every eigenvector (no invariant may change).
    progress : bool, optional
        Progress bar while large meshes are diagonalised; default only on a terminal; False turns it off.
    halve_by_time_reversal : bool
        With time reversal in use, take the states at ``−k`` from those at ``k`` (``U_T V(k)*``) where both lie on
        the mesh, instead of diagonalising ``H(−k)``: about half the diagonalisations of a mesh. False
        diagonalises every point (the values are the same; ``band_stats["time_reversed"]`` counts the others).

    Returns
    -------
    Report

    Examples
    --------
    >>> import crystaltop as ct
    >>> from crystaltop.examples import qi_wu_zhang
    >>> ct.classify(qi_wu_zhang(m=1.0), group="4", filling=1)["chern"].value
    -1
    """
    from .models import check_hermitian, symmetry_violations

    pg = resolve_group(model, group)
    pg.in_basis(np.asarray(model.lattice, dtype=float))  # LatticeMismatchError naming the operation if the lattice refuses it
    n = int(model.n_states)
    if filling is None:
        filling = n // 2
    if isinstance(filling, bool) or int(filling) != filling or not 0 < int(filling) < n:
        raise FillingError(f"filling {filling} is out of range: the model has {n} bands, so 1 <= filling <= {n - 1}")
    filling = int(filling)
    check_hermitian(model, seed=seed)

    has_t = model.time_reversal_matrix() is not None
    if time_reversal and not has_t:
        raise SymmetryBreakingError("time reversal was asked for, but the model defines no time-reversal matrix")
    use_t = has_t if time_reversal is None else bool(time_reversal)
    viol = symmetry_violations(model, pg, time_reversal=use_t, samples=samples, seed=seed)
    t_violation = viol.pop("T", None)
    if t_violation is not None and t_violation > symmetry_tol:
        if time_reversal:
            raise SymmetryBreakingError(
                f"the model breaks time reversal: ||U_T H(k)* U_T† − H(−k)|| / ||H|| = {t_violation:.2e}")
        use_t = False
    worst = max(viol, key=viol.get) if viol else None
    if worst is not None and viol[worst] > symmetry_tol:
        raise SymmetryBreakingError(
            f"the model breaks {worst} of point group {pg.symbol}: ||D H(k) D† − H(gk)|| / ||H|| = {viol[worst]:.2e}")
    spinful = bool(getattr(model, "spinful", False))
    if use_t and spinful and filling % 2:
        raise FillingError(f"filling {filling} is odd, but with T² = −1 every band is paired at the "
                           "time-reversal-invariant momenta (Kramers): an insulator needs an even filling")

    u_t = model.time_reversal_matrix() if use_t and halve_by_time_reversal else None
    bands = BandData(model, filling, gap_tol=gap_tol, gauge_seed=gauge_seed, progress=progress, time_reversal=u_t)
    results = run_invariants(model=model, group=pg, filling=filling, time_reversal=use_t, bands=bands,
                             registry=registry, only=invariants, options=options)
    checks = {"symmetry_violation": viol, "samples": samples, "symmetry_tol": symmetry_tol}
    if t_violation is not None:
        checks["time_reversal_violation"] = t_violation
    summary = {"name": getattr(model, "name", None) or type(model).__name__, "dim": model.dim, "n_states": n,
               "filling": filling, "group": pg.symbol, "time_reversal": use_t, "spinful": spinful}
    stats = {"k_points": bands.stats.k_points, "batches": list(bands.stats.batches),
             "cache_hits": bands.stats.cache_hits, "time_reversed": bands.stats.time_reversed}
    return Report(model=summary, checks=checks, results=results, band_stats=stats)
