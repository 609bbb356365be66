"""Every registered invariant plugin passes the conformance checks of crystaltop.testing.

The checks (result schema, determinism, invariance under a random unitary change of orbital basis, under
k-dependent phases and random eigenvector phases, failure on a gapless model) run on the published probe models
(crystaltop.examples.published.CATALOGUE) that satisfy each plugin's declared requirements.
"""

from __future__ import annotations

import pytest

from crystaltop.dispatch import default_registry
from crystaltop.testing import pytest_params, run_case


def test_the_built_in_plugins_are_registered_through_the_entry_point():
    from crystaltop_plugins import BUILTIN

    names = default_registry().plugin_names
    assert set(BUILTIN) <= set(names), f"built-in plugins missing from the entry-point group: {set(BUILTIN) - set(names)}"


@pytest.mark.parametrize("case", pytest_params())
def test_invariant_conforms(case):
    assert case is not None, "no probe model satisfies this invariant's requirements"
    run_case(case)
