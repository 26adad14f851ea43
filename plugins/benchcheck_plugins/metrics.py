"""First-party metrics plugin: the entry point ``core_metrics`` of the ``benchcheck`` group.

It only registers metric objects; the maths of each family lives in its own module.
"""

from __future__ import annotations

from benchcheck.hookspecs import hookimpl
from benchcheck.metrics import Metric

from benchcheck_plugins import (
    beam_moments,
    flat_top,
    modal_overlap,
    oam_purity,
    paraxial_metrics,
    power_metrics,
    wavefront,
)

__all__ = ["benchcheck_register_metrics"]


@hookimpl
def benchcheck_register_metrics() -> list[Metric]:
    """The first-party metrics (names of DESIGN.md section 6)."""
    return [
        *paraxial_metrics.metrics(),
        *power_metrics.metrics(),
        *modal_overlap.metrics(),
        *oam_purity.metrics(),
        *beam_moments.metrics(),
        *flat_top.metrics(),
        *wavefront.metrics(),
    ]
