"""What each first-party element type does to the traced beam: ray matrices and clipping.

Every function takes the (perturbed) element, the wavelength, and the incoming beam's
radii and chief ray at the element's plane, and returns an ``Action``: one 3x3 ABCDEF
matrix per axis and the share of power passed by the element's clear aperture. Elements
are thin: a plate's optical path replaces the bench path it occupies.

Sign conventions (right-handed, DESIGN.md section 4): ``tilt_y`` (about y) turns the beam
towards +x and ``tilt_x`` (about x) towards −y, so a mirror tilted by α turns the
reflected beam by 2α in those directions.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass

import numpy as np

from benchcheck.layout.model import Element
from benchcheck.optics.astigmatism import (
    lens_axis_focal_lengths,
    tilted_mirror_focal_lengths,
    tilted_plate_matrices,
    tilted_plate_path_length,
)
from benchcheck.optics.clipping import annular_transmission, circular_transmission, rectangular_transmission
from benchcheck.optics.matrices import compose, curved_mirror, free_space, mirror_tilt, misaligned, ray_matrix, thin_lens

__all__ = [
    "Action",
    "IncomingBeam",
    "ACTIONS",
    "act",
    "wave_action",
    "hologram_deflection",
    "deflection_of",
    "reflection_deviation",
]

_IDENTITY = ray_matrix(1.0, 0.0, 0.0, 1.0)


@dataclass(frozen=True)
class IncomingBeam:
    """The beam arriving at an element's plane: 1/e² radii and chief-ray position and slope."""

    w: tuple[float, float]
    position: tuple[float, float]
    slope: tuple[float, float]


@dataclass(frozen=True)
class Action:
    """An element's effect: ray matrix per axis (x, y) and the share of power it passes.

    A splitter also gives, per arm it starts, the matrices and share of the branch.
    """

    matrix_x: np.ndarray
    matrix_y: np.ndarray
    passed: float = 1.0
    arm_matrices: Mapping[str, tuple[np.ndarray, np.ndarray, float]] | None = None


def reflection_deviation(tilt_x: float, tilt_y: float) -> tuple[np.ndarray, np.ndarray]:
    """Matrices of the 2α turn of a reflection off a surface tilted by (tilt_x, tilt_y)."""
    return mirror_tilt(tilt_y), mirror_tilt(-tilt_x)


def _round_clear_aperture(element: Element, beam: IncomingBeam, foreshortening: tuple[float, float] = (1.0, 1.0)) -> float:
    """Share passed by a round clear aperture, seen foreshortened on a tilted surface."""
    diameter = element.value("clear_aperture")
    if diameter is None:
        return 1.0
    # On a surface at incidence θ the beam's footprint grows by 1/cos θ along the fold;
    # scaling the beam (not the disc) keeps the aperture round for the clipping formula.
    w_x = beam.w[0] / foreshortening[0]
    w_y = beam.w[1] / foreshortening[1]
    offset_x = (beam.position[0] - element.x) / foreshortening[0]
    offset_y = (beam.position[1] - element.y) / foreshortening[1]
    return circular_transmission(diameter / 2, w_x, w_y, offset_x, offset_y)


def _lens(element: Element, wavelength: float, beam: IncomingBeam) -> Action:
    f_x, f_y = lens_axis_focal_lengths(
        element.value("focal_length"), element.tilt_x, element.tilt_y, element.value("index", 1.5)
    )
    return Action(
        misaligned(thin_lens(f_x), decenter=element.x),
        misaligned(thin_lens(f_y), decenter=element.y),
        _round_clear_aperture(element, beam),
    )


def _fold_axes(element: Element) -> tuple[float, float]:
    """cos θ of the fold per axis (x, y): the tangential axis is x for a fold in the xz plane."""
    incidence = element.value("incidence", 0.0)
    if element.value("incidence_plane", "xz") == "yz":
        return 1.0, math.cos(incidence)
    return math.cos(incidence), 1.0


