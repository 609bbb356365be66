"""Parameter sweeps: classify a family of models over a grid of parameters, on any executor.

``sweep(build, grid)`` builds ``build(**params)`` at every point of the Cartesian product of ``grid`` and
classifies it. The points run serially by default, or spread over any :class:`concurrent.futures.Executor`
(a process pool, or the executor of a Dask ``distributed`` client). The result is a :class:`SweepTable`, one
row per point, in grid order whichever executor ran them. A point that raises is recorded, and the sweep goes
on. A point whose gap closes is marked ``gapless`` and given no value.

With ``output=path`` every finished point is appended to a JSON-lines file as soon as it is done. A rerun with
the same output skips the points already there, so an interrupted sweep resumes where it stopped.
"""

from __future__ import annotations

import csv
import functools
import itertools
import json
import time
from concurrent.futures import Executor, as_completed
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable, Mapping, Sequence

from .errors import CrystaltopError, GapClosedError
from .progress import progress_bar
from .report import plain

__all__ = ["sweep", "SweepTable", "GAPLESS", "ERROR", "OK"]

OK, GAPLESS, ERROR = "ok", "gapless", "error"


def _key(params: Mapping[str, Any]) -> str:
    return json.dumps(plain(dict(params)), sort_keys=True)


def run_point(build: Callable, names: tuple, values: tuple, classify_kwargs: tuple) -> dict:
    """Classify one point of a sweep; never raises (the row records what happened).

    Takes positional arguments only, so that it can be submitted to any executor (Dask's included).
    """
    from .classification import classify

    params = dict(zip(names, values))
    t0 = time.perf_counter()
    row = {"params": plain(params), "status": OK, "message": "", "invariants": {}, "smallest_gap": None}
    try:
        report = classify(build(**params), **dict(classify_kwargs))
    except GapClosedError as exc:
        row.update(status=GAPLESS, message=str(exc))
    except Exception as exc:  # a point that raises is recorded, the sweep goes on
        row.update(status=ERROR, message=str(exc) if isinstance(exc, CrystaltopError) else f"{type(exc).__name__}: {exc}")
    else:
        gaps = []
        for r in report:
            gapless = r.status == "failed" and "gap" in r.message and "closes" in r.message
            row["invariants"][r.name] = {"status": "gapless" if gapless else r.status,
                                         "value": plain(r.value) if r.status == "ok" else None,
                                         "message": r.message}
            if r.smallest_gap is not None:
                gaps.append(r.smallest_gap)
            if gapless:
                row["status"] = GAPLESS
                row["message"] = r.message
        row["smallest_gap"] = min(gaps) if gaps else None
    row["seconds"] = round(time.perf_counter() - t0, 4)
    return row


@dataclass(frozen=True)
class SweepTable:
    """The rows of a sweep, in grid order.

    Each row is a dict with ``params`` (name -> value), ``status`` ("ok", "gapless" or "error"), ``message``,
    ``invariants`` (name -> {"status", "value", "message"}), ``smallest_gap`` and ``seconds``.
    """

    names: tuple
    rows: tuple
    #: how the points were run: executor type, points computed now, points read back from the output file
    info: Mapping[str, Any] = field(default_factory=dict)

    def __len__(self) -> int:
        return len(self.rows)

    def __iter__(self):
        return iter(self.rows)

    def values(self, invariant: str) -> list:
        """The invariant's value at each point (None where it has none)."""
        return [row["invariants"].get(invariant, {}).get("value") if row["status"] != GAPLESS else None
                for row in self.rows]

    def comparable(self) -> list:
        """The rows without timings, for comparing two sweeps of the same grid."""
        return [{k: v for k, v in row.items() if k != "seconds"} for row in self.rows]

    def invariant_names(self) -> list:
        names = []
        for row in self.rows:
            for n in row["invariants"]:
                if n not in names:
                    names.append(n)
        return names

    def to_json(self, path=None) -> str:
        text = json.dumps({"parameters": list(self.names), "rows": list(self.rows)}, indent=1)
        if path is not None:
            Path(path).write_text(text)
        return text

    def to_csv(self, path) -> None:
        """One line per point: the parameters, the status, the smallest gap, and each invariant's value and status."""
        invs = self.invariant_names()
        with open(path, "w", newline="") as fh:
            w = csv.writer(fh)
            w.writerow(list(self.names) + ["status", "smallest_gap"]
                       + [c for n in invs for c in (n, f"{n}_status")])
            for row in self.rows:
                cells = [row["params"][n] for n in self.names] + [row["status"], row["smallest_gap"]]
                for n in invs:
                    rec = row["invariants"].get(n, {})
                    val = rec.get("value")
                    cells += [json.dumps(val) if isinstance(val, (list, dict)) else val, rec.get("status", "")]
                w.writerow(cells)

    def phase_diagram(self, invariant: str, *, ax=None, path=None):
        """A two-parameter phase diagram of one invariant (matplotlib); gapless points are marked with crosses."""
        if len(self.names) != 2:
            raise CrystaltopError(f"a phase diagram needs exactly two swept parameters, this sweep has {len(self.names)}")
        import matplotlib

        matplotlib.use("Agg", force=False)
        import matplotlib.pyplot as plt

        xname, yname = self.names
        own = ax is None
        if own:
            fig, ax = plt.subplots(figsize=(5, 4))
        xs = [row["params"][xname] for row in self.rows]
        ys = [row["params"][yname] for row in self.rows]
        vals = self.values(invariant)
        labels = sorted({json.dumps(v) for v in vals if v is not None})
        colours = {lab: plt.cm.viridis(i / max(1, len(labels) - 1)) for i, lab in enumerate(labels)}
        for lab in labels:
            pts = [(x, y) for x, y, v in zip(xs, ys, vals) if v is not None and json.dumps(v) == lab]
            ax.scatter(*zip(*pts), color=colours[lab], label=f"{invariant} = {lab}", s=30, marker="s")
        gapless = [(x, y) for x, y, row in zip(xs, ys, self.rows) if row["status"] == GAPLESS]
        if gapless:
            ax.scatter(*zip(*gapless), color="k", marker="x", label="gap closes", s=30)
        ax.set_xlabel(xname)
        ax.set_ylabel(yname)
        ax.legend(fontsize="small", loc="best")
        if path is not None:
            ax.figure.tight_layout()
            ax.figure.savefig(path, dpi=120)
        if own and path is not None:
            plt.close(ax.figure)
        return ax


