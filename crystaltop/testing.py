"""Conformance checks that every invariant plugin must pass, for our own plugins and outside ones.

Each rule of :mod:`crystaltop.plugin` is backed by a ``check_*`` function here. The probe models are chosen
from the invariant's declared requirements (dimension, symmetry elements, time reversal, spin), so an outside
plugin author gets the same checks by calling :func:`conformance_cases` on their invariant::

    import pytest
    from crystaltop.testing import conformance_cases, run_case

    @pytest.mark.parametrize("case", conformance_cases(MyInvariant()), ids=str)
    def test_my_invariant_conforms(case):
        run_case(case)

Known failures are recorded in :data:`KNOWN_FAILURES` with a reason and turned into ``xfail`` by
:func:`pytest_params`, never silently skipped.
"""

from __future__ import annotations

import json
import math
from dataclasses import dataclass
from typing import Any, Callable

import numpy as np

from .dispatch import InvariantRegistry, default_registry
from .examples.published import PublishedModel
from .plugin import Invariant, Requirements, hookimpl

__all__ = ["Probe", "PROBES", "ConformanceCase", "conformance_cases", "run_case", "pytest_params",
           "values_equal", "random_unitary", "KNOWN_FAILURES", "CHECKS"]


#: A probe model: one parameter point of a published model with its group, filling, dimension, time reversal,
#: spin and (optionally) a gapless parameter point. The catalogue of :mod:`crystaltop.examples.published`
#: defines the record; the conformance checks read the same fields.
Probe = PublishedModel


def _probes() -> tuple[Probe, ...]:
    from . import examples as ex

    return tuple(ex.conformance_probes())


#: probe models, built lazily from :mod:`crystaltop.examples`
PROBES: tuple = ()


def probes() -> tuple[Probe, ...]:
    global PROBES
    if not PROBES:
        PROBES = _probes()
    return PROBES


def _elements(probe: Probe):
    from .symmetry import point_group

    return point_group(probe.group).elements(probe.dim)


def suitable_probes(invariant) -> list[Probe]:
    """Probes whose dimension, group, time reversal and spin satisfy the invariant's requirements."""
    req: Requirements = invariant.requires
    return [p for p in probes()
            if req.why_not(elements=_elements(p), dim=p.dim, time_reversal=p.time_reversal, spinful=p.spinful) is None]


def random_unitary(n: int, rng) -> np.ndarray:
    """A Haar-random unitary matrix (QR of a complex Gaussian matrix with the phases of R removed)."""
    z = (rng.normal(size=(n, n)) + 1j * rng.normal(size=(n, n))) / math.sqrt(2)
    q, r = np.linalg.qr(z)
    return q * (np.diag(r) / np.abs(np.diag(r)))


def values_equal(a, b, tol: float = 1e-6) -> bool:
    """Equality of plain-data values, floats within ``tol``."""
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(values_equal(a[k], b[k], tol) for k in a)
    if isinstance(a, (list, tuple, np.ndarray)) or isinstance(b, (list, tuple, np.ndarray)):
        a, b = list(np.asarray(a, dtype=object).ravel()), list(np.asarray(b, dtype=object).ravel())
        return len(a) == len(b) and all(values_equal(x, y, tol) for x, y in zip(a, b))
    if isinstance(a, (int, float, complex, np.number)) and isinstance(b, (int, float, complex, np.number)):
        return abs(complex(a) - complex(b)) <= tol
    return a == b


def _only(invariant, registry):
    """A registry holding the invariant and what it uses (from the default registry)."""
    if registry is not None:
        return registry
    installed = default_registry().invariants()
    if installed.get(invariant.name) is invariant:
        return default_registry()
    needed = {u: installed[u] for u in invariant.requires.uses + invariant.requires.optional_uses if u in installed}
    reg = InvariantRegistry(autoload=False)
    reg.register(type("_Probe", (), {"crystaltop_invariants": staticmethod(hookimpl(
        lambda: [invariant, *needed.values()]))})(), name=f"conformance-{invariant.name}")
    return reg


def _classify(invariant, probe: Probe, model, registry=None, **kw):
    from .classification import classify

    report = classify(model, group=probe.group, filling=probe.filling, time_reversal=probe.time_reversal,
                      invariants=[invariant.name], registry=_only(invariant, registry), **kw)
    return report[invariant.name]


# ---------------------------------------------------------------------- the checks
def check_declaration(invariant, probe=None, registry=None) -> None:
    """Rule 1-2: a lower-case identifier as name, a title, Requirements as data, a compute method."""
    name = getattr(invariant, "name", "")
    assert isinstance(name, str) and name and name == name.lower() and name.replace("_", "").isalnum(), \
        f"invariant {invariant!r}: name must be a lower-case identifier"
    assert getattr(invariant, "title", ""), f"invariant '{name}' has no title"
    assert isinstance(invariant.requires, Requirements), f"invariant '{name}': requires must be a Requirements"
    assert callable(getattr(invariant, "compute", None)), f"invariant '{name}' has no compute(context)"


def check_result_schema(invariant, probe, registry=None) -> None:
    """Rule 3 and 5: on a gapped model it applies to, a value with a method (or a skip with its reason), plain data."""
    res = _classify(invariant, probe, probe.build(), registry)
    assert res.status in ("ok", "skipped"), f"{invariant.name} on {probe.name}: status {res.status}: {res.message}"
    if res.status == "ok":
        assert res.method, f"{invariant.name} on {probe.name}: no method named"
    else:
        assert res.message and res.value is None, f"{invariant.name} on {probe.name}: skipped without a reason"
    json.dumps(res.to_dict())


