"""Spectra of fields that are piecewise constant on modulator pixels.

A phase-only modulator shows a field that is constant over each pixel's square aperture
(width γp, γ the fill factor) with dead space between apertures. Sampling it once per pixel
has no pixel envelope (REFERENCES.md, "Traps"); these helpers model the aperture exactly:

* on the Fourier branch the spectrum of Σ_n g_n rect((x − x_n)/(γp)) is the array factor
  AF(f) = Σ_n g_n exp(−2πi x_n f) (periodic in 1/p) times the aperture transform
  γp sinc(γ p f) (convolution theorem, Goodman, Introduction to Fourier Optics, ch. 2 and 4);
  the plain sampled integral is p·AF, so the per-axis weight is γ sinc(γ p f) and a uniform
  array at γ = 1 gives p·AF·sinc(p f) ≈ the plain result;
* "flat" dead space reflects the incident (background) field b unmodulated: its term is
  B(f) − AF_b(f)·γ sinc(γ p f), with B the smooth background's spectrum, taken as AF_b in
  the central period and zero in the replicas. With γ = 1 and g = b this leaves B: the cells
  then give exactly the plain propagation of the smooth incident field;
* on the near-imaging branch each pixel is upsampled to s samples per axis with box-filter
  (area) weights for the aperture, and the dead-space rule applied per sub-sample.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid

__all__ = [
    "PixelCells",
    "SeparableBackground",
    "background_values",
    "aperture_weight",
    "central_period_mask",
    "upsampling_factor",
    "upsample_grid",
    "upsample_cells",
]


@dataclass(frozen=True)
class SeparableBackground:
    """An incident field that is a product of 1-D profiles: b[y, x] = profile_y[y]·profile_x[x].

    A Gaussian beam on a modulator is one. Its flat dead-space term is then transformed per
    axis, two 1-D transforms instead of one N x N transform.
    """

    profile_y: np.ndarray
    profile_x: np.ndarray

    @property
    def shape(self) -> tuple[int, int]:
        return (self.profile_y.size, self.profile_x.size)

    def values(self, dtype) -> np.ndarray:
        """The background as an N x N array."""
        return np.multiply.outer(self.profile_y.astype(dtype, copy=False), self.profile_x.astype(dtype, copy=False))


def background_values(cells: "PixelCells", dtype) -> np.ndarray:
    """The cells' background as an N x N array of ``dtype`` (a new array)."""
    if isinstance(cells.background, SeparableBackground):
        return cells.background.values(dtype)
    return np.array(cells.background, dtype=dtype)


@dataclass(frozen=True)
class PixelCells:
    """How the modulator's pixels shape the field.

    Attributes
    ----------
    pitch : tuple of float
        Pixel pitch (px, py) in m; must equal the field grid's pitch.
    fill_factor : tuple of float
        Aperture width over pitch (gx, gy), each in (0, 1].
    background : numpy.ndarray, SeparableBackground or None
        Incident field per pixel (same shape as the field), needed for ``"flat"`` dead
        space.
    dead_space : {"flat", "opaque"}
        ``"flat"``: the dead space reflects the incident light unmodulated (the usual case);
        ``"opaque"``: it absorbs.
    replicas : int
        Replica periods of the spectrum kept on each side on the Fourier branch.
    modulation_less_one : numpy.ndarray or None
        exp(iψ) − 1 per pixel, when the field is the (separable) background times the
        modulation exp(iψ): the Fourier branch's pixel term is then made from the background's
        profiles and this in two passes instead of six.
    """

    pitch: tuple[float, float]
    fill_factor: tuple[float, float] = (1.0, 1.0)
    background: np.ndarray | SeparableBackground | None = None
    dead_space: Literal["flat", "opaque"] = "flat"
    replicas: int = 1
    modulation_less_one: np.ndarray | None = None

    def __post_init__(self) -> None:
        pitch = (float(self.pitch[0]), float(self.pitch[1]))
        fill = (float(self.fill_factor[0]), float(self.fill_factor[1]))
        if not (pitch[0] > 0 and pitch[1] > 0):
            raise ValueError(f"pixel pitch must be positive, got {self.pitch}")
        if not all(0.0 < g <= 1.0 for g in fill):
            raise ValueError(f"fill factor must be in (0, 1], got {self.fill_factor}")
        if self.dead_space not in ("flat", "opaque"):
            raise ValueError(f"dead_space must be 'flat' or 'opaque', got {self.dead_space!r}")
        if int(self.replicas) < 0:
            raise ValueError(f"replicas must be >= 0, got {self.replicas}")
        object.__setattr__(self, "pitch", pitch)
        object.__setattr__(self, "fill_factor", fill)
        object.__setattr__(self, "replicas", int(self.replicas))

    def check_against(self, field: Field) -> None:
        """Raise ValueError unless ``field`` holds one sample per pixel of these cells."""
        for name, grid_pitch, cell_pitch in zip("xy", field.grid.pitch, self.pitch):
            if abs(grid_pitch - cell_pitch) > 1e-9 * cell_pitch:
                raise ValueError(
                    f"pixel cells need one sample per pixel: grid pitch along {name} is "
                    f"{grid_pitch:.6g} m, pixel pitch {cell_pitch:.6g} m"
                )
        if self.dead_space == "flat":
            if self.background is None:
                raise ValueError("flat dead space needs the incident field per pixel (background)")
            if self.background.shape != field.grid.shape:
                raise ValueError(
                    f"background shape {self.background.shape} does not match the field {field.grid.shape}"
                )


