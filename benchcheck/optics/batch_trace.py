"""The paraxial trace of many realizations at once, vectorised over trials with numpy.

The physics and formulas are those of :func:`benchcheck.optics.beam_trace.trace_realization`
(ABCD law, Kogelnik and Li, Appl. Opt. 5, 1550 (1966); ABCDEF matrices, Siegman, Lasers
(1986), ch. 15; clipping of :mod:`benchcheck.optics.clipping`; tilted lenses, mirrors and
plates of :mod:`benchcheck.optics.astigmatism`), written once per element for arrays of K
trials instead of once per trial: a study of paraxial specs spends its time in Python
bookkeeping, not in arithmetic, so this is what makes it fast. The tests check it against
``trace_realization`` to 1e-12 relative.

Only what metrics of the trace read is kept per plane: 1/e² radii, chief-ray offset and
slope leaving the plane, and the cumulative transmission. First-party element types are
covered except apertures with a central stop; a bench with anything else (plugin types
included) is traced trial by trial by the caller (``batch_supported`` says which).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np
from scipy import special

from benchcheck.bench.graph import SOURCE, Bench
from benchcheck.layout.model import MAIN_ARM
from benchcheck.optics.element_actions import deflection_of

__all__ = ["BatchTrace", "batch_supported", "trace_batch", "SUPPORTED_TYPES"]

SUPPORTED_TYPES = ("lens", "mirror", "plate", "aperture", "modulator", "splitter", "camera", "plane")
_VALUE_DOFS = ("focal_length", "radius", "thickness", "diameter", "fill_factor")
_NEGLIGIBLE_SIGMAS = 13.0  # as benchcheck.optics.clipping: a disc 13 σ clear passes everything
_NEARLY_UNCLIPPED = 1e-7


@dataclass(frozen=True)
class BatchTrace:
    """The beam leaving every plane, for K trials.

    Attributes
    ----------
    names : tuple of str
        Plane names in trace order (the source first).
    w, offset, angle : numpy.ndarray
        Shape (K, planes, 2): 1/e² radii (m), chief-ray position (m) and slope (rad) per axis.
    transmission : numpy.ndarray
        Shape (K, planes): share of source power left after each plane.
    valid : numpy.ndarray
        Shape (K,): False for a trial the scalar trace refuses (a non-positive waist, M² or
        wavelength, a zero focal length or mirror radius) or that gives a non-finite number;
        such trials are for ``trace_realization`` to report.
    """

    names: tuple[str, ...]
    w: np.ndarray
    offset: np.ndarray
    angle: np.ndarray
    transmission: np.ndarray
    valid: np.ndarray

    def index(self, name: str) -> int:
        return self.names.index(name)


def batch_supported(bench: Bench) -> bool:
    """True when every element of the bench has a vectorised model here."""
    for element in bench.elements():
        if element.type not in SUPPORTED_TYPES:
            return False
        if element.type == "aperture" and element.value("stop") is not None:
            return False
    return True


class _Excursions:
    """Excursions of K trials by dof name, as arrays (0 where a trial does not name a dof)."""

    def __init__(self, perturbations: Sequence[Mapping[str, float]]) -> None:
        self.count = len(perturbations)
        names = dict.fromkeys(name for perturbation in perturbations for name in perturbation)
        self.arrays = {name: np.array([float(p.get(name, 0.0)) for p in perturbations]) for name in names}

    def of(self, owner: str, dof: str):
        return self.arrays.get(f"{owner}.{dof}")


def _pose(element, excursions: _Excursions, attribute: str):
    value = getattr(element, attribute)
    extra = excursions.of(element.name, attribute)
    return value if extra is None else value + extra


def _value(element, excursions: _Excursions, name: str, default=None):
    value = element.value(name, default)
    extra = excursions.of(element.name, name)
    if extra is None or value is None:
        return value
    if name in _VALUE_DOFS and math.isinf(value):
        return value
    return value + extra


def _pitch(element, excursions: _Excursions):
    pitch_x, pitch_y = element.value("pixel_pitch")
    extra = excursions.of(element.name, "pixel_pitch")
    return (pitch_x, pitch_y) if extra is None else (pitch_x + extra, pitch_y + extra)


class _Matrix:
    """One axis's ABCDEF matrix for K trials (each entry a scalar or a (K,) array)."""

    def __init__(self, a=1.0, b=0.0, c=0.0, d=1.0, e=0.0, f=0.0) -> None:
        self.a, self.b, self.c, self.d, self.e, self.f = a, b, c, d, e, f

    def then(self, second: _Matrix) -> _Matrix:
        """``second @ self``: this matrix first, as ``compose(self, second)``."""
        return _Matrix(second.a * self.a + second.b * self.c, second.a * self.b + second.b * self.d,
                       second.c * self.a + second.d * self.c, second.c * self.b + second.d * self.d,
                       second.a * self.e + second.b * self.f + second.e,
                       second.c * self.e + second.d * self.f + second.f)


