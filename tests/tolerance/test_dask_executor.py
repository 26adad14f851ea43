"""Trials on a dask.distributed cluster give the same study as a local run.

The cluster is a LocalCluster inside this process (two worker threads, one thread each, no
dashboard, in-process transport). The bench is the tilted mirror of conftest.py, whose yield is known exactly
(law of reflection: a tilt α moves the spot by 2αd; Siegman, Lasers (1986), ch. 15), so the
check is also against that number, not only against the local run.
"""

from __future__ import annotations

import json

import pytest

from benchcheck.api import load_layout
from benchcheck.errors import BenchcheckError
from benchcheck.tolerance.runfile import read_run_file
from benchcheck.tolerance.statistics import yield_with_interval
from benchcheck.tolerance.study import run_study

from tests.cli.conftest import Run
from tests.tolerance.conftest import EXACT_YIELD, write_layout

distributed = pytest.importorskip("dask.distributed")


@pytest.fixture(scope="module")
def cluster():
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False,
                                  dashboard_address=None) as local:
        yield local


def test_cluster_study_equals_the_local_study(tmp_path, plugin_manager, cluster):
    layout = load_layout(write_layout(tmp_path, trials=96, seed=5))
    run_file = tmp_path / "run.jsonl"
    remote = run_study(layout, plugin_manager, executor="dask", scheduler=cluster.scheduler_address,
                       run_file=run_file)
    local = run_study(layout, plugin_manager)
    # same seeds per trial index: every record, and so every summary number, is identical
    assert [r.to_dict() for r in remote.records] == [r.to_dict() for r in local.records]
    assert remote.to_dict() == local.to_dict()
    streamed = read_run_file(run_file)
    assert sorted(streamed.records) == list(range(96))
    # the yield sits within its own 95 % interval of the exact pass fraction s/(2dL) = 0.3
    low, high = yield_with_interval(remote.passed_trials, len(remote.valid_records))[1]
    assert low <= EXACT_YIELD <= high


def test_cluster_study_from_the_command_line(tmp_path, cluster):
    path = write_layout(tmp_path, trials=40, seed=3)
    remote = Run(["tolerance", str(path), "--json", "--executor", "dask", "--scheduler",
                      cluster.scheduler_address])
    local = Run(["tolerance", str(path), "--json"])
    assert remote.code == 0 and local.code == 0
    assert json.loads(remote.output) == json.loads(local.output)


def test_dask_executor_without_a_scheduler_is_refused(tmp_path, plugin_manager):
    layout = load_layout(write_layout(tmp_path, trials=4))
    with pytest.raises(BenchcheckError, match="--scheduler"):
        run_study(layout, plugin_manager, executor="dask", scheduler=None)


def test_an_unreachable_scheduler_is_one_clear_error(tmp_path, monkeypatch):
    # port 9 on loopback (discard) has no scheduler: one message, exit code 2
    monkeypatch.setattr("benchcheck.tolerance.cluster.CONNECT_TIMEOUT", "2s")
    path = write_layout(tmp_path, trials=4)
    result = Run(["tolerance", str(path), "--executor", "dask", "--scheduler", "tcp://127.0.0.1:9"])
    assert result.code == 2
    assert "cannot reach the dask scheduler" in result.output
