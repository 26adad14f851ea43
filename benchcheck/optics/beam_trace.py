"""The paraxial trace: a Gaussian beam and its chief ray through every plane of a bench.

Per axis the beam is a complex q parameter (embedded-Gaussian M² model) carried by the
ABCD law (Kogelnik and Li, Appl. Opt. 5, 1550, 1966) and a chief ray carried by the
3x3 ABCDEF matrices (Siegman, Lasers, 1986, ch. 15). Clipping at each clear aperture is
computed for the beam as it arrives; the cumulative transmission is reported.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np

from benchcheck.bench.graph import SOURCE, Bench
from benchcheck.bench.realization import Realization
from benchcheck.layout.model import MAIN_ARM, Layout
from benchcheck.optics.element_actions import Action, IncomingBeam, act, hologram_deflection, wave_action
from benchcheck.optics.gaussian import beam_numbers, beam_radius, q_at
from benchcheck.optics.matrices import as_ray_matrix, free_space

__all__ = ["PlaneBeam", "TraceResult", "trace_realization", "CLIPPING_NOTE_LEVEL"]

#: A clear aperture that blocks more than this share of the arriving beam gets a note.
CLIPPING_NOTE_LEVEL = 1e-4


@dataclass(frozen=True)
class PlaneBeam:
    """The traced beam leaving one plane (SI units; tuples are (x, y)).

    ``w`` is the 1/e² radius of the real beam; ``radius`` the wavefront radius (inf when
    flat); ``waist``, ``waist_z`` the waist radius and its path position for the beam
    leaving the plane; ``offset``, ``angle`` the chief ray's position and slope;
    ``passed`` the share of arriving power this plane passes (clipping and splitting);
    ``transmission`` the share of source power left after this plane. ``q``, ``q_in``:
    the q parameters (M² convention) leaving and arriving; ``offset_in``, ``angle_in``: the
    chief ray arriving, before the element acts. ``zero_order_offset``: downstream of a
    modulator whose hologram deflects the wanted order, where the undeflected zero order's
    chief ray is (the trace follows the wanted order; the zero order is reported apart).
    """

    name: str
    arm: str
    type: str
    z: float
    w: tuple[float, float]
    radius: tuple[float, float]
    waist: tuple[float, float]
    waist_z: tuple[float, float]
    rayleigh: tuple[float, float]
    gouy: tuple[float, float]
    offset: tuple[float, float]
    angle: tuple[float, float]
    passed: float
    transmission: float
    q: tuple[complex, complex] = field(repr=False, default=(0j, 0j))
    q_in: tuple[complex, complex] = field(repr=False, default=(0j, 0j))
    offset_in: tuple[float, float] = field(repr=False, default=(0.0, 0.0))
    angle_in: tuple[float, float] = field(repr=False, default=(0.0, 0.0))
    zero_order_offset: tuple[float, float] | None = field(repr=False, default=None)

    def to_dict(self) -> dict:
        """The plane as DESIGN.md section 6 writes it (SI, unit in the key)."""
        return {
            "name": self.name,
            "arm": self.arm,
            "z_m": self.z,
            "w_m": list(self.w),
            "radius_m": [None if math.isinf(r) else r for r in self.radius],
            "waist_m": list(self.waist),
            "waist_z_m": list(self.waist_z),
            "offset_m": list(self.offset),
            "angle_rad": list(self.angle),
            "transmission": self.transmission,
        }


@dataclass(frozen=True)
class TraceResult:
    """The paraxial trace of one realization: every plane in trace order, and notes."""

    layout: Layout
    planes: tuple[PlaneBeam, ...]
    notes: tuple[str, ...] = ()
    #: Each element's action as the trace applied it (its matrices do not depend on the
    #: beam), for the wave stages to compose without acting again.
    actions: Mapping[str, Action] = field(default_factory=dict, repr=False, compare=False)

    def plane(self, name: str) -> PlaneBeam:
        for plane in self.planes:
            if plane.name == name:
                return plane
        raise KeyError(name)

    def to_dict(self) -> dict:
        """Equal to the JSON that ``benchcheck trace --json`` prints."""
        return {"planes": [plane.to_dict() for plane in self.planes]}


@dataclass
class _AxisState:
    q: complex
    position: float
    slope: float


def _leaving(name, arm, kind, z, states, m2, wavelength, passed, transmission, arriving=None,
             zero=None) -> PlaneBeam:
    x, y = (beam_numbers(states[axis].q, wavelength, m2[axis]) for axis in (0, 1))
    incoming = arriving or states
    return PlaneBeam(
        name=name,
        arm=arm,
        type=kind,
        z=z,
        w=(x[0], y[0]),
        radius=(x[1], y[1]),
        waist=(x[2], y[2]),
        waist_z=(z - x[3], z - y[3]),
        rayleigh=(x[4], y[4]),
        gouy=(x[5], y[5]),
        offset=(states[0].position, states[1].position),
        angle=(states[0].slope, states[1].slope),
        passed=passed,
        transmission=transmission,
        q=(states[0].q, states[1].q),
        q_in=(incoming[0].q, incoming[1].q),
        offset_in=(incoming[0].position, incoming[1].position),
        angle_in=(incoming[0].slope, incoming[1].slope),
        zero_order_offset=None if zero is None else (zero[0].position, zero[1].position),
    )


def _through(state: _AxisState, matrix: np.ndarray) -> _AxisState:
    # Python floats: the same IEEE products and sums as numpy scalars, without their
    # per-operation cost (this runs twice per element per trial); the complex division stays
    # numpy's, whose rounding the vectorised trace (optics/batch_trace.py) shares.
    if type(matrix) is np.ndarray and matrix.shape == (3, 3) and matrix.dtype == float:
        (a, b, e), (c, d, f), last = matrix.tolist()  # the common case, without a copy
        if last != [0.0, 0.0, 1.0]:
            raise ValueError(f"the last row of an ABCDEF matrix must be (0, 0, 1), got {last}")
    else:
        (a, b, e), (c, d, f) = as_ray_matrix(matrix)[:2].tolist()
    position = a * state.position + b * state.slope + e
    slope = c * state.position + d * state.slope + f
    q = complex(np.divide(a * state.q + b, c * state.q + d))  # the ABCD law, as propagate_q
    # + 0.0 turns a negative zero into zero, so tables and JSON do not show "-0".
    return _AxisState(q, position + 0.0, slope + 0.0)


def trace_realization(
    realization: Realization,
    plugin_matrices: Mapping[str, Callable] | None = None,
) -> TraceResult:
    """Trace the beam through every plane of a realization.

    Parameters
    ----------
    realization : Realization
        The bench with its perturbation (use an empty one for the nominal bench).
    plugin_matrices : mapping, optional
        Element type name -> ``f(element, wavelength) -> (matrix_x, matrix_y)`` for types
        registered by plugins.

    Returns
    -------
    TraceResult
        The source plane, then every element in trace order.
    """
    bench: Bench = realization.bench
    source = realization.source()
    wavelength = source.wavelength
    m2 = source.m2
    start = [
        _AxisState(q_at(source.waist[0], -source.waist_z[0], wavelength, m2[0]), source.x, source.tilt_y + 0.0),
        _AxisState(q_at(source.waist[1], -source.waist_z[1], wavelength, m2[1]), source.y, -source.tilt_x + 0.0),
    ]
    planes = [_leaving(SOURCE, MAIN_ARM, "source", 0.0, start, m2, wavelength, 1.0, 1.0)]
    notes: list[str] = []
    # Output of each plane per arm: (z, states, transmission, zero-order states or None)
    outputs: dict[tuple[str, str], tuple] = {(SOURCE, MAIN_ARM): (0.0, start, 1.0, None)}
    actions: dict[str, Action] = {}
    for name in bench.planes():
        element = realization.element(name)
        predecessor = bench.predecessor(name)
        z_before, states, transmission, zero = outputs[(predecessor, element.arm)]
        gap = free_space(element.z - z_before)
        arriving = [_through(states[axis], gap) for axis in (0, 1)]
        zero_arriving = [_through(zero[axis], gap) for axis in (0, 1)] if zero else None
        incoming = IncomingBeam(
            w=tuple(beam_radius(arriving[axis].q, wavelength, m2[axis]) for axis in (0, 1)),
            position=(arriving[0].position, arriving[1].position),
            slope=(arriving[0].slope, arriving[1].slope),
        )
        plugin = (plugin_matrices or {}).get(element.type)
        action = actions[name] = act(element, wavelength, incoming, plugin)
        leaving = [_through(arriving[0], action.matrix_x), _through(arriving[1], action.matrix_y)]
        zero_leaving = _zero_order(element, wavelength, incoming, arriving, zero_arriving, action, plugin)
        blocked = _blocked_share(element, action.passed)
        if blocked > CLIPPING_NOTE_LEVEL:
            notes.append(f"{name}: the clear aperture blocks {blocked:.3%} of the arriving beam")
        after = transmission * action.passed
        plane = _leaving(name, element.arm, element.type, element.z, leaving, m2, wavelength,
                         action.passed, after, arriving, zero_leaving or None)
        planes.append(plane)
        outputs[(name, element.arm)] = (element.z, leaving, after, zero_leaving)
        for arm, (matrix_x, matrix_y, passed) in (action.arm_matrices or {}).items():
            branch = [_through(arriving[0], matrix_x), _through(arriving[1], matrix_y)]
            zero_branch = [_through(zero_arriving[0], matrix_x), _through(zero_arriving[1], matrix_y)] \
                if zero_arriving else None
            outputs[(name, arm)] = (element.z, branch, transmission * passed, zero_branch)
    return TraceResult(layout=bench.layout, planes=tuple(planes), notes=tuple(notes), actions=actions)


def _zero_order(element, wavelength, incoming, arriving, zero_arriving, action, plugin):
    """The zero order's chief ray leaving ``element``, or None when no hologram deflects.

    At a modulator whose hologram deflects the wanted order, the zero order leaves with the
    reflection alone; elsewhere it goes through the same matrices as the wanted order.
    """
    if element.type == "modulator" and any(hologram_deflection(element, wavelength)):
        undeflected = wave_action(element, wavelength, incoming, plugin)
        return [_through(arriving[0], undeflected.matrix_x), _through(arriving[1], undeflected.matrix_y)]
    if zero_arriving is None:
        return None
    return [_through(zero_arriving[0], action.matrix_x), _through(zero_arriving[1], action.matrix_y)]


def _blocked_share(element, passed: float) -> float:
    """Share of the arriving beam blocked by clipping alone (a splitter's split is not a loss)."""
    if element.type == "splitter":
        ratio = element.value("ratio", 0.5)
        return 1.0 - passed / (1.0 - ratio) if ratio < 1 else 0.0
    return 1.0 - passed

