"""Running trials: in this process, or in worker processes that each build the evaluator once.

A trial's excursions are drawn before it is handed out (they depend only on the seed and
the trial index), so which worker evaluates a trial, and in which order, never changes
its result. Workers run numpy and scipy single-threaded: the pool is started with the
thread-count variables of the common BLAS/OpenMP runtimes set to 1.
"""

from __future__ import annotations

import math
import os
import signal
from collections.abc import Iterator, Mapping, Sequence
from contextlib import contextmanager
from dataclasses import dataclass

import numpy as np

from benchcheck.errors import BenchcheckError, SamplingError
from benchcheck.layout.model import Layout
from benchcheck.limits import LimitError, Limits, apply_limits
from benchcheck.tolerance.runfile import TrialRecord

__all__ = [
    "NUMERICAL_FAULTS",
    "PluginOptions",
    "TrialRunner",
    "build_evaluator",
    "build_runner",
    "use_one_fft_thread",
    "single_threaded_environment",
    "initialize_worker",
    "run_batch_in_worker",
]

#: Exceptions that mark one trial as numerically faulty (a singular stage, a NaN, a beam the
#: wave stages cannot sample) instead of stopping the study.
NUMERICAL_FAULTS = (SamplingError, ArithmeticError, np.linalg.LinAlgError, ValueError)

_THREAD_VARIABLES = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS",
                     "BLIS_NUM_THREADS", "VECLIB_MAXIMUM_THREADS", "NUMEXPR_NUM_THREADS")


@dataclass(frozen=True)
class PluginOptions:
    """How to make the plugin manager again inside a worker process."""

    disabled: tuple[str, ...] = ()
    autoload: bool = True


def build_evaluator(layout: Layout, plugin_manager):
    """The Evaluator of a study: registered metrics, plugin element types and patterns, and
    the wave simulation for specs that need the field."""
    from benchcheck.evaluate.factory import make_evaluator

    return make_evaluator(layout, plugin_manager, study=True)


def _adjuster_for(evaluator, layout: Layout):
    """The thresholds/adjustments developer's Adjuster when it exists, else None (no adjustments)."""
    try:
        from benchcheck.tolerance.adjust import Adjuster
    except ImportError:
        return None
    return Adjuster(evaluator, layout)


def _clean(value) -> float | None:
    if value is None:
        return None
    value = float(value)
    return value if math.isfinite(value) else None


class TrialRunner:
    """Evaluates trials of one layout and turns each into a TrialRecord.

    Parameters
    ----------
    evaluator : Evaluator
        Built once for the study.
    layout : Layout
        The bench (for the adjustments it names).
    """

    def __init__(self, evaluator, layout: Layout) -> None:
        self.evaluator = evaluator
        self.layout = layout
        self.adjuster = _adjuster_for(evaluator, layout)
        self.adjustments_missing = bool(layout.tolerancing.adjust) and self.adjuster is None

    def run(self, index: int, perturbation: Mapping[str, float], seed: Mapping[str, object]) -> TrialRecord:
        """Evaluate one trial; a numerical fault is recorded on the trial, never raised."""
        adjusted: dict[str, float] = {}
        try:
            if self.adjuster is not None:
                result, adjusted = self.adjuster.evaluate(perturbation)
            else:
                result = self.evaluator.evaluate(perturbation)
        except BenchcheckError as error:
            # A trial the engines cannot sample, or whose automatic grid would pass a resource
            # cap, is a fault of that trial: recorded with its reason, the study goes on.
            if not isinstance(error, (SamplingError, LimitError)):
                raise
            return TrialRecord(index, seed, perturbation, faults=(f"{type(error).__name__}: {error}",))
        except NUMERICAL_FAULTS as error:
            return TrialRecord(index, seed, perturbation, faults=(f"{type(error).__name__}: {error}",))
        metrics = {key: _clean(value) for key, value in result.metrics.items()}
        faults = list(result.faults)
        # The evaluator already reports non-finite metrics; this guards any path that does not.
        faults.extend(f"{key}: non-finite value ({value})" for key, value in result.metrics.items()
                      if value is not None and metrics[key] is None)
        specs = {outcome.spec.label: bool(outcome.passed) for outcome in result.specs}
        return TrialRecord(
            index=index,
            seed=dict(seed),
            perturbation=dict(perturbation),
            adjusted={key: float(value) for key, value in adjusted.items()},
            metrics=metrics,
            specs=specs,
            passed=bool(result.passed) and not faults,
            faults=tuple(faults),
        )

    @property
    def paraxial_batch(self):
        """The vectorised runner of paraxial-only studies, or None (built on first use)."""
        if not hasattr(self, "_paraxial_batch"):
            from benchcheck.tolerance.paraxial_batch import paraxial_batch_runner

            self._paraxial_batch = paraxial_batch_runner(self.evaluator, self.layout, self.run)
        return self._paraxial_batch

    def batch_size(self, default: int) -> int:
        """Trials worth handing over at once: many more when a batch is one vectorised trace."""
        return max(default, 1024) if self.paraxial_batch is not None else default

    def run_batch(self, batch: Sequence[tuple[int, Mapping[str, float], Mapping[str, object]]]) -> list[TrialRecord]:
        """Records of a batch; paraxial-only studies are traced as one vectorised batch
        (``benchcheck.tolerance.paraxial_batch``, same records), others trial by trial."""
        if self.paraxial_batch is not None:
            return self.paraxial_batch.run_batch(batch)
        return [self.run(index, perturbation, seed) for index, perturbation, seed in batch]


