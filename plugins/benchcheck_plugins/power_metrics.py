"""Power metrics: the share of source power, or of modulator power, inside a region.

Power is the integral of |E|² over the region (Field convention: Σ|E|² · sample area).
Reports that show these figures also show ``benchcheck.metrics.LASER_SAFETY_CAUTION``.
"""

from __future__ import annotations

import numpy as np

from benchcheck.metrics import Metric, MetricContext, MetricUnavailable
from benchcheck.wave.field import Field
from benchcheck.wave.sums import power_sum

from benchcheck_plugins.inputs import field_of, float_option, region_mask

__all__ = ["power_in_region", "power_fraction", "efficiency", "metrics"]

_POWER_SOURCE = "power as the integral of |E|² over the region (paraxial field normalisation; common practice)"


def power_in_region(field: Field, axis: tuple[float, float], radius: float | None) -> float:
    """Power inside a disc of ``radius`` (m) about ``axis`` (m), or in the whole window.

    Parameters
    ----------
    field : Field
        The field; power in its units (Σ|E|² · sample area).
    axis : tuple of float
        Centre of the region (m), in the grid's frame.
    radius : float or None
        Radius of the region (m); None for the whole window.
    """
    mask = region_mask(field, axis, radius)
    if mask is None:
        return field.power  # kept on the field (a field held in a reduced form sums that)
    values = field.values[np.broadcast_to(mask, field.grid.shape)]
    # blockwise np.vdot in the field's precision, blocks summed in double (benchcheck.wave.sums)
    return power_sum(values) * field.grid.sample_area


def power_fraction(context: MetricContext) -> float:
    """Fraction of the source power inside the region of interest (option ``roi_radius``, m)."""
    if not context.source_power > 0:
        raise MetricUnavailable(f"the source power is {context.source_power}, not positive")
    field = field_of(context)
    radius = float_option(context, "roi_radius", None)
    return power_in_region(field, context.axis, radius) / context.source_power


def efficiency(context: MetricContext) -> float:
    """Power inside the region of interest over the power incident on the modulator."""
    if context.incident_power is None or not context.incident_power > 0:
        raise MetricUnavailable("no power incident on a modulator is known for this bench")
    field = field_of(context)
    radius = float_option(context, "roi_radius", None)
    return power_in_region(field, context.axis, radius) / context.incident_power


def metrics() -> list[Metric]:
    """The power metric family."""
    caution = " Shown with the laser-safety caution wherever power results are reported."
    return [
        Metric("power", power_fraction, True, "",
               "Fraction of the source power inside the region of interest (option roi_radius "
               "in m about the target axis; the whole window without it)." + caution,
               _POWER_SOURCE, needs_target=False),
        Metric("efficiency", efficiency, True, "",
               "Power inside the region of interest divided by the power incident on the "
               "modulator." + caution,
               _POWER_SOURCE, needs_target=False),
    ]
