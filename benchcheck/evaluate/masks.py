"""Amplitude transmission masks of apertures and clear apertures on a sampling grid.

Edges are area-weighted over one sample (a linear ramp of the signed distance to the edge,
in samples), so a small decentre of an iris changes the passed power smoothly instead of
by whole samples; this keeps threshold searches on iris position continuous. The ramp is
the open share of a sample's area: the amplitude mask is its square root, so the power a
sample passes is its intensity times the open area (an amplitude of the open share would
count edge samples' power by its square, under-counting the passed power by ~1 % for an
iris 30 samples across).
"""

from __future__ import annotations

import functools

import numpy as np

from benchcheck.layout.model import Element
from benchcheck.wave.grid import Grid

__all__ = ["aperture_mask", "aperture_support", "round_mask", "rectangle_mask"]


def _open_share(distance_inside: np.ndarray, pitch: float) -> np.ndarray:
    """Share of a sample's area inside the edge (linear in the signed distance)."""
    return np.clip(0.5 + distance_inside / pitch, 0.0, 1.0)


#: Masks kept by (grid, radius, centre): nominal runs and targets reuse theirs; a study's trials
#: land on grids of their own, so a few are enough (each is a field-sized float32 array).
MASKS_KEPT = 4


@functools.lru_cache(maxsize=MASKS_KEPT)
def round_mask(grid: Grid, radius: float, center: tuple[float, float]) -> np.ndarray:
    """Amplitude transmission (0..1) of a disc of ``radius`` (m) centred at ``center`` (m).

    Only the samples within a pitch of the disc's bounding box are computed (an iris in a
    Fourier plane covers a few percent of the window); the rest are exactly 0, as the ramp
    gives them.
    """
    mask = np.zeros(grid.shape, np.float32)
    box = _box(grid, center, (radius, radius))
    if box is not None:
        mask[box] = _round_in(grid, radius, center, box)
    mask.flags.writeable = False  # cached: shared between trials with the same iris and grid
    return mask


def _round_in(grid: Grid, radius: float, center: tuple[float, float], box) -> np.ndarray:
    """The disc's transmission on the samples of ``box`` only."""
    distance = np.hypot(grid.x[box[1]][np.newaxis, :] - center[0], grid.y[box[0]][:, np.newaxis] - center[1])
    return np.sqrt(_open_share(radius - distance, min(grid.pitch))).astype(np.float32)


def _box(grid: Grid, center: tuple[float, float], half_widths: tuple[float, float]):
    """(rows, columns) slices of the samples within two pitches of a centred box, or None if none are."""
    reach = 2.0 * max(grid.pitch)
    columns = np.flatnonzero(np.abs(grid.x - center[0]) <= half_widths[0] + reach)
    rows = np.flatnonzero(np.abs(grid.y - center[1]) <= half_widths[1] + reach)
    if not (columns.size and rows.size):
        return None
    return slice(int(rows[0]), int(rows[-1]) + 1), slice(int(columns[0]), int(columns[-1]) + 1)


def rectangle_mask(grid: Grid, half_widths: tuple[float, float], center: tuple[float, float]) -> np.ndarray:
    """Transmission of a rectangle, separable: an outer product of two 1-D ramps."""
    along_x = np.sqrt(_open_share(half_widths[0] - np.abs(grid.x - center[0]), grid.pitch[0]))
    along_y = np.sqrt(_open_share(half_widths[1] - np.abs(grid.y - center[1]), grid.pitch[1]))
    return np.multiply.outer(along_y, along_x)


def aperture_support(element: Element, grid: Grid) -> tuple[slice, slice] | None:
    """(rows, columns) of the box outside which an aperture element's mask is exactly 0.

    None when the box is most of the window (nothing to gain) or empty.
    """
    if element.type == "aperture":
        center_x, center_y = element.value("center", (0.0, 0.0))
        center = (center_x + element.x, center_y + element.y)
        if element.value("size") is not None:
            half_widths = tuple(width / 2 for width in element.value("size"))
        else:
            half_widths = (element.value("diameter") / 2,) * 2
    else:
        center, half_widths = (element.x, element.y), (element.value("clear_aperture") / 2,) * 2
    box = _box(grid, center, half_widths)
    if box is None:
        return None
    rows, columns = box
    covered = (rows.stop - rows.start) * (columns.stop - columns.start) / (grid.ny * grid.nx)
    return box if covered < 0.5 else None


def aperture_mask(element: Element, grid: Grid, box: tuple[slice, slice] | None = None) -> np.ndarray:
    """The mask of an aperture element, or of any element's round clear aperture (real, 0..1).

    With ``box`` (from :func:`aperture_support`), only the mask's values on that box.
    """
    if element.type == "aperture":
        center_x, center_y = element.value("center", (0.0, 0.0))
        center = (center_x + element.x, center_y + element.y)
        if element.value("size") is not None:
            width, height = element.value("size")
            mask = rectangle_mask(grid, (width / 2, height / 2), center)
            return mask if box is None else mask[box]
        mask = _round(grid, element.value("diameter") / 2, tuple(center), box)
        if element.value("stop") is not None:
            blocked = _round(grid, element.value("stop") / 2, tuple(center), box) ** 2
            mask = np.sqrt(np.clip(mask**2 - blocked, 0.0, 1.0))
        return mask
    return _round(grid, element.value("clear_aperture") / 2, (element.x, element.y), box)


def _round(grid: Grid, radius: float, center: tuple[float, float], box) -> np.ndarray:
    return round_mask(grid, radius, center) if box is None else _round_in(grid, radius, center, box)
