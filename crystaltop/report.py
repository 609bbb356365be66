"""Immutable result records and their renderers (terminal table, Markdown, JSON)."""

from __future__ import annotations

import json
import math
from dataclasses import dataclass, field, replace
from types import MappingProxyType
from typing import Any, Iterator, Mapping

import numpy as np

from .plugin import CrossCheck

__all__ = ["Result", "Report", "DefectCheck", "plain", "format_value"]

OK, SKIPPED, FAILED = "ok", "skipped", "failed"


def plain(obj: Any) -> Any:
    """Turn results into JSON-able plain data (arrays to lists, complex to [re, im], tuples to lists)."""
    if isinstance(obj, Mapping):
        return {str(k): plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [plain(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return plain(obj.tolist())
    if isinstance(obj, (np.integer,)):
        return int(obj)
    if isinstance(obj, (np.floating, float)):
        f = float(obj)
        return f if math.isfinite(f) else str(f)
    if isinstance(obj, (complex, np.complexfloating)):
        return [float(obj.real), float(obj.imag)]
    if isinstance(obj, (np.bool_,)):
        return bool(obj)
    if isinstance(obj, CrossCheck):
        return {"method": obj.method, "value": plain(obj.value), "agree": bool(obj.agree), "note": obj.note}
    if obj is None or isinstance(obj, (str, int, bool)):
        return obj
    return str(obj)


def format_value(value: Any) -> str:
    """Compact text of a value for tables."""
    v = plain(value)
    if isinstance(v, float):
        return f"{v:.4g}"
    if isinstance(v, list):
        return "(" + ", ".join(format_value(x) for x in v) + ")"
    if isinstance(v, dict):
        return ", ".join(f"{k}={format_value(x)}" for k, x in v.items())
    return "" if v is None else str(v)


@dataclass(frozen=True)
class Result:
    """The record of one invariant in a report."""

    #: report key of the invariant
    name: str
    #: human-readable title
    title: str
    #: "ok", "skipped" (with the reason in ``message``) or "failed" (with the error in ``message``)
    status: str
    #: the value (None unless the status is "ok" or a cross-check disagreed)
    value: Any = None
    #: method used, with reference
    method: str = ""
    #: mesh or k-points used
    mesh: str = ""
    #: smallest direct gap above the occupied bands over the k-points this invariant used
    smallest_gap: float | None = None
    #: convergence figure and its meaning
    convergence: float | None = None
    convergence_label: str = ""
    #: independent second determinations (its own, and those attached by other invariants)
    cross_checks: tuple = ()
    #: further plain-data details
    details: Mapping[str, Any] = field(default_factory=dict)
    #: notes for the reader
    notes: tuple = ()
    #: reason for skipping or the failure message
    message: str = ""
    #: wall time of its computation, seconds
    seconds: float = 0.0
    #: name -> function drawing on a matplotlib Axes (not part of to_dict; see Report.save_figures)
    figures: Mapping[str, Any] = field(default_factory=dict, repr=False, compare=False)

    @property
    def ok(self) -> bool:
        return self.status == OK

    def with_cross_check(self, check: CrossCheck) -> "Result":
        """A copy with one more cross-check; a disagreement turns the record into a failure naming both values."""
        res = replace(self, cross_checks=self.cross_checks + (check,))
        if not check.agree and self.status == OK:
            res = replace(res, status=FAILED, message=(
                f"cross-check disagrees: {self.method} gives {format_value(self.value)}, "
                f"{check.method} gives {format_value(check.value)}" + (f" ({check.note})" if check.note else "")))
        return res

    def to_dict(self) -> dict:
        return {
            "name": self.name, "title": self.title, "status": self.status, "value": plain(self.value),
            "method": self.method, "mesh": self.mesh, "smallest_gap": plain(self.smallest_gap),
            "convergence": plain(self.convergence), "convergence_label": self.convergence_label,
            "cross_checks": [plain(c) for c in self.cross_checks], "details": plain(self.details),
            "notes": list(self.notes), "message": self.message, "seconds": round(self.seconds, 4),
        }


@dataclass(frozen=True)
class DefectCheck:
    """One prediction about a defect set against the measurement on a finite sample that contains it.

    Made by :func:`crystaltop.verify_defects`; a report lists them in its "predicted / measured / agree" table.
    """

    #: report key of the invariant that made the prediction (e.g. ``"dislocation_response"``)
    prediction: str
    #: which case of it: ``"b=(1, 0)"``, ``"Ω=+π/2 at 1b"``, ``"corner"``
    case: str
    #: the sample measured (kind, size, boundary), or "" if none could be built
    sample: str
    #: the predicted outcome, in words and numbers
    predicted: str
    #: the measured outcome, or why nothing was measured
    measured: str
    #: True / False, or None when nothing was measured or the measurement did not converge (said in ``measured``)
    agree: bool | None
    #: how it was measured (solver, radii, convergence figure)
    method: str = ""
    #: plain-data numbers behind the comparison
    details: Mapping[str, Any] = field(default_factory=dict)
    #: name -> function drawing on a matplotlib Axes (density maps; not part of to_dict)
    figures: Mapping[str, Any] = field(default_factory=dict, repr=False, compare=False)

    @property
    def verdict(self) -> str:
        return {True: "yes", False: "NO", None: "undetermined"}[self.agree]

    def to_dict(self) -> dict:
        return {"prediction": self.prediction, "case": self.case, "sample": self.sample, "predicted": self.predicted,
                "measured": self.measured, "agree": self.agree, "method": self.method,
                "details": plain(self.details)}


@dataclass(frozen=True)
class Report:
    """The classification of one model: a record per invariant, plus what was checked about the model.

    Item access by invariant name (``report["chern"].value``); iteration over the records in the order they ran.
    """

    #: what was classified: name, dimension, number of states, filling, group, time reversal, spin
    model: Mapping[str, Any]
    #: the checks run on the model: largest symmetry violation per operation, Hermiticity
    checks: Mapping[str, Any]
    #: the records, in the order they ran
    results: Mapping[str, Result]
    #: bookkeeping of the band data (k-points diagonalised, batches, cache hits)
    band_stats: Mapping[str, Any] = field(default_factory=dict)
    #: files written (figures), name -> path
    figures: Mapping[str, str] = field(default_factory=dict)
    #: defect predictions checked on finite samples (:func:`crystaltop.verify_defects`), in the order measured
    verification: tuple = ()

    def __post_init__(self):
        object.__setattr__(self, "results", MappingProxyType(dict(self.results)))
        object.__setattr__(self, "model", MappingProxyType(dict(self.model)))
        object.__setattr__(self, "checks", MappingProxyType(dict(self.checks)))

    def __reduce__(self):
        # read-only views do not pickle: a report is rebuilt from plain copies (to send it to another process,
        # or to keep it on disk)
        return (Report, (dict(self.model), dict(self.checks), dict(self.results), dict(self.band_stats),
                         dict(self.figures), self.verification))

    def __getitem__(self, name: str) -> Result:
        try:
            return self.results[name]
        except KeyError:
            raise KeyError(f"no invariant '{name}' in this report; it has {', '.join(self.results) or 'none'}") from None

    def __contains__(self, name) -> bool:
        return name in self.results

    def __iter__(self) -> Iterator[Result]:
        return iter(self.results.values())

    def __len__(self) -> int:
        return len(self.results)

    def keys(self):
        return self.results.keys()

    @property
    def failed(self) -> tuple:
        return tuple(r for r in self if r.status == FAILED)

    @property
    def disagreements(self) -> tuple:
        """The defect checks whose measurement contradicts the prediction."""
        return tuple(c for c in self.verification if c.agree is False)

    def _figure_sources(self):
        for r in self:
            for fig_name, draw in r.figures.items():
                yield f"{r.name}/{fig_name}", f"{r.name}-{fig_name}", draw
        for i, c in enumerate(self.verification, 1):
            for fig_name, draw in c.figures.items():
                yield f"verification/{i}/{fig_name}", f"verify-{i:02d}-{c.prediction}-{fig_name}", draw

    def save_figures(self, directory) -> dict:
        """Draw every figure the invariants provide as PNG files in ``directory``; name -> path.

        Returns an empty dict when matplotlib is not installed (the figures' data stay in each record's details).
        """
        try:
            import matplotlib

            matplotlib.use("Agg", force=False)
            import matplotlib.pyplot as plt
        except ImportError:
            return {}
        from pathlib import Path

        out = {}
        directory = Path(directory)
        directory.mkdir(parents=True, exist_ok=True)
        for key, stem, draw in self._figure_sources():
            fig, ax = plt.subplots(figsize=(4.5, 3.5))
            try:
                draw(ax)
                fig.tight_layout()
                path = directory / f"{stem}.png"
                fig.savefig(path, dpi=120)
                out[key] = str(path)
            finally:
                plt.close(fig)
        return out

    def to_dict(self) -> dict:
        return {
            "model": plain(self.model),
            "checks": plain(self.checks),
            "invariants": {name: r.to_dict() for name, r in self.results.items()},
            "band_data": plain(self.band_stats),
            "figures": dict(self.figures),
            "verification": [c.to_dict() for c in self.verification],
        }

    def to_json(self, **kwargs) -> str:
        kwargs.setdefault("indent", 2)
        return json.dumps(self.to_dict(), **kwargs)

    # ------------------------------------------------------------------ renderers
    def _header_lines(self) -> list[str]:
        m = self.model
        lines = [f"{m.get('name') or 'model'}: {m.get('dim')}D, {m.get('n_states')} states, filling {m.get('filling')}, "
                 f"point group {m.get('group')}, time reversal {'yes' if m.get('time_reversal') else 'no'}"
                 + (", spin-1/2" if m.get("spinful") else "")]
        viol = self.checks.get("symmetry_violation")
        if viol:
            worst = max(viol.values())
            lines.append(f"symmetry checked on {self.checks.get('samples', '?')} random k: largest violation {worst:.1e}")
        return lines

    def _rows(self) -> list[tuple[str, str, str, str, str]]:
        rows = []
        for r in self:
            if r.status == OK:
                val = format_value(r.value)
            elif r.status == FAILED and r.value is not None:
                val = format_value(r.value) + " (disputed)"
            else:
                val = "—"
            check = "; ".join(f"{c.method}: {format_value(c.value)} {'agrees' if c.agree else 'DISAGREES'}"
                              for c in r.cross_checks)
            how = r.method + (f" [{r.mesh}]" if r.mesh else "")
            if r.smallest_gap is not None:
                how += f", gap {r.smallest_gap:.3g}"
            if r.convergence is not None:
                how += f", {r.convergence_label or 'convergence'} {r.convergence:.2g}"
            status = r.status if r.status == OK else f"{r.status}: {r.message}"
            rows.append((r.name, val, status, how, check))
        return rows

    def __str__(self) -> str:
        lines = self._header_lines()
        rows = self._rows()
        width = max([len(r[0]) for r in rows] + [9])
        vwidth = min(max([len(r[1]) for r in rows] + [5]), 40)
        lines.append("")
        lines.append(f"{'invariant'.ljust(width)}  {'value'.ljust(vwidth)}  status / how obtained")
        lines.append(f"{'-' * width}  {'-' * vwidth}  {'-' * 30}")
        for name, val, status, how, check in rows:
            lines.append(f"{name.ljust(width)}  {val.ljust(vwidth)}  {status}")
            if how.strip():
                lines.append(f"{''.ljust(width)}  {''.ljust(vwidth)}    {how}")
            if check:
                lines.append(f"{''.ljust(width)}  {''.ljust(vwidth)}    cross-check {check}")
            for note in self.results[name].notes:
                lines.append(f"{''.ljust(width)}  {''.ljust(vwidth)}    note: {note}")
        lines += self._verification_lines()
        if self.band_stats:
            lines.append("")
            lines.append(f"band data: {self.band_stats.get('k_points')} k-points diagonalised in "
                         f"{len(self.band_stats.get('batches', []))} batches, {self.band_stats.get('cache_hits')} cache hits")
        for name, path in self.figures.items():
            lines.append(f"figure {name}: {path}")
        return "\n".join(lines)

    def _verification_lines(self) -> list[str]:
        if not self.verification:
            return []
        rows = [("prediction", "case", "predicted", "measured", "agree")]
        rows += [(c.prediction, c.case, c.predicted, c.measured, c.verdict) for c in self.verification]
        widths = [min(max(len(r[i]) for r in rows), cap) for i, cap in enumerate((22, 26, 34, 44, 12))]
        lines = ["", "defects on finite samples (predicted / measured / agree):"]
        for j, row in enumerate(rows):
            lines.append("  ".join(cell.ljust(w) for cell, w in zip(row, widths)).rstrip())
            if j == 0:
                lines.append("  ".join("-" * w for w in widths))
            else:
                c = self.verification[j - 1]
                if c.sample:
                    lines.append(f"{''.ljust(widths[0])}  sample: {c.sample}" + (f"; {c.method}" if c.method else ""))
        bad = len(self.disagreements)
        lines.append(f"{len(self.verification)} checks: {sum(c.agree is True for c in self.verification)} agree, "
                     f"{bad} disagree, {sum(c.agree is None for c in self.verification)} undetermined")
        return lines

    def to_markdown(self) -> str:
        out = ["## " + (self.model.get("name") or "model"), ""]
        out += ["- " + line for line in self._header_lines()]
        out += ["", "| invariant | value | status | method | cross-check |", "|---|---|---|---|---|"]
        for name, val, status, how, check in self._rows():
            cells = [name, val, status, how, check or ""]
            out.append("| " + " | ".join(c.replace("|", "\\|") for c in cells) + " |")
        notes = [(r.name, n) for r in self for n in r.notes]
        if notes:
            out += ["", "Notes:", ""] + [f"- **{name}**: {n}" for name, n in notes]
        if self.verification:
            out += ["", "### Defects on finite samples", "",
                    "| prediction | case | sample | predicted | measured | agree |", "|---|---|---|---|---|---|"]
            for c in self.verification:
                cells = [c.prediction, c.case, c.sample, c.predicted, c.measured, c.verdict]
                out.append("| " + " | ".join(x.replace("|", "\\|") for x in cells) + " |")
        if self.figures:
            out += [""] + [f"![{name}]({path})" for name, path in self.figures.items()]
        return "\n".join(out) + "\n"
