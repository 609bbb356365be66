"""The group average of a model: a symmetric model from any model (random test models above all).

For symmetry matrices obeying ``D_{gh}(k) ∝ D_g(h k) D_h(k)`` (a projective phase cancels),

    H'(k) = (1/|G|) Σ_g D_g(g⁻¹k) H(g⁻¹k) D_g(g⁻¹k)^†

satisfies ``D_h(k) H'(k) D_h(k)^† = H'(h k)`` for every ``h`` in ``G``: the sum is re-indexed by ``hg``.
Time reversal commutes with the point operations (``U_T D_g(k)^* U_T^† = D_g(−k)``), so the further average
``(H' + U_T H'(−k)^* U_T^†) / 2`` keeps both.
"""

from __future__ import annotations

import numpy as np

from ..errors import SymmetryBreakingError
from .bloch_function import BlochFunction

__all__ = ["symmetrized"]


def symmetrized(model, group, *, time_reversal: bool = False, name: str | None = None) -> BlochFunction:
    """The model averaged over a point group (and time reversal).

    Parameters
    ----------
    model : BlochModel
        Must give ``symmetry_matrix(op, k)`` for every operation of ``group``.
    group : PointGroup
    time_reversal : bool
        Average over ``{1, T}`` too (the model must define ``U_T``).
    name : str, optional
        Default: the model's name with ``" (symmetrized)"``.

    Returns
    -------
    BlochFunction
        Same lattice, positions, basis, spin and ``U_T``; its representations are the model's own matrices
        for every operation of ``group``.

    Examples
    --------
    >>> import numpy as np
    >>> from crystaltop.models import LatticeModel, symmetry_violations
    >>> from crystaltop.symmetry import point_group
    >>> m = LatticeModel(np.eye(2))
    >>> o = m.add_site([0.0, 0.0], "s px py")
    >>> m.add_hopping(0.3 + 0.2j, 0, 1, cell=[1, 0])
    >>> g = point_group("4mm")
    >>> max(symmetry_violations(symmetrized(m, g), g).values()) < 1e-12
    True
    """
    operations = tuple(group.operations)
    lattice = model.lattice
    u_t = model.time_reversal_matrix()
    if time_reversal and u_t is None:
        raise SymmetryBreakingError("time reversal was asked for, but the model defines no time-reversal matrix")
    u_t = None if u_t is None else np.asarray(u_t, dtype=complex)
    # g⁻¹ acts on a reduced row k as k W (since g acts as k inv(W)); W checks the lattice once, here
    inverse_action = [np.asarray(op.in_basis(lattice), dtype=float) for op in operations]

    def spatial(k):
        total = np.zeros(k.shape[:-1] + (model.n_states,) * 2, dtype=complex)
        for op, w in zip(operations, inverse_action):
            q = k @ w
            d = model.symmetry_matrix(op, q)
            total += d @ model.hamiltonian(q) @ np.conj(np.swapaxes(d, -1, -2))
        return total / len(operations)

    if time_reversal:
        def h(k):
            a = spatial(k)
            return 0.5 * (a + u_t @ np.conj(spatial(-k)) @ u_t.conj().T)
    else:
        h = spatial

    representations = {op: (lambda k, _op=op: model.symmetry_matrix(_op, k)) for op in operations}
    return BlochFunction(h, lattice=lattice, positions=model.positions, spinful=model.spinful,
                         representations=representations, time_reversal=u_t, group=group, basis=model.basis,
                         name=name if name is not None else f"{model.name or type(model).__name__} (symmetrized)")
