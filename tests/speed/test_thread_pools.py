"""BLAS runs on one thread while benchcheck evaluates, so that its transforms keep the cores
(benchcheck.thread_pools); the thread counts are read back through threadpoolctl."""

from __future__ import annotations

from threadpoolctl import threadpool_info

from benchcheck.api import load_layout
from benchcheck.evaluate import simulate as simulate_module
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.thread_pools import blas_on_one_thread
from tests.speed.conftest import scaled_relay_text


def _blas_threads() -> list[int]:
    return [pool["num_threads"] for pool in threadpool_info() if pool["user_api"] == "blas"]


def test_blas_is_on_one_thread_inside_and_as_before_after():
    before = _blas_threads()
    with blas_on_one_thread():
        assert _blas_threads() and set(_blas_threads()) == {1}
    assert _blas_threads() == before


def test_a_trial_runs_its_simulation_with_blas_on_one_thread(tmp_path, monkeypatch):
    path = tmp_path / "relay.toml"
    path.write_text(scaled_relay_text(128))
    evaluator = make_evaluator(load_layout(path))
    seen = []
    propagate = simulate_module.propagate

    def watched(*args, **kwargs):
        seen.append(_blas_threads())
        return propagate(*args, **kwargs)

    monkeypatch.setattr(simulate_module, "propagate", watched)
    evaluator.evaluate(wave=True)
    assert seen and all(set(threads) == {1} for threads in seen)
