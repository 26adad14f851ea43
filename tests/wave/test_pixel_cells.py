"""Pixel-cell spectra against grating theory and the convolution theorem."""

from __future__ import annotations

import numpy as np
import pytest

from benchcheck.wave.beams import gaussian_field
from benchcheck.wave.field import Field
from benchcheck.wave.grid import Grid
from benchcheck.wave.pixel_cells import PixelCells, upsample_cells
from benchcheck.wave.stages import natural_output_grid, propagate

WAVELENGTH = 1.064e-6
PITCH = 8e-6
FOCAL_LENGTH = 0.2
FOURIER = np.array([[0.0, FOCAL_LENGTH, 0.0], [-1.0 / FOCAL_LENGTH, 0.0, 0.0], [0.0, 0.0, 1.0]])


def incident(shape: tuple[int, int], waist_pixels: tuple[float, float]) -> Field:
    """Gaussian beam on (ny, nx) pixels with waists (wx, wy) in pixels."""
    grid = Grid(shape, (PITCH, PITCH))
    q = [1j * np.pi * (w * PITCH) ** 2 / WAVELENGTH for w in waist_pixels]
    return gaussian_field(grid, WAVELENGTH, q[0], q[1])


def blaze(field: Field, period: int, depth: float = 1.0) -> Field:
    # index pixels with integers (REFERENCES.md, "Traps"): level k = i mod period
    levels = np.arange(field.grid.nx) % period
    phase = np.exp(2j * np.pi * depth * levels / period).astype(field.values.dtype)
    return field.replace(values=field.values * phase[np.newaxis, :])


def order_share(result: Field, frequency_x: float, half_width: int, reference_power: float) -> float:
    """Power in a square window around the spot of spatial frequency f, over the reference."""
    ix = int(np.argmin(np.abs(result.grid.x - WAVELENGTH * FOCAL_LENGTH * frequency_x)))
    iy = int(np.argmin(np.abs(result.grid.y)))
    window = result.values[iy - half_width : iy + half_width + 1, ix - half_width : ix + half_width + 1]
    return float(np.vdot(window, window).real) * result.grid.sample_area / reference_power


