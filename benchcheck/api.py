"""The public Python API for notebooks and scripts (re-exported from the package root).

Each result has ``to_dict()``, equal to the JSON the matching command prints.
"""

from __future__ import annotations

from collections.abc import Mapping
from pathlib import Path

from benchcheck.bench.graph import build_bench
from benchcheck.bench.realization import Realization
from benchcheck.evaluate.registries import collect_registries
from benchcheck.layout.loader import load_layout as _load_layout
from benchcheck.layout.model import Layout
from benchcheck.optics.beam_trace import TraceResult, trace_realization

__all__ = ["load_layout", "trace", "simulate", "tolerance", "plan_mounts", "review", "diff"]


def load_layout(path: str | Path, plugin_manager=None) -> Layout:
    """Read and validate a layout file (raises ``LayoutError`` naming file, line, element, field).

    Element types and hologram patterns that plugins register are known when a plugin
    manager is given (``benchcheck.plugin_manager.make_plugin_manager()``).
    """
    registries = collect_registries(plugin_manager)
    return _load_layout(path, registries.element_types, registries.pattern_fields)


def trace(layout: Layout | str | Path, perturbation: Mapping[str, float] | None = None,
          plugin_manager=None) -> TraceResult:
    """Paraxial trace of a layout (a ``Layout`` or a path), optionally perturbed.

    Parameters
    ----------
    layout : Layout or path
        The bench to trace.
    perturbation : mapping of str to float, optional
        Excursions in SI units by degree-of-freedom name, such as ``{"L1.z": 1e-3}``.
    plugin_manager : optional
        For element types registered by plugins.
    """
    if not isinstance(layout, Layout):
        layout = load_layout(layout, plugin_manager)
    registries = collect_registries(plugin_manager)
    return trace_realization(Realization(build_bench(layout), dict(perturbation or {})), registries.plugin_matrices)


def tolerance(
    layout: Layout | str | Path,
    *,
    trials: int | None = None,
    seed: int | None = None,
    sampler: str | None = None,
    workers: int = 1,
    run_file: str | Path | None = None,
    resume: bool = False,
    force: bool = False,
    progress=None,
    plugin_manager=None,
    plugin_options=None,
    executor: str = "processes",
    scheduler=None,
):
    """Monte Carlo tolerance study of a layout (``benchcheck tolerance``).

    Parameters
    ----------
    layout : Layout or path
        The bench, with its tolerances and specs.
    trials, seed, sampler : optional
        Override the layout's ``[tolerancing]`` (sampler ``"random"`` or ``"sobol"``).
    workers : int
        Worker processes; the result does not depend on it.
    run_file : path, optional
        JSON-lines file streaming every finished trial (``--out``).
    resume, force : bool
        Continue ``run_file`` / overwrite it.
    progress : callable, optional
        ``progress(completed, total)`` after each trial.
    plugin_manager, plugin_options : optional
        Where metrics come from (made with the default plugins when omitted).
    executor, scheduler : optional
        ``executor="dask"`` runs the trials on the dask.distributed cluster whose scheduler
        address (or connected client) is ``scheduler``; the result is the same as a local run's.

    Returns
    -------
    benchcheck.tolerance.StudyResult
        ``to_dict()`` equals the JSON of ``benchcheck tolerance --json``.
    """
    from benchcheck.tolerance.study import run_study

    if not isinstance(layout, Layout):
        layout = load_layout(layout, plugin_manager)
    return run_study(layout, plugin_manager, trials=trials, seed=seed, sampler=sampler, workers=workers,
                     run_file=run_file, resume=resume, force=force, progress=progress,
                     plugin_options=plugin_options, executor=executor, scheduler=scheduler)


def simulate(layout: Layout | str | Path, plugin_manager=None):
    """Wave simulation of the nominal bench (a ``Layout`` or a path): a ``SimulationReport``.

    ``to_dict()`` equals the JSON of ``benchcheck simulate --json``.
    """
    from benchcheck.evaluate.nominal import simulate_layout

    if not isinstance(layout, Layout):
        layout = load_layout(layout, plugin_manager)
    return simulate_layout(layout, plugin_manager)


