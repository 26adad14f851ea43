"""What a change does: the two layouts' trace, nominal metrics and tolerance study side by side.

Each number comes from the same public calls the other commands use (``api.trace``,
``api.simulate``, ``api.tolerance``), so a column of the diff equals that command's JSON.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from benchcheck.errors import BenchcheckError
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.evaluate.wave_path import OBSERVATION_TYPES
from benchcheck.layout.model import Layout

__all__ = [
    "TRACE_KEYS",
    "FAILS_FIRST_ROWS",
    "trace_side_by_side",
    "needs_simulation",
    "nominal_metrics",
    "metrics_side_by_side",
    "specs_side_by_side",
    "tolerance_summary",
]

#: Per plane, what the paraxial table compares (keys of ``benchcheck trace --json``).
TRACE_KEYS = ("z_m", "w_m", "waist_m", "waist_z_m", "transmission", "offset_m")
#: How many dofs of each fails-first list the diff keeps (smallest margins first).
FAILS_FIRST_ROWS = 10


def trace_side_by_side(trace_a: Mapping, trace_b: Mapping) -> dict:
    """The paraxial values of the planes present in both traces, A's trace order.

    Parameters
    ----------
    trace_a, trace_b : mapping
        ``TraceResult.to_dict()`` of each layout (SI units).

    Returns
    -------
    dict
        ``{"planes": [{"name", "a": {...}, "b": {...}}], "only_a": [...], "only_b": [...]}``
        with the ``TRACE_KEYS`` of each plane.
    """
    planes_a = {plane["name"]: plane for plane in trace_a["planes"]}
    planes_b = {plane["name"]: plane for plane in trace_b["planes"]}
    rows = [{"name": name,
             "a": {key: planes_a[name][key] for key in TRACE_KEYS},
             "b": {key: planes_b[name][key] for key in TRACE_KEYS}}
            for name in planes_a if name in planes_b]
    return {"planes": rows,
            "only_a": [name for name in planes_a if name not in planes_b],
            "only_b": [name for name in planes_b if name not in planes_a]}


def needs_simulation(layout: Layout, plugin_manager=None) -> bool:
    """True when the layout has an observation plane or a spec that needs the wave field."""
    if any(element.type in OBSERVATION_TYPES for element in layout.elements):
        return True
    return bool(make_evaluator(layout, plugin_manager).needs_wave)


def nominal_metrics(layout: Layout, plugin_manager=None, wave: bool = True) -> dict:
    """Metric values and spec outcomes of the nominal bench.

    The wave simulation runs only when ``wave`` is set and the layout needs it
    (``needs_simulation``); otherwise the specs are judged on the paraxial trace alone.

    Returns
    -------
    dict
        ``{"wave": bool, "metrics": {"<plane>.<metric>": value}, "specs": [...], "notes": [...]}``
        (values SI, as ``benchcheck simulate --json``).
    """
    from benchcheck.api import simulate

    notes: list[str] = []
    if wave and needs_simulation(layout, plugin_manager):
        try:
            report = simulate(layout, plugin_manager)
            data = report.to_dict()
            return {"wave": True, "metrics": data["metrics"], "specs": data["specs"], "notes": data["notes"]}
        except BenchcheckError as error:  # a plane that cannot be sampled: say so, judge paraxially
            notes.append(f"{layout.path}: wave simulation not possible ({error}); paraxial values only")
    trial = make_evaluator(layout, plugin_manager).evaluate(wave=False)
    return {"wave": False, "metrics": dict(trial.metrics), "specs": [outcome.to_dict() for outcome in trial.specs],
            "notes": notes}


def metrics_side_by_side(metrics_a: Mapping[str, float | None], metrics_b: Mapping[str, float | None]) -> list[dict]:
    """``[{"key", "a", "b"}]`` for every metric key of either layout (None where absent)."""
    keys = list(dict.fromkeys([*metrics_a, *metrics_b]))
    return [{"key": key, "a": metrics_a.get(key), "b": metrics_b.get(key)} for key in keys]


def _spec_label(outcome: Mapping) -> str:
    return outcome.get("name") or f"{outcome['at']}.{outcome['metric']}"


def specs_side_by_side(specs_a: Sequence[Mapping], specs_b: Sequence[Mapping]) -> list[dict]:
    """``[{"spec", "a": {"value", "pass"} | None, "b": ...}]`` for every spec of either layout."""
    table_a = {_spec_label(outcome): outcome for outcome in specs_a}
    table_b = {_spec_label(outcome): outcome for outcome in specs_b}

    def cell(outcome):
        return None if outcome is None else {"value": outcome["value"], "pass": outcome["pass"]}

    return [{"spec": label, "a": cell(table_a.get(label)), "b": cell(table_b.get(label))}
            for label in dict.fromkeys([*table_a, *table_b])]


def tolerance_summary(study: Mapping, rows: int = FAILS_FIRST_ROWS) -> dict:
    """Yield with its 95 % interval and the first ``rows`` dofs by margin, from a study's JSON."""
    return {key: study[key] for key in ("trials", "seed", "yield", "yield_ci95")} | {
        "fails_first": list(study["dofs"])[:rows]}
