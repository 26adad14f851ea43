"""Metrics: named numbers computed at a plane, registered by plugins, each run in its own guard.

A metric is an object (``Metric``) that a plugin gives through the
``benchcheck_register_metrics`` hook. The core never imports a metric by name from a layout:
a layout names metrics only by their registered names, looked up in a ``MetricRegistry``.
``evaluate_metrics`` calls each metric separately, so one failing metric is named (metric and
plugin) in its ``MetricOutcome`` and every other metric is still computed.
"""

from __future__ import annotations

import difflib
import functools
import math
import re
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, replace
from dataclasses import field as dataclass_field  # "field" is also a MetricContext attribute
from types import MappingProxyType
from typing import TYPE_CHECKING, Any

from benchcheck.errors import PluginError
from benchcheck.registration import registered_objects
from benchcheck.metric_watchdog import DEFAULT_METRIC_TIME_LIMIT, MetricTimedOut, run_each_with_time_limit
from benchcheck.wave.field import Field

if TYPE_CHECKING:
    import pluggy

__all__ = [
    "LASER_SAFETY_CAUTION",
    "Metric",
    "MetricContext",
    "MetricOutcome",
    "MetricRegistry",
    "MetricUnavailable",
    "evaluate_metrics",
    "DEFAULT_METRIC_TIME_LIMIT",
    "TIME_LIMIT_OPTION",
]

#: Shown wherever power, irradiance or blocked light is reported to a person (rule of the
#: project: laser light can blind and burn).
LASER_SAFETY_CAUTION = (
    "Laser light can blind and burn. Power and irradiance figures here are planning "
    "estimates, not measurements: follow your local laser safety rules and your laser "
    "safety officer."
)

#: The ``[[spec]]`` option (seconds) that sets the time limit of the metrics at its plane.
TIME_LIMIT_OPTION = "metric_time_limit"

# Metric names end up in keys like "<plane>.<metric>", so no dots or spaces.
_METRIC_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")


class MetricUnavailable(Exception):
    """Raised by a metric whose inputs are missing at this plane (no target, no charge...).

    The message says what is missing; ``evaluate_metrics`` turns it into a clear outcome
    rather than a failure of the plugin.
    """


@dataclass(frozen=True)
class Metric:
    """A named number computed at a plane.

    Attributes
    ----------
    name : str
        Registered name, used by layouts (``[[spec]] metric = "..."``) and in output keys.
    compute : callable
        ``compute(context: MetricContext) -> float``. May raise ``MetricUnavailable``.
    needs_field : bool
        True when the metric needs the simulated wave field (not only the paraxial trace).
    unit : str
        "" for a ratio, otherwise an SI unit such as "m" or "rad".
    description : str
        One sentence for people (shown by ``benchcheck plugins``).
    source : str
        The published definition the metric follows (journal, volume, page, year, or the
        standard and clause).
    plugin : str
        Name of the plugin that registered it; filled in by ``MetricRegistry.add``.
    needs_target : bool
        False when the metric never reads ``MetricContext.target``: a study then does not
        carry the target onto each trial's grid for it (default True: a plugin that says
        nothing gets the target).
    """

    name: str
    compute: Callable[["MetricContext"], float]
    needs_field: bool
    unit: str
    description: str
    source: str
    plugin: str = ""
    needs_target: bool = True