def _mirror(element: Element, wavelength: float, beam: IncomingBeam) -> Action:
    radius = element.value("radius", math.inf)
    incidence = element.value("incidence", 0.0)
    tangential, sagittal = tilted_mirror_focal_lengths(radius, incidence)
    if element.value("incidence_plane", "xz") == "yz":
        f_x, f_y = sagittal, tangential
    else:
        f_x, f_y = tangential, sagittal
    turn_x, turn_y = reflection_deviation(element.tilt_x, element.tilt_y)
    return Action(
        compose(misaligned(curved_mirror(f_x), decenter=element.x), turn_x),
        compose(misaligned(curved_mirror(f_y), decenter=element.y), turn_y),
        _round_clear_aperture(element, beam, _fold_axes(element)),
    )


def _plate_matrices(thickness: float, index: float, tilt_x: float, tilt_y: float) -> tuple[np.ndarray, np.ndarray]:
    """A thin stand-in for a plate: its optical path minus the bench path it occupies.

    A plate tilted about y is tangential in x (lateral shift along x) and vice versa;
    for tilts about both axes each axis takes the tangential form of its own tilt
    (second-order cross terms dropped).
    """
    matrices = []
    for tilt in (tilt_y, -tilt_x):
        tangential, _ = tilted_plate_matrices(thickness, index, tilt)
        occupied = tilted_plate_path_length(thickness, index, tilt)
        matrices.append(compose(tangential, free_space(-occupied)))
    return matrices[0], matrices[1]


def _plate(element: Element, wavelength: float, beam: IncomingBeam) -> Action:
    matrix_x, matrix_y = _plate_matrices(
        element.value("thickness"), element.value("index", 1.5), element.tilt_x, element.tilt_y
    )
    return Action(matrix_x, matrix_y, _round_clear_aperture(element, beam))


def _aperture(element: Element, wavelength: float, beam: IncomingBeam) -> Action:
    center_x, center_y = element.value("center", (0.0, 0.0))
    offset_x = beam.position[0] - (center_x + element.x)
    offset_y = beam.position[1] - (center_y + element.y)
    if element.value("size") is not None:
        width, height = element.value("size")
        passed = rectangular_transmission(width / 2, height / 2, beam.w[0], beam.w[1], offset_x, offset_y)
    elif element.value("stop") is not None:
        passed = annular_transmission(
            element.value("diameter") / 2, element.value("stop") / 2, beam.w[0], beam.w[1], offset_x, offset_y
        )
    else:
        passed = circular_transmission(element.value("diameter") / 2, beam.w[0], beam.w[1], offset_x, offset_y)
    return Action(_IDENTITY, _IDENTITY, passed)


def hologram_deflection(element: Element, wavelength: float) -> tuple[float, float, float]:
    """Slope (x, y) the hologram's grating gives the wanted first order, and its lens power (1/m).

    A grating of period Λ deflects the first order by λ/Λ (grating equation, paraxial);
    the period in pixels is shown on the real pitch, so a pitch error moves the order.
    """
    pitch_x, pitch_y = element.value("pixel_pitch")
    return deflection_of(element.value("hologram") or {}, pitch_x, pitch_y, wavelength)


def deflection_of(hologram, pitch_x, pitch_y, wavelength):
    """:func:`hologram_deflection` from a hologram table and the real pitch (floats or arrays)."""
    slope_x = slope_y = 0.0
    gratings = []
    if hologram.get("pattern") == "grating" and "period_px" in hologram:
        gratings.append((hologram["period_px"], hologram.get("angle", 0.0)))
    if "carrier" in hologram:
        gratings.append((hologram["carrier"]["period_px"], hologram["carrier"].get("angle", 0.0)))
    for period_px, angle in gratings:
        slope_x = slope_x + wavelength * math.cos(angle) / (period_px * pitch_x)
        slope_y = slope_y + wavelength * math.sin(angle) / (period_px * pitch_y)
    power = 0.0
    for focal_length in (hologram.get("lens"), hologram.get("focal_length") if hologram.get("pattern") == "lens" else None):
        if focal_length:
            power += 1.0 / focal_length
    return slope_x, slope_y, power


