"""Review rules about apertures: clear apertures against the traced beam, observation
regions against the simulated (shaped) beam."""

from __future__ import annotations

import math
from collections.abc import Iterator

import numpy as np

from benchcheck.evaluate.masks import rectangle_mask
from benchcheck.review import Finding, ReviewContext, ReviewRule
from benchcheck.wave.moments import beam_moments

from benchcheck_plugins.review_common import blocked_by_clipping, mm, percent, radial, with_safety

__all__ = ["GAUSSIAN_CLEAR_FACTOR", "HEAVY_CLIPPING", "OUTSIDE_LIMIT", "clear_aperture_findings", "shaped_beam_size_findings", "rules"]

#: A round aperture of diameter π w passes 1 − exp(−π²/2) = 99.28 % of a centred Gaussian
#: (Siegman, Lasers, 1986: T = 1 − exp(−2a²/w²)); "at least π w" is common practice.
GAUSSIAN_CLEAR_FACTOR = math.pi
#: Clipping loss from which a clear aperture is an error: 5 %, our own rule of thumb (the
#: beam's shape and the power on the mount both change markedly).
HEAVY_CLIPPING = 0.05

#: Share of the arriving light outside an observation region worth a finding: 1 %, our own
#: rule of thumb (a flat top's D4σ equals its full width, so D4σ alone would flag a good one).
OUTSIDE_LIMIT = 0.01

_CLEAR_BASIS = ("clear aperture at least π w (plus twice the beam's decentre) passes 1 − exp(−π²/2) = 99.28 % "
                "of a centred Gaussian: common practice; loss from the trace, T = 1 − exp(−2a²/w²) "
                "(Siegman, Lasers, 1986)")
_SIZE_BASIS = ("D4σ width of the simulated field (ISO 11146-1) against the region the layout gives (plane size or "
               "camera sensor), flagged when wider and more than 1 % of the light falls outside (our own rule of "
               "thumb)")


def _fold_cosines(element) -> tuple[float, float]:
    """cos θ per axis of a folding element's footprint (1 for elements at normal incidence)."""
    if element.type not in ("mirror", "splitter"):
        return 1.0, 1.0
    incidence = math.cos(element.value("incidence", 0.0))
    return (1.0, incidence) if element.value("incidence_plane", "xz") == "yz" else (incidence, 1.0)


def clear_aperture_findings(context: ReviewContext) -> Iterator[Finding]:
    """Elements whose clear aperture is under π w (+ 2 × decentre) of the beam they receive.

    The footprint on a folding surface is w / cos θ along the fold. Severity: warning, or
    error when the trace has the aperture block more than ``HEAVY_CLIPPING``.
    """
    for element in context.layout.elements:
        diameter = element.value("clear_aperture")
        if diameter is None:
            continue
        plane = context.trace.plane(element.name)
        cosines = _fold_cosines(element)
        footprint = max(plane.w[axis] / cosines[axis] for axis in (0, 1))
        decentre = radial((plane.offset_in[0] - element.x) / cosines[0], (plane.offset_in[1] - element.y) / cosines[1])
        needed = GAUSSIAN_CLEAR_FACTOR * footprint + 2.0 * decentre
        if diameter >= needed:
            continue
        loss = max(blocked_by_clipping(element, plane), 0.0)
        severity = "error" if loss > HEAVY_CLIPPING else "warning"
        yield Finding(
            rule="clear_aperture", severity=severity, element=element.name,
            message=with_safety(
                f"clear aperture {mm(diameter)} is under the {mm(needed)} the beam needs here (π × w = π × "
                f"{mm(footprint)}, plus 2 × {mm(decentre)} decentre); the trace has it block "
                f"{percent(loss)} of the arriving beam (fix: a larger optic, or a smaller beam here)."),
            basis=_CLEAR_BASIS,
            numbers={"clear_aperture_m": diameter, "w_m": footprint, "decentre_m": decentre,
                     "needed_diameter_m": needed, "blocked_share": loss},
        )


def _region(element) -> tuple[float, float] | None:
    """(width, height) of an observation plane's region, or the camera's sensor (m)."""
    if element.type == "camera":
        columns, rows = element.value("pixels")
        pitch_x, pitch_y = element.value("pixel_pitch")
        return columns * pitch_x, rows * pitch_y
    size = element.value("size")
    return tuple(size) if size is not None else None


def shaped_beam_size_findings(context: ReviewContext) -> Iterator[Finding]:
    """Observation planes whose simulated beam (D4σ) is wider than the plane's region or sensor."""
    elements = [element for element in context.elements("camera", "plane") if _region(element) is not None]
    if not elements:
        return
    simulation = context.simulation
    for element in elements:
        if element.name not in simulation.planes:
            continue
        field = simulation.planes[element.name].field
        widths = beam_moments(field).widths
        region = _region(element)
        if widths[0] <= region[0] and widths[1] <= region[1]:
            continue
        inside = rectangle_mask(field.grid, (region[0] / 2, region[1] / 2), (element.x, element.y)) ** 2
        intensity = np.abs(field.values.astype(np.complex128)) ** 2
        outside = 1.0 - float((intensity * inside).sum() / intensity.sum())
        if outside <= OUTSIDE_LIMIT:
            continue  # a flat top's D4σ equals its full width: wider on paper, yet it fits
        what = "sensor" if element.type == "camera" else "region"
        yield Finding(
            rule="shaped_beam_size", severity="warning", element=element.name,
            message=(f"the simulated beam is {mm(widths[0])} × {mm(widths[1])} wide (D4σ), more than the "
                     f"{mm(region[0])} × {mm(region[1])} {what}; {percent(outside)} of the light arriving here "
                     f"falls outside it."),
            basis=_SIZE_BASIS,
            numbers={"d4sigma_x_m": widths[0], "d4sigma_y_m": widths[1], "width_m": region[0],
                     "height_m": region[1], "outside_share": outside},
        )


def rules() -> list[ReviewRule]:
    """The aperture rules."""
    return [
        ReviewRule("clear_aperture", clear_aperture_findings,
                   "clear apertures against the traced beam (π w rule, clipping loss)", _CLEAR_BASIS),
        ReviewRule("shaped_beam_size", shaped_beam_size_findings,
                   "simulated beam width (D4σ) against observation regions and camera sensors",
                   _SIZE_BASIS),
    ]
