"""The Monte Carlo tolerance study: many trials, their summary, and the failure thresholds.

``run_study`` draws every trial's excursions from (seed, sampler, trial index), evaluates
the trials here or in worker processes, streams each finished trial to an optional run
file, and summarises them by trial index, so the summary does not depend on worker count,
completion order, or whether the study was interrupted and resumed.
"""

from __future__ import annotations

import concurrent.futures
import math
import multiprocessing
import os
from collections.abc import Callable, Sequence
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from benchcheck.errors import BenchcheckError
from benchcheck.layout.model import Layout
from benchcheck.limits import check_trials, current_limits
from benchcheck.safety import LASER_SAFETY_CAUTION
from benchcheck.tolerance.dofs import Dof, resolve_dofs
from benchcheck.tolerance.runfile import (
    RunFileError,
    RunFileWriter,
    RunHeader,
    TrialRecord,
    check_resumable,
    read_run_file,
)
from benchcheck.tolerance.samplers import SAMPLERS, Sampler, trial_seed
from benchcheck.tolerance.statistics import (
    adjustment_ranges,
    fault_summary,
    metric_arrays,
    metric_statistics,
    spec_failure_share,
    yield_with_interval,
)
from benchcheck.tolerance.workers import (
    PluginOptions,
    TrialRunner,
    initialize_worker,
    run_batch_in_worker,
    single_threaded_environment,
)

__all__ = ["StudyResult", "StudyInterrupted", "StopRequested", "run_study", "metric_names"]

#: Most trials handed to a worker at once: small enough that an interrupt loses little.
MAX_BATCH = 64


class StopRequested(BaseException):
    """Raised (by a signal handler) to stop a running study; ``exit_code`` is 130 or 143."""

    def __init__(self, exit_code: int = 143) -> None:
        super().__init__(exit_code)
        self.exit_code = exit_code


class StudyInterrupted(Exception):
    """A study stopped early; every finished trial is in the run file (when there is one)."""

    def __init__(self, completed: int, total: int, run_file: str | None, exit_code: int) -> None:
        super().__init__(f"stopped after {completed} of {total} trials")
        self.completed = completed
        self.total = total
        self.run_file = run_file
        self.exit_code = exit_code


def metric_names(layout: Layout, records: Sequence[TrialRecord]) -> list[str]:
    """``<plane>.<metric>`` keys: the specs' in layout order, then any other a trial reported."""
    names = [f"{spec.at}.{spec.metric}" for spec in layout.specs]
    for record in records:
        names.extend(record.metrics)
    return list(dict.fromkeys(names))


@dataclass
class StudyResult:
    """A finished study: its trials in index order, thresholds and ranking, and the summary.

    ``to_dict()`` is the JSON that ``benchcheck tolerance --json`` prints (DESIGN.md
    section 6, plus ``spec_failure_share``, ``ranking``, ``faults``, ``adjustments``).
    """

    layout: Layout
    dofs: tuple[Dof, ...]
    trials: int
    seed: int
    sampler: str
    records: tuple[TrialRecord, ...]
    thresholds: tuple = ()
    fails_first: object | None = None
    ranking: tuple = ()
    notes: tuple[str, ...] = ()
    resumed_trials: int = 0

    @property
    def valid_records(self) -> tuple[TrialRecord, ...]:
        return tuple(record for record in self.records if record.valid)

    @property
    def passed_trials(self) -> int:
        return sum(1 for record in self.valid_records if record.passed)

    @property
    def yield_fraction(self) -> float | None:
        return yield_with_interval(self.passed_trials, len(self.valid_records))[0]

    @property
    def yield_interval(self) -> tuple[float, float] | None:
        return yield_with_interval(self.passed_trials, len(self.valid_records))[1]

    def threshold_rows(self) -> list[dict]:
        """One row per dof, sorted by margin (None last): dof, tolerance, threshold, margin, spec."""
        if self.thresholds:
            return [threshold.to_dict() for threshold in self.thresholds]
        return [{"dof": dof.name, "tolerance": dof.limit, "threshold": None, "margin": None, "spec": None}
                for dof in self.dofs]

    def to_dict(self) -> dict:
        valid = self.valid_records
        interval = self.yield_interval
        return {
            "trials": self.trials,
            "seed": self.seed,
            "sampler": self.sampler,
            "valid_trials": len(valid),
            "passed_trials": self.passed_trials,
            "yield": self.yield_fraction,
            "yield_ci95": list(interval) if interval is not None else None,
            "yield_target": self.layout.tolerancing.yield_target,
            "fails_first": self.fails_first.to_dict() if self.fails_first is not None else None,
            "dofs": self.threshold_rows(),
            "metrics": metric_statistics(valid, metric_names(self.layout, self.records)),
            "spec_failure_share": spec_failure_share(valid, [spec.label for spec in self.layout.specs]),
            "faults": fault_summary(self.records),
            "adjustments": adjustment_ranges(valid),
            "ranking": list(self.ranking),
            "notes": list(self.notes),
            "laser_safety": LASER_SAFETY_CAUTION,
        }


