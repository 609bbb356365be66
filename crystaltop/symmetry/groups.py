"""Point groups: construction from the catalogue, orientation, identification, queries.

A group from :func:`point_group` is closed from its generators in exact arithmetic in the standard
frame (principal axis z, secondary direction x), its axioms are checked there, and it is then
rotated into the requested frame: the rotation ``Q`` with ``Q e_z = axis`` and ``Q e_x = secondary``
conjugates every element, ``R -> Q R Qᵀ`` (exactly, when ``axis`` and ``secondary`` have simple
algebraic components such as ``(1, 1, 0)`` or ``(1/2, √3/2, 0)``). Results are cached.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache
from typing import Iterator, Sequence, Union

import numpy as np
import sympy

from crystaltop.errors import CrystaltopError, ShapeError, UnknownGroupError, UnknownOperationError

from .axis_angle import check_orthogonal
from .catalogue import CLASS_SYMBOLS, entry, normalize_symbol, settings_of, type_count_key
from .closure import canonical, check_group_axioms, close_exactly, exact_matrix, exact_number, is_exact, to_float
from .lattice_basis import matrix_in_basis
from .operations import Operation, make_operation
from .spin import product_sign

__all__ = ["PointGroup", "point_group", "all_point_groups"]

OperationLike = Union[Operation, str, np.ndarray]

_MATCH_TOL = 1e-6
# Cartesian axis of a 1D model's line (x) and of a 2D model's plane normal (z).
_LINE_OR_NORMAL = {1: 0, 2: 2}
_KIND_RANK = {"identity": 0, "rotation": 1, "inversion": 0, "mirror": 1, "rotoinversion": 2}


@dataclass(frozen=True)
class PointGroup:
    """A crystallographic point group given by its Cartesian operations.

    Examples
    --------
    >>> from crystaltop.symmetry import point_group
    >>> group = point_group("4mm")
    >>> group.schoenflies, group.order, [op.label for op in group]
    ('C4v', 8, ['1', '2z', '4z+', '4z-', 'mx', 'my', 'm[110]', 'm[-110]'])
    >>> group.multiply("4z+", "mx").label
    'm[110]'
    """

    symbol: str
    """Hermann–Mauguin short symbol of the class, e.g. ``"4mm"``, ``"-3m"``, ``"m-3m"``."""
    schoenflies: str
    """Schoenflies symbol, e.g. ``"C4v"``."""
    order: int
    """Number of operations."""
    operations: tuple[Operation, ...]
    """The operations, identity first."""
    generators: tuple[str, ...]
    """Labels of a generating set."""
    setting: str = ""
    """Orientation symbol within the class (``"3m1"`` or ``"31m"`` for ``3m``...); equals ``symbol`` for
    classes with one orientation, and for groups identified from matrices in a non-standard frame."""
    frame: np.ndarray | None = field(default=None, compare=False, repr=False)
    """(3, 3) rotation taking the standard frame of the setting onto this group's frame (columns are the
    images of x, y, z), or None when unknown (groups identified from arbitrary matrices)."""
    _by_label: dict = field(init=False, compare=False, repr=False)
    _stack: np.ndarray = field(init=False, compare=False, repr=False)

    def __post_init__(self) -> None:
        by_label = {op.label: op for op in self.operations}
        if len(by_label) != len(self.operations):
            raise CrystaltopError(f"group {self.symbol}: operation labels are not unique")
        stack = np.array([op.matrix for op in self.operations])
        stack.setflags(write=False)
        object.__setattr__(self, "_by_label", by_label)
        object.__setattr__(self, "_stack", stack)
        if not self.setting:
            object.__setattr__(self, "setting", self.symbol)

    # -- container protocol -------------------------------------------------------------------
    def __getitem__(self, label: str) -> Operation:
        try:
            return self._by_label[label]
        except (KeyError, TypeError):
            raise UnknownOperationError(
                f"group {self.setting} has no operation {label!r}; its labels are {', '.join(self._by_label)}"
            ) from None

    def __iter__(self) -> Iterator[Operation]:
        return iter(self.operations)

    def __len__(self) -> int:
        return self.order

    def __contains__(self, item: object) -> bool:
        if isinstance(item, str):
            return item in self._by_label
        try:
            self._resolve(item)  # type: ignore[arg-type]
        except (UnknownOperationError, ShapeError):
            return False
        return True

    def __repr__(self) -> str:
        setting = f", setting {self.setting!r}" if self.setting != self.symbol else ""
        return f"PointGroup({self.symbol!r}, {self.schoenflies}, order {self.order}{setting})"

    @property
    def matrices(self) -> np.ndarray:
        """(order, 3, 3) read-only stack of the Cartesian matrices, in the order of ``operations``."""
        return self._stack

    # -- lookup and multiplication ------------------------------------------------------------
    def find(self, matrix: np.ndarray, tol: float = _MATCH_TOL) -> Operation:
        """The operation whose Cartesian matrix equals ``matrix`` within ``tol``.

        Raises
        ------
        UnknownOperationError
            If no operation of the group has this matrix.
        """
        arr = np.asarray(matrix, dtype=float)
        if arr.shape != (3, 3):
            raise ShapeError(f"an operation matrix must have shape (3, 3), got {arr.shape}")
        distance = np.abs(self._stack - arr).max(axis=(1, 2))
        index = int(np.argmin(distance))
        if distance[index] > tol:
            raise UnknownOperationError(f"the matrix {np.round(arr, 4).tolist()} is not an operation of group {self.setting}")
        return self.operations[index]

    def _resolve(self, op: OperationLike) -> Operation:
        if isinstance(op, str):
            return self[op]
        if isinstance(op, Operation):
            mine = self._by_label.get(op.label)
            if mine is not None and mine.approx_equal(op, _MATCH_TOL):
                return mine
            try:
                return self.find(op.matrix)
            except UnknownOperationError:
                raise UnknownOperationError(f"operation {op.label} is not an element of group {self.setting}") from None
        return self.find(op)

    def multiply(self, a: OperationLike, b: OperationLike) -> Operation:
        """The operation with matrix ``R_a R_b`` (first ``b``, then ``a``)."""
        return self.find(self._resolve(a).matrix @ self._resolve(b).matrix)

    def inverse(self, a: OperationLike) -> Operation:
        """The operation with matrix ``R_a⁻¹ = R_aᵀ``."""
        return self.find(self._resolve(a).matrix.T)

    def double_group_sign(self, a: OperationLike, b: OperationLike) -> int:
        """Sign ``s = ±1`` with ``spin(a) @ spin(b) == s * spin(a b)``."""
        op_a, op_b = self._resolve(a), self._resolve(b)
        return product_sign(op_a.spin @ op_b.spin, self.multiply(op_a, op_b).spin)

    # -- queries ------------------------------------------------------------------------------
    @property
    def has_inversion(self) -> bool:
        """True if the inversion ``-1`` is an element."""
        return any(op.kind == "inversion" for op in self.operations)

    def rotations(self, n: int | None = None, axis: Sequence[float] | None = None) -> tuple[Operation, ...]:
        """Proper rotations other than the identity, optionally of fold ``n`` and/or about the line ``axis``.

        ``n = 1`` returns the identity alone. Both senses (``4z+`` and ``4z-``) are included; ``axis`` is
        compared as a line (``-z`` selects the same rotations as ``z``).
        """
        if n == 1:
            return (self.operations[0],)
        chosen = [op for op in self.operations if op.kind == "rotation" and (n is None or op.fold == n)]
        if axis is not None:
            line = _unit(axis, "axis")
            chosen = [op for op in chosen if abs(abs(float(op.axis @ line)) - 1.0) < 1e-8]
        return tuple(chosen)

    def mirrors(self) -> tuple[Operation, ...]:
        """The mirror operations."""
        return tuple(op for op in self.operations if op.kind == "mirror")

    def keeps_axis(self, axis: Sequence[float] = (0.0, 0.0, 1.0)) -> bool:
        """True if every operation maps ``axis`` to ± itself (e.g. a group compatible with a 2D plane)."""
        line = _unit(axis, "axis")
        images = self._stack @ line
        return bool(np.all(np.abs(np.abs(images @ line) - 1.0) < 1e-8))

    def elements(self, dim: int) -> frozenset[str]:
        """Symmetry elements present, in the vocabulary the invariants use to state their needs.

        ``"inversion"`` (the operation -1), ``"C2"``, ``"C3"``, ``"C4"``, ``"C6"`` (proper rotations; for
        ``dim == 2`` about z only, for ``dim == 1`` about x only), ``"mirror"`` (any mirror for ``dim == 3``;
        a mirror with in-plane normal for ``dim == 2``; the mirror x -> -x for ``dim == 1``) and, for
        ``dim == 2``, ``"mirror_z"`` (the mirror with normal z).
        """
        if dim not in (1, 2, 3):
            raise ShapeError(f"dim must be 1, 2 or 3, got {dim!r}")
        found: set[str] = set()
        for op in self.operations:
            if op.kind == "inversion":
                found.add("inversion")
            elif op.kind == "rotation":
                if dim == 3 or abs(op.axis[_LINE_OR_NORMAL[dim]]) > 1 - 1e-8:
                    found.add(f"C{op.fold}")
            elif op.kind == "mirror":
                normal = op.axis
                if dim == 3:
                    found.add("mirror")
                elif dim == 2:
                    if abs(normal[2]) > 1 - 1e-8:
                        found.add("mirror_z")
                    elif abs(normal[2]) < 1e-8:
                        found.add("mirror")
                elif abs(normal[_LINE_OR_NORMAL[dim]]) > 1 - 1e-8:
                    found.add("mirror")
        return frozenset(found)

    def in_basis(self, lattice: np.ndarray) -> dict[str, np.ndarray]:
        """Integer matrices ``{label: W}`` in the basis of ``lattice`` (see :meth:`Operation.in_basis`).

        Raises
        ------
        LatticeMismatchError
            Naming the first operation (in group order) that does not map the lattice onto itself.
        """
        return {op.label: matrix_in_basis(op.matrix, lattice, op.label) for op in self.operations}

    def approx_equal(self, other: "PointGroup", tol: float = 1e-8) -> bool:
        """True if both groups have the same set of Cartesian matrices (order and labels ignored)."""
        if self.order != other.order:
            return False
        distance = np.abs(self._stack[:, None] - other._stack[None, :]).max(axis=(2, 3))
        return bool(np.all(distance.min(axis=1) <= tol) and np.all(distance.min(axis=0) <= tol))

    # -- new groups from old ------------------------------------------------------------------
    def oriented(self, rotation: np.ndarray) -> "PointGroup":
        """Conjugated copy ``{Q g Qᵀ}`` for an orthogonal ``rotation`` Q (labels recomputed, order kept)."""
        q_float = check_orthogonal(rotation, what="rotation")
        if np.linalg.det(q_float) < 0:  # Q and -Q conjugate alike; keep the frame proper
            q_float = -q_float
        q_exact = exact_matrix(q_float)
        if not is_exact(q_exact) or canonical(q_exact * q_exact.T) != sympy.eye(3):
            q_exact = None
        return _conjugated(self, q_float, q_exact)

    @classmethod
    def from_matrices(cls, matrices: np.ndarray | Sequence[np.ndarray], tol: float = 1e-6) -> "PointGroup":
        """Identify the crystallographic class of a set of Cartesian matrices and wrap them as a group.

        The class is found from the numbers of operations of each ITA type (1, 2, 3, 4, 6, -1, m, -3, -4,
        -6), which distinguish the 32 classes. If the set coincides with a catalogue setting in the
        standard frame, ``setting`` and ``frame`` say so.

        Raises
        ------
        ShapeError
            If the input is not a stack of orthogonal 3x3 matrices.
        UnknownGroupError
            If the set is not closed, lacks the identity, or is not a crystallographic point group.
        """
        stack = _unique_matrices(matrices, tol)
        _check_closed(stack, tol, "the given matrices")
        ops = []
        for matrix in stack:
            exact = exact_matrix(matrix, tol=min(tol, 1e-7))
            if is_exact(exact):
                ops.append(make_operation(exact))
            else:
                ops.append(make_operation(exact_matrix(matrix, tol=0.0), matrix))
        symbol = class_of_type_counts(type_count_key(op.type_symbol for op in ops))
        if symbol is None:
            raise UnknownGroupError(
                f"the {len(ops)} matrices form a group that is not one of the 32 crystallographic point groups"
            )
        ops.sort(key=_sort_key)
        candidate = cls(
            symbol=symbol,
            schoenflies=entry(symbol).schoenflies,
            order=len(ops),
            operations=tuple(ops),
            generators=_greedy_generators(ops),
        )
        for setting in settings_of(symbol):
            # compared with the float closure of the setting's generators: the exact group (a sympy closure,
            # half a second for m-3m) is not needed to recognise the orientation
            standard = _standard_matrices(setting)
            if len(standard) == candidate.order and _same_matrix_sets(standard, candidate._stack, tol):
                return _with_setting(candidate, setting, np.eye(3))
        return candidate


# ---------------------------------------------------------------------------------------------
# construction


def point_group(
    symbol: str,
    *,
    axis: Sequence[float] = (0.0, 0.0, 1.0),
    secondary: Sequence[float] = (1.0, 0.0, 0.0),
) -> PointGroup:
    """One of the 32 crystallographic point groups, in the orientation asked for.

    Parameters
    ----------
    symbol : str
        Hermann–Mauguin short symbol (``"4mm"``, ``"-3m"``, ``"m-3m"``), a setting (``"31m"``, ``"-4m2"``,
        ``"-62m"``, ``"312"``), a common variant (``"2mm"``, ``"m3m"``, ``"4/m 2/m 2/m"``) or a Schoenflies
        symbol (``"C4v"``, ``"Oh"``). Case and blanks are ignored.
    axis : (3,) array_like
        Direction of the principal axis (the unique axis of 2, m, 2/m; the four-fold/two-fold axis z of the
        cubic frame). Default z.
    secondary : (3,) array_like
        Direction of the first two-fold axis or mirror normal perpendicular to ``axis`` (the cubic frame's x).
        Its component along ``axis`` is projected out. Default x.

    Returns
    -------
    PointGroup
        Cached; identical arguments return the same object.

    Raises
    ------
    UnknownGroupError
        If the symbol names none of the 32 classes.

    Examples
    --------
    >>> point_group("3m").setting, point_group("31m").symbol
    ('3m1', '3m')
    >>> [op.label for op in point_group("31m").mirrors()]
    ['my', 'm(30°)', 'm(150°)']
    """
    setting = normalize_symbol(symbol)
    return _build(setting, _as_direction(axis, "axis"), _as_direction(secondary, "secondary"))


def all_point_groups() -> tuple[PointGroup, ...]:
    """The 32 crystallographic point groups in the standard frame, in ITA order (1, -1, 2, ..., m-3m)."""
    return tuple(point_group(symbol) for symbol in CLASS_SYMBOLS)


@lru_cache(maxsize=None)
def _standard_group(setting: str) -> PointGroup:
    group = entry(setting)
    elements = close_exactly(group.generator_matrices())
    if len(elements) != group.order:  # pragma: no cover - guards the hand-written table
        raise CrystaltopError(f"group {setting}: closure gave {len(elements)} elements, expected {group.order}")
    check_group_axioms(elements, setting)
    ops = sorted((make_operation(m) for m in elements), key=_sort_key)
    return PointGroup(
        symbol=group.symbol,
        schoenflies=group.schoenflies,
        order=group.order,
        operations=tuple(ops),
        generators=tuple(make_operation(m).label for m in group.generator_matrices()),
        setting=setting,
        frame=_readonly(np.eye(3)),
    )


@lru_cache(maxsize=256)
def _build(setting: str, axis: tuple[float, ...], secondary: tuple[float, ...]) -> PointGroup:
    standard = _standard_group(setting)
    if axis == (0.0, 0.0, 1.0) and secondary == (1.0, 0.0, 0.0):
        return standard
    q_exact, q_float = _frame(axis, secondary)
    return _conjugated(standard, q_float, q_exact)


def _frame(axis: tuple[float, ...], secondary: tuple[float, ...]) -> tuple[sympy.ImmutableMatrix | None, np.ndarray]:
    """Rotation Q with columns (secondary, axis × secondary, axis), exact when possible."""
    a_float = np.array(axis) / np.linalg.norm(axis)
    s_float = np.array(secondary) - (np.array(secondary) @ a_float) * a_float
    if np.linalg.norm(s_float) < 1e-8 * np.linalg.norm(secondary):
        raise CrystaltopError(f"secondary direction {list(secondary)} is parallel to the axis {list(axis)}")
    s_float /= np.linalg.norm(s_float)
    q_float = np.column_stack([s_float, np.cross(a_float, s_float), a_float])

    a_exact = sympy.Matrix([exact_number(c) for c in axis])
    s_exact = sympy.Matrix([exact_number(c) for c in secondary])
    if not (is_exact(a_exact) and is_exact(s_exact)):
        return None, q_float
    a_exact = (a_exact / sympy.sqrt(a_exact.dot(a_exact))).applyfunc(sympy.radsimp)
    s_exact = s_exact - s_exact.dot(a_exact) * a_exact
    s_exact = (s_exact / sympy.sqrt(sympy.expand(s_exact.dot(s_exact)))).applyfunc(sympy.radsimp)
    q_exact = canonical(sympy.Matrix.hstack(s_exact, a_exact.cross(s_exact), a_exact))
    if canonical(q_exact * q_exact.T) != sympy.eye(3) or np.abs(to_float(q_exact) - q_float).max() > 1e-9:
        return None, q_float
    return q_exact, q_float


def _conjugated(group: PointGroup, q_float: np.ndarray, q_exact: sympy.ImmutableMatrix | None) -> PointGroup:
    ops = []
    for op in group.operations:
        matrix = q_float @ op.matrix @ q_float.T
        if q_exact is not None and is_exact(op.exact):
            exact = canonical(q_exact * op.exact * q_exact.T)
            ops.append(make_operation(exact, to_float(exact)))
        else:
            ops.append(make_operation(exact_matrix(matrix, tol=0.0), matrix))
    index = {old.label: new.label for old, new in zip(group.operations, ops)}
    stack = np.array([op.matrix for op in ops])
    _check_closed(stack, 1e-8, f"group {group.setting} after reorientation")
    frame = None if group.frame is None else _readonly(q_float @ group.frame)
    return PointGroup(
        symbol=group.symbol,
        schoenflies=group.schoenflies,
        order=group.order,
        operations=tuple(ops),
        generators=tuple(index[label] for label in group.generators),
        setting=group.setting,
        frame=frame,
    )


def _with_setting(group: PointGroup, setting: str, frame: np.ndarray) -> PointGroup:
    return PointGroup(
        symbol=group.symbol,
        schoenflies=group.schoenflies,
        order=group.order,
        operations=group.operations,
        generators=group.generators,
        setting=setting,
        frame=_readonly(frame),
    )


# ---------------------------------------------------------------------------------------------
# helpers


#: trace of the proper part of a crystallographic operation -> the fold n of its rotation by 2π/n
_FOLD_OF_TRACE = {3: 1, -1: 2, 0: 3, 1: 4, 2: 6}


def _type_symbol_of(matrix: np.ndarray) -> str:
    """ITA type symbol of a crystallographic operation from its float matrix (det and trace only)."""
    det = 1 if np.linalg.det(matrix) > 0 else -1
    fold = _FOLD_OF_TRACE[int(round(float(np.trace(det * matrix))))]
    if det == 1:
        return "1" if fold == 1 else str(fold)
    return {1: "-1", 2: "m"}.get(fold, f"-{fold}")


@lru_cache(maxsize=None)
def _standard_matrices(setting: str) -> np.ndarray:
    """Float matrices of a catalogue setting in the standard frame, closed from its generators in floats."""
    return np.array(_span([to_float(m) for m in entry(setting).generator_matrices()]))


def _same_matrix_sets(a: np.ndarray, b: np.ndarray, tol: float) -> bool:
    """True if every matrix of each stack is within ``tol`` of one of the other (as PointGroup.approx_equal)."""
    distance = np.abs(a[:, None] - b[None, :]).max(axis=(2, 3))
    return bool(np.all(distance.min(axis=1) <= tol) and np.all(distance.min(axis=0) <= tol))


@lru_cache(maxsize=1)
def _classes_by_type_counts() -> dict[tuple[int, ...], str]:
    # Derived from the catalogue itself, so identification always agrees with point_group(): the generators
    # of each class closed in floats (the exact closure of all 32 groups in sympy took about a second on the
    # first report of a process). The tests check these counts against the ITA tables and the exact groups.
    table = {}
    for symbol in CLASS_SYMBOLS:
        elements = _standard_matrices(normalize_symbol(symbol))
        table[type_count_key(_type_symbol_of(m) for m in elements)] = symbol
    if len(table) != len(CLASS_SYMBOLS):  # pragma: no cover - a property of the 32 classes
        raise AssertionError("operation-type counts do not distinguish the 32 classes")
    return table


def class_of_type_counts(key: Sequence[int]) -> str | None:
    """Class symbol with these counts of operation types (order of ``catalogue.TYPE_SYMBOLS``), or None."""
    return _classes_by_type_counts().get(tuple(key))


def _sort_key(op: Operation) -> tuple:
    axis = np.abs(op.axis)
    along = 0 if axis[2] > 1 - 1e-9 else 1 if axis[0] > 1 - 1e-9 else 2 if axis[1] > 1 - 1e-9 else 3
    azimuth = float(np.degrees(np.arctan2(op.axis[1], op.axis[0])) % 180.0) if abs(op.axis[2]) < 1e-9 else 999.0
    return (op.det < 0, _KIND_RANK[op.kind], op.fold, along, round(azimuth, 6), op.label.endswith("-"), op.label)


def _greedy_generators(ops: Sequence[Operation]) -> tuple[str, ...]:
    """A small generating set: the highest-fold operations first, each added only if not yet generated."""
    ranked = sorted(ops[1:], key=lambda op: (-op.fold, op.det < 0, op.kind != "rotation"))
    chosen: list[Operation] = []
    span = _span([])
    for op in ranked:
        if not any(np.abs(m - op.matrix).max() < 1e-8 for m in span):
            chosen.append(op)
            span = _span([c.matrix for c in chosen])
        if len(span) == len(ops):
            break
    return tuple(op.label for op in chosen)


def _span(generators: Sequence[np.ndarray], tol: float = 1e-6) -> list[np.ndarray]:
    # Elements of a point group differ by at least ~0.5 in some entry, so a loose tolerance is safe; a tight one
    # never closed (and looped forever) when some operations of a set had been snapped to their exact forms and
    # others not, e.g. for an orientation with entries of order 1e-8.
    elements = [np.eye(3)]
    cursor = 0
    while cursor < len(elements):
        current = elements[cursor]
        cursor += 1
        for gen in generators:
            product = current @ gen
            if not any(np.abs(product - m).max() < tol for m in elements):
                if len(elements) == 48:
                    raise UnknownGroupError("the matrices generate more than 48 elements: not a crystallographic "
                                            "point group (or not closed within the tolerance)")
                elements.append(product)
    return elements


def _unique_matrices(matrices: np.ndarray | Sequence[np.ndarray], tol: float) -> np.ndarray:
    arr = np.asarray(matrices, dtype=float)
    if arr.ndim != 3 or arr.shape[1:] != (3, 3) or arr.shape[0] == 0:
        raise ShapeError(f"matrices must have shape (n, 3, 3) with n >= 1, got {arr.shape}")
    for index, matrix in enumerate(arr):
        check_orthogonal(matrix, what=f"matrix {index}", tol=max(tol, 1e-6))
    unique: list[np.ndarray] = []
    for matrix in arr:
        if not any(np.abs(matrix - u).max() <= tol for u in unique):
            unique.append(matrix)
    return np.array(unique)


def _check_closed(stack: np.ndarray, tol: float, what: str) -> None:
    """Identity present and every product in the set (inverses then follow for a finite set)."""
    if not np.any(np.abs(stack - np.eye(3)).max(axis=(1, 2)) <= tol):
        raise UnknownGroupError(f"{what} do not contain the identity, so they are not a point group")
    products = np.einsum("aij,bjk->abik", stack, stack)
    distance = np.abs(products[:, :, None] - stack[None, None]).max(axis=(3, 4))
    if not np.all(distance.min(axis=2) <= tol * 10):
        raise UnknownGroupError(f"{what} are not closed under multiplication, so they are not a point group")


def _unit(vector: Sequence[float], what: str) -> np.ndarray:
    arr = np.asarray(vector, dtype=float)
    if arr.shape != (3,) or not np.all(np.isfinite(arr)) or np.linalg.norm(arr) < 1e-12:
        raise ShapeError(f"{what} must be a non-zero finite 3-vector, got {vector!r}")
    return arr / np.linalg.norm(arr)


def _as_direction(vector: Sequence[float], what: str) -> tuple[float, ...]:
    _unit(vector, what)  # validates
    return tuple(float(c) + 0.0 for c in np.asarray(vector, dtype=float))


def _readonly(arr: np.ndarray) -> np.ndarray:
    out = np.array(arr, dtype=float)
    out.setflags(write=False)
    return out