def build_runner(layout: Layout, plugin_manager) -> TrialRunner:
    return TrialRunner(build_evaluator(layout, plugin_manager), layout)


def use_one_fft_thread(runner: TrialRunner) -> TrialRunner:
    """Run each trial's transforms on one thread (worker processes, cluster workers).

    Parallelism is across trials there; FFT threads on top of it oversubscribe the cores
    (threads of two pools at once on two cores ran 2-60x slower when measured).
    """
    simulate = getattr(runner.evaluator, "simulate", None)
    if simulate is not None and hasattr(simulate, "workers"):
        simulate.workers = 1
    return runner


@contextmanager
def single_threaded_environment() -> Iterator[None]:
    """Set the BLAS/OpenMP thread counts to 1 while worker processes are started.

    Worker processes are started with the "spawn" method, so they read these variables
    when they import numpy; the parent's own numpy is already loaded and unaffected.
    """
    saved = {name: os.environ.get(name) for name in _THREAD_VARIABLES}
    os.environ.update({name: "1" for name in _THREAD_VARIABLES})
    try:
        yield
    finally:
        for name, value in saved.items():
            if value is None:
                os.environ.pop(name, None)
            else:
                os.environ[name] = value


_WORKER_RUNNER: TrialRunner | None = None


def initialize_worker(layout_path: str, layout_hash: str, plugin_options: PluginOptions,
                      limits: Limits | None = None) -> None:
    """Per-worker start: load the layout and build the evaluator once.

    Ctrl-C is left to the parent process, which stops the pool and writes what finished.
    ``limits`` are the parent's resource limits and readable folders (``benchcheck.limits``).
    """
    global _WORKER_RUNNER
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    apply_limits(limits)
    from benchcheck.api import load_layout
    from benchcheck.plugin_manager import make_plugin_manager

    plugin_manager = make_plugin_manager(disabled=plugin_options.disabled, autoload=plugin_options.autoload)
    layout = load_layout(layout_path, plugin_manager)  # with the plugins' element types and patterns
    if layout.text_hash != layout_hash:
        raise BenchcheckError(f"{layout_path} changed while the study was starting")
    _WORKER_RUNNER = use_one_fft_thread(build_runner(layout, plugin_manager))


def run_batch_in_worker(batch) -> list[TrialRecord]:
    """Evaluate a batch of trials in a worker process set up by ``initialize_worker``."""
    if _WORKER_RUNNER is None:
        raise RuntimeError("worker process was not initialised")
    return _WORKER_RUNNER.run_batch(batch)