def _thresholds(evaluator, dofs: Sequence[Dof]) -> tuple[tuple, object | None, list[str]]:
    try:
        from benchcheck.tolerance.thresholds import fails_first, failure_thresholds
    except ImportError:
        return (), None, ["failure thresholds are not available in this version (no thresholds module)"]
    thresholds = tuple(failure_thresholds(evaluator, list(dofs)))
    return thresholds, fails_first(list(thresholds)), []


def _ranking(dofs: Sequence[Dof], records: Sequence[TrialRecord], names: Sequence[str]) -> tuple[tuple, list[str]]:
    try:
        from benchcheck.tolerance.ranking import contribution_ranking
    except ImportError:
        return (), ["the contribution ranking is not available in this version (no ranking module)"]
    valid = [record for record in records if record.valid]
    if not valid or not dofs:
        return (), []
    dof_names = [dof.name for dof in dofs]
    excursions = np.array([[record.perturbation[name] for name in dof_names] for record in valid], dtype=float)
    passed = np.array([record.passed for record in valid], dtype=bool)
    return tuple(contribution_ranking(dof_names, excursions, passed, metric_arrays(valid, names))), []


def _batches(pending: Sequence[int], size: int) -> list[list[int]]:
    return [list(pending[start:start + size]) for start in range(0, len(pending), size)]


def _draw(sampler: Sampler, indices: Sequence[int]) -> list[tuple[int, dict, dict]]:
    """(index, perturbation, seed record) for trial indices in ascending order."""
    first, last = indices[0], indices[-1]
    names = sampler.dof_names
    rows = sampler.excursions(first, last + 1)
    return [(index, dict(zip(names, (float(value) for value in rows[index - first]))),
             trial_seed(sampler.seed, index, sampler.kind)) for index in indices]


@dataclass
class _Progress:
    done: dict[int, TrialRecord]
    total: int
    writer: RunFileWriter | None
    callback: Callable[[int, int], None] | None
    run_file: str | None = None

    def add(self, record: TrialRecord) -> None:
        self.done[record.index] = record
        if self.writer is not None:
            self.writer.write(record)
        if self.callback is not None:
            self.callback(len(self.done), self.total)


def _run_here(runner: TrialRunner, sampler: Sampler, pending: Sequence[int], progress: _Progress) -> None:
    vectorised = runner.paraxial_batch is not None
    for batch in _batches(pending, runner.batch_size(MAX_BATCH)):
        if vectorised:  # one vectorised trace per batch (milliseconds for the whole batch)
            for record in runner.run_batch(_draw(sampler, batch)):
                progress.add(record)
            continue
        for index, perturbation, seed in _draw(sampler, batch):
            progress.add(runner.run(index, perturbation, seed))


def _run_in_pool(layout: Layout, sampler: Sampler, pending: Sequence[int], progress: _Progress,
                 workers: int, plugin_options: PluginOptions, batch_limit: int = MAX_BATCH) -> None:
    if not layout.path or not Path(layout.path).is_file():
        raise BenchcheckError("worker processes load the layout from its file; this layout has none "
                              "(use workers=1)")
    size = max(1, min(batch_limit, math.ceil(len(pending) / (workers * 8))))
    with single_threaded_environment():
        pool = concurrent.futures.ProcessPoolExecutor(
            max_workers=workers, mp_context=multiprocessing.get_context("spawn"),
            initializer=initialize_worker,
            initargs=(os.path.abspath(layout.path), layout.text_hash, plugin_options, current_limits()))
    futures = []
    try:
        with single_threaded_environment():
            futures = [pool.submit(run_batch_in_worker, _draw(sampler, batch)) for batch in _batches(pending, size)]
        for future in concurrent.futures.as_completed(futures):
            for record in future.result():
                progress.add(record)
    except BrokenProcessPool as error:
        raise BenchcheckError(f"a worker process failed to start or died: {error}") from None
    except BaseException:
        # Stop handing out work, then keep whatever the workers already finished.
        pool.shutdown(wait=True, cancel_futures=True)
        for future in futures:
            if future.done() and not future.cancelled() and future.exception() is None:
                for record in future.result():
                    if record.index not in progress.done:
                        progress.done[record.index] = record
                        if progress.writer is not None:
                            progress.writer.write(record)
        raise
    finally:
        pool.shutdown(wait=True, cancel_futures=True)


