"""The field the modulator sends on: the incident beam times the displayed hologram.

The simulation window is a square of whole pixels on the panel, centred on the pixel
nearest the arriving beam, one sample per pixel. The hologram is computed for the nominal
device (nominal pitch, nominal registration) and shown on the real one (real pitch,
quantised, phase stroke set by the design wavelength); the pixel aperture and the dead space
are applied analytically by the wave stage (``PixelCells``).

A registration error (the ``shift_x``, ``shift_y`` dofs: the hologram sits off the place it
was computed for, against the beam) is modelled as the modulated field translated by the
error: pattern and pixels move together, so the pattern is not sampled again at sub-pixel
offsets. For patterns smooth on the pixel scale the two differ by the quantisation error
(tests/wave/test_registration.py); the translation keeps the study smooth in the dof, which
re-optimising a shift needs, and the hologram is computed once per study
(``benchcheck.evaluate.panel_hologram``).
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from benchcheck.errors import LayoutError
from benchcheck.layout.model import Element, Layout
from benchcheck.limits import Limits, current_limits
from benchcheck.evaluate.panel_hologram import PanelHologram
from benchcheck.wave.beams import gaussian_profiles
from benchcheck.wave.field import DeferredField, Field
from benchcheck.wave.grid import Grid
from benchcheck.wave.holograms import (
    HologramOutput,
    HologramPattern,
    PixelCoordinates,
    builtin_patterns,
    compose_hologram,
    grating_phase,
    lens_phase,
    validate_phase_map,
)
from benchcheck.wave.modulator import ModulatorDevice
from benchcheck.wave.pixel_cells import PixelCells, SeparableBackground
from benchcheck.wave.sums import power_sum

__all__ = ["ModulatorWindow", "modulator_window", "make_panel_hologram", "ideal_modulation",
           "intended_charge", "load_phase_map"]

_HOLOGRAM_TERMS = ("pattern", "encoding", "carrier", "lens", "compensate_input")


@dataclass(frozen=True)
class ModulatorWindow:
    """The modulated field per pixel, its pixel model, and what the window covers."""

    field: Field
    cells: PixelCells
    incident_power: float


def _pattern_params(hologram: Mapping) -> dict:
    return {key: value for key, value in hologram.items() if key not in _HOLOGRAM_TERMS}


def load_phase_map(path_text: str, layout: Layout, element: Element, limits: Limits | None = None) -> np.ndarray:
    """Load a ``.npy`` phase map (radians) named by a layout, relative to the layout's folder.

    A path outside the layout's folder is refused unless a folder of ``limits`` (the
    ``--allow-path`` option) holds it. The file is read without pickle, and its header is
    checked before the data are read: real numbers only, and no more values than the
    modulator has pixels.

    Parameters
    ----------
    path_text : str
        The ``hologram.path`` field as written.
    layout, element : Layout, Element
        Where the path was written (for the folder and the messages).
    limits : Limits, optional
        Folders the user allowed; ``current_limits()`` when omitted.

    Raises
    ------
    LayoutError
        Naming the file, line, element and field, and why the map was refused.
    """
    limits = limits or current_limits()
    folder = Path(layout.path).resolve().parent
    path = (folder / path_text).resolve()
    where = dict(file=layout.path, line=element.line, element=element.name, element_index=element.index,
                 field="hologram.path")
    if not limits.may_read(path, folder):
        raise LayoutError(f"the phase map '{path_text}' is outside the layout's folder", **where,
                          hint=f"allow its folder with --allow-path {path.parent}")
    columns, rows = element.value("pixels")
    try:
        with path.open("rb") as stream:
            shape, dtype = _npy_header(stream)
            if dtype.hasobject or dtype.kind not in "iuf":
                raise LayoutError(f"the phase map '{path_text}' holds {dtype}, not real numbers (radians)", **where)
            if math.prod(shape) > columns * rows:
                raise LayoutError(f"the phase map '{path_text}' has shape {shape}, more values than the "
                                  f"modulator's {columns} x {rows} pixels", **where)
            stream.seek(0)
            return np.lib.format.read_array(stream, allow_pickle=False)
    except (OSError, ValueError, EOFError) as error:
        raise LayoutError(f"cannot read the phase map '{path_text}' as a .npy file ({error})", **where) from None


def _npy_header(stream) -> tuple[tuple[int, ...], np.dtype]:
    """Shape and dtype from a .npy header, without reading the data (NumPy .npy format 1.0 or 2.0)."""
    version = np.lib.format.read_magic(stream)
    if version == (1, 0):
        shape, _, dtype = np.lib.format.read_array_header_1_0(stream)
    elif version == (2, 0):
        shape, _, dtype = np.lib.format.read_array_header_2_0(stream)
    else:
        raise ValueError(f".npy format {version[0]}.{version[1]} is not read (1.0 or 2.0 only)")
    return tuple(int(n) for n in shape), np.dtype(dtype)


def _window_pixels(nominal: Element, real: Element, beam_position: tuple[float, float], size: int):
    """Panel pixel indices (from the panel centre) of the window per axis, and which are on the panel."""
    columns, rows = nominal.value("pixels")
    pitch_real = real.value("pixel_pitch")
    indices, on_panel = [], []
    for axis, count in enumerate((columns, rows)):
        offset = (beam_position[axis] - (real.x if axis == 0 else real.y)) / pitch_real[axis]
        centre = min(max(round(offset), -(count // 2)), count - 1 - count // 2)  # on the panel
        index = centre + np.arange(size) - size // 2
        indices.append(index)
        on_panel.append((index + count // 2 >= 0) & (index + count // 2 < count))
    return indices, on_panel


def _pattern_coordinates(nominal: Element, ix: np.ndarray, iy: np.ndarray) -> PixelCoordinates:
    """Window pixels where the pattern is evaluated: nominal pitch, nominal registration."""
    pitch = nominal.value("pixel_pitch")
    shift = nominal.value("shift", (0.0, 0.0))
    ix, iy = ix[np.newaxis, :], iy[:, np.newaxis]
    return PixelCoordinates(ix, iy, ix * pitch[0] - shift[0], iy * pitch[1] - shift[1], tuple(pitch))


def compensated_patterns(patterns: Mapping[str, HologramPattern], hologram: Mapping,
                         design_beam) -> Mapping[str, HologramPattern]:
    """Patterns in which an amplitude target is divided by the design incident beam.

    With ``compensate_input = true`` a mode hologram asks for target / incident (peak
    scaled to 1), so the light leaving the modulator is the target mode itself rather than
    the mode times the incident Gaussian (the usual way to make a clean mode with a
    complex-amplitude encoding; Bolduc et al., Opt. Lett. 38, 3546, 2013).
    """
    name = hologram.get("pattern")
    if not hologram.get("compensate_input") or design_beam is None or name not in patterns:
        return patterns
    original = patterns[name]

    def build(coordinates, params, wavelength):
        output = original.build(coordinates, params, wavelength)
        if output.amplitude is None:
            return output
        incident = _design_amplitude(coordinates, design_beam, wavelength)
        ratio = np.asarray(output.amplitude) / np.maximum(incident, 1e-3)
        peak = np.max(np.abs(ratio))
        return HologramOutput(amplitude=ratio / peak if peak > 0 else ratio)

    return {**patterns, name: dataclasses.replace(original, build=build)}


def _design_amplitude(coordinates: PixelCoordinates, design_beam, wavelength: float) -> np.ndarray:
    """|E| of the design beam at the pixels, peak 1 (Gaussian with the traced radii)."""
    w_x, w_y = design_beam.w
    center_x, center_y = design_beam.center
    return np.exp(-((coordinates.x - center_x) / w_x) ** 2 - ((coordinates.y - center_y) / w_y) ** 2)


def _hologram_phase(element: Element, coordinates: PixelCoordinates, design_wavelength: float,
                    patterns: Mapping[str, HologramPattern], phase_map: np.ndarray | None) -> np.ndarray:
    hologram = dict(element.value("hologram") or {"pattern": "none"})
    params = _pattern_params(hologram)
    if hologram["pattern"] == "file":
        columns, rows = element.value("pixels")
        full = validate_phase_map(phase_map, (columns, rows))
        rows_index = np.clip(coordinates.iy[:, 0] + rows // 2, 0, rows - 1)
        columns_index = np.clip(coordinates.ix[0, :] + columns // 2, 0, columns - 1)
        params["phase_map"] = full[np.ix_(rows_index, columns_index)]
    return compose_hologram(
        hologram["pattern"], params, coordinates, design_wavelength,
        encoding=hologram.get("encoding", "phase"), carrier=hologram.get("carrier"), lens=hologram.get("lens"),
        patterns=patterns,
    )


def intended_charge(element: Element) -> int | None:
    """The OAM charge a hologram intends (vortex charge, or l of an LG mode)."""
    hologram = element.value("hologram") or {}
    if hologram.get("pattern") == "vortex":
        return int(hologram.get("charge", 0))
    if hologram.get("pattern") == "lg":
        return int(hologram.get("l", 0))
    return None


def ideal_modulation(element: Element, coordinates: PixelCoordinates, design_wavelength: float,
                     patterns: Mapping[str, HologramPattern], phase_map: np.ndarray | None = None) -> np.ndarray:
    """What the hologram asks for, on an ideal device: continuous phase, no pixels, exact stroke.

    Phase patterns give exp(i(pattern + carrier + lens)); amplitude patterns (modes) give the
    target amplitude times exp(i(carrier + lens)). This applied to the nominal incident beam
    is the ideal shaped field that targets are made from.
    """
    hologram = dict(element.value("hologram") or {"pattern": "none"})
    pattern = patterns[hologram["pattern"]]
    params = {**pattern.defaults, **_pattern_params(hologram)}
    if hologram["pattern"] == "file":
        return np.exp(1j * _hologram_phase(element, coordinates, design_wavelength, patterns, phase_map))
    output = pattern.build(coordinates, params, design_wavelength)
    extra = np.zeros(coordinates.shape)
    if "carrier" in hologram:
        extra = extra + grating_phase(coordinates, hologram["carrier"]["period_px"], hologram["carrier"].get("angle", 0.0))
    if hologram.get("lens"):
        extra = extra + lens_phase(coordinates, hologram["lens"], design_wavelength)
    if output.phase is not None:
        return np.exp(1j * (np.asarray(output.phase) + extra))
    return np.asarray(output.amplitude) * np.exp(1j * extra)


def make_panel_hologram(nominal: Element, layout: Layout, patterns: Mapping[str, HologramPattern] | None = None,
                   phase_map: np.ndarray | None = None, design_beam=None) -> PanelHologram:
    """The drive phase of ``nominal``'s hologram, computed on demand over the panel (kept per study)."""
    patterns = compensated_patterns(patterns or builtin_patterns(), nominal.value("hologram") or {}, design_beam)
    design_wavelength = nominal.value("design_wavelength") or layout.wavelength

    def compute_phase(coordinates: PixelCoordinates) -> np.ndarray:
        return _hologram_phase(nominal, coordinates, design_wavelength, patterns, phase_map)

    return PanelHologram(compute_phase, tuple(nominal.value("pixels")), tuple(nominal.value("pixel_pitch")),
                         tuple(nominal.value("shift", (0.0, 0.0))))


