"""The README's quick start and Python example work as written."""

from __future__ import annotations

import re
from pathlib import Path

README = Path(__file__).resolve().parents[1] / "README.md"


def test_the_quick_start_is_exactly_two_commands():
    text = README.read_text()
    section = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    commands = re.findall(r"```sh\n(.*?)```", section, flags=re.S)
    assert [c.strip() for c in commands] == ['pip install . && crystaltop report --demo',
                                            'pip install ".[test]" && pytest']


def test_the_python_example_runs_and_gives_a_report(capsys):
    code = re.findall(r"```python\n(.*?)```", README.read_text(), flags=re.S)[0]
    ns = {}
    exec(compile(code, str(README), "exec"), ns)
    report = ns["report"]
    assert report["chern"].value == 0 and report["polarization"].status == "ok"
    assert "chern" in capsys.readouterr().out


def test_the_defect_example_runs_and_every_check_agrees(capsys):
    """The README's second Python block: the C4 SSH obstructed limit, e/2 at a dislocation (Q = e (ẑ × b)·P,
    PHYSICS.md §8) and e/4 at a corner (Benalcazar, Li, Hughes, Phys. Rev. B 99, 245151 (2019))."""
    first, second = re.findall(r"```python\n(.*?)```", README.read_text(), flags=re.S)[:2]
    ns = {}
    exec(compile(first, str(README), "exec"), ns)
    exec(compile(second, str(README), "exec"), ns)
    report = ns["report"]
    assert report.verification and report.disagreements == ()
    assert all(c.agree for c in report.verification)
    assert "predicted / measured / agree" in capsys.readouterr().out
