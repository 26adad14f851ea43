"""A camera frame from a field: pixel-integrated irradiance, quantised to the bit depth.

Whatever shows these numbers to a person (irradiance, power) must carry the project's
laser-safety caution: laser light can blind and burn; local rules and the site's laser
safety officer decide what is safe, not this model.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from benchcheck.errors import LayoutError
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid

__all__ = ["CameraDevice", "CameraFrame", "camera_frame", "pixel_integrated_power"]

AUTO_FILL = 0.9  # "auto" exposure puts the brightest pixel at 90 % of full scale


@dataclass(frozen=True)
class CameraDevice:
    """A camera sensor at an observation plane.

    Attributes
    ----------
    pixel_pitch : tuple of float
        (px, py) pixel pitch (m); pixels are taken as 100 % fill.
    pixels : tuple of int
        (nx, ny) pixel count.
    bit_depth : int
        Bits per pixel, 1..16; full scale is 2**bit_depth − 1 counts.
    exposure : "auto" or float
        "auto" scales the brightest pixel to 90 % of full scale; a number is counts per unit
        irradiance (counts per W/m² in the field's scaling).
    center : tuple of float
        (x, y) of the sensor's centre pixel in the plane's frame (m).
    """

    pixel_pitch: tuple[float, float]
    pixels: tuple[int, int]
    bit_depth: int = 12
    exposure: str | float = "auto"
    center: tuple[float, float] = (0.0, 0.0)

    def __post_init__(self) -> None:
        if int(self.bit_depth) != self.bit_depth or not 1 <= self.bit_depth <= 16:
            raise LayoutError(f"camera bit depth must be an integer 1..16, got {self.bit_depth}", field="bit_depth")
        if self.exposure != "auto" and not (isinstance(self.exposure, (int, float)) and self.exposure > 0):
            raise LayoutError(f"exposure must be 'auto' or a positive number, got {self.exposure!r}", field="exposure")
        try:
            self.grid
        except ValueError as error:
            raise LayoutError(f"camera sensor: {error}", field="pixels") from None

    @property
    def grid(self) -> Grid:
        """The sensor's pixel grid."""
        nx, ny = self.pixels
        return Grid((int(ny), int(nx)), self.pixel_pitch, self.center)

    @property
    def full_scale(self) -> int:
        """Largest count a pixel can read."""
        return 2 ** int(self.bit_depth) - 1


@dataclass(frozen=True, eq=False)
class CameraFrame:
    """One frame.

    Attributes
    ----------
    counts : numpy.ndarray
        uint16 [ny, nx], quantised and clipped at full scale.
    irradiance : numpy.ndarray
        float64 [ny, nx]: mean irradiance over each pixel (W/m² in the field's scaling),
        i.e. the pixel-integrated power divided by the pixel area, before quantisation.
    scale : float
        Counts per unit irradiance used.
    saturated_fraction : float
        Fraction of pixels at full scale (a pixel at the top count cannot be told from a
        clipped one: common practice).
    grid : Grid
        The sensor's grid.
    """

    counts: np.ndarray
    irradiance: np.ndarray
    scale: float
    saturated_fraction: float
    grid: Grid

    @property
    def pixel_power(self) -> np.ndarray:
        """Power on each pixel (W in the field's scaling)."""
        return self.irradiance * self.grid.sample_area


def _cell_edges(centers: np.ndarray, pitch: float) -> np.ndarray:
    return np.concatenate([centers - 0.5 * pitch, centers[-1:] + 0.5 * pitch])


def _bin_axis(cumulative: np.ndarray, source_edges: np.ndarray, target_edges: np.ndarray, axis: int) -> np.ndarray:
    """Differences of a piecewise-linear cumulative sum, read at target edges along one axis.

    `cumulative` holds the running total at `source_edges` (first entry 0). Between source
    edges the total grows linearly (piecewise-constant density), so linear interpolation is
    exact; beyond the source window it is flat (no light outside the field's window).
    """
    position = np.clip(target_edges, source_edges[0], source_edges[-1])
    index = np.clip(np.searchsorted(source_edges, position, side="right") - 1, 0, source_edges.size - 2)
    weight = (position - source_edges[index]) / (source_edges[index + 1] - source_edges[index])
    lower = np.take(cumulative, index, axis=axis)
    upper = np.take(cumulative, index + 1, axis=axis)
    shape = [1, 1]
    shape[axis] = weight.size
    at_edges = lower + (upper - lower) * weight.reshape(shape)
    return np.diff(at_edges, axis=axis)


def pixel_integrated_power(field: Field, grid: Grid) -> np.ndarray:
    """Power of `field` on each pixel of `grid` (W in the field's scaling), shape grid.shape.

    The field is taken as constant over each of its sample cells (pitch-wide boxes centred on
    the samples); its intensity is integrated exactly over each target pixel with cumulative
    sums read at the pixel edges, one axis after the other.
    """
    values = field.values
    energy = (values.real.astype(np.float64) ** 2 + values.imag.astype(np.float64) ** 2) * field.grid.sample_area
    cumulative_x = np.concatenate([np.zeros((energy.shape[0], 1)), np.cumsum(energy, axis=1)], axis=1)
    per_column = _bin_axis(
        cumulative_x, _cell_edges(field.grid.x, field.grid.pitch[0]), _cell_edges(grid.x, grid.pitch[0]), axis=1
    )
    cumulative_y = np.concatenate([np.zeros((1, per_column.shape[1])), np.cumsum(per_column, axis=0)], axis=0)
    power = _bin_axis(
        cumulative_y, _cell_edges(field.grid.y, field.grid.pitch[1]), _cell_edges(grid.y, grid.pitch[1]), axis=0
    )
    # differences of running totals can dip a rounding error below zero far from the beam
    return np.maximum(power, 0.0)


def camera_frame(field: Field, device: CameraDevice) -> CameraFrame:
    """What the camera records from `field`.

    Parameters
    ----------
    field : Field
        Field at the camera plane.
    device : CameraDevice
        The camera.

    Returns
    -------
    CameraFrame
        Counts = round(irradiance × scale), clipped to [0, 2**bit_depth − 1].

    Notes
    -----
    Pixel integration (a box of one pitch, 100 % fill) is what a sensor does; its effect on
    second moments is the added variance p²/12 per axis (Sheppard's correction), which the
    D4σ of ISO 11146-1 computed from the frame includes.
    """
    grid = device.grid
    irradiance = pixel_integrated_power(field, grid) / grid.sample_area
    full_scale = device.full_scale
    if device.exposure == "auto":
        peak = float(np.max(irradiance))
        scale = AUTO_FILL * full_scale / peak if peak > 0 else 1.0
    else:
        scale = float(device.exposure)
    counts = np.clip(np.rint(irradiance * scale), 0, full_scale).astype(np.uint16)
    saturated_fraction = float(np.count_nonzero(counts == full_scale)) / counts.size
    return CameraFrame(counts, irradiance, scale, saturated_fraction, grid)
