"""Hook specifications: everything a benchcheck plugin can provide.

Plugins implement these with the ``hookimpl`` marker (``from benchcheck.hookspecs import
hookimpl``; the package root re-exports it). Every hook is prefixed ``benchcheck_``.

pluggy stops a hook call at the first exception, so plugins do not compute anything inside a
hook: registration hooks return lists of objects (metrics, element types, hologram patterns,
review rules, report writers) and the core calls each object later in its own guard, so one
failing plugin is named and recorded while the others go on.

Phases
------
Registration
    Called once per plugin when a registry is built (right after the plugin manager is
    made). Each hook returns a list; results of all plugins are collected (no first-result
    rule), and the registry records which plugin gave which object.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import pluggy

if TYPE_CHECKING:  # only for annotations: these modules import nothing from here
    from benchcheck.layout.element_types import ElementType
    from benchcheck.metrics import Metric
    from benchcheck.report.types import ReportWriter
    from benchcheck.review.types import ReviewRule
    from benchcheck.wave.holograms import HologramPattern

__all__ = [
    "PROJECT_NAME",
    "hookspec",
    "hookimpl",
    "benchcheck_register_metrics",
    "benchcheck_register_element_types",
    "benchcheck_register_hologram_patterns",
    "benchcheck_register_review_rules",
    "benchcheck_register_report_writers",
]

#: Name shared by the markers, the plugin manager and the entry-point group.
PROJECT_NAME = "benchcheck"

hookspec = pluggy.HookspecMarker(PROJECT_NAME)
hookimpl = pluggy.HookimplMarker(PROJECT_NAME)


# --- Registration phase -------------------------------------------------------------------


@hookspec
def benchcheck_register_metrics() -> list[Metric]:
    """Give the metrics this plugin adds.

    When called
        Once per plugin, when ``MetricRegistry.from_plugin_manager`` builds the metric
        registry (before any layout is evaluated).
    Receives
        Nothing.
    Returns
        list of benchcheck.metrics.Metric
            Metric objects. The registry fills in ``Metric.plugin`` with this plugin's name.
            A metric name may be registered only once across all plugins: a duplicate
            raises ``PluginError`` naming both plugins.
    First result wins
        No: the lists of every plugin are collected.
    """


@hookspec
def benchcheck_register_element_types() -> list[ElementType]:
    """Give the layout element types this plugin adds.

    When called
        Once per plugin, when the layout loader builds its table of element types.
    Receives
        Nothing.
    Returns
        list of benchcheck.layout.element_types.ElementType
            Element type descriptions (the type name used in ``type = "..."``, its fields
            and degrees of freedom). A type name is registered once.
    First result wins
        No: the lists of every plugin are collected.
    """


@hookspec
def benchcheck_register_hologram_patterns() -> list[HologramPattern]:
    """Give the hologram patterns this plugin adds for modulators.

    When called
        Once per plugin, when the hologram pattern table is built.
    Receives
        Nothing.
    Returns
        list of benchcheck.wave.holograms.HologramPattern
            Patterns selectable with ``hologram = { pattern = "..." }``. A pattern name is
            registered once.
    First result wins
        No: the lists of every plugin are collected.
    """


@hookspec
def benchcheck_register_review_rules() -> list[ReviewRule]:
    """Give the layout review rules this plugin adds.

    When called
        Once per plugin, when ``benchcheck review`` builds its rule set.
    Receives
        Nothing.
    Returns
        list of ReviewRule
            Rules that inspect a layout and return findings; each runs in its own guard.
    First result wins
        No: the lists of every plugin are collected.
    """


@hookspec
def benchcheck_register_report_writers() -> list[ReportWriter]:
    """Give the report writers (output formats) this plugin adds.

    When called
        Once per plugin, when the report layer builds its table of output formats.
    Receives
        Nothing.
    Returns
        list of ReportWriter
            Writers that turn a study or trial into a report file; a format name is
            registered once.
    First result wins
        No: the lists of every plugin are collected.
    """
