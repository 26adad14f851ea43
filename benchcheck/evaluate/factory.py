"""Building an Evaluator for a layout with the plugins that are loaded."""

from __future__ import annotations

from benchcheck.evaluate.registries import collect_registries
from benchcheck.evaluate.simulate import WaveSimulator
from benchcheck.evaluate.trial import Evaluator
from benchcheck.layout.model import Layout
from benchcheck.metrics import MetricRegistry

__all__ = ["make_evaluator", "metric_registry"]


def metric_registry(plugin_manager=None) -> MetricRegistry:
    """The registered metrics (plugins found through the ``benchcheck`` entry points by default)."""
    if plugin_manager is None:
        from benchcheck.plugin_manager import make_plugin_manager

        plugin_manager = make_plugin_manager()
    return MetricRegistry.from_plugin_manager(plugin_manager)


def make_evaluator(layout: Layout, plugin_manager=None, registry: MetricRegistry | None = None,
                   study: bool = False) -> Evaluator:
    """An Evaluator that traces every trial and simulates the wave when a spec needs it.

    Metrics, element types and hologram patterns come from ``plugin_manager`` (the default
    plugins when omitted). ``study``: only the planes specs read get their whole field (the
    others past a small aperture only the aperture's box), and a plane where a spec's metric
    reads the target gets each trial's field on the nominal grid (the target is made there
    once); for studies, thresholds and mount plans, not for a simulation or review that shows
    every plane.
    """
    if plugin_manager is None:
        from benchcheck.plugin_manager import make_plugin_manager

        plugin_manager = make_plugin_manager()
    registries = collect_registries(plugin_manager)
    evaluator = Evaluator(layout, registry or metric_registry(plugin_manager),
                          plugin_matrices=registries.plugin_matrices)
    evaluator.simulate = WaveSimulator(layout, evaluator.nominal, evaluator.realization(),
                                       patterns=registries.patterns, plugin_matrices=registries.plugin_matrices,
                                       plugin_masks=registries.plugin_masks)
    if study:
        evaluator.simulate.full_planes = frozenset(spec.at for spec in layout.specs)
        evaluator.simulate.target_planes = frozenset(
            spec.at for spec in layout.specs
            if evaluator.registry.get(spec.metric).needs_field
            and getattr(evaluator.registry.get(spec.metric), "needs_target", True))
    return evaluator
