"""Small helpers the first-party review rules share: number formatting, the safety caution."""

from __future__ import annotations

import math

from benchcheck.layout.model import Element
from benchcheck.optics.beam_trace import PlaneBeam
from benchcheck.safety import LASER_SAFETY_CAUTION

__all__ = [
    "COMMON_PRACTICE",
    "mm",
    "um",
    "percent",
    "with_safety",
    "radial",
    "arriving_share",
    "blocked_by_clipping",
]

COMMON_PRACTICE = "common practice"


def mm(value: float) -> str:
    """A length in metres shown in millimetres (rounding residue below 1 pm shown as 0)."""
    return f"{(value if abs(value) > 1e-12 else 0.0) * 1e3:.4g} mm"


def um(value: float) -> str:
    """A length in metres shown in micrometres."""
    return f"{value * 1e6:.4g} µm"


def percent(share: float) -> str:
    """A share shown in per cent with enough digits for small losses."""
    return f"{share * 100:.3g} %"


def with_safety(message: str) -> str:
    """A message about power, irradiance or blocked light, with the laser-safety caution."""
    return f"{message} {LASER_SAFETY_CAUTION}"


def radial(x: float, y: float) -> float:
    """Length of (x, y)."""
    return math.hypot(x, y)


def arriving_share(plane: PlaneBeam) -> float:
    """Share of source power arriving at a plane, before the element acts."""
    return plane.transmission / plane.passed if plane.passed > 0 else 0.0


def blocked_by_clipping(element: Element, plane: PlaneBeam) -> float:
    """Share of the arriving beam an element's aperture blocks (a splitter's split is no loss)."""
    if element.type == "splitter":
        ratio = element.value("ratio", 0.5)
        return 1.0 - plane.passed / (1.0 - ratio) if ratio < 1 else 0.0
    return 1.0 - plane.passed
