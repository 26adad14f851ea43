"""Hologram patterns shown on a phase-only modulator, and how they are combined.

A pattern turns pixel coordinates and SI parameters into either a phase (radians) or a
complex target amplitude that an encoding (:mod:`benchcheck.wave.encodings`) writes as a
phase. :func:`compose_hologram` adds a carrier grating and a lens term and wraps the sum to
[0, 2π). Conventions follow DESIGN.md section 4: fields exp(+ikz), a thin lens multiplies by
exp(−ik r²/2f). Phase maps are per pixel, indexed [row, column] = [y, x].
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from benchcheck.errors import LayoutError
from benchcheck.wave.encodings import encode, resolve_encoding
from benchcheck.wave.flat_top_design import flat_top_beta, flat_top_phase
from benchcheck.wave.modes import mode_target_amplitude

__all__ = [
    "PixelCoordinates",
    "HologramOutput",
    "HologramPattern",
    "pixel_coordinates",
    "grating_phase",
    "lens_phase",
    "axicon_phase",
    "vortex_phase",
    "flat_top_beta",
    "flat_top_phase",
    "validate_phase_map",
    "builtin_patterns",
    "compose_hologram",
]

TWO_PI = 2.0 * np.pi


@dataclass(frozen=True)
class PixelCoordinates:
    """Where each modulator pixel is, for computing a hologram.

    Attributes
    ----------
    ix : numpy.ndarray
        Column indices, shape (1, nx), int, counted from the centre column nx // 2.
    iy : numpy.ndarray
        Row indices, shape (ny, 1), int, counted from the centre row ny // 2.
    x, y : numpy.ndarray
        Pixel-centre positions (m) at the nominal pitch from the pattern centre, (1, nx), (ny, 1).
    pitch : tuple of float
        Nominal pixel pitch (px, py) in metres.
    """

    ix: np.ndarray
    iy: np.ndarray
    x: np.ndarray
    y: np.ndarray
    pitch: tuple[float, float]

    @property
    def shape(self) -> tuple[int, int]:
        """(ny, nx) of a phase map on these pixels."""
        return (self.iy.shape[0], self.ix.shape[1])


def pixel_coordinates(
    pixels: tuple[int, int], pitch: tuple[float, float], shift: tuple[float, float] = (0.0, 0.0)
) -> PixelCoordinates:
    """Pixel indices and positions of a panel.

    Parameters
    ----------
    pixels : tuple of int
        (nx, ny) pixel count.
    pitch : tuple of float
        Nominal (px, py) pixel pitch (m).
    shift : tuple of float
        (sx, sy) position of the pattern centre on the panel (m): the hologram registration
        `shift_x`, `shift_y`. Positions are x = ix·px − sx.
    """
    nx, ny = (int(n) for n in pixels)
    px, py = (float(p) for p in pitch)
    if nx < 1 or ny < 1 or not (px > 0 and py > 0):
        raise LayoutError(f"modulator needs positive pixels and pitch, got {pixels} and {pitch}")
    ix = (np.arange(nx) - nx // 2)[np.newaxis, :]
    iy = (np.arange(ny) - ny // 2)[:, np.newaxis]
    return PixelCoordinates(ix, iy, ix * px - float(shift[0]), iy * py - float(shift[1]), (px, py))


@dataclass(frozen=True)
class HologramOutput:
    """What a pattern builds: a phase (radians) or a complex target amplitude (|a| <= 1)."""

    phase: np.ndarray | None = None
    amplitude: np.ndarray | None = None

    def __post_init__(self) -> None:
        if (self.phase is None) == (self.amplitude is None):
            raise ValueError("a hologram output is either a phase or an amplitude, not both or neither")


@dataclass(frozen=True)
class HologramPattern:
    """A named hologram pattern.

    Attributes
    ----------
    name : str
        Name used in a layout's `hologram.pattern`.
    fields : Mapping[str, str]
        Parameter name -> value kind ("length", "angle", "ratio", "integer", "string", "path").
    required : tuple of str
        Parameters that must be given.
    build : callable
        build(coords, params, design_wavelength) -> HologramOutput, params in SI.
    source : str
        Where the formula comes from.
    defaults : Mapping
        Values of optional parameters.
    """

    name: str
    fields: Mapping[str, str]
    required: tuple[str, ...]
    build: Callable[[PixelCoordinates, Mapping[str, Any], float], HologramOutput]
    source: str = ""
    defaults: Mapping[str, Any] = field(default_factory=dict)


def grating_phase(coords: PixelCoordinates, period_px: float, angle: float = 0.0) -> np.ndarray:
    """Blazed grating phase in [0, 2π): 2π (ix cos a + iy sin a) / N, wrapped.

    Parameters
    ----------
    coords : PixelCoordinates
        The panel's pixels.
    period_px : float
        Period N in pixels (in pixel-index space; physical when the pitch is square).
    angle : float
        Direction of the grating vector from the x axis (rad).

    Notes
    -----
    When N is a whole number and the angle a multiple of 90°, pixels are indexed with
    integers (k mod N), so the grating shows exactly the N steps 2πk/N on every period
    (floating-point x % period drifts: REFERENCES.md, traps). A shift of the pattern only
    adds a constant piston to a grating, so gratings are indexed from the panel.
    """
    if not np.isfinite(period_px) or period_px < 1.0:
        raise LayoutError(f"grating period must be at least 1 pixel, got {period_px}", field="period_px")
    quarter_turns = angle / (np.pi / 2.0)
    if float(period_px).is_integer() and abs(quarter_turns - round(quarter_turns)) < 1e-12:
        n = int(period_px)
        step_x, step_y = [(1, 0), (0, 1), (-1, 0), (0, -1)][int(round(quarter_turns)) % 4]
        # constant along one axis: compute the one varying row or column, then broadcast
        index = step_x * coords.ix if step_y == 0 else step_y * coords.iy
        return np.broadcast_to((TWO_PI / n) * np.mod(index, n), coords.shape)
    cycles = (coords.ix * np.cos(angle) + coords.iy * np.sin(angle)) / period_px
    return TWO_PI * (cycles - np.floor(cycles))


def lens_phase(coords: PixelCoordinates, focal_length: float, wavelength: float) -> np.ndarray:
    """Fresnel-lens phase −π r²/(λ f) (not wrapped): a thin lens exp(−ik r²/2f), DESIGN.md §4.

    focal_length and wavelength in metres; positive f converges.
    """
    if not focal_length or not np.isfinite(focal_length):
        raise LayoutError(f"lens focal length must be finite and non-zero, got {focal_length}", field="lens")
    return -np.pi * (coords.x**2 + coords.y**2) / (wavelength * focal_length)


def axicon_phase(coords: PixelCoordinates, cone_angle: float, wavelength: float) -> np.ndarray:
    """Axicon phase −k r sin(cone_angle) (not wrapped); cone_angle (rad) is the ray deflection.

    McLeod, JOSA 44, 592 (1954) for the axicon; k = 2π/λ, λ in metres.
    """
    return -(TWO_PI / wavelength) * np.hypot(coords.x, coords.y) * np.sin(cone_angle)


def vortex_phase(coords: PixelCoordinates, charge: int) -> np.ndarray:
    """Spiral phase l·φ (not wrapped), φ = atan2(y, x) about the pattern centre."""
    if int(charge) != charge:
        raise LayoutError(f"vortex charge must be an integer, got {charge}", field="charge")
    return int(charge) * np.arctan2(coords.y, coords.x)


def validate_phase_map(array: Any, pixels: tuple[int, int]) -> np.ndarray:
    """Check a phase map loaded from a file: shape (ny, nx), real numbers, all finite.

    Parameters
    ----------
    array : array-like
        The loaded map, radians.
    pixels : tuple of int
        (nx, ny) of the modulator.

    Returns
    -------
    numpy.ndarray
        The map as float64.
    """
    values = np.asarray(array)
    nx, ny = pixels
    if values.shape != (ny, nx):
        raise LayoutError(
            f"phase map has shape {values.shape}, the modulator needs (rows, columns) = ({ny}, {nx})",
            field="path",
        )
    if not (np.issubdtype(values.dtype, np.integer) or np.issubdtype(values.dtype, np.floating)):
        raise LayoutError(f"phase map must hold real numbers (radians), got dtype {values.dtype}", field="path")
    values = values.astype(np.float64)
    if not np.all(np.isfinite(values)):
        raise LayoutError(f"phase map has {int(np.sum(~np.isfinite(values)))} non-finite values", field="path")
    return values


def _integer(params: Mapping[str, Any], name: str, default: int | None = None) -> int:
    value = params.get(name, default)
    try:
        if float(value).is_integer():
            return int(float(value))
    except (TypeError, ValueError):
        pass
    raise LayoutError(f"hologram parameter '{name}' must be an integer, got {value!r}", field=name)


def builtin_patterns() -> dict[str, HologramPattern]:
    """The first-party patterns, as a plain dict that plugins add to (duplicates: caller's error)."""

    def none(coords, params, wavelength):
        return HologramOutput(phase=np.zeros(coords.shape))

    def grating(coords, params, wavelength):
        return HologramOutput(phase=grating_phase(coords, float(params["period_px"]), float(params.get("angle", 0.0))))

    def vortex(coords, params, wavelength):
        return HologramOutput(phase=vortex_phase(coords, _integer(params, "charge")) + np.zeros(coords.shape))

    def lg(coords, params, wavelength):
        p, l = _integer(params, "p", 0), _integer(params, "l")
        return HologramOutput(amplitude=mode_target_amplitude("lg", coords.x, coords.y, (p, l), float(params["waist"])))

    def hg(coords, params, wavelength):
        m, n = _integer(params, "m", 0), _integer(params, "n", 0)
        return HologramOutput(amplitude=mode_target_amplitude("hg", coords.x, coords.y, (m, n), float(params["waist"])))

    def flat_top(coords, params, wavelength):
        phase = flat_top_phase(
            coords, float(params["size"]), str(params.get("shape", "round")), float(params["waist"]),
            float(params["focal_length"]), wavelength,
        )
        return HologramOutput(phase=phase + np.zeros(coords.shape))

    def axicon(coords, params, wavelength):
        return HologramOutput(phase=axicon_phase(coords, float(params["cone_angle"]), wavelength))

    def lens(coords, params, wavelength):
        return HologramOutput(phase=lens_phase(coords, float(params["focal_length"]), wavelength))

    def from_file(coords, params, wavelength):
        if "phase_map" not in params:
            raise LayoutError("pattern 'file' needs the caller to load 'path' into 'phase_map'", field="path")
        nx, ny = coords.shape[1], coords.shape[0]
        return HologramOutput(phase=validate_phase_map(params["phase_map"], (nx, ny)))

    modes_source = "Siegman, Lasers (1986), ch. 16"
    patterns = [
        HologramPattern("none", {}, (), none, "flat panel"),
        HologramPattern("grating", {"period_px": "ratio", "angle": "angle"}, ("period_px",), grating,
                        "blazed grating, Swanson, MIT Lincoln Laboratory TR-854 (1989)", {"angle": 0.0}),
        HologramPattern("vortex", {"charge": "integer"}, ("charge",), vortex, "spiral phase l·φ"),
        HologramPattern("lg", {"p": "integer", "l": "integer", "waist": "length"}, ("l", "waist"), lg,
                        modes_source, {"p": 0}),
        HologramPattern("hg", {"m": "integer", "n": "integer", "waist": "length"}, ("waist",), hg,
                        modes_source, {"m": 0, "n": 0}),
        HologramPattern("flat_top", {"size": "length", "shape": "string", "waist": "length", "focal_length": "length"},
                        ("size", "waist", "focal_length"), flat_top,
                        "Romero and Dickey, JOSA A 13, 751 (1996)", {"shape": "round"}),
        HologramPattern("axicon", {"cone_angle": "angle"}, ("cone_angle",), axicon, "McLeod, JOSA 44, 592 (1954)"),
        HologramPattern("lens", {"focal_length": "length"}, ("focal_length",), lens, "thin lens, DESIGN.md §4"),
        HologramPattern("file", {"path": "path"}, ("path",), from_file, "phase map from a .npy file"),
    ]
    return {pattern.name: pattern for pattern in patterns}


def compose_hologram(
    pattern_name: str,
    params: Mapping[str, Any],
    coords: PixelCoordinates,
    design_wavelength: float,
    encoding: str = "phase",
    carrier: Mapping[str, float] | None = None,
    lens: float | None = None,
    patterns: Mapping[str, HologramPattern] | None = None,
) -> np.ndarray:
    """The phase a modulator is asked to show, radians in [0, 2π), shape (ny, nx).

    Parameters
    ----------
    pattern_name : str
        A key of `patterns` (default :func:`builtin_patterns`).
    params : Mapping
        The pattern's parameters in SI (lengths m, angles rad).
    coords : PixelCoordinates
        Pixels at the nominal pitch, with the registration shift.
    design_wavelength : float
        Wavelength the hologram is computed for (m).
    encoding : str
        How a complex-amplitude pattern becomes a phase (see :func:`encodings.encode`);
        ignored for phase patterns.
    carrier : Mapping, optional
        {"period_px": N, "angle": rad}: a blazed carrier grating. For encoded amplitudes it
        separates the first order (the wanted beam) from the unmodulated light.
    lens : float, optional
        Focal length (m) of a Fresnel-lens term. For encoded amplitudes the carrier and lens
        enter the encoded phase θ, so they act on the first order only.
    """
    patterns = builtin_patterns() if patterns is None else patterns
    if pattern_name not in patterns:
        raise LayoutError(
            f"unknown hologram pattern {pattern_name!r}", field="pattern",
            hint="one of " + ", ".join(sorted(patterns)),
        )
    pattern = patterns[pattern_name]
    missing = [name for name in pattern.required if name not in params]
    if missing:
        raise LayoutError(f"pattern '{pattern_name}' needs {', '.join(missing)}", field=missing[0])
    output = pattern.build(coords, {**pattern.defaults, **params}, design_wavelength)
    extra = np.zeros(coords.shape)
    if carrier is not None:
        if "period_px" not in carrier:
            raise LayoutError("carrier needs period_px", field="carrier")
        extra = extra + grating_phase(coords, float(carrier["period_px"]), float(carrier.get("angle", 0.0)))
    if lens is not None:
        extra = extra + lens_phase(coords, float(lens), design_wavelength)
    if output.phase is not None:
        total = np.add(np.asarray(output.phase, dtype=float), extra, out=extra)
    else:
        try:
            method = resolve_encoding(encoding)
        except ValueError as error:
            raise LayoutError(str(error), field="encoding") from None
        total = np.array(encode(output.amplitude, extra, method), dtype=float)
    wrapped = np.mod(total, TWO_PI, out=total)  # in place: one phase-sized array in all
    # np.mod of a tiny negative number rounds up to exactly 2π; keep the half-open range
    wrapped[wrapped >= TWO_PI] = 0.0
    return wrapped
