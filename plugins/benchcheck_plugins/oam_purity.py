"""OAM purity: the weight of the intended charge in the spiral spectrum about an axis.

About the target axis (option ``about = "target"``, the default) or about the beam's own
centroid and chief-ray direction (``about = "beam"``). Where the field's band is narrow (any
field past an iris) the weight is computed in closed form from the band (charge_weight.py);
otherwise the whole spiral spectrum is taken on rings (spiral_spectrum.py).
"""

from __future__ import annotations

import math

import numpy as np

from benchcheck.metrics import Metric, MetricContext, MetricUnavailable
from benchcheck.wave.field import Field

from benchcheck_plugins.charge_weight import band_centroid, charge_weight, field_band
from benchcheck_plugins.inputs import field_of, float_option
from benchcheck_plugins.spiral_spectrum import SOURCE, outer_radius, spiral_spectrum

__all__ = ["oam_purity", "metrics"]


def _about(context: MetricContext) -> str:
    """Option ``about = "target"`` (default): the target axis, fixed in the bench, so a beam
    that is displaced or tilted against it loses purity (as an analyser aligned to the
    nominal bench sees it; a tilt is a displacement in the Fourier plane). ``about =
    "beam"``: the beam's own centroid and chief-ray direction (by the trace of this very
    trial), so only the mode's own quality counts; pointing is then for the offset and
    angle metrics."""
    about = context.options.get("about", "target")
    if about not in ("target", "beam"):
        raise MetricUnavailable(f"option about = {about!r}: use \"target\" or \"beam\"")
    return about


def _slopes(context: MetricContext, about: str) -> tuple[float, float]:
    """The axis's direction (rad): the target's, or the chief ray's arriving at this plane."""
    absolute = getattr(context.beam, "absolute", None)
    if about == "beam" and absolute is not None:
        return tuple(absolute.angle_in)
    return tuple(context.axis_angle)


def _centroid(field: Field) -> tuple[float, float]:
    """Σ x |E|² / Σ |E|² on the grid: |E|² summed over each column and each row by BLAS
    matrix-vector products (sums of 10³ samples each in the field's precision, totals in double)."""
    intensity = np.abs(field.values)
    intensity *= intensity
    along_x = (np.ones(intensity.shape[0], intensity.dtype) @ intensity).astype(np.float64)
    along_y = (intensity @ np.ones(intensity.shape[1], intensity.dtype)).astype(np.float64)
    total = along_x.sum()
    if not total > 0:
        raise MetricUnavailable("the field carries no power in the window")
    return float(along_x @ field.grid.x / total), float(along_y @ field.grid.y / total)


def _untilted(field: Field, axis, slopes) -> Field:
    """A beam arriving along a tilted axis carries exp(ik(sx x + sy y)); about that axis the
    spiral spectrum is that of the field with this linear phase taken out."""
    if not (slopes[0] or slopes[1]):
        return field
    wavenumber = 2 * math.pi / field.wavelength
    ramp_x = np.exp(-1j * wavenumber * slopes[0] * (field.grid.x - axis[0])).astype(field.values.dtype)
    ramp_y = np.exp(-1j * wavenumber * slopes[1] * (field.grid.y - axis[1])).astype(field.values.dtype)
    level = field.values * ramp_x[np.newaxis, :]  # two passes in the field's own precision
    level *= ramp_y[:, np.newaxis]
    return field.replace(values=level)


def oam_purity(context: MetricContext) -> float:
    """Weight of the intended charge in the spiral spectrum about the target axis (or the beam's)."""
    if context.intended_charge is None:
        raise MetricUnavailable("the hologram at this bench intends no OAM charge")
    field = field_of(context)
    about = _about(context)
    slopes = _slopes(context, about)
    radius = float_option(context, "roi_radius", None)
    charge = int(context.intended_charge)
    band = field_band(field, slopes)
    if band is not None:
        axis = context.axis if about == "target" else band_centroid(band)
        return charge_weight(band, axis, charge, outer_radius(field.grid, axis, radius))
    # a band too wide for the closed form: the whole spectrum on rings
    axis = context.axis if about == "target" else _centroid(field)
    charges, weights = spiral_spectrum(_untilted(field, axis, slopes), axis, radius)
    matches = np.flatnonzero(charges == charge)
    if matches.size == 0:
        raise MetricUnavailable(f"charge {charge} is beyond what {charges.size} angular samples resolve")
    return float(weights[matches[0]])


def metrics() -> list[Metric]:
    """The spiral spectrum family."""
    return [
        Metric("oam_purity", oam_purity, True, "",
               "Weight of the intended OAM charge in the spiral spectrum about the target axis "
               "(option about = \"beam\": about the beam's own centroid and direction; option "
               "roi_radius in m limits the rings).", SOURCE, needs_target=False),
    ]