def modulator_window(
    nominal: Element,
    real: Element,
    layout: Layout,
    arriving,
    wavelength: float,
    power: float,
    size: int,
    dtype,
    replicas: int,
    patterns: Mapping[str, HologramPattern] | None = None,
    phase_map: np.ndarray | None = None,
    ideal: bool = False,
    design_beam=None,
    hologram: PanelHologram | None = None,
) -> ModulatorWindow:
    """Sample the arriving beam on the panel's pixels and apply the displayed hologram.

    Parameters
    ----------
    nominal, real : Element
        The modulator as designed and as realised (pitch, shift, tilt, phase depth...).
    arriving : object
        The beam arriving at the modulator: ``q`` (x, y) of the coherent field, ``position``
        and ``slope`` of the chief ray (m, rad).
    power : float
        Power of the arriving beam (field units).
    size : int
        Window size in pixels (square).
    ideal : bool
        Show the ideal modulation instead of the device's (for targets).
    design_beam : object, optional
        The nominal arriving beam (``w``, ``center`` on the panel's pattern frame), for
        holograms that compensate the incident beam.
    hologram : PanelHologram, optional
        The hologram kept for the study (:func:`make_panel_hologram`); made here when omitted.
    """
    pitch = real.value("pixel_pitch")
    (ix, iy), (on_x, on_y) = _window_pixels(nominal, real, arriving.position, size)
    nominal_shift, real_shift = nominal.value("shift", (0.0, 0.0)), real.value("shift", (0.0, 0.0))
    # a registration error translates the modulated field (see the module docstring)
    center = (real.x + float(ix[size // 2]) * pitch[0] + real_shift[0] - nominal_shift[0],
              real.y + float(iy[size // 2]) * pitch[1] + real_shift[1] - nominal_shift[1])
    grid = Grid((size, size), pitch, center)
    profile_y, profile_x = gaussian_profiles(grid, wavelength, arriving.q[0], arriving.q[1], arriving.position,
                                             arriving.slope, power=power, dtype=dtype)
    profile_x[~on_x] = 0.0  # no light off the panel
    profile_y[~on_y] = 0.0
    # separable: the power is the product of the profiles' sums
    incident_power = power_sum(profile_x) * power_sum(profile_y) * grid.sample_area
    less_one = None
    if ideal:
        values = np.multiply.outer(profile_y, profile_x)
        design_wavelength = nominal.value("design_wavelength") or layout.wavelength
        patterns = compensated_patterns(patterns or builtin_patterns(), nominal.value("hologram") or {}, design_beam)
        values *= ideal_modulation(nominal, _pattern_coordinates(nominal, ix, iy), design_wavelength, patterns,
                                   phase_map).astype(dtype)
        field = Field(values, grid, wavelength, real.name)
    else:
        hologram = hologram or make_panel_hologram(nominal, layout, patterns, phase_map, design_beam)
        depth = real.value("phase_depth", 1.0)
        design_wavelength = nominal.value("design_wavelength") or layout.wavelength
        device = ModulatorDevice(
            pixel_pitch=pitch, pixels=(size, size), fill_factor=min(real.value("fill_factor", 1.0), 1.0),
            phase_levels=real.value("phase_levels"), design_wavelength=design_wavelength * depth,
            crosstalk=real.value("crosstalk", 0.0), dead_space=real.value("dead_space", "flat"),
        )
        modulation, less_one = hologram.modulation(ix, iy, device, wavelength, dtype)
        # the next stage reads the profiles and the modulation only: the window's values
        # are made if something else reads them (DeferredField)
        field = DeferredField(lambda: _modulated(profile_y, profile_x, modulation), modulation.dtype, grid,
                              wavelength, real.name)
    # The layout's fill factor is the datasheet's area share; the square aperture's width
    # share per axis is its square root.
    width_share = math.sqrt(min(real.value("fill_factor", 1.0), 1.0))
    dead_space = "flat" if ideal else real.value("dead_space", "flat")
    cells = PixelCells(pitch=pitch, fill_factor=(1.0, 1.0) if ideal else (width_share, width_share),
                       background=SeparableBackground(profile_y, profile_x), dead_space=dead_space,
                       replicas=replicas, modulation_less_one=less_one)
    return ModulatorWindow(field, cells, incident_power)


def _modulated(profile_y: np.ndarray, profile_x: np.ndarray, modulation: np.ndarray) -> np.ndarray:
    """The incident beam's profiles times the modulation, per pixel."""
    values = np.multiply.outer(profile_y, profile_x)
    values *= modulation
    return values
