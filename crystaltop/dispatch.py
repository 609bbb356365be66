"""Which invariants apply, and running them: registry, dependency order, isolation. No numerics of its own."""

from __future__ import annotations

import os
import time
import traceback
from functools import lru_cache

import pluggy

from .errors import CrystaltopError, NotApplicable, PluginError
from .plugin import ENTRY_POINT_GROUP, PROJECT, Context, Outcome, Requirements, _HookSpecs
from .report import FAILED, OK, SKIPPED, Result

__all__ = ["InvariantRegistry", "default_registry", "applicable_invariants", "applicability", "dependency_order",
           "AUTOLOAD_ENV"]

#: Set this environment variable (to anything but "" or "0") to keep entry-point plugins from loading.
AUTOLOAD_ENV = "CRYSTALTOP_DISABLE_PLUGIN_AUTOLOAD"


def _validate(inv) -> None:
    name = getattr(inv, "name", None)
    if not isinstance(name, str) or not name or not name.replace("_", "").isalnum() or name.lower() != name:
        raise PluginError(f"invariant {inv!r} has no valid name (lower-case identifier expected)")
    if not isinstance(getattr(inv, "requires", None), Requirements):
        raise PluginError(f"invariant '{name}' must declare `requires` as a crystaltop.plugin.Requirements")
    if not callable(getattr(inv, "compute", None)):
        raise PluginError(f"invariant '{name}' has no compute(context) method")


def dependency_order(invariants: dict) -> list[str]:
    """Names in an order where every invariant comes after those it uses (ties by name, so deterministic)."""
    deps = {n: {u for u in (inv.requires.uses + inv.requires.optional_uses) if u in invariants}
            for n, inv in invariants.items()}
    order, done = [], set()
    while len(order) < len(deps):
        ready = sorted(n for n, d in deps.items() if n not in done and d <= done)
        if not ready:
            cycle = sorted(n for n in deps if n not in done)
            raise PluginError(f"invariants {', '.join(cycle)} depend on each other in a cycle")
        order.extend(ready)
        done.update(ready)
    return order


class InvariantRegistry:
    """The installed invariants, collected through the ``crystaltop_invariants`` hook.

    Parameters
    ----------
    autoload : bool
        Load the plugins of the entry-point group ``crystaltop.invariants`` (the built-in ones included),
        unless the environment variable ``CRYSTALTOP_DISABLE_PLUGIN_AUTOLOAD`` is set.
    """

    def __init__(self, *, autoload: bool = True):
        self._pm = pluggy.PluginManager(PROJECT)
        self._pm.add_hookspecs(_HookSpecs)
        if autoload and os.environ.get(AUTOLOAD_ENV, "") in ("", "0"):
            self._pm.load_setuptools_entrypoints(ENTRY_POINT_GROUP)
        self._pm.check_pending()
        self._cache = None

    def register(self, plugin, name: str | None = None) -> None:
        """Register a plugin object or module (one with a ``crystaltop_invariants`` hook implementation)."""
        self._pm.register(plugin, name=name)
        self._pm.check_pending()
        self._cache = None

    def unregister(self, name: str) -> None:
        self._pm.unregister(name=name)
        self._cache = None

    @property
    def plugin_names(self) -> list[str]:
        return sorted(n for n, _ in self._pm.list_name_plugin())

    def invariants(self) -> dict:
        """Name -> invariant object, in dependency order."""
        if self._cache is None:
            found = {}
            for batch in self._pm.hook.crystaltop_invariants():
                for inv in batch or ():
                    _validate(inv)
                    if inv.name in found:
                        raise PluginError(f"two plugins provide an invariant named '{inv.name}'")
                    found[inv.name] = inv
            self._cache = {n: found[n] for n in dependency_order(found)}
        return dict(self._cache)


@lru_cache(maxsize=1)
def default_registry() -> InvariantRegistry:
    """The registry of every installed plugin (built once per process)."""
    return InvariantRegistry()


def _group_obj(group):
    from .symmetry import PointGroup, point_group

    return group if isinstance(group, PointGroup) else point_group(group)


def applicability(group, dim: int, time_reversal: bool, *, spinful: bool | None = None, registry=None) -> dict:
    """For each installed invariant, None if it applies to the group/dimension/time reversal, else the reason.

    Decided from the declared requirements alone (no Hamiltonian); an invariant that uses another one that does
    not apply does not apply either.
    """
    registry = registry or default_registry()
    pg = _group_obj(group)
    elements = pg.elements(dim)
    out = {}
    for name, inv in registry.invariants().items():
        reason = inv.requires.why_not(elements=elements, dim=dim, time_reversal=time_reversal, spinful=spinful)
        if reason is None:
            for used in inv.requires.uses:
                if used not in out:
                    reason = f"uses '{used}', which is not installed"
                elif out[used] is not None:
                    reason = f"uses '{used}', which does not apply"
                if reason:
                    break
        out[name] = reason
    return out


def applicable_invariants(group, dim: int, time_reversal: bool = False, *, spinful: bool | None = None,
                          registry=None) -> list[str]:
    """Names of the invariants that apply, without any Hamiltonian, in the order they would run.

    Examples
    --------
    >>> "chern" in applicable_invariants("4mm", dim=2, time_reversal=False)
    True
    """
    return [n for n, why in applicability(group, dim, time_reversal, spinful=spinful, registry=registry).items()
            if why is None]


def _static_reason(inv, *, model, time_reversal, elements, spinful) -> str | None:
    """Why ``inv`` does not apply to this model and group (its requirements alone), or None."""
    return inv.requires.why_not(elements=elements, dim=model.dim, time_reversal=time_reversal, spinful=spinful)


