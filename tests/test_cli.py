"""The command line: report --demo, report on a model file, groups --json."""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap

import pytest

from crystaltop.cli import main


def test_the_demo_report_prints_both_designs_and_a_verdict(capsys):
    assert main(["report", "--demo"]) == 0
    out = capsys.readouterr().out
    assert "design A" in out and "design B" in out and "verdict:" in out
    assert "Chern number 1" in out


def test_the_demo_report_as_json_is_valid(capsys):
    assert main(["report", "--demo", "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert [d["invariants"]["chern"]["value"] for d in data] == [0, 1]


def test_a_model_file_is_reported_with_its_group_and_filling(tmp_path, capsys):
    path = tmp_path / "chain.py"
    path.write_text(textwrap.dedent("""
        from crystaltop.examples import su_schrieffer_heeger
        GROUP = "-1"
        FILLING = 1
        def build():
            return su_schrieffer_heeger(v=0.4, w=1.0)
    """))
    assert main(["report", str(path), "--markdown"]) == 0
    out = capsys.readouterr().out
    assert "| polarization | (0.5) | ok |" in out


def test_a_bad_group_on_the_command_line_is_a_one_line_error(tmp_path, capsys):
    path = tmp_path / "chain.py"
    path.write_text("from crystaltop.examples import su_schrieffer_heeger\nMODEL = su_schrieffer_heeger()\n")
    assert main(["report", str(path), "--group", "7mm"]) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith("crystaltop: unknown point group") and "\n" not in err


def test_groups_json_lists_the_32_point_groups_with_their_invariants(capsys):
    assert main(["groups", "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    # International Tables for Crystallography, Vol. A: 32 crystallographic point groups, 27 of them keep an axis
    # (all but the five cubic ones), which are the ones a 2D model can have with z its normal.
    assert len(rows) == 32
    assert sum(r["two_dimensional"] for r in rows) == 27
    square = next(r for r in rows if r["symbol"] == "4mm")
    assert square["order"] == 8 and "chern" in square["invariants"]["2D, without time reversal"]


def test_the_console_script_is_installed():
    out = subprocess.run([sys.executable, "-m", "crystaltop", "groups"], capture_output=True, text=True, check=True)
    assert out.stdout.splitlines()[0].startswith("HM")


def test_report_with_defects_checks_the_predictions_on_samples_and_writes_the_maps(tmp_path, capsys):
    """The C4 SSH obstructed limit with ions at 1a: e/2 at each dislocation (PHYSICS.md §8, Q = e (ẑ × b)·P) and
    e/4 at a corner (Benalcazar, Li, Hughes, Phys. Rev. B 99, 245151 (2019))."""
    path = tmp_path / "square.py"
    path.write_text(textwrap.dedent("""
        from crystaltop.examples import c4_breathing_square
        GROUP = "4"
        FILLING = 1
        IONS = [((0.0, 0.0), 1.0)]
        MODEL = c4_breathing_square(gamma=0.3)
    """))
    pytest.importorskip("matplotlib")
    figures = tmp_path / "figures"
    assert main(["report", str(path), "--defects", "--strict", "--figures", str(figures)]) == 0
    out = capsys.readouterr().out
    assert "predicted / measured / agree" in out
    assert "disagree" in out and " 0 disagree" in out
    assert any(p.name.startswith("verify-") for p in figures.iterdir())
