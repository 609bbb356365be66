"""Exact closure of a set of generators and the check of the group axioms.

The catalogue's generators have entries in ``{0, ±1, ±1/2, ±√3/2}``; products are kept exact as
``sympy.ImmutableMatrix`` with every entry expanded to a canonical form, so two equal elements
always compare (and hash) equal. Associativity is inherited from matrix multiplication; closure,
the identity and inverses are checked explicitly on the full multiplication table.

Also here: turning floating-point numbers back into exact algebraic numbers of the small kind that
occurs in crystallography (``p/q``, ``p/q √2``, ``p/q √3``, ``p/q √6``), used when a group is
reoriented or identified from float matrices.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Iterable, Sequence

import numpy as np
import sympy

from crystaltop.errors import CrystaltopError

__all__ = [
    "canonical",
    "close_exactly",
    "check_group_axioms",
    "exact_number",
    "exact_matrix",
    "is_exact",
    "to_float",
]

_MAX_ORDER = 48  # the order of m-3m; anything larger is not a crystallographic point group
_RADICALS = (1, 2, 3, 6)
_MAX_DENOMINATOR = 24


def canonical(matrix: sympy.MatrixBase) -> sympy.ImmutableMatrix:
    """Expanded, immutable (hashable) form of an exact matrix."""
    return sympy.ImmutableMatrix(matrix.applyfunc(sympy.expand))


def close_exactly(generators: Sequence[sympy.MatrixBase]) -> list[sympy.ImmutableMatrix]:
    """All products of ``generators`` (identity first), by breadth-first right multiplication.

    Raises
    ------
    CrystaltopError
        If more than 48 elements appear (the generators do not generate a crystallographic point group).
    """
    identity = sympy.ImmutableMatrix(sympy.eye(3))
    gens = [canonical(g) for g in generators]
    elements = [identity]
    seen = {identity}
    cursor = 0
    while cursor < len(elements):
        current = elements[cursor]
        cursor += 1
        for gen in gens:
            product = canonical(current * gen)
            if product not in seen:
                if len(elements) == _MAX_ORDER:
                    raise CrystaltopError("generators produce more than 48 elements: not a crystallographic point group")
                seen.add(product)
                elements.append(product)
    return elements


def check_group_axioms(elements: Sequence[sympy.ImmutableMatrix], name: str) -> None:
    """Check closure, identity and inverses exactly (and orthogonality of every element).

    Raises
    ------
    CrystaltopError
        Naming the group ``name`` and the axiom that fails.
    """
    members = set(elements)
    if len(members) != len(elements):
        raise CrystaltopError(f"group {name}: repeated elements")
    identity = sympy.ImmutableMatrix(sympy.eye(3))
    if identity not in members:
        raise CrystaltopError(f"group {name}: the identity is missing")
    for index, a in enumerate(elements):
        if canonical(a * a.T) != identity:
            raise CrystaltopError(f"group {name}: element {index} is not orthogonal")
        if canonical(a.T) not in members:  # orthogonal, so the inverse is the transpose
            raise CrystaltopError(f"group {name}: element {index} has no inverse in the set")
        for b in elements:
            if canonical(a * b) not in members:
                raise CrystaltopError(f"group {name}: the set is not closed under multiplication")


def exact_number(value: float, tol: float = 1e-9) -> sympy.Expr:
    """Best exact form ``p/q * sqrt(r)`` (r in 1, 2, 3, 6; q <= 24) of ``value``, else a sympy Float."""
    if abs(value) < tol:
        return sympy.Integer(0)
    for radical in _RADICALS:
        scaled = value / np.sqrt(radical)
        fraction = Fraction(scaled).limit_denominator(_MAX_DENOMINATOR)
        if abs(float(fraction) - scaled) < tol:
            return sympy.Rational(fraction.numerator, fraction.denominator) * sympy.sqrt(radical)
    return sympy.Float(value, 17)


def exact_matrix(values: Iterable[Iterable[float]] | np.ndarray, tol: float = 1e-9) -> sympy.ImmutableMatrix:
    """Entry-wise :func:`exact_number` of a float matrix."""
    arr = np.asarray(values, dtype=float)
    return sympy.ImmutableMatrix(arr.shape[0], arr.shape[1], [exact_number(v, tol) for v in arr.ravel()])


def is_exact(matrix: sympy.MatrixBase) -> bool:
    """True if no entry carries a floating-point number."""
    return not any(entry.has(sympy.Float) for entry in matrix)


def to_float(matrix: sympy.MatrixBase) -> np.ndarray:
    """Read-only float array of an exact matrix."""
    arr = np.array(matrix.evalf(20).tolist(), dtype=float)
    arr[np.abs(arr) < 1e-15] = 0.0
    arr.setflags(write=False)
    return arr
