"""One trial: a realization traced (and simulated when a spec needs the field), its
metrics computed at the planes the specs name, and each spec judged.

Metrics come from the registry (plugins) and are each run in their own guard, so a
failing metric is recorded against the trial with its plugin's name and the others go on.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

from benchcheck.bench.graph import Bench, build_bench
from benchcheck.bench.realization import Realization
from benchcheck.errors import LayoutError, PluginError
from benchcheck.layout.model import Layout, Spec
from benchcheck.metrics import MetricContext, MetricOutcome, MetricRegistry, evaluate_metrics
from benchcheck.optics.beam_trace import PlaneBeam, TraceResult, trace_realization
from benchcheck.thread_pools import blas_on_one_thread, fft_threads
from benchcheck.units import si_per_unit

__all__ = ["SpecOutcome", "TrialResult", "Evaluator", "RelativeBeam", "check_spec_metrics", "resolve_spec_units"]


@dataclass(frozen=True)
class RelativeBeam:
    """A plane's paraxial record as metrics see it: pointing relative to the nominal bench."""

    w: tuple[float, float]
    offset: tuple[float, float]
    angle: tuple[float, float]
    transmission: float
    absolute: PlaneBeam


@dataclass(frozen=True)
class SpecOutcome:
    """One spec judged on one trial."""

    spec: Spec
    value: float | None
    passed: bool
    error: str | None = None

    def to_dict(self) -> dict:
        data = {"metric": self.spec.metric, "at": self.spec.at, "value": self.value}
        if self.spec.minimum is not None:
            data["min"] = self.spec.minimum
        if self.spec.maximum is not None:
            data["max"] = self.spec.maximum
        data["pass"] = self.passed
        if self.spec.name:
            data["name"] = self.spec.name
        if self.error:
            data["error"] = self.error
        return data


@dataclass(frozen=True)
class TrialResult:
    """A realization evaluated: metric values by ``<plane>.<metric>``, specs, faults."""

    metrics: Mapping[str, float | None]
    outcomes: tuple[MetricOutcome, ...]
    specs: tuple[SpecOutcome, ...]
    trace: TraceResult
    simulation: object | None = None
    faults: tuple[str, ...] = ()

    @property
    def passed(self) -> bool:
        """True when every spec passed (a trial with no specs passes)."""
        return all(outcome.passed for outcome in self.specs)


def check_spec_metrics(layout: Layout, registry: MetricRegistry) -> None:
    """Refuse specs that name a metric no plugin registered (LayoutError at the spec's line)."""
    for spec in layout.specs:
        if spec.metric not in registry:
            try:
                registry.get(spec.metric)
            except PluginError as error:
                raise LayoutError(str(error), file=layout.path, line=spec.line,
                                  element=f"spec '{spec.label}'", element_index=spec.index,
                                  field="metric") from None


_UNIT_KINDS = {"m": "length", "rad": "angle", "W": "power"}


def resolve_spec_units(layout: Layout, registry: MetricRegistry) -> Layout:
    """Give plain-number spec bounds the metric's unit as ``[units]`` states it.

    ``max = 0.5`` on a beam radius with ``[units] length = "mm"`` means 0.5 mm; without a
    ``[units]`` entry for that kind a plain number on a dimensional metric is refused.
    """
    specs = []
    for spec in layout.specs:
        kind = _UNIT_KINDS.get(registry.get(spec.metric).unit)
        if not spec.bare_bounds or kind is None:
            specs.append(spec)
            continue
        unit = layout.bare_units.get(kind)
        if unit is None:
            raise LayoutError(f"the bound of '{spec.metric}' is a plain number, but [units] does not say what "
                              f"a bare {kind} means", file=layout.path, line=spec.line,
                              element=f"spec '{spec.label}'", element_index=spec.index,
                              field=spec.bare_bounds[0], hint="write it with a unit, e.g. \"0.5 mm\"")
        scale = si_per_unit(unit)
        changes = {("minimum" if key == "min" else "maximum"):
                   getattr(spec, "minimum" if key == "min" else "maximum") * scale for key in spec.bare_bounds}
        specs.append(dataclasses.replace(spec, bare_bounds=(), **changes))
    return dataclasses.replace(layout, specs=tuple(specs))