@dataclass(frozen=True)
class MetricContext:
    """Everything a metric may read at one plane.

    Attributes
    ----------
    plane : str
        Name of the plane.
    wavelength : float
        Vacuum wavelength (m).
    beam : object or None
        Paraxial record at the plane with attributes ``w`` (wx, wy) 1/e² radii (m),
        ``offset`` (x, y) chief-ray offset from the nominal axis (m), ``angle`` (ax, ay)
        chief-ray slope (rad), ``transmission`` (fraction of source power passed so far).
    field : Field or None
        Simulated field at the plane; None when only the paraxial trace ran.
    target : Field or None
        Ideal field at the plane on the same grid; None when the bench defines none.
    axis : tuple of float
        Target axis position (x, y) in metres, in the field grid's frame.
    axis_angle : tuple of float
        Slope (x, y) of the target axis in rad: a beam arriving along a tilted axis carries a
        linear phase that metrics about the axis (spiral spectrum) take out first.
    source_power : float
        Source power in the field's units.
    incident_power : float or None
        Power incident on the modulator, in the field's units.
    losses : tuple of (str, float)
        (plane name, fraction of source power blocked there) for apertures and stops upstream.
    intended_charge : int or None
        OAM charge the hologram intends.
    options : Mapping
        Per-spec options such as ``roi_radius`` (m) or ``plateau_fraction``.
    """

    plane: str
    wavelength: float
    beam: object | None = None
    field: Field | None = None
    target: Field | None = None
    axis: tuple[float, float] = (0.0, 0.0)
    axis_angle: tuple[float, float] = (0.0, 0.0)
    source_power: float = 1.0
    incident_power: float | None = None
    losses: tuple[tuple[str, float], ...] = ()
    intended_charge: int | None = None
    options: Mapping[str, Any] = dataclass_field(default_factory=lambda: MappingProxyType({}))


@dataclass(frozen=True)
class MetricOutcome:
    """The result of one metric at one plane: a value, or the reason there is none.

    Attributes
    ----------
    name : str
        Metric name.
    plane : str
        Plane name.
    value : float or None
        The value (in the metric's SI unit), None when ``error`` is set.
    error : str or None
        Why there is no value (missing input, or the metric failed: names metric and plugin).
    plugin : str
        Plugin that registered the metric.
    """

    name: str
    plane: str
    value: float | None
    error: str | None
    plugin: str

    @property
    def ok(self) -> bool:
        """True when the metric gave a value."""
        return self.error is None


class MetricRegistry:
    """Metrics by registered name; each name once."""

    def __init__(self) -> None:
        self._metrics: dict[str, Metric] = {}

    def add(self, metric: Metric, plugin: str) -> Metric:
        """Register ``metric`` on behalf of ``plugin`` and return the stored copy.

        Raises
        ------
        PluginError
            If the object is not a Metric, its name is not an identifier, or the name is
            already registered (the message names both plugins).
        """
        if not isinstance(metric, Metric):
            raise PluginError(
                f"plugin '{plugin}' registered {metric!r} as a metric; "
                "benchcheck_register_metrics must return benchcheck.metrics.Metric objects"
            )
        if not _METRIC_NAME.match(metric.name):
            raise PluginError(
                f"plugin '{plugin}' registered a metric named {metric.name!r}; a metric name "
                "is letters, digits and underscores, not starting with a digit"
            )
        existing = self._metrics.get(metric.name)
        if existing is not None:
            raise PluginError(
                f"metric '{metric.name}' is registered twice: by plugin '{existing.plugin}' "
                f"and by plugin '{plugin}'; disable one of them with --disable-plugin"
            )
        stored = replace(metric, plugin=plugin)
        self._metrics[metric.name] = stored
        return stored

    def get(self, name: str) -> Metric:
        """The metric registered as ``name``.

        Raises
        ------
        PluginError
            If no metric has that name (the message suggests close names).
        """
        try:
            return self._metrics[name]
        except KeyError:
            close = difflib.get_close_matches(name, self._metrics, n=3)
            hint = f"; did you mean {', '.join(repr(c) for c in close)}?" if close else ""
            raise PluginError(
                f"no metric named '{name}' is registered{hint} "
                "(`benchcheck plugins` lists the registered metrics)"
            ) from None

    def names(self) -> list[str]:
        """Registered metric names, sorted."""
        return sorted(self._metrics)

    def __contains__(self, name: object) -> bool:
        return name in self._metrics

    def __len__(self) -> int:
        return len(self._metrics)

    @classmethod
    def from_plugin_manager(cls, plugin_manager: "pluggy.PluginManager") -> "MetricRegistry":
        """Build a registry from every plugin's ``benchcheck_register_metrics``.

        Each plugin's hook is called on its own (not through one pluggy call), so the
        registry knows which plugin gave which metric and a plugin whose hook raises is
        named.

        Raises
        ------
        PluginError
            If a plugin's hook raises or returns something that is not a list of metrics,
            or two plugins register the same name.
        """
        registry = cls()
        # Implementations come in registration (load) order; add() checks each object.
        for plugin, metric in registered_objects(plugin_manager, "benchcheck_register_metrics", None,
                                                 "Metric objects"):
            registry.add(metric, plugin)
        return registry