@pytest.mark.parametrize("levels, expected", [(2, 0.4053), (4, 0.8106), (8, 0.9496), (16, 0.9872)])
def test_n_level_blaze_first_order(levels, expected):
    # Swanson, MIT Lincoln Laboratory Technical Report 854 (1989): first order sinc²(1/N)
    beam = incident((256, 256), (50.0, 50.0))
    cells = PixelCells((PITCH, PITCH), (1.0, 1.0), dead_space="opaque")
    result = propagate(blaze(beam, levels), FOURIER, FOURIER, cells=cells)
    assert result.field.grid.shape == (768, 768)  # 2·replicas + 1 = 3 periods λf/p
    # spots have a radius of N_pix/(π w) = 1.6 samples; the window stops halfway to the next order
    share = order_share(result.field, 1.0 / (levels * PITCH), min(10, 256 // (2 * levels)), beam.power)
    # 0.5 % absolute (the brief); the measured error is ~1e-4, from the window's Gaussian tails
    assert share == pytest.approx(expected, abs=5e-3)
    assert share == pytest.approx(np.sinc(1.0 / levels) ** 2, abs=5e-3)


def test_continuous_blaze_with_wrong_depth():
    # grating theory: a blaze of depth α·2π sends sinc²(m − α) into order m; α = 1.0330
    # (1064 nm design used at 1030 nm): η1 = 0.9964, η0 = 1.017e-3 (REFERENCES.md, derived)
    alpha, period = 1.0330, 64
    beam = incident((64, 1024), (200.0, 16.0))
    cells = PixelCells((PITCH, PITCH), (1.0, 1.0), dead_space="opaque")
    result = propagate(blaze(beam, period, alpha), FOURIER, FOURIER, cells=cells).field
    first = order_share(result, 1.0 / (period * PITCH), 8, beam.power)
    zero = order_share(result, 0.0, 8, beam.power)
    assert np.sinc(1.0 - alpha) ** 2 == pytest.approx(0.9964, abs=1e-4)
    assert np.sinc(alpha) ** 2 == pytest.approx(1.017e-3, rel=1e-3)
    # 64 levels of one pixel each: the pixel envelope and quantisation lower η1 by
    # 1 − sinc²(1/64) = 8e-4; 2e-3 absolute covers it
    assert first == pytest.approx(np.sinc(1.0 - alpha) ** 2, abs=2e-3)
    # the quantised zero order differs from the continuous one by 0.2 %; the 16-pixel-wide
    # beam's staircase in y costs 1/(12·16²) = 3e-4: 2 % relative
    assert zero == pytest.approx(np.sinc(alpha) ** 2, rel=2e-2)


def test_fill_factor_with_opaque_dead_space():
    # convolution theorem (Goodman, Introduction to Fourier Optics, ch. 2): square pixels
    # of width γp multiply the spectrum by γ sinc(γ p f) per axis, so a blaze of k pixels has
    # first order γ⁴ sinc²(γ/k) in 2-D: k = 8, γ = 0.9 gives 0.6292
    gamma, k = 0.9, 8
    beam = incident((256, 256), (50.0, 50.0))
    cells = PixelCells((PITCH, PITCH), (gamma, gamma), dead_space="opaque")
    result = propagate(blaze(beam, k), FOURIER, FOURIER, cells=cells).field
    share = order_share(result, 1.0 / (k * PITCH), 10, beam.power)
    assert gamma**4 * np.sinc(gamma / k) ** 2 == pytest.approx(0.6292, abs=1e-4)
    # 0.5 % absolute, as for the N-level blaze
    assert share == pytest.approx(gamma**4 * np.sinc(gamma / k) ** 2, abs=5e-3)


def test_flat_dead_space_feeds_the_zero_order():
    # model (pixel_cells docstring): the dead space reflects the incident field b unmodulated,
    # so the field is Σ g_n rect_n + b (1 − Σ rect_n). At the zero order the blaze's array
    # factor vanishes (the k phase levels sum to zero) and the dead space leaves
    # B(0)(1 − γ²): zero-order share (1 − γ²)² = 0.0361 at γ = 0.9. The first order keeps
    # γ⁴ sinc²(γ/k), the smooth background having no spectrum there.
    gamma, k = 0.9, 8
    beam = incident((256, 256), (50.0, 50.0))
    cells = PixelCells((PITCH, PITCH), (gamma, gamma), background=beam.values, dead_space="flat")
    result = propagate(blaze(beam, k), FOURIER, FOURIER, cells=cells).field
    zero = order_share(result, 0.0, 10, beam.power)
    first = order_share(result, 1.0 / (k * PITCH), 10, beam.power)
    # 2 % relative: the Gaussian truncated at ±2.56 w leaks ~1e-5 of the blaze orders into the window
    assert zero == pytest.approx((1.0 - gamma**2) ** 2, rel=2e-2)
    assert first == pytest.approx(gamma**4 * np.sinc(gamma / k) ** 2, abs=5e-3)


def test_unit_fill_and_flat_phase_reproduce_the_smooth_beam():
    # normalisation identity (derived in pixel_cells): at γ = 1 with no modulation, the
    # cells give B(f), the plain propagation of the smooth incident field, in the central
    # period and nothing in the replicas. complex64 rounding: 1e-5 of the peak
    beam = incident((128, 128), (25.0, 25.0))
    cells = PixelCells((PITCH, PITCH), (1.0, 1.0), background=beam.values, dead_space="flat")
    result = propagate(beam, FOURIER, FOURIER, cells=cells).field
    plain = propagate(beam, FOURIER, FOURIER).field
    central = result.values[128:256, 128:256]
    peak = np.abs(plain.values).max()
    assert np.max(np.abs(central - plain.values)) < 1e-5 * peak
    assert np.max(np.abs(result.values[:128])) < 1e-5 * peak
    assert result.grid == natural_output_grid(beam.grid, FOURIER, FOURIER, WAVELENGTH, cells)


def test_unit_fill_opaque_keeps_the_power():
    # at γ = 1 there is no dead space: the staircase field keeps its power, all of it in
    # the central period for a smooth beam up to 1 − sinc² leakage ≈ 1/(12 w²) per axis
    # (w in pixels; Taylor expansion of sinc, our derivation): 1e-3 for w = 25 pixels allows 4x that
    beam = incident((128, 128), (25.0, 25.0))
    cells = PixelCells((PITCH, PITCH), (1.0, 1.0), dead_space="opaque")
    result = propagate(beam, FOURIER, FOURIER, cells=cells).field
    assert result.power == pytest.approx(beam.power, rel=1e-3)


def test_near_imaging_branch_upsamples_the_pixels():
    # a 1:1 relay with 0.5 mm of defocus takes the split branch; an opaque dead space at
    # γ = 0.5 passes the aperture's area share γ² = 0.25 (fill-factor definition, common
    # practice); the stage itself is lossless (Parseval)
    gamma = 0.5
    beam = incident((64, 64), (12.0, 12.0))
    relay = np.array([[-1.0, 5e-4, 0.0], [0.0, -1.0, 0.0], [0.0, 0.0, 1.0]])
    cells = PixelCells((PITCH, PITCH), (gamma, gamma), dead_space="opaque")
    result = propagate(beam, relay, relay, cells=cells)
    assert result.method == "split"
    assert any("sub-samples per pixel" in note for note in result.notes)
    assert result.field.grid == natural_output_grid(beam.grid, relay, relay, WAVELENGTH, cells)
    # 1e-4: the upsampled aperture is exact (2 of 4 sub-samples), the Gaussian's
    # staircase on 12-pixel radii changes its power by less than this
    assert result.field.power == pytest.approx(gamma**2 * beam.power, rel=1e-4)


def test_upsampled_sub_samples_sit_centred_in_their_pixels():
    beam = incident((6, 5), (2.0, 2.0))
    upsampled, factors, _ = upsample_cells(beam, PixelCells((PITCH, PITCH), (0.5, 0.5), dead_space="opaque"))
    assert factors == (4, 4)
    # pixel centres are the means of their sub-sample positions (geometry)
    np.testing.assert_allclose(upsampled.grid.x.reshape(5, 4).mean(axis=1), beam.grid.x, atol=1e-15)
    np.testing.assert_allclose(upsampled.grid.y.reshape(6, 4).mean(axis=1), beam.grid.y, atol=1e-15)


def test_flat_dead_space_needs_the_background():
    beam = incident((16, 16), (4.0, 4.0))
    with pytest.raises(ValueError, match="background"):
        propagate(beam, FOURIER, FOURIER, cells=PixelCells((PITCH, PITCH), (0.9, 0.9)))