def _modulator(element: Element, wavelength: float, beam: IncomingBeam) -> Action:
    slope_x, slope_y, power = hologram_deflection(element, wavelength)
    turn_x, turn_y = reflection_deviation(element.tilt_x, element.tilt_y)
    focal_length = 1.0 / power if power else math.inf
    pitch_x, pitch_y = element.value("pixel_pitch")
    columns, rows = element.value("pixels")
    cos_fold = math.cos(element.value("incidence", 0.0))
    passed = rectangular_transmission(
        columns * pitch_x * cos_fold / 2, rows * pitch_y / 2, beam.w[0], beam.w[1],
        beam.position[0] - element.x, beam.position[1] - element.y,
    )
    return Action(
        compose(misaligned(thin_lens(focal_length), decenter=element.x), turn_x, ray_matrix(1, 0, 0, 1, 0, slope_x)),
        compose(misaligned(thin_lens(focal_length), decenter=element.y), turn_y, ray_matrix(1, 0, 0, 1, 0, slope_y)),
        passed,
    )


def _splitter(element: Element, wavelength: float, beam: IncomingBeam) -> Action:
    """A splitter plate: the nominal fold is ``incidence``; ``tilt_x``/``tilt_y`` are misalignment.

    The transmitted beam crosses the plate at the fold angle plus the tilt in the fold
    plane (lateral shift, astigmatism); the reflected arm turns by twice the tilt.
    """
    thickness = element.value("thickness")
    incidence = element.value("incidence", 0.0)
    fold_in_yz = element.value("incidence_plane", "xz") == "yz"
    if thickness:
        tilt_x = element.tilt_x - (incidence if fold_in_yz else 0.0)
        tilt_y = element.tilt_y + (0.0 if fold_in_yz else incidence)
        matrix_x, matrix_y = _plate_matrices(thickness, element.value("index", 1.5), tilt_x, tilt_y)
    else:
        matrix_x = matrix_y = _IDENTITY
    ratio = element.value("ratio", 0.5)
    clear = _round_clear_aperture(element, beam, _fold_axes(element))
    turn_x, turn_y = reflection_deviation(element.tilt_x, element.tilt_y)
    arms = {arm: (turn_x, turn_y, clear * ratio) for arm in element.value("arms", ())}
    return Action(matrix_x, matrix_y, clear * (1.0 - ratio), arm_matrices=arms)


def _observe(element: Element, wavelength: float, beam: IncomingBeam) -> Action:
    return Action(_IDENTITY, _IDENTITY, 1.0)


ACTIONS: dict[str, Callable[[Element, float, IncomingBeam], Action]] = {
    "lens": _lens,
    "mirror": _mirror,
    "plate": _plate,
    "aperture": _aperture,
    "modulator": _modulator,
    "splitter": _splitter,
    "camera": _observe,
    "plane": _observe,
}


def act(element: Element, wavelength: float, beam: IncomingBeam, plugin_matrices=None) -> Action:
    """The action of ``element``; plugin types supply ``plugin_matrices(element, wavelength)``."""
    if element.type in ACTIONS:
        return ACTIONS[element.type](element, wavelength, beam)
    if plugin_matrices is None:
        raise ValueError(f"element type '{element.type}' has no paraxial model")
    matrix_x, matrix_y = plugin_matrices(element, wavelength)
    return Action(np.asarray(matrix_x, float), np.asarray(matrix_y, float), 1.0)


def wave_action(element: Element, wavelength: float, beam: IncomingBeam, plugin_matrices=None) -> Action:
    """The action of ``element`` on the wave path: as :func:`act`, except that a modulator's
    hologram (carrier and lens) is left out, since the wave stages carry it in the field."""
    if element.type == "modulator":
        turn_x, turn_y = reflection_deviation(element.tilt_x, element.tilt_y)
        return Action(turn_x, turn_y, 1.0)
    return act(element, wavelength, beam, plugin_matrices)
