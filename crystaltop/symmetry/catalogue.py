"""The table of the 32 crystallographic point groups: symbols, settings, generators, type counts.

Groups are keyed by the Hermann–Mauguin short symbol of their class, in the order of International
Tables for Crystallography, Vol. A (``1, -1, 2, m, 2/m, ..., m-3m``). Five classes have two
orientations relative to the axes named in the symbol, and each orientation is a *setting* here:

==========  ===================  ==================================================
class       settings             the secondary direction (default +x) carries
==========  ===================  ==================================================
``-42m``    ``-42m``, ``-4m2``   a two-fold axis / a mirror normal
``32``      ``321``, ``312``     a two-fold axis / none (two-folds at 90°, 30°, 150°)
``3m``      ``3m1``, ``31m``     a mirror normal / none (normals at 90°, 30°, 150°)
``-3m``     ``-3m1``, ``-31m``   a two-fold axis and mirror normal / none
``-6m2``    ``-6m2``, ``-62m``   a mirror normal / a two-fold axis
==========  ===================  ==================================================

With a hexagonal lattice whose ``a1`` lies along the secondary direction, ``3m1`` and ``31m`` are the
two distinct orientations of ``3m`` (ITA's P3m1 and P31m). The class symbol (``3m``) means the first
setting.

Generators are given in the *standard frame*: principal axis ``z``, secondary direction ``x``; cubic
groups in the cubic frame (four-fold / two-fold axes along x, y, z, three-folds along ⟨111⟩).
"""

from __future__ import annotations

import re
from collections import Counter
from dataclasses import dataclass
from typing import Iterable, Mapping

import sympy

from crystaltop.errors import UnknownGroupError

__all__ = [
    "GroupEntry",
    "CLASS_SYMBOLS",
    "TYPE_SYMBOLS",
    "entry",
    "normalize_symbol",
    "settings_of",
    "type_count_key",
]

_HALF = sympy.Rational(1, 2)
_ROOT3_HALF = sympy.sqrt(3) / 2


def _m(rows: Iterable[Iterable[object]]) -> sympy.ImmutableMatrix:
    return sympy.ImmutableMatrix([list(row) for row in rows])


#: Exact generators in the standard frame.
_GENERATOR_MATRICES: Mapping[str, sympy.ImmutableMatrix] = {
    "-1": -_m(sympy.eye(3).tolist()),
    "2z": _m([[-1, 0, 0], [0, -1, 0], [0, 0, 1]]),
    "2x": _m([[1, 0, 0], [0, -1, 0], [0, 0, -1]]),
    "2y": _m([[-1, 0, 0], [0, 1, 0], [0, 0, -1]]),
    "mz": _m([[1, 0, 0], [0, 1, 0], [0, 0, -1]]),
    "mx": _m([[-1, 0, 0], [0, 1, 0], [0, 0, 1]]),
    "my": _m([[1, 0, 0], [0, -1, 0], [0, 0, 1]]),
    "4z+": _m([[0, -1, 0], [1, 0, 0], [0, 0, 1]]),
    "-4z+": _m([[0, 1, 0], [-1, 0, 0], [0, 0, -1]]),
    "3z+": _m([[-_HALF, -_ROOT3_HALF, 0], [_ROOT3_HALF, -_HALF, 0], [0, 0, 1]]),
    "6z+": _m([[_HALF, -_ROOT3_HALF, 0], [_ROOT3_HALF, _HALF, 0], [0, 0, 1]]),
    "-6z+": _m([[-_HALF, _ROOT3_HALF, 0], [-_ROOT3_HALF, -_HALF, 0], [0, 0, -1]]),
    "3[111]+": _m([[0, 0, 1], [1, 0, 0], [0, 1, 0]]),
}


@dataclass(frozen=True)
class GroupEntry:
    """One setting of a crystallographic point-group class."""

    setting: str
    """Symbol of this orientation, e.g. ``"31m"`` (equals ``symbol`` for classes with one setting)."""
    symbol: str
    """Hermann–Mauguin short symbol of the class, e.g. ``"3m"``."""
    schoenflies: str
    """Schoenflies symbol, e.g. ``"C3v"``."""
    order: int
    """Number of operations."""
    generators: tuple[str, ...]
    """Labels of the generators (keys of the standard-frame generator table)."""

    def generator_matrices(self) -> list[sympy.ImmutableMatrix]:
        """Exact standard-frame matrices of the generators."""
        return [_GENERATOR_MATRICES[name] for name in self.generators]


