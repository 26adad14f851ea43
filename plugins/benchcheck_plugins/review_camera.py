"""Review rules about cameras: pixels across the beam, sensor size, bit depth, saturation."""

from __future__ import annotations

from collections.abc import Iterator

from benchcheck.review import Finding, ReviewContext, ReviewRule
from benchcheck.wave.moments import beam_moments

from benchcheck_plugins.review_common import mm, percent, um, with_safety

__all__ = ["MIN_PIXELS_ACROSS", "INTEGRATION_WIDTHS", "MIN_BIT_DEPTH", "camera_beam_widths", "rules"]

#: At least 10 pixels across the D4σ width for a width measurement: common practice.
MIN_PIXELS_ACROSS = 10.0
#: ISO 11146-1 integrates the second moments over an area about three times the beam width.
INTEGRATION_WIDTHS = 3.0
#: Fewer bits than 8 leave little dynamic range for the beam's wings: common practice.
MIN_BIT_DEPTH = 8

_SAMPLING_BASIS = "at least 10 pixels across the D4σ width (ISO 11146-1 widths): common practice"
_AREA_BASIS = "ISO 11146-1: second moments integrated over an area about three times the D4σ width"
_DEPTH_BASIS = "8 bits or more for beam profiling: common practice"
_SATURATION_BASIS = ("a pixel at full scale cannot be told from a clipped one, which biases D4σ widths "
                     "(ISO 11146-1 asks for unsaturated frames); frame from the nominal wave simulation")


def camera_beam_widths(context: ReviewContext, element) -> tuple[float, float, str]:
    """D4σ widths (m) of the beam at a camera and where they come from.

    The simulated field when the simulation reaches the camera; otherwise 2w from the trace
    (exactly the D4σ width of a TEM00 beam, ISO 11146-1).
    """
    simulation = context.simulation
    if element.name in simulation.planes:
        widths = beam_moments(simulation.planes[element.name].field).widths
        return widths[0], widths[1], "simulated field"
    w = context.trace.plane(element.name).w
    return 2 * w[0], 2 * w[1], "paraxial trace (2w)"


def camera_sampling_findings(context: ReviewContext) -> Iterator[Finding]:
    """Cameras with fewer than 10 pixels across the beam's D4σ width."""
    for element in context.elements("camera"):
        width_x, width_y, origin = camera_beam_widths(context, element)
        pitch_x, pitch_y = element.value("pixel_pitch")
        across = min(width_x / pitch_x, width_y / pitch_y)
        if across >= MIN_PIXELS_ACROSS:
            continue
        yield Finding(
            rule="camera_sampling", severity="warning", element=element.name,
            message=(f"the beam is {mm(width_x)} × {mm(width_y)} wide (D4σ, {origin}): only {across:.3g} pixels of "
                     f"{um(pitch_x)} across, fewer than 10 (fix: magnify the beam onto the camera, or smaller "
                     f"pixels)."),
            basis=_SAMPLING_BASIS,
            numbers={"d4sigma_x_m": width_x, "d4sigma_y_m": width_y, "pixel_pitch_m": pitch_x,
                     "pixels_across": across})


def camera_sensor_area_findings(context: ReviewContext) -> Iterator[Finding]:
    """Sensors smaller than three D4σ widths (but not smaller than the beam: see shaped_beam_size)."""
    for element in context.elements("camera"):
        width_x, width_y, origin = camera_beam_widths(context, element)
        columns, rows = element.value("pixels")
        pitch_x, pitch_y = element.value("pixel_pitch")
        sensor = (columns * pitch_x, rows * pitch_y)
        if width_x > sensor[0] or width_y > sensor[1]:
            continue  # larger than the sensor itself: the shaped_beam_size rule reports it
        if sensor[0] >= INTEGRATION_WIDTHS * width_x and sensor[1] >= INTEGRATION_WIDTHS * width_y:
            continue
        yield Finding(
            rule="camera_sensor_area", severity="note", element=element.name,
            message=(f"the {mm(sensor[0])} × {mm(sensor[1])} sensor is smaller than three D4σ widths of the beam "
                     f"({mm(INTEGRATION_WIDTHS * width_x)} × {mm(INTEGRATION_WIDTHS * width_y)}, {origin}): "
                     f"widths measured on it will miss the beam's wings."),
            basis=_AREA_BASIS,
            numbers={"d4sigma_x_m": width_x, "d4sigma_y_m": width_y, "sensor_width_m": sensor[0],
                     "sensor_height_m": sensor[1]})


def camera_bit_depth_findings(context: ReviewContext) -> Iterator[Finding]:
    """Cameras with fewer than 8 bits per pixel."""
    for element in context.elements("camera"):
        bits = element.value("bit_depth", 12)
        if bits >= MIN_BIT_DEPTH:
            continue
        yield Finding(
            rule="camera_bit_depth", severity="note", element=element.name,
            message=(f"{bits} bits per pixel ({2 ** bits - 1} counts full scale): the beam's wings drown in the "
                     f"quantisation, and D4σ widths come out small."),
            basis=_DEPTH_BASIS, numbers={"bit_depth": bits})


def camera_saturation_findings(context: ReviewContext) -> Iterator[Finding]:
    """Cameras with a fixed exposure at which the nominal beam saturates pixels."""
    cameras = [element for element in context.elements("camera") if element.value("exposure", "auto") != "auto"]
    if not cameras:
        return  # "auto" exposure puts the brightest pixel below full scale by construction
    simulation = context.simulation
    for element in cameras:
        result = simulation.planes.get(element.name)
        if result is None or result.frame is None or not result.frame.saturated_fraction > 0:
            continue
        share = result.frame.saturated_fraction
        yield Finding(
            rule="camera_saturation", severity="warning", element=element.name,
            message=with_safety(
                f"at the exposure given ({element.value('exposure')} counts per W/m²) {percent(share)} of the "
                f"pixels are at full scale in the simulated frame (fix: a shorter exposure or an attenuator "
                f"before the camera)."),
            basis=_SATURATION_BASIS, numbers={"saturated_share": share})


def rules() -> list[ReviewRule]:
    """The camera rules."""
    return [
        ReviewRule("camera_sampling", camera_sampling_findings, "pixels across the beam at each camera",
                   _SAMPLING_BASIS),
        ReviewRule("camera_sensor_area", camera_sensor_area_findings,
                   "camera sensor against three D4σ widths of the beam", _AREA_BASIS),
        ReviewRule("camera_bit_depth", camera_bit_depth_findings, "camera bit depth", _DEPTH_BASIS),
        ReviewRule("camera_saturation", camera_saturation_findings,
                   "saturated pixels at the camera's exposure", _SATURATION_BASIS),
    ]