def plan_mounts(
    layout: Layout | str | Path,
    trials: int | None = None,
    seed: int | None = None,
    yield_target: float | None = None,
    use_catalogue: bool = True,
    plugin_manager=None,
    simulate=None,
):
    """A mount class for every mounted element, verified by Monte Carlo (``benchcheck mounts``).

    Parameters
    ----------
    layout : Layout or path
        The bench; its ``[mounts.<class>]`` tables extend or override the default catalogue.
    trials, seed : int, optional
        Monte Carlo size and seed (``[tolerancing]`` values when omitted).
    yield_target : float, optional
        Share of trials that must meet every spec (``[tolerancing] yield_target``, default 0.95).
    use_catalogue : bool
        False: plan only with the layout's own mount classes.
    plugin_manager : pluggy.PluginManager, optional
        Where metrics come from (a fresh one from the ``benchcheck`` entry points when omitted).
    simulate : callable, optional
        The wave simulation, for specs that need the field (see ``Evaluator``).

    Returns
    -------
    benchcheck.tolerance.mount_plan.MountPlan
        ``to_dict()`` equals ``benchcheck mounts LAYOUT --json``.
    """
    from benchcheck.evaluate.factory import make_evaluator
    from benchcheck.tolerance.mount_plan import plan_mount_classes

    if not isinstance(layout, Layout):
        layout = load_layout(layout, plugin_manager)
    evaluator = make_evaluator(layout, plugin_manager, study=True)
    if simulate is not None:
        evaluator.simulate = simulate
    return plan_mount_classes(evaluator, layout, trials=trials, seed=seed, yield_target=yield_target,
                              use_catalogue=use_catalogue)


def review(layout: Layout | str | Path, plugin_manager=None):
    """Review a layout with every registered review rule (``benchcheck review``).

    Parameters
    ----------
    layout : Layout or path
        The bench to review.
    plugin_manager : pluggy.PluginManager, optional
        Where rules, metrics, element types and patterns come from (a fresh one from the
        ``benchcheck`` entry points when omitted).

    Returns
    -------
    benchcheck.review.ReviewReport
        Findings sorted by severity, then element; ``to_dict()`` equals the JSON of
        ``benchcheck review --json`` without its ``laser_safety`` entry.
    """
    from benchcheck.review.runner import review as review_layout

    if plugin_manager is None:
        from benchcheck.plugin_manager import make_plugin_manager

        plugin_manager = make_plugin_manager()
    if not isinstance(layout, Layout):
        layout = load_layout(layout, plugin_manager)
    return review_layout(layout, plugin_manager)


def diff(
    a: Layout | str | Path,
    b: Layout | str | Path,
    *,
    tolerance: bool = False,
    trials: int = 100,
    seed: int | None = None,
    wave: bool = True,
    plugin_manager=None,
):
    """Compare two layouts and what the change does (``benchcheck diff``).

    Parameters
    ----------
    a, b : Layout or path
        Layout A (the reference) and layout B.
    tolerance : bool
        Also compare the Monte Carlo yields and fails-first lists.
    trials : int
        Trials per study when ``tolerance`` is set.
    seed : int, optional
        One seed for both studies (each layout's ``[tolerancing]`` seed when omitted).
    wave : bool
        False: judge the nominal specs on the paraxial trace only.
    plugin_manager : optional
        Where metrics, element types and patterns come from.

    Returns
    -------
    benchcheck.diff.LayoutDiff
        ``to_dict()`` equals the JSON of ``benchcheck diff --json``.
    """
    from benchcheck.diff import diff_layouts

    if not isinstance(a, Layout):
        a = load_layout(a, plugin_manager)
    if not isinstance(b, Layout):
        b = load_layout(b, plugin_manager)
    return diff_layouts(a, b, plugin_manager, tolerance=tolerance, trials=trials, seed=seed, wave=wave)