def run_study(
    layout: Layout,
    plugin_manager=None,
    *,
    trials: int | None = None,
    seed: int | None = None,
    sampler: str | None = None,
    workers: int = 1,
    run_file: str | Path | None = None,
    resume: bool = False,
    force: bool = False,
    progress: Callable[[int, int], None] | None = None,
    plugin_options: PluginOptions | None = None,
    executor: str = "processes",
    scheduler=None,
) -> StudyResult:
    """Run a Monte Carlo tolerance study of a layout.

    Parameters
    ----------
    layout : Layout
        The bench, with its tolerances, specs and ``[tolerancing]`` defaults.
    plugin_manager : optional
        Where metrics come from; made from ``plugin_options`` when omitted.
    trials, seed, sampler : optional
        Override ``[tolerancing]``; on resume, ``trials`` defaults to the run file's.
    workers : int
        Worker processes (1: evaluate here). Results do not depend on it.
    run_file : path, optional
        JSON-lines file: a header, then one line per finished trial.
    resume : bool
        Continue ``run_file``; refused when its layout hash, seed or sampler differ.
    force : bool
        Overwrite an existing ``run_file`` (otherwise refused).
    progress : callable, optional
        ``progress(completed, total)`` after each finished trial.
    plugin_options : PluginOptions, optional
        How worker processes make their plugin manager.
    executor : {"processes", "dask"}
        ``"processes"``: here (``workers`` = 1) or in local worker processes; ``"dask"``: on
        the dask.distributed cluster at ``scheduler`` (``benchcheck.tolerance.cluster``),
        with the same per-trial draws and results.
    scheduler : str or dask.distributed.Client, optional
        The scheduler's address for ``executor="dask"``.

    Returns
    -------
    StudyResult

    Raises
    ------
    StudyInterrupted
        On KeyboardInterrupt or ``StopRequested``: finished trials are in the run file.
    RunFileError
        When the run file may not be written or resumed.
    """
    from benchcheck.plugin_manager import make_plugin_manager
    from benchcheck.tolerance.workers import build_runner

    settings = layout.tolerancing
    seed = settings.seed if seed is None else int(seed)
    sampler_kind = settings.sampler if sampler is None else sampler
    if sampler_kind not in SAMPLERS:
        raise BenchcheckError(f"unknown sampler '{sampler_kind}' (one of {', '.join(SAMPLERS)})")
    if workers < 1:
        raise BenchcheckError(f"--workers must be at least 1, got {workers}")
    if executor not in ("processes", "dask"):
        raise BenchcheckError(f"unknown executor '{executor}' (processes or dask)")
    plugin_options = plugin_options or PluginOptions()
    if plugin_manager is None:
        plugin_manager = make_plugin_manager(disabled=plugin_options.disabled, autoload=plugin_options.autoload)
    runner = build_runner(layout, plugin_manager)
    dofs = tuple(resolve_dofs(layout))
    notes: list[str] = []
    if runner.adjustments_missing:
        notes.append("adjustments are named in [tolerancing] but not applied (no adjust module in this version)")
    done: dict[int, TrialRecord] = {}
    writer = None
    if resume:
        if run_file is None:
            raise RunFileError("--resume needs --out RUN_FILE")
        contents = read_run_file(run_file)
        check_resumable(contents.header, layout.text_hash, seed, sampler_kind, run_file)
        trials = contents.header.trials if trials is None else trials
        done = {index: record for index, record in contents.records.items() if index < trials}
        if contents.dropped_torn_line:
            notes.append(f"{run_file}: dropped a torn last line (an interrupted write)")
        writer = RunFileWriter.resume(run_file, contents)
    trials = settings.trials if trials is None else int(trials)
    if trials < 1:
        raise BenchcheckError(f"--trials must be at least 1, got {trials}")
    check_trials(trials)  # before any trial is drawn or the run file is made
    if writer is None and run_file is not None:
        header = RunHeader(layout=str(layout.path), layout_hash=layout.text_hash, seed=seed,
                           sampler=sampler_kind, trials=trials, dofs=tuple(dof.name for dof in dofs))
        writer = RunFileWriter.create(run_file, header, force=force)
    resumed = len(done)
    sampler_object = Sampler(dofs, sampler_kind, seed)
    pending = [index for index in range(trials) if index not in done]
    state = _Progress(done, trials, writer, progress, str(run_file) if run_file is not None else None)
    try:
        if progress is not None:
            progress(len(done), trials)
        if executor == "dask":
            from benchcheck.tolerance.cluster import run_on_dask

            batches = [_draw(sampler_object, batch) for batch in _batches(pending, MAX_BATCH // 4)] if pending else []
            run_on_dask(layout, batches, state.add, scheduler, plugin_options)
        elif workers == 1 or len(pending) <= 1:
            _run_here(runner, sampler_object, pending, state)
        else:
            _run_in_pool(layout, sampler_object, pending, state, workers, plugin_options,
                         runner.batch_size(MAX_BATCH))
    except KeyboardInterrupt:
        raise StudyInterrupted(len(done), trials, state.run_file, 130) from None
    except StopRequested as stop:
        raise StudyInterrupted(len(done), trials, state.run_file, stop.exit_code) from None
    finally:
        if writer is not None:
            writer.close()
    records = tuple(done[index] for index in range(trials))
    thresholds, first, threshold_notes = _thresholds(runner.evaluator, dofs)
    ranking, ranking_notes = _ranking(dofs, records, metric_names(layout, records))
    return StudyResult(layout=layout, dofs=dofs, trials=trials, seed=seed, sampler=sampler_kind,
                       records=records, thresholds=thresholds, fails_first=first, ranking=ranking,
                       notes=tuple(notes + threshold_notes + ranking_notes), resumed_trials=resumed)
