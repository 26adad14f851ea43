"""Sampling grids: immutable values (shape, pitch, centre) that fields live on."""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

__all__ = ["Grid"]


@dataclass(frozen=True)
class Grid:
    """A rectangular sampling grid at one plane.

    Arrays on a grid are indexed ``[y, x]``. Sample ``k`` along x sits at
    ``center[0] + (k - nx // 2) * pitch[0]``, so the centre sample is exactly on the centre
    (the convention of ``scipy.fft.fftshift``).

    Attributes
    ----------
    shape : tuple of int
        (ny, nx) number of samples.
    pitch : tuple of float
        (px, py) sample spacing in metres.
    center : tuple of float
        (cx, cy) position of the centre sample in metres, in the bench's transverse frame.
    """

    shape: tuple[int, int]
    pitch: tuple[float, float]
    center: tuple[float, float] = (0.0, 0.0)

    def __post_init__(self) -> None:
        ny, nx = (int(n) for n in self.shape)
        if ny < 1 or nx < 1:
            raise ValueError(f"grid shape must be positive, got {self.shape}")
        px, py = (float(p) for p in self.pitch)
        if not (px > 0 and py > 0):
            raise ValueError(f"grid pitch must be positive, got {self.pitch}")
        object.__setattr__(self, "shape", (ny, nx))
        object.__setattr__(self, "pitch", (px, py))
        object.__setattr__(self, "center", (float(self.center[0]), float(self.center[1])))

    @classmethod
    def square(cls, n: int, pitch: float, center: tuple[float, float] = (0.0, 0.0)) -> "Grid":
        """An n x n grid with the same pitch (m) on both axes."""
        return cls((n, n), (pitch, pitch), center)

    @property
    def nx(self) -> int:
        return self.shape[1]

    @property
    def ny(self) -> int:
        return self.shape[0]

    @cached_property
    def x(self) -> np.ndarray:
        """Sample positions along x (m), 1-D (read-only: made once per grid, read by every
        stage and metric of a trial)."""
        return _positions(self.center[0], self.nx, self.pitch[0])

    @cached_property
    def y(self) -> np.ndarray:
        """Sample positions along y (m), 1-D (read-only)."""
        return _positions(self.center[1], self.ny, self.pitch[1])

    @property
    def extent(self) -> tuple[float, float]:
        """Full width of the window (m) along x and y."""
        return (self.nx * self.pitch[0], self.ny * self.pitch[1])

    @property
    def sample_area(self) -> float:
        """Area of one sample (m²)."""
        return self.pitch[0] * self.pitch[1]

    def mesh(self) -> tuple[np.ndarray, np.ndarray]:
        """Broadcastable (x, y) arrays of shape (1, nx) and (ny, 1)."""
        return self.x[np.newaxis, :], self.y[:, np.newaxis]

    def with_center(self, center: tuple[float, float]) -> "Grid":
        return Grid(self.shape, self.pitch, center)


def _positions(center: float, n: int, pitch: float) -> np.ndarray:
    positions = center + (np.arange(n) - n // 2) * pitch
    positions.flags.writeable = False
    return positions
