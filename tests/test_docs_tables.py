"""docs/invariants.md is generated from the declared requirements and never goes stale; outside plugins appear."""

from __future__ import annotations

from crystaltop.cli import groups_table
from crystaltop.docs_tables import DOC_PATH, builtin_registry, invariants_markdown, main
from crystaltop.plugin import Invariant, Outcome, Requirements, hookimpl


def test_the_committed_invariants_table_equals_the_generated_one():
    assert DOC_PATH.read_text(encoding="utf-8") == invariants_markdown(), \
        "docs/invariants.md is stale: run python -m crystaltop.docs_tables"
    assert main(["--check"]) == 0


def _row(text, dim, group):
    section = text.split(f"## {dim}D models")[1]
    return next(line for line in section.splitlines() if line.startswith(f"| {group} |"))


def test_the_table_lists_the_crystalline_invariants_where_their_requirements_hold():
    text = invariants_markdown()
    assert "`mirror_chern`" in _row(text, 2, "4/mmm") and "`mirror_chern`" not in _row(text, 2, "4mm")
    assert "`mirror_chern`" in _row(text, 3, "4mm")
    assert "`corner_charge` [spinless]" in _row(text, 2, "6mm") and "`corner_charge`" not in _row(text, 2, "mm2")
    assert "`rotation_eigenvalues`" not in _row(text, 2, "-1") and "`rotation_indices`" not in _row(text, 3, "4")


class _DummyWinding(Invariant):
    name = "dummy_winding"
    title = "A dummy outside invariant"
    requires = Requirements(dims={2}, elements={"C4"})

    def compute(self, context):  # pragma: no cover - never run here
        return Outcome(value=0, method="none")


class _DummyPlugin:
    @hookimpl
    def crystaltop_invariants(self):
        return [_DummyWinding()]


def test_an_outside_plugin_appears_in_the_table_once_registered():
    registry = builtin_registry()
    registry.register(_DummyPlugin(), name="dummy-outside-plugin")
    text = invariants_markdown(registry)
    assert "`dummy_winding`" in _row(text, 2, "4mm") and "`dummy_winding`" not in _row(text, 2, "6mm")
    assert "| `dummy_winding` | A dummy outside invariant | 2 | all of C4 |" in text
    # and in the groups table of the command line, from the same requirements
    rows = {r["symbol"]: r for r in groups_table(registry=registry)}
    assert "dummy_winding" in rows["4"]["invariants"]["2D, without time reversal"]