def aperture_weight(frequency: np.ndarray, pitch: float, fill_factor: float) -> np.ndarray:
    """Per-axis pixel-aperture weight γ sinc(γ p f) relative to the plain sampled integral.

    The transform of rect(x/(γp)) is γp sinc(γ p f) (Goodman, Introduction to Fourier
    Optics, ch. 2); divided by the sample weight p of the plain Riemann sum.

    Parameters
    ----------
    frequency : numpy.ndarray
        Spatial frequency (1/m).
    pitch : float
        Pixel pitch (m).
    fill_factor : float
        Aperture width over pitch.
    """
    return fill_factor * np.sinc(fill_factor * pitch * np.asarray(frequency, dtype=np.float64))


def central_period_mask(frequency: np.ndarray, pitch: float) -> np.ndarray:
    """1 on the central period −1/(2p) <= f < 1/(2p) of the array factor, else 0."""
    scaled = np.asarray(frequency, dtype=np.float64) * pitch
    return ((scaled >= -0.5) & (scaled < 0.5)).astype(np.float64)


def upsampling_factor(fill_factor: float) -> int:
    """Sub-samples per pixel for the near-imaging branch: 2 at γ = 1, else 4 to 8.

    Prefers the smallest s in 4..8 for which γs is a whole number of the same parity as s
    (a centred aperture with no grey edge samples); otherwise 4 with area-weighted edges.
    """
    if fill_factor >= 1.0:
        return 2
    for s in range(4, 9):
        live = fill_factor * s
        if abs(live - round(live)) < 1e-9 and (s - round(live)) % 2 == 0:
            return s
    return 4


def _sub_sample_weights(s: int, fill_factor: float) -> np.ndarray:
    # share of each of the s sub-cells covered by the centred aperture [(1−γ)/2, (1+γ)/2]
    edges = np.arange(s + 1) / s
    low, high = (1.0 - fill_factor) / 2.0, (1.0 + fill_factor) / 2.0
    covered = np.clip(np.minimum(edges[1:], high) - np.maximum(edges[:-1], low), 0.0, None)
    return covered * s


def upsample_grid(grid: Grid, factors: tuple[int, int]) -> Grid:
    """The grid of ``factors`` = (sx, sy) sub-samples per pixel, sub-samples centred in pixels."""
    centers = []
    for n, pitch, center, s in zip((grid.nx, grid.ny), grid.pitch, grid.center, factors):
        # sub-sample j of pixel k sits at pixel centre + (j − (s−1)/2) p/s; solve for the
        # grid centre (sample (n s)//2) under the Grid convention
        shift = pitch * (-(n // 2) - (s - 1) / (2.0 * s) + ((n * s) // 2) / s)
        centers.append(center + shift)
    return Grid(
        (grid.ny * factors[1], grid.nx * factors[0]),
        (grid.pitch[0] / factors[0], grid.pitch[1] / factors[1]),
        (centers[0], centers[1]),
    )


def upsample_cells(field: Field, cells: PixelCells) -> tuple[Field, tuple[int, int], str]:
    """Upsample a one-sample-per-pixel field to s sub-samples per pixel with the aperture.

    Returns the upsampled field, the factors (sx, sy) and a note on the cost.
    """
    cells.check_against(field)
    factors = (upsampling_factor(cells.fill_factor[0]), upsampling_factor(cells.fill_factor[1]))
    weight_x = np.tile(_sub_sample_weights(factors[0], cells.fill_factor[0]), field.grid.nx)
    weight_y = np.tile(_sub_sample_weights(factors[1], cells.fill_factor[1]), field.grid.ny)
    weights = np.multiply.outer(weight_y, weight_x)
    dtype = field.values.dtype
    values = np.repeat(np.repeat(field.values, factors[1], axis=0), factors[0], axis=1)
    values *= weights.astype(values.real.dtype)
    if cells.dead_space == "flat":
        background = np.repeat(np.repeat(background_values(cells, dtype), factors[1], axis=0), factors[0], axis=1)
        background *= (1.0 - weights).astype(values.real.dtype)
        values += background
    grid = upsample_grid(field.grid, factors)
    cost = factors[0] * factors[1]
    note = (
        f"pixel cells on the near-imaging branch: {factors[0]} x {factors[1]} sub-samples per "
        f"pixel, {cost} x the samples and roughly {cost} x the cost of the transforms"
    )
    return Field(values, grid, field.wavelength, field.plane), factors, note
