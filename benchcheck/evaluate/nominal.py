"""The nominal simulation of a layout: the result behind `benchcheck simulate`."""

from __future__ import annotations

from dataclasses import dataclass

from benchcheck.evaluate.factory import make_evaluator, metric_registry
from benchcheck.evaluate.simulate import SimulationResult
from benchcheck.evaluate.trial import TrialResult
from benchcheck.evaluate.wave_path import OBSERVATION_TYPES
from benchcheck.layout.model import Layout
from benchcheck.metrics import MetricOutcome, evaluate_metrics
from benchcheck.safety import LASER_SAFETY_CAUTION

__all__ = ["SimulationReport", "simulate_layout", "OVERVIEW_METRICS"]

#: Metrics shown at every observation plane besides those the specs name.
OVERVIEW_METRICS = ("power", "efficiency", "d4sigma", "centroid_offset", "mode_purity", "oam_purity")


@dataclass(frozen=True)
class SimulationReport:
    """The nominal bench simulated: planes, metric values, specs, notes."""

    layout: Layout
    trial: TrialResult
    simulation: SimulationResult
    overview: tuple[MetricOutcome, ...]

    def metric_values(self) -> dict[str, float | None]:
        values = {f"{o.plane}.{o.name}": o.value for o in self.overview if o.ok}
        values.update(self.trial.metrics)
        return values

    def to_dict(self) -> dict:
        """Equal to the JSON that ``benchcheck simulate --json`` prints (DESIGN.md section 6)."""
        return {
            "planes": self.simulation.plane_rows(),
            "metrics": self.metric_values(),
            "specs": [outcome.to_dict() for outcome in self.trial.specs],
            "losses": [{"plane": plane, "blocked": blocked} for plane, blocked in self.simulation.losses],
            "notes": list(self.simulation.notes),
            "laser_safety": LASER_SAFETY_CAUTION,
        }


def simulate_layout(layout: Layout, plugin_manager=None) -> SimulationReport:
    """Simulate the nominal bench: every observation plane, spec metrics and an overview."""
    registry = metric_registry(plugin_manager)
    evaluator = make_evaluator(layout, plugin_manager, registry=registry)
    evaluator.simulate.record_frames = True
    evaluator.simulate.lazy_targets = False  # the report shows every plane's target
    trial = evaluator.evaluate(wave=True)
    simulation = trial.simulation
    overview = []
    realization = evaluator.realization()
    for element in layout.elements:
        if element.type not in OBSERVATION_TYPES or element.name not in simulation.planes:
            continue
        context = evaluator.context(element.name, trial.trace, simulation, realization)
        names = [name for name in OVERVIEW_METRICS if name in registry]
        overview.extend(outcome for outcome in evaluate_metrics(registry, names, context) if outcome.ok)
    return SimulationReport(layout, trial, simulation, tuple(overview))
