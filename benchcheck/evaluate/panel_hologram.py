"""The hologram over a stretch of the panel, computed once and sliced for every window.

A hologram is fixed to the panel's pixels: it is computed for the nominal device (nominal
pitch, nominal registration), so a trial's real pitch, the window's place (it follows the
beam) and the registration error change where the light meets the pixels, not the phase
each pixel shows. The drive phase is therefore computed once over the window and a margin
around it, and each trial's window is a slice of it. The complex modulation made from it is
kept per wavelength and device state: the stroke scales with design wavelength / wavelength.
"""

from __future__ import annotations

from collections import OrderedDict
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from benchcheck.wave.holograms import PixelCoordinates
from benchcheck.wave.modulator import ModulatorDevice, displayed_modulation, drive_levels, level_modulation

__all__ = ["PanelHologram", "MARGIN_SHARE"]

#: Margin kept on each side of a window, as a share of the window: the beam may move this far
#: across the panel (a quarter of 1024 pixels of 8 µm is 2 mm) before the drive phase is
#: computed again around the new window. The first window gets none (a single simulation
#: needs no more); the first window it does not cover brings the margin in.
MARGIN_SHARE = 0.25

#: Modulations kept (wavelength and device states): the nominal one and the latest trial's. A
#: wavelength dof makes a new one each trial; each is two complex arrays over the region.
MODULATIONS_KEPT = 2


@dataclass(frozen=True)
class _Region:
    """Panel pixels [ix0, ix0 + nx) x [iy0, iy0 + ny), indices from the panel centre."""

    ix0: int
    iy0: int
    nx: int
    ny: int

    def holds(self, first: int, last: int, axis: int) -> bool:
        start, count = (self.ix0, self.nx) if axis == 0 else (self.iy0, self.ny)
        return start <= first and last < start + count


