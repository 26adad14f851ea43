"""The diff of two layouts: what changed, and what the change does to the beam and the yield."""

from __future__ import annotations

from dataclasses import dataclass, field

from benchcheck.diff.effects import (
    metrics_side_by_side,
    nominal_metrics,
    specs_side_by_side,
    tolerance_summary,
    trace_side_by_side,
)
from benchcheck.diff.layout_changes import LayoutChanges, compare_layouts
from benchcheck.evaluate.factory import metric_registry
from benchcheck.evaluate.registries import collect_registries
from benchcheck.layout.model import Layout
from benchcheck.safety import LASER_SAFETY_CAUTION

__all__ = ["LayoutDiff", "diff_layouts", "DEFAULT_DIFF_TRIALS"]

#: Monte Carlo size of ``--tolerance`` when none is given: enough for a yield to about
#: ±10 % (Wilson interval at 100 trials), small enough to run in seconds on paraxial specs.
DEFAULT_DIFF_TRIALS = 100


@dataclass(frozen=True)
class LayoutDiff:
    """Layout A against layout B: changes, trace, nominal metrics, and optionally the studies.

    ``to_dict()`` is what ``benchcheck diff --json`` prints (SI units, unit in the key or
    in a ``unit`` entry for lists of mixed fields).
    """

    a: Layout
    b: Layout
    changes: LayoutChanges
    trace: dict
    metrics: list[dict]
    specs: list[dict]
    wave: tuple[bool, bool]
    tolerance: dict | None = None
    notes: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict:
        data = {
            "a": {"path": self.a.path, "title": self.a.title},
            "b": {"path": self.b.path, "title": self.b.title},
            "elements": {key: value for key, value in self.changes.to_dict().items()
                         if key in ("added", "removed", "moved", "changed")},
            "source": self.changes.to_dict()["source"],
            "specs": self.changes.to_dict()["specs"],
            "bench": self.changes.to_dict()["bench"],
            "trace": self.trace,
            "metrics": self.metrics,
            "spec_results": self.specs,
            "wave_simulated": list(self.wave),
            "notes": list(self.notes),
            "laser_safety": LASER_SAFETY_CAUTION,
        }
        if self.tolerance is not None:
            data["tolerance"] = self.tolerance
        return data


def diff_layouts(
    a: Layout,
    b: Layout,
    plugin_manager=None,
    *,
    tolerance: bool = False,
    trials: int = DEFAULT_DIFF_TRIALS,
    seed: int | None = None,
    wave: bool = True,
) -> LayoutDiff:
    """Compare two layouts and what the difference does.

    Parameters
    ----------
    a, b : Layout
        Layout A (the reference) and layout B.
    plugin_manager : optional
        Where metrics, element types and patterns come from.
    tolerance : bool
        Also run a Monte Carlo study of each and compare yields and fails-first lists.
    trials : int
        Trials per study (each layout's own ``[tolerancing]`` seed unless ``seed`` is given).
    seed : int, optional
        One seed for both studies.
    wave : bool
        False: judge the nominal specs on the paraxial trace only, even where a simulation
        would run.

    Returns
    -------
    LayoutDiff
    """
    from benchcheck.api import trace as trace_layout
    from benchcheck.api import tolerance as run_tolerance

    element_types = collect_registries(plugin_manager).element_types
    registry = metric_registry(plugin_manager)
    metric_units = {name: registry.get(name).unit for name in registry.names()}
    changes = compare_layouts(a, b, element_types, metric_units)
    trace = trace_side_by_side(trace_layout(a, plugin_manager=plugin_manager).to_dict(),
                               trace_layout(b, plugin_manager=plugin_manager).to_dict())
    nominal_a = nominal_metrics(a, plugin_manager, wave)
    nominal_b = nominal_metrics(b, plugin_manager, wave)
    studies = None
    if tolerance:
        studies = {name: tolerance_summary(run_tolerance(layout, trials=trials, seed=seed,
                                                         plugin_manager=plugin_manager).to_dict())
                   for name, layout in (("a", a), ("b", b))}
    return LayoutDiff(
        a=a, b=b, changes=changes, trace=trace,
        metrics=metrics_side_by_side(nominal_a["metrics"], nominal_b["metrics"]),
        specs=specs_side_by_side(nominal_a["specs"], nominal_b["specs"]),
        wave=(nominal_a["wave"], nominal_b["wave"]),
        tolerance=studies,
        notes=tuple([f"A: {note}" for note in nominal_a["notes"]] + [f"B: {note}" for note in nominal_b["notes"]]),
    )