# (setting, class, Schoenflies, order, generators), in ITA order of the classes.
_TABLE: tuple[tuple[str, str, str, int, tuple[str, ...]], ...] = (
    ("1", "1", "C1", 1, ()),
    ("-1", "-1", "Ci", 2, ("-1",)),
    ("2", "2", "C2", 2, ("2z",)),
    ("m", "m", "Cs", 2, ("mz",)),
    ("2/m", "2/m", "C2h", 4, ("2z", "-1")),
    ("222", "222", "D2", 4, ("2z", "2x")),
    ("mm2", "mm2", "C2v", 4, ("2z", "mx")),
    ("mmm", "mmm", "D2h", 8, ("2z", "2x", "-1")),
    ("4", "4", "C4", 4, ("4z+",)),
    ("-4", "-4", "S4", 4, ("-4z+",)),
    ("4/m", "4/m", "C4h", 8, ("4z+", "-1")),
    ("422", "422", "D4", 8, ("4z+", "2x")),
    ("4mm", "4mm", "C4v", 8, ("4z+", "mx")),
    ("-42m", "-42m", "D2d", 8, ("-4z+", "2x")),
    ("-4m2", "-42m", "D2d", 8, ("-4z+", "mx")),
    ("4/mmm", "4/mmm", "D4h", 16, ("4z+", "2x", "-1")),
    ("3", "3", "C3", 3, ("3z+",)),
    ("-3", "-3", "C3i", 6, ("3z+", "-1")),
    ("321", "32", "D3", 6, ("3z+", "2x")),
    ("312", "32", "D3", 6, ("3z+", "2y")),
    ("3m1", "3m", "C3v", 6, ("3z+", "mx")),
    ("31m", "3m", "C3v", 6, ("3z+", "my")),
    ("-3m1", "-3m", "D3d", 12, ("3z+", "2x", "-1")),
    ("-31m", "-3m", "D3d", 12, ("3z+", "2y", "-1")),
    ("6", "6", "C6", 6, ("6z+",)),
    ("-6", "-6", "C3h", 6, ("-6z+",)),
    ("6/m", "6/m", "C6h", 12, ("6z+", "-1")),
    ("622", "622", "D6", 12, ("6z+", "2x")),
    ("6mm", "6mm", "C6v", 12, ("6z+", "mx")),
    ("-6m2", "-6m2", "D3h", 12, ("-6z+", "mx")),
    ("-62m", "-6m2", "D3h", 12, ("-6z+", "2x")),
    ("6/mmm", "6/mmm", "D6h", 24, ("6z+", "2x", "-1")),
    ("23", "23", "T", 12, ("2z", "2x", "3[111]+")),
    ("m-3", "m-3", "Th", 24, ("2z", "2x", "3[111]+", "-1")),
    ("432", "432", "O", 24, ("4z+", "3[111]+")),
    ("-43m", "-43m", "Td", 24, ("-4z+", "3[111]+")),
    ("m-3m", "m-3m", "Oh", 48, ("4z+", "3[111]+", "-1")),
)

_ENTRIES: dict[str, GroupEntry] = {
    row[0]: GroupEntry(setting=row[0], symbol=row[1], schoenflies=row[2], order=row[3], generators=row[4])
    for row in _TABLE
}

#: The 32 class symbols in ITA order.
CLASS_SYMBOLS: tuple[str, ...] = tuple(dict.fromkeys(row[1] for row in _TABLE))

#: ITA operation-type symbols, in the order used for type-count keys.
TYPE_SYMBOLS: tuple[str, ...] = ("1", "2", "3", "4", "6", "-1", "m", "-3", "-4", "-6")

# Spellings accepted for a setting, besides the setting symbols themselves (all compared lower-case
# with blanks removed). Full Hermann–Mauguin symbols and common variants.
_ALIASES: dict[str, str] = {
    "32": "321",
    "3m": "3m1",
    "-3m": "-3m1",
    "2mm": "mm2",
    "m2m": "mm2",
    "2/m2/m2/m": "mmm",
    "4/m2/m2/m": "4/mmm",
    "-32/m": "-3m1",
    "-32/m1": "-3m1",
    "-312/m": "-31m",
    "6/m2/m2/m": "6/mmm",
    "2/m-3": "m-3",
    "m3": "m-3",
    "m3m": "m-3m",
    "4/m-32/m": "m-3m",
}


def _lookup_table() -> dict[str, str]:
    table = {setting.lower(): setting for setting in _ENTRIES}
    for group in _ENTRIES.values():  # a Schoenflies symbol means the class's first setting
        table.setdefault(group.schoenflies.lower(), group.setting)
    table.update({"s2": "-1", "c1h": "m", "v": "222", "vh": "mmm", "vd": "-42m", "s6": "-3"})
    table.update({alias.lower(): setting for alias, setting in _ALIASES.items()})
    return table


def _first_setting(symbol: str) -> str:
    return next(setting for setting, group in _ENTRIES.items() if group.symbol == symbol)


def settings_of(symbol: str) -> tuple[str, ...]:
    """The settings of a class symbol, the default one first (``"3m"`` -> ``("3m1", "31m")``)."""
    return tuple(setting for setting, group in _ENTRIES.items() if group.symbol == symbol)


_LOOKUP = _lookup_table()
_BAR = re.compile(r"(\d)\u0305")  # "4̄" written with a combining overline


def normalize_symbol(symbol: str) -> str:
    """Setting symbol for a Hermann–Mauguin or Schoenflies spelling (case and blanks ignored).

    Raises
    ------
    UnknownGroupError
        If the symbol names none of the 32 classes.
    """
    if not isinstance(symbol, str):
        raise UnknownGroupError(
            f"point-group symbol must be a string, got {type(symbol).__name__}; "
            "expected a Hermann–Mauguin or Schoenflies symbol such as '4mm' or 'C4v'"
        )
    key = _BAR.sub(r"-\1", symbol).replace("\u2212", "-").replace(" ", "").replace("_", "").lower()
    try:
        return _LOOKUP[key]
    except KeyError:
        raise UnknownGroupError(
            f"unknown point group {symbol!r}; expected a Hermann–Mauguin or Schoenflies symbol "
            "such as '4mm' or 'C4v'"
        ) from None


def entry(symbol: str) -> GroupEntry:
    """Catalogue entry (one setting) for any accepted spelling."""
    return _ENTRIES[normalize_symbol(symbol)]


def type_count_key(type_symbols: Iterable[str]) -> tuple[int, ...]:
    """Counts of the operation types, in the order of :data:`TYPE_SYMBOLS`."""
    counts = Counter(type_symbols)
    return tuple(counts.get(name, 0) for name in TYPE_SYMBOLS)
