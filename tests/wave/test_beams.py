"""Sampled Gaussian beams against their analytic properties."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.special

from benchcheck.wave.beams import gaussian_field
from benchcheck.wave.grid import Grid
from benchcheck.wave.stages import propagate

WAVELENGTH = 1.064e-6


def waist_q(waist: float) -> complex:
    return 1j * np.pi * waist**2 / WAVELENGTH


def test_power_is_set_analytically():
    # ∫∫ a² exp(−2x²/wx² − 2y²/wy²) = a² π wx wy / 2 (Siegman, Lasers (1986), ch. 17);
    # 1e-9: the midpoint sum of a Gaussian sampled at w/20 matches its integral to far better
    grid = Grid.square(256, 10e-6)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.2e-3), waist_q(0.3e-3), power=0.25, dtype=np.complex128)
    assert field.power == pytest.approx(0.25, rel=1e-9)


def test_beam_half_outside_the_window_shows_less_power():
    # the part of a Gaussian beyond an edge at a: 0.5 erfc(√2 (x0 − a)/w) (1-D, separable)
    grid = Grid.square(256, 10e-6)
    waist = 0.2e-3
    edge = grid.x[-1] + grid.pitch[0] / 2
    offset = edge - 0.5 * waist
    field = gaussian_field(grid, WAVELENGTH, waist_q(waist), waist_q(waist), offset=(offset, 0.0), dtype=np.complex128)
    expected = 0.5 * scipy.special.erfc(np.sqrt(2) * (offset - edge) / waist)
    # 1e-3: the midpoint rule at w/20 with a hard edge (one half-sample of slope)
    assert field.power == pytest.approx(expected, abs=1e-3)
    assert field.power < 0.9


def test_d4sigma_is_twice_the_radius():
    # ISO 11146-1: D4σ of a TEM00 beam is exactly 2w
    grid = Grid.square(256, 10e-6)
    waist = 0.25e-3
    field = gaussian_field(grid, WAVELENGTH, waist_q(waist), waist_q(waist))
    profile = field.intensity.sum(axis=0).astype(np.float64)
    sigma = np.sqrt(np.sum(profile * grid.x**2) / profile.sum())
    # 1e-4: sampled at w/25 within ±5w, second moments are exact to far better than this
    assert 4 * sigma == pytest.approx(2 * waist, rel=1e-4)


def test_offset_and_angle_of_the_chief_ray():
    grid = Grid.square(256, 10e-6)
    offset, angle = (0.3e-3, -0.2e-3), (1e-3, 2e-3)
    field = gaussian_field(grid, WAVELENGTH, waist_q(0.2e-3), waist_q(0.2e-3), offset, angle, dtype=np.complex128)
    intensity = field.intensity
    assert np.sum(intensity.sum(axis=0) * grid.x) / intensity.sum() == pytest.approx(offset[0], abs=1e-9)
    assert np.sum(intensity.sum(axis=1) * grid.y) / intensity.sum() == pytest.approx(offset[1], abs=1e-9)
    # a plane wave at slope θ carries exp(ikθx) (exp(+ikz), DESIGN.md section 4)
    row = field.values[np.argmin(np.abs(grid.y - offset[1]))]
    keep = np.abs(row) > 0.1 * np.abs(row).max()
    phase = np.unwrap(np.angle(row[keep]))
    slope = np.polynomial.polynomial.polyfit(grid.x[keep], phase, 1)[1]
    assert slope == pytest.approx(2 * np.pi * angle[0] / WAVELENGTH, rel=1e-9)


@pytest.mark.parametrize("distance", [0.3, -2.0])
def test_sampled_q_agrees_with_propagation_and_gouy_phase(distance):
    # the beam sampled from q0 + z equals the waist beam carried over z (ABCD law, Kogelnik
    # and Li, Appl. Opt. 5, 1550 (1966)), up to the Gouy phase −atan(z/z_R) for a
    # round beam with exp(+ikz) (Siegman, Lasers (1986), ch. 17); this pins the sign of
    # the curvature term. 1e-6: the window ends at ±4w, where the field is exp(−16) = 1e-7
    # of its peak; that truncation, not the propagation, sets the residual (measured 3e-8)
    grid = Grid.square(256, 25e-6)
    q0 = waist_q(0.8e-3)
    start = gaussian_field(grid, WAVELENGTH, q0, q0, dtype=np.complex128)
    matrix = np.array([[1.0, distance, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])
    carried = propagate(start, matrix, matrix).field
    sampled = gaussian_field(carried.grid, WAVELENGTH, q0 + distance, q0 + distance, dtype=np.complex128)
    gouy = np.exp(-1j * np.arctan(distance / q0.imag))
    error = np.max(np.abs(carried.values - gouy * sampled.values)) / np.max(np.abs(sampled.values))
    assert error < 1e-6


def test_growing_beam_is_rejected():
    grid = Grid.square(16, 10e-6)
    with pytest.raises(ValueError, match="decaying"):
        gaussian_field(grid, WAVELENGTH, -waist_q(1e-4), waist_q(1e-4))


def test_default_precision_is_complex64():
    grid = Grid.square(16, 10e-6)
    assert gaussian_field(grid, WAVELENGTH, waist_q(1e-4), waist_q(1e-4)).values.dtype == np.complex64
