"""Reading a MetricContext: the field, the target, the beam record and per-spec options.

Shared by the first-party metric families so each says the same thing when an input is
missing (``MetricUnavailable``), and so arrays are summed in double precision.
"""

from __future__ import annotations

import numpy as np

from benchcheck.metrics import MetricContext, MetricUnavailable
from benchcheck.wave.field import Field

__all__ = [
    "field_of",
    "target_of",
    "beam_of",
    "double_values",
    "float_option",
    "region_mask",
]


def field_of(context: MetricContext) -> Field:
    """The simulated field, or ``MetricUnavailable`` when only the paraxial trace ran."""
    if context.field is None:
        raise MetricUnavailable("no simulated field at this plane (needs the wave simulation)")
    return context.field


def target_of(context: MetricContext) -> Field:
    """The ideal field on the same grid, or ``MetricUnavailable`` when the bench has none."""
    if context.target is None:
        raise MetricUnavailable("the bench defines no target field at this plane")
    field = field_of(context)
    if context.target.grid != field.grid:
        raise MetricUnavailable(
            f"the target field's grid {context.target.grid} differs from the simulated "
            f"field's grid {field.grid}"
        )
    return context.target


def beam_of(context: MetricContext) -> object:
    """The paraxial beam record, or ``MetricUnavailable`` when there is none."""
    if context.beam is None:
        raise MetricUnavailable("no paraxial beam record at this plane")
    return context.beam


def double_values(field: Field) -> np.ndarray:
    """Field samples as complex128, so sums over many samples keep their precision."""
    return np.asarray(field.values, dtype=np.complex128)


def float_option(context: MetricContext, key: str, default: float | None) -> float | None:
    """A numeric per-spec option (SI), or ``default`` when the spec does not give it."""
    value = context.options.get(key, default)
    if value is None:
        return None
    number = float(value)
    if not np.isfinite(number):
        raise ValueError(f"option '{key}' must be a finite number, got {value!r}")
    return number


def region_mask(field: Field, axis: tuple[float, float], radius: float | None) -> np.ndarray | None:
    """Samples within ``radius`` (m) of ``axis`` (m); None means the whole window.

    A sample belongs to the region when its centre does (common practice for sampled
    apertures).
    """
    if radius is None:
        return None
    if radius <= 0:
        raise ValueError(f"option 'roi_radius' must be positive, got {radius} m")
    x, y = field.grid.mesh()
    return (x - axis[0]) ** 2 + (y - axis[1]) ** 2 <= radius**2