def _read_done(path: Path) -> dict:
    done = {}
    if path.exists():
        for line in path.read_text().splitlines():
            line = line.strip()
            if not line:
                continue
            try:
                row = json.loads(line)
            except json.JSONDecodeError:  # a line cut short by an interruption is simply redone
                continue
            done[_key(row["params"])] = row
    return done


def sweep(build: Callable, grid: Mapping[str, Sequence], *, invariants=None, executor: Executor | None = None,
          group=None, filling=None, time_reversal=None, options=None, output=None, progress=None,
          **classify_kwargs) -> SweepTable:
    """Classify ``build(**params)`` at every point of ``grid``.

    Parameters
    ----------
    build : callable
        ``build(**params)`` returns a model. For a process pool or a Dask cluster it must be picklable (a
        module-level function or a :func:`functools.partial` of one).
    grid : mapping
        Parameter name -> sequence of values; the points are the Cartesian product, the last name varying fastest.
    invariants : sequence of str, optional
        Invariants to compute (and what they use); default all that apply.
    executor : concurrent.futures.Executor, optional
        Where to run the points; None runs them serially here. The executor of a Dask ``distributed`` client
        works unchanged: only positional arguments are submitted.
    group, filling, time_reversal, options, **classify_kwargs
        Passed to :func:`crystaltop.classify` at every point.
    output : path, optional
        JSON-lines file; each finished point is appended as it completes, and points already there are skipped.
    progress : bool, optional
        Show a progress bar (tqdm); default only when standard error is a terminal.

    Returns
    -------
    SweepTable

    Examples
    --------
    >>> from crystaltop.examples import qi_wu_zhang
    >>> table = sweep(qi_wu_zhang, {"m": [-1.0, 1.0, 3.0]}, invariants=["chern"], group="4/m", filling=1)
    >>> table.values("chern")
    [1, -1, 0]
    """
    if not isinstance(grid, Mapping) or not grid:
        raise CrystaltopError("grid must map each parameter name to a sequence of values")
    names = tuple(grid)
    points = list(itertools.product(*[list(grid[n]) for n in names]))
    kwargs = dict(classify_kwargs, group=group, filling=filling, time_reversal=time_reversal, options=options,
                  invariants=None if invariants is None else list(invariants))
    frozen_kwargs = tuple(sorted(kwargs.items()))
    out_path = None if output is None else Path(output)
    done = _read_done(out_path) if out_path is not None else {}
    todo = [p for p in points if _key(dict(zip(names, p))) not in done]
    bar = progress_bar(len(todo), "sweep", "point", progress, leave=True)
    results = dict(done)
    sink = open(out_path, "a") if out_path is not None else None
    if sink is not None and out_path.stat().st_size and not out_path.read_bytes().endswith(b"\n"):
        sink.write("\n")  # close a line cut short by an interruption (it was not counted as done)
    try:
        def finish(row):
            results[_key(row["params"])] = row
            if sink is not None:
                sink.write(json.dumps(row) + "\n")
                sink.flush()
            bar.update(1)

        if executor is None:
            for p in todo:
                finish(run_point(build, names, p, frozen_kwargs))
        else:
            futures = {executor.submit(functools.partial(run_point, build, names, p, frozen_kwargs)): p for p in todo}
            for fut in as_completed(futures):
                try:
                    row = fut.result()
                except Exception as exc:  # the worker itself failed (e.g. build could not be pickled)
                    row = {"params": plain(dict(zip(names, futures[fut]))), "status": ERROR,
                           "message": f"{type(exc).__name__}: {exc}", "invariants": {}, "smallest_gap": None,
                           "seconds": 0.0}
                finish(row)
    finally:
        if sink is not None:
            sink.close()
        bar.close()
    rows = tuple(results[_key(dict(zip(names, p)))] for p in points)
    info = {"executor": type(executor).__name__ if executor is not None else "serial", "computed": len(todo),
            "resumed": len(points) - len(todo)}
    return SweepTable(names=names, rows=rows, info=info)
