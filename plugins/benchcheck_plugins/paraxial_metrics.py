"""Metrics from the paraxial trace alone: beam radius, chief-ray offset and angle.

The beam record gives the 1/e² intensity radii ``w`` (Gaussian beam, ABCD law: Kogelnik and
Li, Appl. Opt. 5, 1550 (1966)) and the chief-ray position and slope (ABCDEF ray matrices:
Siegman, Lasers (1986), ch. 15).
"""

from __future__ import annotations

import math

from benchcheck.metrics import Metric, MetricContext

from benchcheck_plugins.inputs import beam_of

__all__ = [
    "beam_radius",
    "beam_radius_x",
    "beam_radius_y",
    "chief_ray_offset",
    "chief_ray_angle",
    "metrics",
]

_GAUSSIAN_SOURCE = "1/e² intensity radius of the Gaussian beam, Kogelnik and Li, Appl. Opt. 5, 1550 (1966)"
_RAY_SOURCE = "chief ray of the ABCDEF ray matrices, Siegman, Lasers (1986), ch. 15"


def beam_radius_x(context: MetricContext) -> float:
    """1/e² intensity radius along x (m)."""
    return float(beam_of(context).w[0])


def beam_radius_y(context: MetricContext) -> float:
    """1/e² intensity radius along y (m)."""
    return float(beam_of(context).w[1])


def beam_radius(context: MetricContext) -> float:
    """Largest 1/e² intensity radius of x and y (m)."""
    return max(beam_radius_x(context), beam_radius_y(context))


def chief_ray_offset(context: MetricContext) -> float:
    """Radial chief-ray offset from the nominal axis, hypot(x, y) (m)."""
    offset_x, offset_y = beam_of(context).offset
    return math.hypot(offset_x, offset_y)


def chief_ray_angle(context: MetricContext) -> float:
    """Radial chief-ray slope, hypot(ax, ay) (rad, paraxial slopes)."""
    angle_x, angle_y = beam_of(context).angle
    return math.hypot(angle_x, angle_y)


def metrics() -> list[Metric]:
    """The paraxial metric family."""
    return [
        Metric("beam_radius", beam_radius, False, "m",
               "Largest of the x and y 1/e² beam radii from the paraxial trace.", _GAUSSIAN_SOURCE),
        Metric("beam_radius_x", beam_radius_x, False, "m",
               "1/e² beam radius along x from the paraxial trace.", _GAUSSIAN_SOURCE),
        Metric("beam_radius_y", beam_radius_y, False, "m",
               "1/e² beam radius along y from the paraxial trace.", _GAUSSIAN_SOURCE),
        Metric("offset", chief_ray_offset, False, "m",
               "Radial distance of the chief ray from the nominal axis.", _RAY_SOURCE),
        Metric("angle", chief_ray_angle, False, "rad",
               "Radial slope of the chief ray against the nominal axis.", _RAY_SOURCE),
    ]
