"""The command line: ``crystaltop report`` and ``crystaltop groups``."""

from __future__ import annotations

import argparse
import json
import runpy
import sys
from pathlib import Path

from .errors import CrystaltopError

__all__ = ["main"]

MODEL_FILE_HELP = """\
A model file is a Python file that defines either a function build() returning a model, or a variable MODEL;
optionally GROUP (point-group symbol), FILLING (int), TIME_REVERSAL (bool) and IONS (the ionic background per cell,
[((reduced position), charge), ...], used by --defects). Command-line options override them."""


def _load_model_file(path: str):
    p = Path(path)
    if not p.is_file():
        raise CrystaltopError(f"model file {path} does not exist")
    ns = runpy.run_path(str(p), run_name="crystaltop_model")
    if callable(ns.get("build")):
        model = ns["build"]()
    elif "MODEL" in ns:
        model = ns["MODEL"]
    else:
        raise CrystaltopError(f"{path} defines neither build() nor MODEL")
    return model, ns.get("GROUP"), ns.get("FILLING"), ns.get("TIME_REVERSAL"), ns.get("IONS")


def _emit(report, fmt: str) -> str:
    if fmt == "json":
        return report.to_json()
    if fmt == "markdown":
        return report.to_markdown()
    return str(report)


def _cmd_report(args) -> int:
    from .classification import classify

    options = {"mesh": args.mesh} if args.mesh else None
    if args.demo:
        from .examples.demo import demo_reports, verdict

        reports = demo_reports(options=options)
        texts = [_emit(r, args.format) for r in reports]
        if args.format == "json":
            print("[" + ",\n".join(texts) + "]")
        else:
            print(("\n\n" if args.format == "text" else "\n").join(texts))
            print("\nverdict:\n" + verdict(reports))
        return 1 if args.strict and any(r.failed for r in reports) else 0
    if not args.file:
        print("crystaltop report: give a model file or --demo", file=sys.stderr)
        return 2
    model, group, filling, trs, ions = _load_model_file(args.file)
    kwargs = dict(group=args.group or group, filling=args.filling or filling,
                  time_reversal=trs if args.time_reversal is None else args.time_reversal, options=options)
    if args.defects:
        from .verification import verify_defects

        report = verify_defects(model, ions=ions, **kwargs)
    else:
        report = classify(model, **kwargs)
    if args.figures:
        from dataclasses import replace

        report = replace(report, figures=report.save_figures(args.figures))
    print(_emit(report, args.format))
    return 1 if (report.failed or report.disagreements) and args.strict else 0


def groups_table(registry=None) -> list[dict]:
    """For each of the 32 point groups: symbol, Schoenflies, order, and the invariants that apply per case."""
    from .dispatch import applicable_invariants
    from .symmetry import all_point_groups

    rows = []
    for pg in all_point_groups():
        row = {"symbol": pg.symbol, "schoenflies": pg.schoenflies, "order": pg.order,
               "two_dimensional": pg.keeps_axis((0, 0, 1)), "invariants": {}}
        for dim in (2, 3):
            if dim == 2 and not row["two_dimensional"]:
                continue
            for trs in (False, True):
                key = f"{dim}D, {'with' if trs else 'without'} time reversal"
                row["invariants"][key] = applicable_invariants(pg, dim, trs, registry=registry)
        rows.append(row)
    return rows


def _cmd_groups(args) -> int:
    rows = groups_table()
    if args.json:
        print(json.dumps(rows, indent=2))
        return 0
    print(f"{'HM':<7} {'Sch.':<5} {'order':>5}  invariants that apply (2D / 3D; without | with time reversal)")
    for r in rows:
        inv = r["invariants"]

        def cell(dim):
            a = inv.get(f"{dim}D, without time reversal")
            b = inv.get(f"{dim}D, with time reversal")
            return "—" if a is None else f"{', '.join(a) or '—'} | {', '.join(b) or '—'}"

        print(f"{r['symbol']:<7} {r['schoenflies']:<5} {r['order']:>5}  2D: {cell(2)}")
        print(f"{'':<19}  3D: {cell(3)}")
    return 0


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="crystaltop", description="Topological invariants of crystalline Bloch Hamiltonians.")
    sub = parser.add_subparsers(dest="command", required=True)
    rep = sub.add_parser("report", help="classify a model and print its report", epilog=MODEL_FILE_HELP)
    rep.add_argument("file", nargs="?", help="Python file that builds a model")
    rep.add_argument("--demo", action="store_true", help="report on the built-in demonstration models")
    rep.add_argument("--group", help="point group (Hermann–Mauguin or Schoenflies symbol)")
    rep.add_argument("--filling", type=int, help="number of occupied bands")
    rep.add_argument("--mesh", type=int, help="k-mesh size per axis for every invariant")
    trs = rep.add_mutually_exclusive_group()
    trs.add_argument("--time-reversal", dest="time_reversal", action="store_true", default=None)
    trs.add_argument("--no-time-reversal", dest="time_reversal", action="store_false")
    fmt = rep.add_mutually_exclusive_group()
    fmt.add_argument("--json", dest="format", action="store_const", const="json")
    fmt.add_argument("--markdown", dest="format", action="store_const", const="markdown")
    rep.add_argument("--defects", action="store_true",
                     help="also build finite samples with the predicted defects and check each prediction on them")
    rep.add_argument("--figures", metavar="DIR", help="write the figures (PNG, needs matplotlib) into DIR")
    rep.add_argument("--strict", action="store_true",
                     help="exit with status 1 if any invariant failed or a defect check disagreed")
    rep.set_defaults(format="text", func=_cmd_report)
    grp = sub.add_parser("groups", help="the 32 point groups and the invariants that apply to each")
    grp.add_argument("--json", action="store_true")
    grp.set_defaults(func=_cmd_groups)
    return parser


def main(argv=None) -> int:
    args = build_parser().parse_args(argv)
    try:
        return args.func(args)
    except CrystaltopError as exc:
        print(f"crystaltop: {exc}", file=sys.stderr)
        return 2


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
