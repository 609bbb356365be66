"""Sweeps: the Qi–Wu–Zhang phase diagram on every executor, resuming, recorded failures, tables and figures."""

from __future__ import annotations

import functools
import json
from concurrent.futures import ProcessPoolExecutor

import numpy as np
import pytest

import crystaltop as ct
from crystaltop.examples import haldane, qi_wu_zhang

MASSES = [-3.0, -2.0, -1.5, -0.5, 0.0, 0.5, 1.5, 2.0, 2.5]
# Qi, Wu, Zhang, Phys. Rev. B 74, 085308 (2006), Berry convention (PHYSICS.md §2): C = +1 on (-2, 0),
# -1 on (0, 2), 0 for |m| > 2; the gap closes at m = -2, 0, 2.
EXPECTED = [0, None, 1, 1, None, -1, -1, None, 0]


def _qwz_sweep(**kw):
    return ct.sweep(qi_wu_zhang, {"m": MASSES}, invariants=["chern"], group="4/m", filling=1, **kw)


def test_a_qwz_mass_sweep_gives_the_published_chern_numbers_and_marks_the_gap_closings():
    table = _qwz_sweep()
    assert table.values("chern") == EXPECTED
    assert [r["status"] for r in table] == ["gapless" if e is None else "ok" for e in EXPECTED]


def test_a_process_pool_gives_the_same_table_as_a_serial_run():
    serial = _qwz_sweep()
    with ProcessPoolExecutor(max_workers=2) as pool:
        parallel = _qwz_sweep(executor=pool)
    assert parallel.comparable() == serial.comparable()
    assert parallel.info["executor"] == "ProcessPoolExecutor"


def test_a_dask_cluster_executor_gives_the_same_table_as_a_serial_run():
    distributed = pytest.importorskip("distributed")
    serial = _qwz_sweep()
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False,
                                  dashboard_address=None) as cluster, distributed.Client(cluster) as client:
        remote = _qwz_sweep(executor=client.get_executor())
    assert remote.comparable() == serial.comparable()


def test_an_interrupted_sweep_resumes_to_the_same_table(tmp_path):
    out = tmp_path / "qwz.jsonl"
    whole = _qwz_sweep()
    first = ct.sweep(qi_wu_zhang, {"m": MASSES[:4]}, invariants=["chern"], group="4/m", filling=1, output=out)
    assert first.info["computed"] == 4
    with out.open("a") as fh:  # an interruption in the middle of writing a line
        fh.write('{"params": {"m": 0.5}, "sta')
    resumed = _qwz_sweep(output=out)
    assert resumed.info == {"executor": "serial", "computed": 5, "resumed": 4}
    assert resumed.comparable() == whole.comparable()
    again = _qwz_sweep(output=out)
    assert again.info["computed"] == 0 and again.comparable() == whole.comparable()


def _fragile(m):
    if m > 1:
        raise ValueError("this build fails for m > 1")
    return qi_wu_zhang(m=m)


def test_a_point_that_raises_is_recorded_and_the_sweep_goes_on():
    table = ct.sweep(_fragile, {"m": [0.5, 1.5, -0.5]}, invariants=["chern"], group="4/m", filling=1)
    assert [r["status"] for r in table] == ["ok", "error", "ok"]
    assert "m > 1" in table.rows[1]["message"] and table.values("chern") == [-1, None, 1]


def test_a_two_parameter_sweep_writes_csv_json_and_a_phase_diagram(tmp_path):
    pytest.importorskip("matplotlib")
    # Haldane, Phys. Rev. Lett. 61, 2015 (1988): C = -1 inside |M| < 3√3 t2 |sin φ| for φ > 0 (our convention)
    build = functools.partial(haldane, t2=0.1)
    table = ct.sweep(build, {"mass": [0.0, 0.3, 0.7], "phi": [np.pi / 2, np.pi / 6]}, invariants=["chern"],
                     group="3", filling=1)
    assert table.values("chern") == [-1, -1, -1, 0, 0, 0]
    table.to_csv(tmp_path / "t.csv")
    lines = (tmp_path / "t.csv").read_text().splitlines()
    assert lines[0].startswith("mass,phi,status,smallest_gap,chern,chern_status") and len(lines) == 7
    assert json.loads(table.to_json(tmp_path / "t.json"))["parameters"] == ["mass", "phi"]
    table.phase_diagram("chern", path=tmp_path / "phase.png")
    assert (tmp_path / "phase.png").stat().st_size > 1000