def check_some_probe_gives_a_value(invariant, probe=None, registry=None) -> None:
    """At least one probe model that satisfies the requirements gets a value (the checks are not vacuous)."""
    statuses = {}
    for p in suitable_probes(invariant):
        statuses[p.name] = _classify(invariant, p, p.build(), registry).status
        if statuses[p.name] == "ok":
            return
    raise AssertionError(f"{invariant.name}: no probe model gives a value ({statuses})")


def check_determinism(invariant, probe, registry=None) -> None:
    """The same model twice gives the same value."""
    a = _classify(invariant, probe, probe.build(), registry)
    b = _classify(invariant, probe, probe.build(), registry)
    assert a.status == b.status, f"{invariant.name} on {probe.name}: {a.status} then {b.status}"
    assert values_equal(a.value, b.value, 0.0), f"{invariant.name} on {probe.name}: {a.value} then {b.value}"


def check_basis_invariance(invariant, probe, registry=None, seed: int = 1) -> None:
    """Rule 4: a random unitary change of the orbital basis leaves the value unchanged."""
    model = probe.build()
    ref = _classify(invariant, probe, model, registry)
    u = random_unitary(model.n_states, np.random.default_rng(seed))
    res = _classify(invariant, probe, model.with_basis(u), registry)
    assert res.status == ref.status, f"{invariant.name} on {probe.name} in a random basis: {res.status}: {res.message}"
    assert values_equal(ref.value, res.value), \
        f"{invariant.name} on {probe.name}: {ref.value} in the orbital basis, {res.value} in a random basis"


def check_phase_invariance(invariant, probe, registry=None, seed: int = 2) -> None:
    """Rule 4: k-dependent phases (orbitals re-wrapped into other cells, random eigenvector phases) change nothing."""
    model = probe.build()
    ref = _classify(invariant, probe, model, registry)
    rng = np.random.default_rng(seed)
    shifts = rng.integers(-2, 3, size=(model.n_states, model.dim))
    if model.spinful:  # keep Kramers partners in the same cell
        shifts[1::2] = shifts[0::2]
    res = _classify(invariant, probe, model.rewrapped(shifts), registry, gauge_seed=seed)
    assert res.status == ref.status, \
        f"{invariant.name} on {probe.name} with k-dependent phases: {res.status}: {res.message}"
    assert values_equal(ref.value, res.value), \
        f"{invariant.name} on {probe.name}: {ref.value}, but {res.value} with k-dependent phases"


def check_gapless_failure(invariant, probe, registry=None) -> None:
    """A gapless model gives a failure that names the gap, never a value."""
    if probe.gapless is None:
        return
    res = _classify(invariant, probe, probe.gapless(), registry)
    assert res.status != "ok" and res.value is None, \
        f"{invariant.name} on gapless {probe.name}: status {res.status}, value {res.value}"
    if res.status == "skipped" and "gap" not in res.message:
        return  # does not apply at the gapless point for another reason (e.g. a Chern number it needs)
    assert "gap" in res.message, f"{invariant.name} on gapless {probe.name}: message does not name the gap: {res.message}"
    assert "k=" in res.message, f"{invariant.name} on gapless {probe.name}: message does not name the k-point"


CHECKS = (check_result_schema, check_determinism, check_basis_invariance, check_phase_invariance,
          check_gapless_failure)

#: (invariant name, check name, probe name) -> reason, for failures we know of and have not fixed
KNOWN_FAILURES: dict[tuple[str, str, str], str] = {}


@dataclass(frozen=True)
class ConformanceCase:
    invariant: Invariant
    check: Callable
    probe: Probe | None

    def __str__(self) -> str:
        return f"{self.invariant.name}-{self.check.__name__.removeprefix('check_')}" + \
            (f"-{self.probe.name}" if self.probe else "")


def conformance_cases(invariant) -> list[ConformanceCase]:
    """The (check, probe) pairs that apply to one invariant: the declaration, then each check on each probe."""
    cases = [ConformanceCase(invariant, check_declaration, None)]
    if suitable_probes(invariant):
        cases.append(ConformanceCase(invariant, check_some_probe_gives_a_value, None))
    for probe in suitable_probes(invariant):
        cases += [ConformanceCase(invariant, check, probe) for check in CHECKS]
    return cases


def run_case(case: ConformanceCase, registry=None) -> None:
    case.check(case.invariant, case.probe, registry=registry)


def pytest_params(registry=None):
    """pytest.param objects for every installed invariant (sorted by name), known failures marked xfail."""
    import pytest

    registry = registry or default_registry()
    params = []
    for name in sorted(registry.invariants()):
        inv = registry.invariants()[name]
        cases = conformance_cases(inv)
        if len(cases) == 1:
            params.append(pytest.param(cases[0], id=str(cases[0])))
            params.append(pytest.param(None, id=f"{name}-has-a-probe-model",
                                       marks=pytest.mark.xfail(reason=f"no probe model satisfies {name}'s requirements",
                                                               strict=True)))
            continue
        for case in cases:
            key = (name, case.check.__name__, case.probe.name if case.probe else "")
            marks = [pytest.mark.xfail(reason=KNOWN_FAILURES[key], strict=True)] if key in KNOWN_FAILURES else []
            params.append(pytest.param(case, id=str(case), marks=marks))
    return params