def _outcome(metric: Metric, context: MetricContext, value: Any, error: BaseException | None,
             time_limit: float) -> MetricOutcome:
    """One metric's outcome from what its computation returned or raised."""

    def outcome(value: float | None, error: str | None) -> MetricOutcome:
        return MetricOutcome(metric.name, context.plane, value, error, metric.plugin)

    if isinstance(error, MetricTimedOut):
        return outcome(
            None,
            f"metric '{metric.name}' from plugin '{metric.plugin}' did not finish within {time_limit:g} s at "
            f"plane '{context.plane}' "
            f"({'stopped' if error.stopped else 'abandoned; its thread may still be running'})",
        )
    if isinstance(error, MetricUnavailable):
        return outcome(None, f"metric '{metric.name}' is unavailable at plane '{context.plane}': {error}")
    if error is not None and not isinstance(error, Exception):
        raise error  # not a metric's fault (SystemExit and the like): not ours to swallow
    if error is None:
        try:
            value = float(value)
        except Exception as not_a_number:
            error = not_a_number
    if error is not None:  # the guard: any plugin bug becomes an outcome, never a crash
        return outcome(
            None,
            f"metric '{metric.name}' from plugin '{metric.plugin}' failed at plane "
            f"'{context.plane}': {type(error).__name__}: {error}",
        )
    if not math.isfinite(value):
        return outcome(
            None,
            f"metric '{metric.name}' from plugin '{metric.plugin}' gave a non-finite value "
            f"({value}) at plane '{context.plane}'",
        )
    return outcome(value, None)


def evaluate_metrics(
    registry: MetricRegistry, names: Iterable[str], context: MetricContext, time_limit: float | None = None
) -> list[MetricOutcome]:
    """Compute the named metrics at one plane, each in its own guard.

    Parameters
    ----------
    registry : MetricRegistry
        Where the names are looked up.
    names : iterable of str
        Registered metric names, in the order the outcomes should come back.
    context : MetricContext
        What the metrics may read at this plane.
    time_limit : float, optional
        Seconds each metric may take; a metric still running then is recorded as failed and
        stopped by a timer signal on the main thread, elsewhere abandoned (its helper thread
        cannot be stopped and keeps running in the background; metric_watchdog.py). When
        omitted: ``context.options["metric_time_limit"]`` (a ``[[spec]]`` option) or
        ``DEFAULT_METRIC_TIME_LIMIT``; ``math.inf`` runs the metrics on the calling thread.

    Returns
    -------
    list of MetricOutcome
        One per name. A metric that raises becomes an outcome with ``error`` naming the
        metric and its plugin; ``MetricUnavailable`` says what input is missing; a metric
        that needs the field in a paraxial-only context says it needs the wave simulation.

    Raises
    ------
    PluginError
        If a name is not registered (checked for all names before anything is computed).
    """
    metrics = [registry.get(name) for name in names]
    if time_limit is None:
        time_limit = float(context.options.get(TIME_LIMIT_OPTION, DEFAULT_METRIC_TIME_LIMIT))
    runnable = [metric for metric in metrics if not (metric.needs_field and context.field is None)]
    # each under the timer signal here, or one hand-over to a helper thread (metric_watchdog.py)
    answers = iter(run_each_with_time_limit([functools.partial(metric.compute, context) for metric in runnable],
                                            time_limit))
    outcomes = []
    for metric in metrics:
        if metric.needs_field and context.field is None:
            outcomes.append(MetricOutcome(
                metric.name, context.plane, None,
                f"metric '{metric.name}' needs the wave simulation (only the paraxial trace ran "
                f"at plane '{context.plane}')", metric.plugin))
        else:
            outcomes.append(_outcome(metric, context, *next(answers), time_limit))
    return outcomes
