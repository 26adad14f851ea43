"""The nominal wave at the observation planes: intensity and phase, and the camera frame."""

from __future__ import annotations

import numpy as np

from benchcheck.report.style import INTENSITY_MAP, PHASE_MAP, new_figure
from benchcheck.units import si_per_unit

__all__ = ["draw_plane_field", "draw_camera_frame"]


def _extent(x: np.ndarray, y: np.ndarray, scale: float) -> tuple[float, float, float, float]:
    """Edges of the outer samples (a sample is drawn as a cell centred on its position)."""
    half_x = (x[1] - x[0]) / 2 if x.size > 1 else 0.5
    half_y = (y[1] - y[0]) / 2 if y.size > 1 else 0.5
    return ((x[0] - half_x) * scale, (x[-1] + half_x) * scale, (y[0] - half_y) * scale, (y[-1] + half_y) * scale)


def draw_plane_field(image, length: str) -> tuple[object, dict]:
    """Relative intensity (viridis) and phase (cividis, blank where the light is too faint).

    Parameters
    ----------
    image : PlaneImage
        The arrays of one observation plane.
    length : str
        Display unit of the axes.

    Returns
    -------
    (matplotlib.figure.Figure, dict)
        The figure and what was drawn: ``{"intensity", "phase"}`` arrays and the extent (SI).
    """
    scale = 1.0 / si_per_unit(length)
    extent = _extent(image.x, image.y, scale)
    figure = new_figure(9.0, 3.9)
    left, right = figure.subplots(1, 2)
    shown = left.imshow(image.intensity, origin="lower", extent=extent, cmap=INTENSITY_MAP, vmin=0.0, vmax=1.0,
                        interpolation="antialiased")
    figure.colorbar(shown, ax=left, label="intensity (relative to peak)")
    left.set_title(f"{image.name}: intensity", fontsize=10)
    phase = np.ma.masked_invalid(image.phase)
    shown = right.imshow(phase, origin="lower", extent=extent, cmap=PHASE_MAP, vmin=-np.pi, vmax=np.pi,
                         interpolation="nearest")
    bar = figure.colorbar(shown, ax=right, label="phase (rad)")
    bar.set_ticks([-np.pi, 0.0, np.pi], labels=["−π", "0", "π"])
    right.set_title(f"{image.name}: phase (where intensity > 0.1 % of peak)", fontsize=10)
    right.set_facecolor("#ffffff")
    for axes in (left, right):
        axes.set_xlabel(f"x ({length})")
        axes.set_ylabel(f"y ({length})")
    return figure, {"intensity": image.intensity, "phase": image.phase, "extent_m": _extent(image.x, image.y, 1.0)}


def draw_camera_frame(image, length: str) -> tuple[object, dict]:
    """The simulated camera frame in counts (viridis), on the sensor's full extent.

    Returns
    -------
    (matplotlib.figure.Figure, dict)
        The figure and ``{"counts", "extent_m"}``.
    """
    scale = 1.0 / si_per_unit(length)
    x0, x1, y0, y1 = image.frame_extent
    figure = new_figure(6.0, 4.4)
    axes = figure.add_subplot()
    full_scale = 2 ** image.bit_depth - 1 if image.bit_depth else None
    shown = axes.imshow(image.frame, origin="lower", extent=(x0 * scale, x1 * scale, y0 * scale, y1 * scale),
                        cmap=INTENSITY_MAP, vmin=0, vmax=full_scale, interpolation="antialiased")
    figure.colorbar(shown, ax=axes, label="counts" + (f" (full scale {full_scale})" if full_scale else ""))
    axes.set_title(f"{image.name}: simulated camera frame", fontsize=10)
    axes.set_xlabel(f"x ({length})")
    axes.set_ylabel(f"y ({length})")
    return figure, {"counts": image.frame, "extent_m": image.frame_extent}
