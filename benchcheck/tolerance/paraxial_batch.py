"""Paraxial-only trials in batches: one vectorised trace for many trials, specs judged as arrays.

A study whose specs all use the first-party metrics of the paraxial trace (beam radius,
chief-ray offset and angle) needs, per trial, only a few numbers of the trace at the spec
planes. ``BatchParaxialRunner`` traces a whole batch with
:func:`benchcheck.optics.batch_trace.trace_batch` and computes those metrics with the same
formulas as the first-party plugin (``benchcheck_plugins.paraxial_metrics``), so a trial
costs microseconds instead of the milliseconds of a traced record per plane. Anything else
(a metric from another plugin, a wave spec, adjustments, an element type without a
vectorised model, a trial the trace refuses or that gives a non-finite value) goes through the ordinary trial runner, so
the records are the same either way (metric values to about 1e-14 relative, tested).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence

import numpy as np

from benchcheck.optics.batch_trace import batch_supported, trace_batch
from benchcheck.tolerance.runfile import TrialRecord

__all__ = ["PARAXIAL_BATCH_METRICS", "BatchParaxialRunner", "paraxial_batch_runner"]


def _radius(w, offset, angle):
    return np.maximum(w[..., 0], w[..., 1])


#: First-party paraxial metrics by name, as functions of the leaving radii, the chief-ray
#: offset and slope relative to the nominal bench, each shaped (K, 2).
PARAXIAL_BATCH_METRICS: Mapping[str, Callable] = {
    "beam_radius": _radius,
    "beam_radius_x": lambda w, offset, angle: w[..., 0],
    "beam_radius_y": lambda w, offset, angle: w[..., 1],
    "offset": lambda w, offset, angle: np.hypot(offset[..., 0], offset[..., 1]),
    "angle": lambda w, offset, angle: np.hypot(angle[..., 0], angle[..., 1]),
}


def _first_party_paraxial(metric) -> bool:
    try:
        from benchcheck_plugins import paraxial_metrics
    except ImportError:
        return False
    functions = {"beam_radius": paraxial_metrics.beam_radius, "beam_radius_x": paraxial_metrics.beam_radius_x,
                 "beam_radius_y": paraxial_metrics.beam_radius_y, "offset": paraxial_metrics.chief_ray_offset,
                 "angle": paraxial_metrics.chief_ray_angle}
    return functions.get(metric.name) is metric.compute


class BatchParaxialRunner:
    """Evaluates batches of paraxial-only trials of one layout (see the module docstring).

    Parameters
    ----------
    evaluator : Evaluator
        The study's evaluator (its bench, nominal trace and unit-resolved specs are used).
    fallback : callable
        ``fallback(index, perturbation, seed) -> TrialRecord``: the ordinary trial runner, for
        batches this runner cannot judge exactly.
    """

    def __init__(self, evaluator, fallback: Callable) -> None:
        self.evaluator = evaluator
        self.fallback = fallback
        self.specs = tuple(evaluator.layout.specs)
        nominal = evaluator.nominal
        self.planes = tuple(dict.fromkeys(spec.at for spec in self.specs))
        self.nominal_offset = {name: np.array(nominal.plane(name).offset) for name in self.planes}
        self.nominal_angle = {name: np.array(nominal.plane(name).angle) for name in self.planes}

    def run_batch(self, batch: Sequence[tuple[int, Mapping[str, float], Mapping[str, object]]]) -> list[TrialRecord]:
        """TrialRecords of a batch of (index, perturbation, seed record)."""
        if not batch:
            return []
        try:
            with np.errstate(all="ignore"):
                traced = trace_batch(self.evaluator.bench, [perturbation for _, perturbation, _ in batch])
                values = self._metric_values(traced)
        except (ValueError, ArithmeticError):
            return [self.fallback(*item) for item in batch]
        usable = traced.valid.copy()
        for array in values.values():
            usable &= np.isfinite(array)
        records = []
        for row, (index, perturbation, seed) in enumerate(batch):
            if not usable[row]:  # the ordinary runner records why (a fault) or judges it
                records.append(self.fallback(index, perturbation, seed))
                continue
            metrics = {key: float(array[row]) for key, array in values.items()}
            outcomes = [(spec.label, spec.passes(metrics[f"{spec.at}.{spec.metric}"])) for spec in self.specs]
            records.append(TrialRecord(index=index, seed=dict(seed), perturbation=dict(perturbation), adjusted={},
                                       metrics=metrics, specs=dict(outcomes),
                                       passed=all(passed for _, passed in outcomes)))
        return records

    def _metric_values(self, traced) -> dict[str, np.ndarray]:
        values: dict[str, np.ndarray] = {}
        for spec in self.specs:
            key = f"{spec.at}.{spec.metric}"
            if key in values:
                continue
            column = traced.index(spec.at)
            offset = traced.offset[:, column, :] - self.nominal_offset[spec.at]
            angle = traced.angle[:, column, :] - self.nominal_angle[spec.at]
            values[key] = np.asarray(PARAXIAL_BATCH_METRICS[spec.metric](traced.w[:, column, :], offset, angle),
                                     dtype=float)
        return values


def paraxial_batch_runner(evaluator, layout, fallback: Callable) -> BatchParaxialRunner | None:
    """A BatchParaxialRunner when every spec is a first-party paraxial metric, the layout names
    no adjustment, and every element has a vectorised model; otherwise None."""
    if not layout.specs or layout.tolerancing.adjust or evaluator.needs_wave:
        return None
    registry = evaluator.registry
    for spec in evaluator.layout.specs:
        if spec.metric not in PARAXIAL_BATCH_METRICS or not _first_party_paraxial(registry.get(spec.metric)):
            return None
    if not batch_supported(evaluator.bench):
        return None
    return BatchParaxialRunner(evaluator, fallback)
