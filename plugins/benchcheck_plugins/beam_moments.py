"""Second-moment beam widths (D4σ), centroid and ellipticity (ISO 11146-1).

From the intensity E(x, y): centroid x̄ = ∫x E / ∫E; second moments σ_x² = ∫(x − x̄)² E / ∫E,
σ_y², σ_xy likewise; D4σ widths d_x = 4σ_x, d_y = 4σ_y (a TEM00 beam gives exactly 2w).
The ellipticity is d_min / d_max along the principal axes of the moment matrix, so a
rotated elliptical beam gives the same value as an upright one (ISO 11146-1, principal-axis
widths; the matrix form is equivalent to the standard's closed formula).

The moments are taken over the whole window: simulated fields carry no camera noise, so no
ISO 11146 integration-area iteration is needed; light far out (stray orders) does count.
"""

from __future__ import annotations

import math

from benchcheck.metrics import Metric, MetricContext, MetricUnavailable
from benchcheck.wave.field import Field
from benchcheck.wave.moments import BeamMoments
from benchcheck.wave.moments import beam_moments as _core_moments

from benchcheck_plugins.inputs import field_of

__all__ = [
    "BeamMoments",
    "beam_moments",
    "d4sigma_x",
    "d4sigma_y",
    "d4sigma",
    "centroid_offset",
    "ellipticity",
    "metrics",
]

_SOURCE = "second-moment (D4σ) widths and centroid, ISO 11146-1"


def beam_moments(field: Field) -> BeamMoments:
    """The core's moments (ISO 11146-1); an empty window makes the metric unavailable."""
    try:
        return _core_moments(field)
    except ValueError as error:
        raise MetricUnavailable(str(error)) from None


def d4sigma_x(context: MetricContext) -> float:
    """D4σ width along x (m)."""
    return beam_moments(field_of(context)).widths[0]


def d4sigma_y(context: MetricContext) -> float:
    """D4σ width along y (m)."""
    return beam_moments(field_of(context)).widths[1]


def d4sigma(context: MetricContext) -> float:
    """Largest of the D4σ widths along x and y (m)."""
    return max(beam_moments(field_of(context)).widths)


def centroid_offset(context: MetricContext) -> float:
    """Distance of the intensity centroid from the target axis (m)."""
    moments = beam_moments(field_of(context))
    return math.hypot(moments.centroid_x - context.axis[0], moments.centroid_y - context.axis[1])


def ellipticity(context: MetricContext) -> float:
    """Smaller over larger principal-axis D4σ width (1 for a round beam)."""
    smaller, larger = beam_moments(field_of(context)).principal_widths
    if not larger > 0:
        raise MetricUnavailable("the beam has no extent")
    return smaller / larger


def metrics() -> list[Metric]:
    """The second-moment family."""
    return [
        Metric("d4sigma", d4sigma, True, "m",
               "Largest of the x and y second-moment (D4σ) beam widths.", _SOURCE, needs_target=False),
        Metric("d4sigma_x", d4sigma_x, True, "m",
               "Second-moment (D4σ) beam width along x.", _SOURCE, needs_target=False),
        Metric("d4sigma_y", d4sigma_y, True, "m",
               "Second-moment (D4σ) beam width along y.", _SOURCE, needs_target=False),
        Metric("centroid_offset", centroid_offset, True, "m",
               "Distance of the intensity centroid from the target axis.", _SOURCE, needs_target=False),
        Metric("ellipticity", ellipticity, True, "",
               "Smaller over larger D4σ width along the principal axes (1 = round).",
               "ellipticity from principal-axis D4σ widths, ISO 11146-1", needs_target=False),
    ]