@dataclass
class Evaluator:
    """Evaluates realizations of one layout; built once per study.

    Parameters
    ----------
    layout : Layout
        The bench.
    registry : MetricRegistry
        Registered metrics (from the plugin manager).
    simulate : callable, optional
        ``simulate(realization, trace) -> result`` with ``result.context_for(plane, beam)``
        giving the wave part of a MetricContext; needed only when a spec needs the field.
    plugin_matrices : mapping, optional
        Ray matrices of plugin element types, by type name.
    """

    layout: Layout
    registry: MetricRegistry
    simulate: Callable | None = None
    plugin_matrices: Mapping[str, Callable] | None = None
    bench: Bench = field(init=False)
    nominal: TraceResult = field(init=False)
    needs_wave: bool = field(init=False)

    def __post_init__(self) -> None:
        check_spec_metrics(self.layout, self.registry)
        self.layout = resolve_spec_units(self.layout, self.registry)
        self.bench = build_bench(self.layout)
        self.nominal = trace_realization(Realization(self.bench), self.plugin_matrices)
        self.needs_wave = any(self.registry.get(spec.metric).needs_field for spec in self.layout.specs)

    def realization(self, perturbation: Mapping[str, float] | None = None) -> Realization:
        return Realization(self.bench, dict(perturbation or {}))

    def evaluate(self, perturbation: Mapping[str, float] | None = None, wave: bool | None = None) -> TrialResult:
        """Evaluate one perturbation (excursions in SI by dof name)."""
        # the transforms take the cores (benchcheck.thread_pools); the metrics' transforms
        # use as many threads as the simulation's
        with blas_on_one_thread(), fft_threads(getattr(self.simulate, "workers", None)):
            return self._evaluate(perturbation, wave)

    def _evaluate(self, perturbation: Mapping[str, float] | None, wave: bool | None) -> TrialResult:
        realization = self.realization(perturbation)
        trace = trace_realization(realization, self.plugin_matrices)
        simulation = None
        faults: list[str] = []
        if (self.needs_wave if wave is None else wave) and self.simulate is not None:
            simulation = self.simulate(realization, trace)
            faults.extend(getattr(simulation, "faults", ()))
        outcomes: list[MetricOutcome] = []
        by_plane: dict[str, list[str]] = {}
        for spec in self.layout.specs:
            names = by_plane.setdefault(spec.at, [])
            if spec.metric not in names:
                names.append(spec.metric)
        contexts = {}
        for plane, names in by_plane.items():
            needs_target = any(self.registry.get(name).needs_field and getattr(self.registry.get(name), "needs_target", True)
                               for name in names)
            context = self.context(plane, trace, simulation, realization, needs_target=needs_target)
            contexts[plane] = context
            outcomes.extend(evaluate_metrics(self.registry, names, context))
        values = {f"{o.plane}.{o.name}": o.value for o in outcomes}
        errors = {f"{o.plane}.{o.name}": o.error for o in outcomes if o.error}
        specs = []
        for spec in self.layout.specs:
            key = f"{spec.at}.{spec.metric}"
            value = values.get(key)
            if value is None or (isinstance(value, float) and math.isnan(value)):
                specs.append(SpecOutcome(spec, None, False, errors.get(key, "no value")))
            else:
                specs.append(SpecOutcome(spec, value, spec.passes(value)))
        faults.extend(f"{key}: {error}" for key, error in errors.items())
        return TrialResult(values, tuple(outcomes), tuple(specs), trace, simulation, tuple(faults))

    def context(self, plane: str, trace: TraceResult, simulation, realization: Realization,
                options: Mapping | None = None, needs_target: bool = True) -> MetricContext:
        """The MetricContext at ``plane`` for one trial (without the target when no metric
        there reads it: a study then skips carrying the target onto the trial's grid)."""
        beam = trace.plane(plane)
        nominal = self.nominal.plane(plane)
        relative = RelativeBeam(
            w=beam.w,
            offset=(beam.offset[0] - nominal.offset[0], beam.offset[1] - nominal.offset[1]),
            angle=(beam.angle[0] - nominal.angle[0], beam.angle[1] - nominal.angle[1]),
            transmission=beam.transmission,
            absolute=beam,
        )
        spec_options = {}
        for spec in self.layout.specs:
            if spec.at == plane:
                spec_options.update(spec.options)
        spec_options.update(options or {})
        wave = {}
        if simulation is not None:
            # the plain call keeps other simulations' context_for (no keyword) working
            wave = simulation.context_for(plane) if needs_target else simulation.context_for(plane, with_target=False)
        return MetricContext(
            plane=plane,
            wavelength=realization.wavelength,
            beam=relative,
            options=spec_options,
            source_power=self.layout.power or 1.0,
            **wave,
        )
