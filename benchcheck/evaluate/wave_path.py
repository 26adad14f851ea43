"""Where the wave stages go: the mask planes along each path, and the ray matrix of each
stage between two of them.

Between two mask planes every thin element and gap collapses into one 3x3 matrix per axis
(DESIGN.md, "stage"). Mask planes are the modulator, apertures, cameras and observation
planes, and any lens, mirror, plate or splitter whose clear aperture cuts more than a
negligible share of the beam by the paraxial trace.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from benchcheck.bench.realization import Realization
from benchcheck.optics.beam_trace import TraceResult
from benchcheck.optics.element_actions import IncomingBeam, wave_action
from benchcheck.optics.matrices import compose, free_space

__all__ = ["MASK_TYPES", "OBSERVATION_TYPES", "CLIP_MASK_LEVEL", "Stage", "mask_planes", "stage_between", "arriving_beam"]

MASK_TYPES = ("modulator", "aperture", "camera", "plane")
OBSERVATION_TYPES = ("camera", "plane")
#: A clear aperture that blocks more than this share (paraxial trace) becomes a mask plane.
CLIP_MASK_LEVEL = 1e-4


@dataclass(frozen=True)
class ArrivingBeam:
    """The traced beam arriving at a plane: q of the coherent field per axis, chief ray."""

    q: tuple[complex, complex]
    position: tuple[float, float]
    slope: tuple[float, float]
    w: tuple[float, float]


@dataclass(frozen=True)
class Stage:
    """The matrices from one mask plane to the next, and the amplitude share of splitters."""

    start: str
    end: str
    matrix_x: np.ndarray
    matrix_y: np.ndarray
    amplitude: float


def arriving_beam(trace: TraceResult, name: str, wavelength: float, m2: tuple[float, float]) -> ArrivingBeam:
    """The traced beam arriving at ``name``, before the element acts.

    The wave field is a coherent Gaussian with the real beam's radius and curvature, so its
    q has Im(1/q) = Im(1/q_M²) / M² (embedded-Gaussian convention, DESIGN.md section 4).
    """
    plane = trace.plane(name)
    q = []
    for axis in (0, 1):
        inverse = 1.0 / plane.q_in[axis]
        q.append(1.0 / complex(inverse.real, inverse.imag / m2[axis]))
    w = tuple(math.sqrt(-wavelength / (math.pi * (1.0 / q[axis]).imag)) for axis in (0, 1))
    return ArrivingBeam((q[0], q[1]), plane.offset_in, plane.angle_in, w)


def is_mask(name: str, realization: Realization, trace: TraceResult, plugin_masks=None) -> bool:
    element = realization.element(name)
    if element.type in MASK_TYPES or element.type in (plugin_masks or {}):
        return True
    if element.value("clear_aperture") is None:
        return False
    passed = trace.plane(name).passed
    if element.type == "splitter":
        share = 1.0 - element.value("ratio", 0.5)
        passed = passed / share if share > 0 else 1.0
    return 1.0 - passed > CLIP_MASK_LEVEL


def mask_planes(realization: Realization, trace: TraceResult, observation: str, plugin_masks=None) -> list[str]:
    """Mask planes on the path from the source to ``observation``, in beam order."""
    path = realization.bench.path_to(observation)[1:]
    return [name for name in path if is_mask(name, realization, trace, plugin_masks)]


def stage_between(realization: Realization, trace: TraceResult, start: str, end: str,
                  plugin_matrices=None) -> Stage:
    """The matrices from the plane ``start`` (its own action included) to ``end`` (excluded)."""
    bench = realization.bench
    path = bench.path_to(end)
    names = path[path.index(start):]
    wavelength = realization.wavelength
    matrices_x, matrices_y = [], []
    amplitude = 1.0
    previous_z = None
    for index, name in enumerate(names):
        element = realization.element(name)
        if previous_z is not None:
            gap = free_space(element.z - previous_z)
            matrices_x.append(gap)
            matrices_y.append(gap)
        if name == end:
            break
        action = trace.actions.get(name) if element.type != "modulator" else None  # the trace's matrices
        if action is None:
            beam = trace.plane(name)
            action = wave_action(element, wavelength, IncomingBeam(beam.w, beam.offset, beam.angle),
                                 (plugin_matrices or {}).get(element.type))
        following = realization.element(names[index + 1])
        if action.arm_matrices and following.arm in action.arm_matrices:
            matrix_x, matrix_y, _ = action.arm_matrices[following.arm]
            amplitude *= math.sqrt(element.value("ratio", 0.5))
        else:
            matrix_x, matrix_y = action.matrix_x, action.matrix_y
            if element.type == "splitter":
                amplitude *= math.sqrt(1.0 - element.value("ratio", 0.5))
        matrices_x.append(matrix_x)
        matrices_y.append(matrix_y)
        previous_z = element.z
    return Stage(start, end, compose(*matrices_x), compose(*matrices_y), amplitude)
