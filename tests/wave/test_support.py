"""A field that is zero outside a box (past a small iris) may say so; stages then transform only
the box's lines, and must give the same field as the full transform.

A consistency check of the pruned transform (the physics of the stage is checked in
test_stages.py against the ABCD law and the Airy pattern): zero lines transform to zero
(linearity of the DFT), so the two results differ by float32 rounding only, about 1e-7 of
the peak per sample times log2 N (pocketfft's error growth); 1e-5 of the peak covers it.
"""

from __future__ import annotations

import numpy as np
import pytest

from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid
from benchcheck.wave import axis_transforms
from benchcheck.wave.stages import propagate

WAVELENGTH = 1.064e-6


def _stage(focal_length: float, after: float, shift: float = 0.0, tilt: float = 0.0) -> np.ndarray:
    """Free space f, thin lens f, free space ``after`` (DESIGN.md §4 ray matrices), misaligned."""
    free_in = np.array([[1.0, focal_length, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])
    lens = np.array([[1.0, 0.0, 0.0], [-1.0 / focal_length, 1.0, 0.0], [0.0, 0.0, 1.0]])
    free_out = np.array([[1.0, after, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])
    matrix = free_out @ lens @ free_in
    matrix[0, 2], matrix[1, 2] = shift, tilt
    return matrix


@pytest.mark.parametrize("short_box_as_product", [True, False])
@pytest.mark.parametrize("after, output_pitch", [(0.15, None), (0.151, None), (0.15, 4.1e-6)])
def test_a_box_supported_field_transforms_as_the_full_field(after, output_pitch, short_box_as_product, monkeypatch):
    # Off the FFT path the box (40 x 41 samples) goes through the matrix-product transform
    # (direct_dft.py); with that turned off, through a chirp-z transform of the box's lines.
    if not short_box_as_product:
        monkeypatch.setattr(axis_transforms, "DIRECT_MAX_INPUT", 0)
    grid = Grid((256, 256), (40e-6, 40e-6), (4.99e-3, 0.0))
    rows, columns = slice(100, 140), slice(90, 131)
    # a focused vortex spot (w = 6 samples) with a phase slope, cut to the box (3.3 w wide each side)
    x, y = grid.mesh()
    u, v = (x - grid.x[110]) / 240e-6, (y - grid.y[120]) / 240e-6
    spot = np.exp(-(u**2 + v**2)) * np.exp(1j * (np.arctan2(v, u) + 0.3 * u))
    values = np.zeros(grid.shape, np.complex64)
    values[rows, columns] = spot[rows, columns]
    full = Field(values, grid, WAVELENGTH, "iris")
    boxed = Field(values, grid, WAVELENGTH, "iris", support=(rows, columns))
    matrix_x, matrix_y = _stage(0.15, after, 2e-6, 1e-4), _stage(0.15, after)
    output_grid = None
    if output_pitch is not None:  # a chirp-z output grid, as a target resampled onto a trial's grid
        output_grid = Grid((256, 256), (output_pitch, output_pitch), (0.0, 0.0))
    expected = propagate(full, matrix_x, matrix_y, plane="cam", output_grid=output_grid)
    pruned = propagate(boxed, matrix_x, matrix_y, plane="cam", output_grid=output_grid)
    assert pruned.field.grid == expected.field.grid
    peak = np.abs(expected.field.values).max()
    assert np.abs(pruned.field.values - expected.field.values).max() < 1e-5 * peak
    assert pruned.notes == expected.notes or sorted(pruned.notes) == sorted(expected.notes)