_IDENTITY = _Matrix()


def _lens_matrix(focal_length, decenter) -> _Matrix:
    """misaligned(thin_lens(f), decenter): C = −1/f, F = −C d."""
    c = -1.0 / focal_length
    return _Matrix(c=c, f=-c * decenter)


def _lens_axis_focal_lengths(focal_length, tilt_x, tilt_y, index):
    """Vectorised ``astigmatism.lens_axis_focal_lengths`` (Coddington equations)."""
    focal_length, tilt_x, tilt_y = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in
                                                         (focal_length, tilt_x, tilt_y)))
    total = np.hypot(tilt_x, tilt_y)
    tilted = total != 0.0
    safe = np.where(tilted, total, 1.0)
    cos_tilt = np.cos(safe)
    sine_inside = np.sin(safe) / index
    power_ratio = (index * np.sqrt(1.0 - sine_inside * sine_inside) - cos_tilt) / (index - 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        sagittal = focal_length / power_ratio
        tangential = sagittal * cos_tilt * cos_tilt
        power_t, power_s = 1.0 / tangential, 1.0 / sagittal
        weight_x = (tilt_y / safe) ** 2
        power_x = power_t * weight_x + power_s * (1.0 - weight_x)
        power_y = power_t * (1.0 - weight_x) + power_s * weight_x
        f_x = np.where(power_x == 0.0, np.inf, 1.0 / power_x)
        f_y = np.where(power_y == 0.0, np.inf, 1.0 / power_y)
    infinite = np.isinf(focal_length)
    f_x = np.where(tilted & ~infinite, f_x, focal_length)
    f_y = np.where(tilted & ~infinite, f_y, focal_length)
    return f_x, f_y


def _round_disc(radius, w, offset):
    return special.chndtr((2.0 * radius / w) ** 2, 2.0, (2.0 * offset / w) ** 2)


#: Gauss-Legendre nodes for the elliptical-beam clipping integral. The integrand (an error-
#: function chord share times a Gaussian, in φ with x = a sin φ) is analytic on the interval,
#: so the rule converges exponentially; at this order it agrees with the adaptive quadrature
#: of ``clipping.circular_transmission`` to about 1e-14 (tested).
_LEGENDRE_ORDER = 160
_LEGENDRE = special.roots_legendre(_LEGENDRE_ORDER)


def _elliptical_disc(radius, w_x, w_y, offset_x, offset_y):
    """Share of an elliptical Gaussian inside a disc: ``clipping._elliptical_beam_disc`` for
    arrays, the same 1-D integral over φ with a fixed Gauss-Legendre rule instead of quad."""
    sigma_x, sigma_y = w_x / 2.0, w_y / 2.0
    low = np.maximum(-radius, offset_x - _NEGLIGIBLE_SIGMAS * sigma_x)
    high = np.minimum(radius, offset_x + _NEGLIGIBLE_SIGMAS * sigma_x)
    empty = low >= high
    phi_low = np.arcsin(np.clip(low / radius, -1.0, 1.0))
    phi_high = np.arcsin(np.clip(high / radius, -1.0, 1.0))
    nodes, weights = _LEGENDRE
    half_span = (phi_high - phi_low)[:, np.newaxis] / 2.0
    phi = (phi_high + phi_low)[:, np.newaxis] / 2.0 + half_span * nodes
    r = radius[:, np.newaxis]
    x = r * np.sin(phi)
    half_chord = r * np.cos(phi)
    oy, sy = offset_y[:, np.newaxis], sigma_y[:, np.newaxis]
    share_y = special.ndtr((half_chord - oy) / sy) - special.ndtr((-half_chord - oy) / sy)
    density_x = np.exp(-0.5 * ((x - offset_x[:, np.newaxis]) / sigma_x[:, np.newaxis]) ** 2) / sigma_x[:, np.newaxis]
    value = (half_span * (density_x * share_y * half_chord / math.sqrt(2.0 * math.pi)) * weights).sum(axis=1)
    return np.where(empty, 0.0, np.clip(value, 0.0, 1.0))


def _circular(radius, w_x, w_y, offset_x, offset_y, count: int):
    """Vectorised ``clipping.circular_transmission`` (round law, fast exits, elliptical integral)."""
    radius, w_x, w_y, offset_x, offset_y = (np.broadcast_to(np.asarray(v, dtype=float), (count,))
                                           for v in (radius, w_x, w_y, offset_x, offset_y))
    offset = np.hypot(offset_x, offset_y)
    result = np.ones(count)
    with np.errstate(all="ignore"):
        clear = (radius - offset > _NEGLIGIBLE_SIGMAS * np.maximum(w_x, w_y) / 2) | np.isinf(radius)
        round_beam = (w_x == w_y) & ~clear
        result[round_beam] = _round_disc(radius[round_beam], w_x[round_beam], offset[round_beam])
        elliptical = ~clear & ~round_beam
        if elliptical.any():
            index = np.flatnonzero(elliptical)
            wide = np.maximum(w_x[index], w_y[index])
            nearly = 1.0 - _round_disc(radius[index], wide, offset[index]) < _NEARLY_UNCLIPPED
            near = index[nearly]
            result[near] = _round_disc(radius[near], np.sqrt(w_x[near] * w_y[near]), offset[near])
            far = index[~nearly]
            if far.size:
                result[far] = _elliptical_disc(radius[far], w_x[far], w_y[far], offset_x[far], offset_y[far])
    result[radius <= 0.0] = 0.0
    return result


def _slit(half_width, w, offset):
    root_two_over_w = math.sqrt(2.0) / w
    share = 0.5 * (special.erf(root_two_over_w * (half_width - offset))
                   + special.erf(root_two_over_w * (half_width + offset)))
    return np.where(np.isinf(half_width), 1.0, share)


def _rectangular(half_x, half_y, w_x, w_y, offset_x, offset_y):
    share = _slit(half_x, w_x, offset_x) * _slit(half_y, w_y, offset_y)
    return np.where((np.asarray(half_x) <= 0.0) | (np.asarray(half_y) <= 0.0), 0.0, share)


def _fold_axes(element) -> tuple[float, float]:
    incidence = element.value("incidence", 0.0)
    if element.value("incidence_plane", "xz") == "yz":
        return 1.0, math.cos(incidence)
    return math.cos(incidence), 1.0


def _clear_aperture(element, excursions, w, position, count, foreshortening=(1.0, 1.0)):
    diameter = element.value("clear_aperture")
    if diameter is None:
        return np.ones(count)
    x, y = _pose(element, excursions, "x"), _pose(element, excursions, "y")
    return _circular(diameter / 2, w[0] / foreshortening[0], w[1] / foreshortening[1],
                     (position[0] - x) / foreshortening[0], (position[1] - y) / foreshortening[1], count)


def _plate_matrices(thickness, index, tilt_x, tilt_y):
    """Vectorised ``element_actions._plate_matrices`` (tangential plate per axis, occupied path removed)."""
    matrices = []
    for tilt in (tilt_y, -tilt_x):
        tilt = np.asarray(tilt, dtype=float)
        sine = np.sin(tilt)
        cos_inside = np.sqrt(1.0 - (sine / index) ** 2)
        cos_tilt = np.cos(tilt)
        tangential_path = thickness * cos_tilt * cos_tilt / (index * cos_inside**3)
        shift = thickness * sine * (1.0 - cos_tilt / np.sqrt(index * index - sine * sine))
        inside_angle = np.arccos(cos_inside) * np.copysign(1.0, tilt)
        occupied = thickness * np.cos(tilt - inside_angle) / cos_inside
        matrices.append(_Matrix(b=tangential_path + (-occupied), e=shift))
    return matrices


def _deflection(element, excursions, wavelength):
    """Vectorised ``element_actions.hologram_deflection``: the real pitch per trial."""
    pitch_x, pitch_y = _pitch(element, excursions)
    return deflection_of(element.value("hologram") or {}, pitch_x, pitch_y, wavelength)


def _action(element, excursions: _Excursions, wavelength, w, position, count):
    """(matrix_x, matrix_y, passed, arms) of one element for K trials."""
    kind = element.type
    tilt_x, tilt_y = _pose(element, excursions, "tilt_x"), _pose(element, excursions, "tilt_y")
    x, y = _pose(element, excursions, "x"), _pose(element, excursions, "y")
    if kind == "lens":
        f_x, f_y = _lens_axis_focal_lengths(_value(element, excursions, "focal_length"), tilt_x, tilt_y,
                                            element.value("index", 1.5))
        passed = _clear_aperture(element, excursions, w, position, count)
        return _lens_matrix(f_x, x), _lens_matrix(f_y, y), passed, {}
    if kind == "mirror":
        radius = _value(element, excursions, "radius", math.inf)
        incidence = element.value("incidence", 0.0)
        radius = np.asarray(radius, dtype=float)
        tangential = np.where(np.isinf(radius), np.inf, radius / 2.0 * math.cos(incidence))
        sagittal = np.where(np.isinf(radius), np.inf, radius / 2.0 / math.cos(incidence))
        f_x, f_y = (sagittal, tangential) if element.value("incidence_plane", "xz") == "yz" else (tangential, sagittal)
        matrix_x = _lens_matrix(f_x, x).then(_Matrix(f=2.0 * tilt_y))
        matrix_y = _lens_matrix(f_y, y).then(_Matrix(f=2.0 * -tilt_x))
        return matrix_x, matrix_y, _clear_aperture(element, excursions, w, position, count, _fold_axes(element)), {}
    if kind == "plate":
        matrix_x, matrix_y = _plate_matrices(_value(element, excursions, "thickness"), element.value("index", 1.5),
                                             tilt_x, tilt_y)
        return matrix_x, matrix_y, _clear_aperture(element, excursions, w, position, count), {}
    if kind == "aperture":
        center_x, center_y = element.value("center", (0.0, 0.0))
        offset_x, offset_y = position[0] - (center_x + x), position[1] - (center_y + y)
        if element.value("size") is not None:
            width, height = element.value("size")
            passed = _rectangular(width / 2, height / 2, w[0], w[1], offset_x, offset_y)
        else:
            passed = _circular(_value(element, excursions, "diameter") / 2, w[0], w[1], offset_x, offset_y, count)
        return _IDENTITY, _IDENTITY, passed, {}
    if kind == "modulator":
        slope_x, slope_y, power = _deflection(element, excursions, wavelength)
        focal_length = 1.0 / power if power else math.inf
        pitch_x, pitch_y = _pitch(element, excursions)
        columns, rows = element.value("pixels")
        cos_fold = math.cos(element.value("incidence", 0.0))
        passed = _rectangular(columns * pitch_x * cos_fold / 2, rows * pitch_y / 2, w[0], w[1],
                              position[0] - x, position[1] - y)
        matrix_x = _lens_matrix(focal_length, x).then(_Matrix(f=2.0 * tilt_y)).then(_Matrix(f=slope_x))
        matrix_y = _lens_matrix(focal_length, y).then(_Matrix(f=2.0 * -tilt_x)).then(_Matrix(f=slope_y))
        return matrix_x, matrix_y, passed, {}
    if kind == "splitter":
        thickness = _value(element, excursions, "thickness")
        incidence = element.value("incidence", 0.0)
        fold_in_yz = element.value("incidence_plane", "xz") == "yz"
        if thickness:
            matrix_x, matrix_y = _plate_matrices(thickness, element.value("index", 1.5),
                                                 tilt_x - (incidence if fold_in_yz else 0.0),
                                                 tilt_y + (0.0 if fold_in_yz else incidence))
        else:
            matrix_x = matrix_y = _IDENTITY
        ratio = element.value("ratio", 0.5)
        clear = _clear_aperture(element, excursions, w, position, count, _fold_axes(element))
        turn_x, turn_y = _Matrix(f=2.0 * tilt_y), _Matrix(f=2.0 * -tilt_x)
        arms = {arm: (turn_x, turn_y, clear * ratio) for arm in element.value("arms", ())}
        return matrix_x, matrix_y, clear * (1.0 - ratio), arms
    return _IDENTITY, _IDENTITY, np.ones(count), {}


def _through(state, matrix: _Matrix):
    q, position, slope = state
    new_q = (matrix.a * q + matrix.b) / (matrix.c * q + matrix.d)
    new_position = matrix.a * position + matrix.b * slope + matrix.e + 0.0
    new_slope = matrix.c * position + matrix.d * slope + matrix.f + 0.0
    return new_q, new_position, new_slope


def _radius(q, wavelength, m2):
    inverse = 1.0 / q
    return np.sqrt(-m2 * wavelength / (math.pi * inverse.imag))


def trace_batch(bench: Bench, perturbations: Sequence[Mapping[str, float]]) -> BatchTrace:
    """Trace K realizations of ``bench`` at once.

    Parameters
    ----------
    bench : Bench
        The nominal bench (``batch_supported(bench)`` must be True).
    perturbations : sequence of mapping
        One mapping of excursions (SI) by dof name per trial.

    Returns
    -------
    BatchTrace
        Equal to ``trace_realization`` of each trial's realization to 1e-12 relative.

    Raises
    ------
    ValueError
        For an element type without a vectorised model, or a dof name with no element.
        Trials the scalar trace would refuse are marked in ``valid`` instead.
    """
    excursions = _Excursions(perturbations)
    count = excursions.count
    for name in excursions.arrays:
        owner = name.rpartition(".")[0]
        if owner != SOURCE and owner not in bench.graph:
            raise ValueError(f"'{name}': no element called '{owner}'")
    source = bench.layout.source

    def source_value(name, axis=None):
        value = getattr(source, name) if axis is None else getattr(source, name)[axis]
        extra = excursions.of(SOURCE, name)
        return value if extra is None else value + extra

    wavelength = source_value("wavelength")
    m2 = (source_value("m2", 0), source_value("m2", 1))
    valid = np.ones(count, dtype=bool)
    for value in (wavelength, *m2, source_value("waist", 0), source_value("waist", 1)):
        valid &= np.broadcast_to(np.asarray(value) > 0, (count,))
    start = []
    for axis, (position, slope) in enumerate(((source_value("x"), source_value("tilt_y") + 0.0),
                                              (source_value("y"), -source_value("tilt_x") + 0.0))):
        waist = source_value("waist", axis)
        q = -source_value("waist_z", axis) + 1j * (math.pi * waist * waist / (m2[axis] * wavelength))
        start.append(tuple(np.broadcast_to(np.asarray(v), (count,)) for v in (q, position, slope)))
    names = [SOURCE]
    w_rows = [[_radius(start[a][0], wavelength, m2[a]) for a in (0, 1)]]
    offset_rows = [[start[0][1], start[1][1]]]
    angle_rows = [[start[0][2], start[1][2]]]
    transmission_rows = [np.ones(count)]
    outputs = {(SOURCE, MAIN_ARM): (0.0, start, np.ones(count))}
    for name in bench.planes():
        element = bench.element(name)
        if element.type not in SUPPORTED_TYPES:
            raise ValueError(f"element type '{element.type}' has no vectorised paraxial model")
        predecessor = next(iter(bench.graph.predecessors(name)))
        z_before, states, transmission = outputs[(predecessor, element.arm)]
        z = _pose(element, excursions, "z")
        gap = _Matrix(b=z - z_before)
        arriving = [_through(states[axis], gap) for axis in (0, 1)]
        w_in = [_radius(arriving[a][0], wavelength, m2[a]) for a in (0, 1)]
        position = (arriving[0][1], arriving[1][1])
        matrix_x, matrix_y, passed, arms = _action(element, excursions, wavelength, w_in, position, count)
        for refused in ("focal_length", "radius"):
            if element.type in ("lens", "mirror") and element.value(refused) is not None:
                valid &= np.broadcast_to(np.asarray(_value(element, excursions, refused)) != 0, (count,))
        leaving = [_through(arriving[0], matrix_x), _through(arriving[1], matrix_y)]
        after = transmission * passed
        names.append(name)
        w_rows.append([_radius(leaving[a][0], wavelength, m2[a]) for a in (0, 1)])
        offset_rows.append([leaving[0][1], leaving[1][1]])
        angle_rows.append([leaving[0][2], leaving[1][2]])
        transmission_rows.append(np.broadcast_to(after, (count,)))
        outputs[(name, element.arm)] = (z, leaving, after)
        for arm, (turn_x, turn_y, share) in arms.items():
            branch = [_through(arriving[0], turn_x), _through(arriving[1], turn_y)]
            outputs[(name, arm)] = (z, branch, transmission * share)

    def stack(rows):
        return np.stack([np.stack([np.broadcast_to(v, (count,)) for v in row], axis=-1) for row in rows], axis=1)

    w, offset, angle = stack(w_rows), stack(offset_rows), stack(angle_rows)
    transmission = np.stack(transmission_rows, axis=1)
    for array in (w, offset, angle):
        valid &= np.isfinite(array).all(axis=(1, 2))
    valid &= np.isfinite(transmission).all(axis=1)
    return BatchTrace(tuple(names), w, offset, angle, transmission, valid)