def _options_for(name: str, common: dict, options: dict) -> dict:
    """The options an invariant sees: those given for all, then those given for it by name."""
    return {**common, **options.get(name, {})}


def _plan(invariants, *, model, group, filling, time_reversal, bands, elements, spinful, common, options) -> None:
    """Ask every invariant that applies, before any runs, for the grids it will need (the optional
    ``planned_grids(context)``), and have the band data diagonalise the union of their new points in one batch.

    A plan only saves time: an invariant whose plan raises is left out of it, and a batch that fails (H(k) refused
    at some point) is dropped, so that the invariants meet and record the same error themselves when they ask.
    """
    wanted, who, applies = [], [], set()
    for name, inv in invariants.items():
        if _static_reason(inv, model=model, time_reversal=time_reversal, elements=elements, spinful=spinful):
            continue
        if any(used not in applies for used in inv.requires.uses):
            continue
        applies.add(name)
        planned = getattr(inv, "planned_grids", None)
        if planned is None:
            continue
        ctx = Context(model=model, group=group, filling=filling, time_reversal=time_reversal, bands=bands,
                      results={}, options=_options_for(name, common, options), allowed=())
        try:
            grids = list(planned(ctx) or ())
        except Exception:  # planning is advisory: the invariant asks for what it needs when it runs
            continue
        if grids:
            wanted.extend(grids)
            who.append(name)
    if not wanted:
        return
    try:
        bands.prefetch(wanted, what="planned by " + ", ".join(who))
    except Exception:  # met again, and recorded, by the invariant that asks for the point concerned
        pass


def run_invariants(*, model, group, filling, time_reversal, bands, registry=None, only=None,
                   options=None) -> dict:
    """Run every applicable invariant in dependency order, each isolated; returns name -> Result."""
    registry = registry or default_registry()
    invariants = registry.invariants()
    if only is not None:
        only = list(only)
        unknown = [n for n in only if n not in invariants]
        if unknown:
            raise PluginError(f"unknown invariant(s) {', '.join(unknown)}; installed: {', '.join(invariants)}")
        wanted, stack = set(), list(only)
        while stack:  # requested ones and everything they use
            n = stack.pop()
            if n not in wanted:
                wanted.add(n)
                stack.extend(u for u in invariants[n].requires.uses + invariants[n].requires.optional_uses
                             if u in invariants)
        invariants = {n: inv for n, inv in invariants.items() if n in wanted}
    elements = group.elements(model.dim)
    spinful = bool(getattr(model, "spinful", False))
    options = dict(options or {})
    common = {k: v for k, v in options.items() if not isinstance(v, dict)}
    results: dict[str, Result] = {}
    _plan(invariants, model=model, group=group, filling=filling, time_reversal=time_reversal, bands=bands,
          elements=elements, spinful=spinful, common=common, options=options)
    for name, inv in invariants.items():
        title = getattr(inv, "title", "") or name
        reason = _static_reason(inv, model=model, time_reversal=time_reversal, elements=elements, spinful=spinful)
        if reason is None:
            for used in inv.requires.uses:
                if used not in results:
                    reason = f"uses '{used}', which is not installed"
                elif results[used].status != OK:
                    reason = f"uses '{used}', which was {results[used].status}"
                if reason:
                    break
        if reason is not None:
            results[name] = Result(name=name, title=title, status=SKIPPED, message=reason)
            continue
        ctx = Context(model=model, group=group, filling=filling, time_reversal=time_reversal, bands=bands,
                      results=results, options=_options_for(name, common, options),
                      allowed=inv.requires.uses + inv.requires.optional_uses)
        log_start = len(bands.gap_log)
        t0 = time.perf_counter()
        try:
            outcome = inv.compute(ctx)
            if not isinstance(outcome, Outcome):
                raise PluginError(f"compute returned {type(outcome).__name__}, expected crystaltop.plugin.Outcome")
        except NotApplicable as exc:
            results[name] = Result(name=name, title=title, status=SKIPPED, message=str(exc),
                                   seconds=time.perf_counter() - t0)
            continue
        except Exception as exc:  # isolation: one failing plugin never stops the report
            msg = str(exc) if isinstance(exc, CrystaltopError) else f"{type(exc).__name__}: {exc}"
            where = traceback.extract_tb(exc.__traceback__)[-1] if exc.__traceback__ else None
            details = {"exception": type(exc).__name__}
            if where is not None and not isinstance(exc, CrystaltopError):
                details["where"] = f"{os.path.basename(where.filename)}:{where.lineno}"
            results[name] = Result(name=name, title=title, status=FAILED, message=msg, details=details,
                                   seconds=time.perf_counter() - t0)
            continue
        gaps = [g for g in bands.gap_log[log_start:]]
        res = Result(name=name, title=title, status=OK, value=outcome.value, method=outcome.method,
                     mesh=outcome.mesh, smallest_gap=min(gaps) if gaps else None,
                     convergence=outcome.convergence, convergence_label=outcome.convergence_label,
                     details=dict(outcome.details), notes=tuple(outcome.notes), figures=dict(outcome.figures),
                     seconds=time.perf_counter() - t0)
        if outcome.cross_check is not None:
            res = res.with_cross_check(outcome.cross_check)
        results[name] = res
        for other, check in dict(outcome.checks_for).items():
            if other in results and results[other].status == OK:
                results[other] = results[other].with_cross_check(check)
    return results
