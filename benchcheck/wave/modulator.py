"""The phase-only modulator as a device: what each pixel really shows and does to the light.

The hologram is computed for the nominal device (:func:`holograms.compose_hologram`); this
module shows it on the real one: quantised to the device's phase levels, smoothed by
fringing fields between pixels, and scaled by the phase stroke, which is set for the design
wavelength. The pixel aperture (fill factor, dead space) is applied by the wave stage's pixel
cells; here are the per-pixel modulation and the pixel-centre positions at the real pitch.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.ndimage import gaussian_filter

from benchcheck.errors import LayoutError

__all__ = [
    "ModulatorDevice",
    "quantise_phase",
    "displayed_phase",
    "displayed_modulation",
    "drive_levels",
    "level_modulation",
    "pixel_centers",
]

TWO_PI = 2.0 * np.pi


@dataclass(frozen=True)
class ModulatorDevice:
    """A phase-only spatial light modulator.

    Attributes
    ----------
    pixel_pitch : tuple of float
        (px, py) pixel pitch (m); in a perturbed realization this is the real pitch.
    pixels : tuple of int
        (nx, ny) pixel count.
    fill_factor : float
        Fraction (0, 1] of the pitch, per axis, that modulates (used by the pixel cells).
    phase_levels : int or None
        Number of drive levels over 2π; None for continuous.
    design_wavelength : float
        Wavelength (m) at which the full drive range is exactly 2π.
    crosstalk : float
        Fringing-field kernel width: the standard deviation of a Gaussian smoothing of the
        drive phase, as a fraction of a pixel pitch (0 = none).
    dead_space : str
        "flat" (the gaps reflect with zero phase) or "opaque" (the gaps absorb).
    """

    pixel_pitch: tuple[float, float]
    pixels: tuple[int, int]
    fill_factor: float = 1.0
    phase_levels: int | None = None
    design_wavelength: float = 1.064e-6
    crosstalk: float = 0.0
    dead_space: str = "flat"

    def __post_init__(self) -> None:
        px, py = (float(p) for p in self.pixel_pitch)
        nx, ny = (int(n) for n in self.pixels)
        if not (px > 0 and py > 0):
            raise LayoutError(f"pixel pitch must be positive, got {self.pixel_pitch}", field="pixel_pitch")
        if nx < 1 or ny < 1:
            raise LayoutError(f"pixel count must be positive, got {self.pixels}", field="pixels")
        if not 0.0 < self.fill_factor <= 1.0:
            raise LayoutError(f"fill factor must be in (0, 1], got {self.fill_factor}", field="fill_factor")
        if self.phase_levels is not None and (int(self.phase_levels) != self.phase_levels or self.phase_levels < 2):
            raise LayoutError(f"phase_levels must be an integer >= 2, got {self.phase_levels}", field="phase_levels")
        if not self.design_wavelength > 0:
            raise LayoutError(f"design wavelength must be positive, got {self.design_wavelength}",
                              field="design_wavelength")
        if not self.crosstalk >= 0:
            raise LayoutError(f"crosstalk must be >= 0, got {self.crosstalk}", field="crosstalk")
        if self.dead_space not in ("flat", "opaque"):
            raise LayoutError(f"dead_space must be 'flat' or 'opaque', got {self.dead_space!r}", field="dead_space")
        object.__setattr__(self, "pixel_pitch", (px, py))
        object.__setattr__(self, "pixels", (nx, ny))

    @property
    def shape(self) -> tuple[int, int]:
        """(ny, nx) of a phase map on this panel."""
        return (self.pixels[1], self.pixels[0])


def quantise_phase(phase: np.ndarray, levels: int | None) -> np.ndarray:
    """Phase rounded to the nearest of the levels 2πk/levels, k = 0..levels−1 (wrapped first).

    Parameters
    ----------
    phase : numpy.ndarray
        Phase (radians), any range.
    levels : int or None
        Number of levels over 2π; None returns the phase wrapped to [0, 2π).

    Notes
    -----
    Common practice for a panel driven through a look-up table with `levels` entries over 2π.
    The index is computed with integers, so the output takes exactly the values 2πk/levels.
    """
    wrapped = np.mod(np.asarray(phase, dtype=float), TWO_PI)
    if levels is None:
        return np.where(wrapped >= TWO_PI, 0.0, wrapped)
    index = np.mod(np.rint(wrapped * (levels / TWO_PI)).astype(np.int64), int(levels))
    return index * (TWO_PI / levels)


def displayed_phase(
    device: ModulatorDevice, phase: np.ndarray, wavelength: float, oversample: int = 1
) -> np.ndarray:
    """The phase (radians) the light really picks up from each pixel (or sub-pixel sample).

    Parameters
    ----------
    device : ModulatorDevice
        The real device.
    phase : numpy.ndarray
        Hologram phase (radians), shape (ny, nx), computed for the nominal device.
    wavelength : float
        Wavelength of the light (m).
    oversample : int
        Samples per pixel along each axis. Fringing is narrower than a pixel, so it only
        shows when the pixel is sampled more finely than once (one sample per pixel sees the
        pixel centre, where the smoothing of a kernel a fraction of a pixel wide is nil).

    Returns
    -------
    numpy.ndarray
        Shape (ny·oversample, nx·oversample).

    Notes
    -----
    Steps: quantise to `phase_levels`; repeat each pixel `oversample` times; smooth the drive
    phase with a Gaussian of standard deviation `crosstalk` pixels (fringing fields between
    pixels, Persson et al., Opt. Express 20, 22334 (2012); Moser et al., Opt. Express 27,
    25046 (2019); the Gaussian-on-phase kernel is from memory, not confirmed from those
    papers); scale by design_wavelength / wavelength, since the drive sets a retardance fixed
    in length (dispersion of the liquid crystal ignored). Away from the design wavelength a
    2π wrap then becomes a step of 2π·λ₀/λ, which leaves light in the zero order.
    """
    values = np.asarray(phase, dtype=float)
    if values.shape != device.shape:
        raise LayoutError(f"hologram shape {values.shape} does not match the panel {device.shape} (rows, columns)")
    if int(oversample) != oversample or oversample < 1:
        raise ValueError(f"oversample must be a positive integer, got {oversample}")
    if not wavelength > 0:
        raise ValueError(f"wavelength must be positive, got {wavelength}")
    drive = quantise_phase(values, device.phase_levels)
    if oversample > 1:
        drive = np.repeat(np.repeat(drive, oversample, axis=0), oversample, axis=1)
    if device.crosstalk > 0:
        # the liquid crystal responds to the wrapped drive: a 2π → 0 flyback is smoothed too
        drive = gaussian_filter(drive, sigma=device.crosstalk * oversample, mode="nearest", truncate=5.0)
    return drive * (device.design_wavelength / wavelength)


def displayed_modulation(
    device: ModulatorDevice, phase: np.ndarray, wavelength: float, oversample: int = 1, dtype=np.complex128
) -> np.ndarray:
    """Complex per-pixel (or per-sample) modulation exp(i ψ) of the real device.

    Same arguments as :func:`displayed_phase`, and ``dtype`` (complex128 or complex64) of the
    result, which has unit modulus. The pixel aperture and dead space are applied later by the
    wave stage.
    """
    if device.phase_levels is not None and device.crosstalk == 0 and oversample == 1:
        # A quantised panel without fringing shows one of `levels` values: look them up
        # instead of taking a complex exponential per pixel (same numbers, ~10x faster).
        values = np.asarray(phase, dtype=float)
        if values.shape != device.shape:
            raise LayoutError(f"hologram shape {values.shape} does not match the panel {device.shape} (rows, columns)")
        return level_modulation(drive_levels(values, device.phase_levels), device, wavelength, dtype)
    return np.exp(1j * displayed_phase(device, phase, wavelength, oversample)).astype(dtype, copy=False)


def drive_levels(phase: np.ndarray, levels: int) -> np.ndarray:
    """The drive level k (0..levels−1) of each pixel: phase rounded to 2πk/levels, wrapped.

    The same rounding as :func:`quantise_phase`, kept as small integers (uint8 up to 256
    levels) so that a new wavelength costs one table look-up per pixel.
    """
    levels = int(levels)
    scaled = np.mod(np.asarray(phase, dtype=float), TWO_PI) * (levels / TWO_PI)
    rounded = np.rint(scaled, out=scaled)
    rounded[rounded >= levels] = 0.0  # a wrapped phase in [0, 2π) rounds to level `levels` only at the top
    return rounded.astype(np.uint8 if levels <= 256 else np.uint32)


def level_modulation(index: np.ndarray, device: ModulatorDevice, wavelength: float, dtype=np.complex128) -> np.ndarray:
    """exp(iψ) per pixel from drive levels: ψ = 2πk/levels · design_wavelength / wavelength."""
    levels = int(device.phase_levels)
    table = np.exp(1j * (np.arange(levels) * (TWO_PI / levels)) * (device.design_wavelength / wavelength))
    return np.take(table.astype(dtype), index)


def pixel_centers(device: ModulatorDevice) -> tuple[np.ndarray, np.ndarray]:
    """Pixel-centre positions (m) at the device's real pitch, relative to the panel centre.

    Returns (x, y) of shapes (1, nx) and (ny, 1); the centre pixel is index n // 2 on each
    axis (the :class:`benchcheck.wave.grid.Grid` convention). Where the incident field is
    sampled for each pixel.
    """
    nx, ny = device.pixels
    px, py = device.pixel_pitch
    x = ((np.arange(nx) - nx // 2) * px)[np.newaxis, :]
    y = ((np.arange(ny) - ny // 2) * py)[:, np.newaxis]
    return x, y
