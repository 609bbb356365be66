"""The complete plugin example of docs/writing-a-plugin.md works as written, as an outside plugin."""

from __future__ import annotations

import re
import sys
import types
from pathlib import Path

import pytest

import crystaltop as ct
from crystaltop.dispatch import InvariantRegistry
from crystaltop.examples.published import qi_wu_zhang
from crystaltop.testing import conformance_cases, run_case

DOC = Path(__file__).resolve().parents[1] / "docs" / "writing-a-plugin.md"


def _doc_plugin():
    code = re.findall(r"```python\n(.*?)```", DOC.read_text(), flags=re.S)[0]
    module = types.ModuleType("chern_parity")
    exec(compile(code, str(DOC), "exec"), module.__dict__)
    return module


def test_the_documented_plugin_cross_checks_the_chern_number():
    # Hughes, Prodan, Bernevig, Phys. Rev. B 83, 245132 (2011): (-1)^C from the occupied inversion eigenvalues;
    # Qi–Wu–Zhang (Phys. Rev. B 74, 085308 (2006)) at m = 1 has C = -1 (odd), at m = 3 C = 0.
    reg = InvariantRegistry()
    reg.register(_doc_plugin(), name="chern_parity")
    odd = ct.classify(qi_wu_zhang(m=1.0), group="4/m", filling=1, registry=reg)
    even = ct.classify(qi_wu_zhang(m=3.0), group="4/m", filling=1, registry=reg)
    assert odd["chern_parity"].value == 1 and even["chern_parity"].value == 0
    assert odd["chern"].cross_checks[0].agree and odd["chern"].status == "ok"


def test_an_installed_outside_plugin_appears_in_the_group_table():
    from crystaltop.cli import groups_table

    reg = InvariantRegistry()
    reg.register(_doc_plugin(), name="chern_parity")
    rows = {r["symbol"]: r for r in groups_table(registry=reg)}
    assert "chern_parity" in rows["4/m"]["invariants"]["2D, without time reversal"]
    assert "chern_parity" not in rows["4"]["invariants"]["2D, without time reversal"]  # no inversion in 4


@pytest.mark.parametrize("case", conformance_cases(_doc_plugin().ChernParity()), ids=str)
def test_the_documented_plugin_passes_the_conformance_checks(case):
    run_case(case)