@dataclass
class PanelHologram:
    """The drive phase of one modulator over a region of its panel, and modulations of it.

    Attributes
    ----------
    compute_phase : callable
        Drive phase (radians, [0, 2π)) at the given pixel coordinates, for the nominal device.
    pixels : tuple of int
        (columns, rows) of the panel.
    pitch : tuple of float
        Nominal pixel pitch (m): where the pattern is evaluated.
    registration : tuple of float
        Nominal registration shift (m): pattern positions are x = ix·px − sx.
    """

    compute_phase: Callable[[PixelCoordinates], np.ndarray]
    pixels: tuple[int, int]
    pitch: tuple[float, float]
    registration: tuple[float, float] = (0.0, 0.0)
    _region: _Region | None = field(default=None, init=False, repr=False)
    _phase: np.ndarray | None = field(default=None, init=False, repr=False)
    _levels: dict = field(default_factory=dict, init=False, repr=False)
    _modulations: OrderedDict = field(default_factory=OrderedDict, init=False, repr=False)

    @property
    def signature(self) -> tuple:
        """What the drive phase depends on: the pattern function, panel, pitch and registration."""
        return (id(self.compute_phase), self.pixels, self.pitch, self.registration)

    def clear(self) -> None:
        """Forget the phase and modulations (the next window computes them again, as the first)."""
        self._region, self._phase = None, None
        self._levels.clear()
        self._modulations.clear()

    def modulation(self, ix: np.ndarray, iy: np.ndarray, device: ModulatorDevice, wavelength: float,
                   dtype) -> tuple[np.ndarray, np.ndarray]:
        """exp(iψ) the real device shows on the window's pixels, and exp(iψ) − 1 (what the
        pixel term of the wave stage multiplies), each of shape (len(iy), len(ix)).

        ``ix``, ``iy``: the window's panel pixel indices (1-D, consecutive, from the panel
        centre). Window pixels off the panel get 1 and 0 (the caller zeroes the light there).
        The arrays may be read-only views of the kept region.
        """
        on_x, on_y = self._on_panel(ix, 0), self._on_panel(iy, 1)
        if not on_x.any() or not on_y.any():
            return np.ones((iy.size, ix.size), dtype), np.zeros((iy.size, ix.size), dtype)
        first_x, last_x = int(ix[on_x][0]), int(ix[on_x][-1])
        first_y, last_y = int(iy[on_y][0]), int(iy[on_y][-1])
        region = self._region
        if region is None or not (region.holds(first_x, last_x, 0) and region.holds(first_y, last_y, 1)):
            self._compute(ix, iy)
            region = self._region
        columns = slice(int(ix[0]) - region.ix0, int(ix[-1]) + 1 - region.ix0)
        rows = slice(int(iy[0]) - region.iy0, int(iy[-1]) + 1 - region.iy0)
        inside = columns.start >= 0 and rows.start >= 0 and columns.stop <= region.nx and rows.stop <= region.ny
        windows = []
        for full, outside in zip(self._region_modulation(device, wavelength, dtype), (1.0, 0.0)):
            if inside:
                windows.append(full[rows, columns])
                continue
            window = np.full((iy.size, ix.size), outside, dtype)
            window[np.ix_(on_y, on_x)] = full[first_y - region.iy0:last_y + 1 - region.iy0,
                                              first_x - region.ix0:last_x + 1 - region.ix0]
            windows.append(window)
        return windows[0], windows[1]

    # -- inside ---------------------------------------------------------------------------------

    def _on_panel(self, indices: np.ndarray, axis: int) -> np.ndarray:
        count = self.pixels[axis]
        return (indices + count // 2 >= 0) & (indices + count // 2 < count)

    def _compute(self, ix: np.ndarray, iy: np.ndarray) -> None:
        bounds = []
        first = self._region is None
        for indices, count in ((ix, self.pixels[0]), (iy, self.pixels[1])):
            margin = 0 if first else int(MARGIN_SHARE * indices.size)
            low = max(int(indices[0]) - margin, -(count // 2))
            high = min(int(indices[-1]) + margin, count - 1 - count // 2)
            bounds.append((low, high - low + 1))
        self._region = _Region(bounds[0][0], bounds[1][0], bounds[0][1], bounds[1][1])
        region_ix = (self._region.ix0 + np.arange(self._region.nx))[np.newaxis, :]
        region_iy = (self._region.iy0 + np.arange(self._region.ny))[:, np.newaxis]
        coordinates = PixelCoordinates(region_ix, region_iy, region_ix * self.pitch[0] - self.registration[0],
                                       region_iy * self.pitch[1] - self.registration[1], tuple(self.pitch))
        self._phase = self.compute_phase(coordinates)
        self._levels.clear()
        self._modulations.clear()

    def _region_modulation(self, device: ModulatorDevice, wavelength: float, dtype) -> tuple[np.ndarray, np.ndarray]:
        key = (wavelength, device.design_wavelength, device.phase_levels, device.crosstalk, np.dtype(dtype).name)
        if key in self._modulations:
            self._modulations.move_to_end(key)
            return self._modulations[key]
        if device.phase_levels is not None and device.crosstalk == 0:
            # drive levels once per region; each wavelength is then one table look-up per pixel
            if device.phase_levels not in self._levels:
                self._levels[device.phase_levels] = drive_levels(self._phase, device.phase_levels)
            modulation = level_modulation(self._levels[device.phase_levels], device, wavelength, dtype)
            return self._keep(key, modulation)
        region_device = ModulatorDevice(
            pixel_pitch=device.pixel_pitch, pixels=(self._region.nx, self._region.ny), fill_factor=device.fill_factor,
            phase_levels=device.phase_levels, design_wavelength=device.design_wavelength,
            crosstalk=device.crosstalk, dead_space=device.dead_space,
        )
        return self._keep(key, displayed_modulation(region_device, self._phase, wavelength, dtype=dtype))

    def _keep(self, key: tuple, modulation: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        pair = (modulation, modulation - 1)
        for array in pair:
            array.flags.writeable = False  # shared by every window sliced from it
        self._modulations[key] = pair
        while len(self._modulations) > MODULATIONS_KEPT:
            self._modulations.popitem(last=False)
        return pair
